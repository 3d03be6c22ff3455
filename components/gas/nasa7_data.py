"""NASA 7-coefficient thermodynamic fits of the five species of air and lean kerosene combustion products."""

# Source: B. J. McBride, S. Gordon and M. A. Reno, "Coefficients for Calculating Thermodynamic and
# Transport Properties of Individual Species", NASA TM-4513, October 1993. The same public data ship
# in Cantera's ``nasa_gas.yaml`` (tests/components/gas/test_thermo.py compares them with Cantera).
#
# Format per species: (molar mass kg/kmol, T_mid K, low-range a1..a7, high-range a1..a7), valid
# 200-6000 K, with
#   cp/R   = a1 + a2 T + a3 T^2 + a4 T^3 + a5 T^4
#   h/(RT) = a1 + a2 T/2 + a3 T^2/3 + a4 T^3/4 + a5 T^4/5 + a6/T
#   s/R    = a1 ln T + a2 T + a3 T^2/2 + a4 T^3/3 + a5 T^4/4 + a7
# Argon has a single constant-cp range; it is stored twice so every species splits at 1000 K.

SPECIES = ("N2", "O2", "Ar", "CO2", "H2O")

NASA7 = {
    "N2": (28.014, 1000.0,
           (3.53100528, -0.000123660987, -5.02999437e-07, 2.43530612e-09, -1.40881235e-12,
            -1046.97628, 2.96747468),
           (2.95257626, 0.00139690057, -4.92631691e-07, 7.86010367e-11, -4.60755321e-15,
            -923.948645, 5.87189252)),
    "O2": (31.998, 1000.0,
           (3.78245636, -0.00299673415, 9.847302e-06, -9.68129508e-09, 3.24372836e-12,
            -1063.94356, 3.65767573),
           (3.66096083, 0.000656365523, -1.41149485e-07, 2.05797658e-11, -1.29913248e-15,
            -1215.97725, 3.41536184)),
    "Ar": (39.95, 1000.0,
           (2.5, 0.0, 0.0, 0.0, 0.0, -745.375, 4.37967491),
           (2.5, 0.0, 0.0, 0.0, 0.0, -745.375, 4.37967491)),
    "CO2": (44.009, 1000.0,
            (2.35677352, 0.00898459677, -7.12356269e-06, 2.45919022e-09, -1.43699548e-13,
             -48371.9697, 9.90105222),
            (4.63659493, 0.00274131991, -9.95828531e-07, 1.60373011e-10, -9.16103468e-15,
             -49024.9341, -1.93534855)),
    "H2O": (18.015, 1000.0,
            (4.19864056, -0.0020364341, 6.52040211e-06, -5.48797062e-09, 1.77197817e-12,
             -30293.7267, -0.849032208),
            (2.67703787, 0.00297318329, -7.7376969e-07, 9.44336689e-11, -4.26900959e-15,
             -29885.8938, 6.88255571)),
}

# Universal gas constant, J/(kmol K) (CODATA 2018, as used by Cantera).
R_UNIVERSAL = 8314.46261815324

# Dry-air mole fractions of the 1976 US / ISO 2533 standard atmosphere composition, keeping N2, O2,
# Ar and CO2 (the trace gases, 0.0027 mol %, are dropped and the rest renormalised). Source: the
# standard's composition table as reproduced in ../shared/field-reference.md section 2.3.
DRY_AIR_MOLE_FRACTIONS = {"N2": 0.78084, "O2": 0.209476, "Ar": 0.00934, "CO2": 0.000314}

# Atomic masses, kg/kmol (IUPAC standard values) for the fuel C H_y.
M_CARBON = 12.011
M_HYDROGEN = 1.008
