"""ISO 2533:1975 standard atmosphere from sea level to 20 km geopotential altitude."""

import numpy as np
import openmdao.api as om

from bypassopt.components.ranges import INPUT_RANGES, range_kwargs
from bypassopt.components.validation import check_range
from bypassopt.components.options import declare_num_nodes

# Constants of ISO 2533:1975 (identical to ICAO Doc 7488/3 and US Standard Atmosphere 1976 below
# 20 km); values as tabulated in field-reference section 1.2.
R_AIR = 287.05287
"""Specific gas constant of air defined by the standard, J/(kg*K)."""
G0 = 9.80665
"""Standard acceleration of gravity, m/s**2."""
T_SL = 288.15
"""Sea-level temperature, K."""
P_SL = 101325.0
"""Sea-level pressure, Pa."""
LAPSE_RATE = -0.0065
"""Temperature gradient of the troposphere, K/m (geopotential)."""
GAMMA_AIR = 1.4
"""Ratio of specific heats the standard uses for its speed of sound, -."""
SUTHERLAND_BETA = 1.458e-6
"""Sutherland coefficient beta_s, kg/(m*s*K**0.5)."""
SUTHERLAND_S = 110.4
"""Sutherland temperature S, K."""

H_TROPOPAUSE = 11000.0
"""Geopotential altitude of the tropopause, m."""
H_MAX = INPUT_RANGES["altitude"][1]
"""Upper end of the modelled range (base of the second stratospheric layer), 20 km (``INPUT_RANGES``)."""
T_TROPOPAUSE = T_SL + LAPSE_RATE * H_TROPOPAUSE
"""Temperature of the isothermal layer 11-20 km, 216.65 K."""
_EXPONENT = -G0 / (LAPSE_RATE * R_AIR)
"""Barometric exponent of the troposphere g0/(|L|*R) = 5.255880."""
P_TROPOPAUSE = P_SL * (T_TROPOPAUSE / T_SL) ** _EXPONENT
"""Pressure at 11 km as the closed-form continuation of the troposphere, 22632.04 Pa (the standard
tabulates the rounded value 22632.1 Pa)."""

DT_ISA_MAX = INPUT_RANGES["dT_isa"][1]
"""Largest accepted magnitude of the temperature offset from standard, 60 K (``INPUT_RANGES``)."""


class AtmosphereComp(om.ExplicitComponent):
    r"""ISO 2533:1975 standard atmosphere, 0 to 20 000 m geopotential altitude, with a temperature offset.

    Standard temperature and pressure at geopotential altitude :math:`H`:

    * troposphere, :math:`0 \le H \le 11\,000` m:
      :math:`T_{std} = T_0 + L H`, :math:`p = p_0 (T_{std}/T_0)^{-g_0/(L R)}`;
    * isothermal lower stratosphere, :math:`11\,000 < H \le 20\,000` m:
      :math:`T_{std} = T_{11} = 216.65` K, :math:`p = p_{11} \exp(-g_0 (H - 11\,000)/(R T_{11}))`,
      with :math:`p_{11} = p_0 (T_{11}/T_0)^{-g_0/(L R)} = 22\,632.04` Pa, so that pressure and its slope
      :math:`dp/dH = -g_0 p/(R T_{std})` are continuous at the tropopause.

    A temperature offset :math:`\Delta T` shifts the temperature, :math:`T_s = T_{std} + \Delta T`, while
    pressure keeps its standard value (the usual "ISA + dT" convention). The remaining outputs use the
    offset temperature:

    * density from the ideal-gas law, :math:`\rho = p/(R T_s)`;
    * the standard's speed of sound :math:`a = \sqrt{\gamma R T_s}` with :math:`\gamma = 1.4`;
    * dynamic viscosity by the standard's Sutherland law,
      :math:`\mu = \beta_s T_s^{1.5}/(T_s + S)`.

    Constants (ISO 2533:1975): :math:`R = 287.05287` J/(kg K), :math:`g_0 = 9.80665` m/s²,
    :math:`T_0 = 288.15` K, :math:`p_0 = 101\,325` Pa, :math:`L = -0.0065` K/m,
    :math:`\beta_s = 1.458\times10^{-6}` kg/(m s K^0.5), :math:`S = 110.4` K.

    Source: ISO 2533:1975 *Standard Atmosphere* (= ICAO Doc 7488/3 = US Standard Atmosphere 1976 below 20 km).
    Valid range: geopotential altitude 0 to 20 000 m, temperature offset -60 to +60 K. Outside it
    (or NaN) ``compute`` raises ``bypassopt.components.validation.InputRangeError``. Geometric height h converts as
    :math:`H = r h/(r + h)`, r = 6 356 766 m; this component takes H.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        self.add_input("altitude", val=np.zeros(nn), units="m",
                       desc="Geopotential pressure altitude above mean sea level (0 to 20 000 m).")
        self.add_input("dT_isa", val=np.zeros(nn), units="K",
                       desc="Temperature offset from the standard atmosphere (pressure is unaffected).")

        self.add_output("Ts0", val=T_SL * np.ones(nn), units="K",
                        desc="Free-stream static temperature, standard value plus dT_isa.")
        self.add_output("Ps0", val=P_SL * np.ones(nn), units="Pa",
                        desc="Free-stream static pressure of the standard atmosphere.")
        self.add_output("rho0", val=1.225 * np.ones(nn), units="kg/m**3",
                        desc="Free-stream static density, Ps0/(R*Ts0) with the standard's R.")
        self.add_output("a0_std", val=340.294 * np.ones(nn), units="m/s",
                        desc="Standard atmosphere's speed of sound sqrt(1.4*R*Ts0) (constant gamma).")
        self.add_output("mu0", val=1.7894e-5 * np.ones(nn), units="Pa*s",
                        desc="Free-stream dynamic viscosity by the standard's Sutherland law.")

    def setup_partials(self):
        """Declare the sparse (elementwise) partial derivatives."""
        ar = np.arange(self.options["num_nodes"])
        self.declare_partials("Ts0", "altitude", rows=ar, cols=ar)
        self.declare_partials("Ts0", "dT_isa", rows=ar, cols=ar, val=1.0)
        self.declare_partials("Ps0", "altitude", rows=ar, cols=ar)
        for out in ("rho0", "a0_std", "mu0"):
            self.declare_partials(out, "altitude", rows=ar, cols=ar)
            self.declare_partials(out, "dT_isa", rows=ar, cols=ar)

    @staticmethod
    def _standard(H):
        """Return standard temperature, pressure and their altitude derivatives for geopotential H."""
        in_troposphere = H.real <= H_TROPOPAUSE
        T_tropo = T_SL + LAPSE_RATE * H
        T_std = np.where(in_troposphere, T_tropo, T_TROPOPAUSE + 0.0 * H)
        dT_dH = np.where(in_troposphere, LAPSE_RATE, 0.0)
        p_tropo = P_SL * (T_tropo / T_SL) ** _EXPONENT
        p_strat = P_TROPOPAUSE * np.exp(-G0 * (H - H_TROPOPAUSE) / (R_AIR * T_TROPOPAUSE))
        p = np.where(in_troposphere, p_tropo, p_strat)
        # Hydrostatic equation dp/dH = -g0*rho_std holds in both layers and joins continuously.
        dp_dH = -G0 * p / (R_AIR * T_std)
        return T_std, dT_dH, p, dp_dH

    def compute(self, inputs, outputs):
        """Evaluate the standard atmosphere at every node."""
        H = inputs["altitude"]
        dT = inputs["dT_isa"]
        check_range("altitude", H, **range_kwargs("altitude"), where=self.pathname)
        check_range("dT_isa", dT, **range_kwargs("dT_isa"), where=self.pathname)

        T_std, _, p, _ = self._standard(H)
        Ts = T_std + dT
        outputs["Ts0"] = Ts
        outputs["Ps0"] = p
        outputs["rho0"] = p / (R_AIR * Ts)
        outputs["a0_std"] = np.sqrt(GAMMA_AIR * R_AIR * Ts)
        outputs["mu0"] = SUTHERLAND_BETA * Ts ** 1.5 / (Ts + SUTHERLAND_S)

    def compute_partials(self, inputs, partials):
        """Evaluate the analytic partial derivatives."""
        H = inputs["altitude"]
        dT = inputs["dT_isa"]
        T_std, dT_dH, p, dp_dH = self._standard(H)
        Ts = T_std + dT

        rho = p / (R_AIR * Ts)
        drho_dTs = -rho / Ts
        da_dTs = 0.5 * np.sqrt(GAMMA_AIR * R_AIR / Ts)
        mu = SUTHERLAND_BETA * Ts ** 1.5 / (Ts + SUTHERLAND_S)
        dmu_dTs = mu * (1.5 / Ts - 1.0 / (Ts + SUTHERLAND_S))

        partials["Ts0", "altitude"] = dT_dH
        partials["Ps0", "altitude"] = dp_dH
        partials["rho0", "altitude"] = dp_dH / (R_AIR * Ts) + drho_dTs * dT_dH
        partials["rho0", "dT_isa"] = drho_dTs
        partials["a0_std", "altitude"] = da_dTs * dT_dH
        partials["a0_std", "dT_isa"] = da_dTs
        partials["mu0", "altitude"] = dmu_dTs * dT_dH
        partials["mu0", "dT_isa"] = dmu_dTs
