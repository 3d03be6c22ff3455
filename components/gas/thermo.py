"""Thermally and calorically perfect working-gas models with analytic derivatives."""

import numpy as np

from bypassopt.components.ranges import GAS_TEMPERATURE_RANGE
from bypassopt.components.validation import check_range

from .nasa7_data import (DRY_AIR_MOLE_FRACTIONS, M_CARBON, M_HYDROGEN, NASA7, R_UNIVERSAL,
                         SPECIES)

#: Reference temperature of the sensible enthalpy and entropy function (K); the fuel lower heating
#: value is defined at the same temperature, so the burner energy balance is consistent.
T_REF = 298.15

#: Fuel-air ratio of dry air.
DRY_AIR_FAR = 0.0

_T_MID = 1000.0
# Newton converges quadratically, so a step below 1e-8*T leaves an error far below round-off after it
# is applied. A tighter test would never be met at the 1000 K split of the NASA fits, where the two
# ranges differ by about 1e-9 relative and the inverse has a gap of ~1e-6 K.
_NEWTON_TOL = 1e-8
_NEWTON_MAXITER = 50
# slack on the range check of an inverse, so an input exactly at a limit is not rejected by round-off
_RANGE_SLACK = 1e-9


class GasProperties:
    """Mixture properties and their first derivatives at given temperature(s) and fuel-air ratio(s).

    Attributes (all arrays broadcast from the inputs, per unit mass of mixture)
    ----------------------------------------------------------------------------
    h : sensible enthalpy relative to ``T_REF`` (J/kg); ``dh_dT`` (= cp), ``dh_dfar``
    cp : specific heat at constant pressure (J/(kg K)); ``dcp_dT``, ``dcp_dfar``
    phi : entropy function, integral of cp/T dT from ``T_REF`` (J/(kg K)); ``dphi_dT`` (= cp/T),
        ``dphi_dfar``
    R : specific gas constant (J/(kg K)); ``dR_dfar`` (``dR_dT`` is zero)
    gamma : cp/cv; ``dgamma_dT``, ``dgamma_dfar``
    """

    __slots__ = ("h", "dh_dT", "dh_dfar", "cp", "dcp_dT", "dcp_dfar", "phi", "dphi_dT", "dphi_dfar",
                 "R", "dR_dfar", "gamma", "dgamma_dT", "dgamma_dfar")

    def __init__(self, h, dh_dfar, cp, dcp_dT, dcp_dfar, phi, dphi_dfar, R, dR_dfar, T):
        self.h, self.dh_dT, self.dh_dfar = h, cp, dh_dfar
        self.cp, self.dcp_dT, self.dcp_dfar = cp, dcp_dT, dcp_dfar
        self.phi, self.dphi_dT, self.dphi_dfar = phi, cp / T, dphi_dfar
        self.R, self.dR_dfar = R, dR_dfar
        cv = cp - R
        self.gamma = cp / cv
        dg_dcp = -R / cv**2
        dg_dR = cp / cv**2
        self.dgamma_dT = dg_dcp * dcp_dT
        self.dgamma_dfar = dg_dcp * dcp_dfar + dg_dR * dR_dfar


class _GasBase:
    """Inverse functions shared by both gas models (Newton on real parts, complex-step correction)."""

    T_MIN, T_MAX = GAS_TEMPERATURE_RANGE  # 200-2400 K, shared with the scenario's cross-key checks

    def check_temperature(self, T, label="temperature"):
        """Raise a clear error if ``T`` is outside the model's valid range."""
        check_range(label, T, self.T_MIN, self.T_MAX, "K")

    def check_far(self, far, label="fuel-air ratio"):
        """Raise a clear error if ``far`` is negative or above stoichiometric."""
        check_range(label, far, 0.0, self.far_stoich, "")

    def _invert(self, target, far, which, label):
        """Solve prop(T, far) = target for T; ``which`` is 'h' or 'phi'."""
        target = np.asarray(target)
        far = np.asarray(far)
        check_range(label, target)  # NaN check only
        self.check_far(far)
        tr = np.real(target)
        fr = np.real(far)
        shape = np.broadcast(tr, fr).shape
        T = np.full(shape, 800.0)
        coef = self._mixture_coefficients(np.broadcast_to(fr, shape))
        for _ in range(_NEWTON_MAXITER):
            value, slope = self._newton_terms(which, T, coef)
            step = (value - tr) / slope
            T = np.clip(T - step, 0.5 * self.T_MIN, 1.5 * self.T_MAX)
            if np.all(np.abs(step) <= _NEWTON_TOL * T):
                break
        else:  # pragma: no cover - Newton on a monotone smooth function
            raise RuntimeError(f"temperature inversion from {which} did not converge")
        check_range(f"temperature from {label}", T, self.T_MIN * (1.0 - _RANGE_SLACK),
                    self.T_MAX * (1.0 + _RANGE_SLACK), "K")
        # One Newton correction in the inputs' (possibly complex) arithmetic carries the
        # complex-step perturbation exactly (implicit-function theorem).
        p = self.properties(T, far, check=False)
        if which == "h":
            T = T + (target - p.h) / p.cp
            dT_dtarget = 1.0 / p.cp
            dT_dfar = -p.dh_dfar / p.cp
        else:
            T = T + (target - p.phi) / p.dphi_dT
            dT_dtarget = 1.0 / p.dphi_dT
            dT_dfar = -p.dphi_dfar / p.dphi_dT
        return T, dT_dtarget, dT_dfar

    def T_from_h(self, h, far, label="enthalpy"):
        """Temperature (K) at sensible enthalpy ``h`` (J/kg) and fuel-air ratio ``far``.

        Returns
        -------
        T, dT_dh, dT_dfar : ndarray
            Temperature and its derivatives from the implicit-function theorem:
            dT/dh = 1/cp, dT/dfar = -(dh/dfar)/cp.
        """
        return self._invert(h, far, "h", label)

    def T_from_phi(self, phi, far, label="entropy function"):
        """Temperature (K) at entropy function ``phi`` (J/(kg K)) and fuel-air ratio ``far``.

        Returns
        -------
        T, dT_dphi, dT_dfar : ndarray
            dT/dphi = T/cp, dT/dfar = -(dphi/dfar)*T/cp.
        """
        return self._invert(phi, far, "phi", label)


class ThermallyPerfectGas(_GasBase):
    """Thermally perfect mixture of N2, O2, Ar, CO2 and H2O: dry air plus lean combustion products.

    Species properties come from the NASA 7-coefficient polynomials (McBride, Gordon and Reno,
    NASA TM-4513, 1993). Dry air has the standard-atmosphere composition (N2, O2, Ar, CO2). The
    products of complete lean combustion of a fuel C H_y at fuel-air ratio f (kg fuel per kg air) are
    frozen: per kmol of fuel, (1 + y/4) kmol O2 are replaced by 1 kmol CO2 and y/2 kmol H2O. Since
    the mixture is linear in its mass fractions, every mass-specific property is

        p(T, f) = (p_air(T) + f * p_fuel(T)) / (1 + f)

    where ``p_fuel`` is the change of the mixture property per kg of fuel burnt. The sensible
    enthalpy h and the entropy function phi = integral cp/T dT are referred to ``T_REF`` = 298.15 K.

    Valid 200-2400 K (the NASA fits run to 6000 K, but dissociation, which the frozen mixture
    ignores, matters above about 2000-2400 K) and 0 <= f <= stoichiometric.

    Parameters
    ----------
    hc_ratio : float
        Hydrogen-to-carbon atom ratio y of the fuel (kerosene-type fuels: about 1.9-2.0, common
        practice; 1.92 corresponds to about 13.9 % hydrogen by mass).
    """

    def __init__(self, hc_ratio=1.92):
        check_range("hc_ratio", hc_ratio, 0.5, 4.0)
        self.hc_ratio = float(hc_ratio)
        y = self.hc_ratio
        mol = np.array([NASA7[s][0] for s in SPECIES])
        # mass fractions of dry air
        x_air = np.array([DRY_AIR_MOLE_FRACTIONS.get(s, 0.0) for s in SPECIES])
        x_air = x_air / x_air.sum()
        y_air = x_air * mol / np.dot(x_air, mol)
        # change of species mass per kg of fuel (sums to 1: fuel mass appears in the products)
        m_fuel = M_CARBON + M_HYDROGEN * y
        dy_fuel = np.zeros(len(SPECIES))
        dy_fuel[SPECIES.index("O2")] = -(1.0 + y / 4.0) * mol[SPECIES.index("O2")] / m_fuel
        dy_fuel[SPECIES.index("CO2")] = mol[SPECIES.index("CO2")] / m_fuel
        dy_fuel[SPECIES.index("H2O")] = (y / 2.0) * mol[SPECIES.index("H2O")] / m_fuel
        self.air_mass_fractions = dict(zip(SPECIES, y_air))
        self.fuel_mass_change = dict(zip(SPECIES, dy_fuel))
        self.fuel_molar_mass = m_fuel
        self.far_stoich = y_air[SPECIES.index("O2")] / -dy_fuel[SPECIES.index("O2")]
        r_species = R_UNIVERSAL / mol
        self.R_air = float(np.dot(y_air, r_species))
        self.R_fuel = float(np.dot(dy_fuel, r_species))
        # Combined coefficient sets (J/(kg K) units) for air (row 0) and per-kg-fuel change (row 1), low and
        # high range. The reference values at T_REF are folded into a6 and a7, so that h = H(T) and
        # phi = S(T) directly (h and phi are sensible values referred to T_REF).
        lo = np.array([NASA7[s][2] for s in SPECIES])  # (5 species, 7)
        hi = np.array([NASA7[s][3] for s in SPECIES])
        weights = np.stack([y_air * r_species, dy_fuel * r_species])  # (2, 5)
        self._lo = weights @ lo  # (2, 7)
        self._hi = weights @ hi
        href = self._H(self._lo, T_REF)
        sref = self._S(self._lo, T_REF)
        for c in (self._lo, self._hi):
            c[:, 5] -= href
            c[:, 6] -= sref

    # polynomial pieces (coefficients on the last axis) ------------------------------------------
    @staticmethod
    def _cp(a, T):
        return a[..., 0] + T * (a[..., 1] + T * (a[..., 2] + T * (a[..., 3] + T * a[..., 4])))

    @staticmethod
    def _dcp(a, T):
        return a[..., 1] + T * (2 * a[..., 2] + T * (3 * a[..., 3] + T * 4 * a[..., 4]))

    @staticmethod
    def _H(a, T):
        return T * (a[..., 0] + T * (a[..., 1] / 2 + T * (a[..., 2] / 3 + T * (a[..., 3] / 4 + T * a[..., 4] / 5)))) \
            + a[..., 5]

    @staticmethod
    def _S(a, T):
        return a[..., 0] * np.log(T) + T * (a[..., 1] + T * (a[..., 2] / 2 + T * (a[..., 3] / 3 + T * a[..., 4] / 4))) \
            + a[..., 6]

    def _select(self, lo, hi, T):
        """Per-element coefficients of the range each temperature falls in (NASA split at 1000 K)."""
        return np.where((np.real(T) > _T_MID)[..., None], hi, lo)

    def _both(self, T):
        """cp, dcp/dT, h, phi of air (index 0, per kg air) and of the fuel change (index 1, per kg fuel)."""
        T = np.asarray(T)
        c = self._select(self._lo.reshape((2,) + (1,) * T.ndim + (7,)),
                         self._hi.reshape((2,) + (1,) * T.ndim + (7,)), T[None, ...])
        return self._cp(c, T), self._dcp(c, T), self._H(c, T), self._S(c, T)

    def _mixture_coefficients(self, far):
        """Low- and high-range coefficients of the mixture per kg, (c_air + far c_fuel)/(1 + far)."""
        f = np.asarray(far)[..., None]
        lo = (self._lo[0] + f * self._lo[1]) / (1.0 + f)
        hi = (self._hi[0] + f * self._hi[1]) / (1.0 + f)
        return lo, hi

    def _newton_terms(self, which, T, coef):
        """Residual function and slope for the inversions: (h, cp) or (phi, cp/T) of the mixture."""
        c = self._select(coef[0], coef[1], T)
        cp = self._cp(c, T)
        if which == "h":
            return self._H(c, T), cp
        return self._S(c, T), cp / T

    def properties(self, T, far, check=True):
        """Mixture properties and derivatives at temperature ``T`` (K) and fuel-air ratio ``far``.

        Returns
        -------
        GasProperties
        """
        T = np.asarray(T)
        far = np.asarray(far)
        if check:
            self.check_temperature(T)
            self.check_far(far)
        cp2, dcp2, h2, phi2 = self._both(T)
        inv = 1.0 / (1.0 + far)
        cp = (cp2[0] + far * cp2[1]) * inv
        dcp_dT = (dcp2[0] + far * dcp2[1]) * inv
        h = (h2[0] + far * h2[1]) * inv
        phi = (phi2[0] + far * phi2[1]) * inv
        R = (self.R_air + far * self.R_fuel) * inv
        return GasProperties(h=h, dh_dfar=(h2[1] - h) * inv, cp=cp, dcp_dT=dcp_dT,
                             dcp_dfar=(cp2[1] - cp) * inv, phi=phi, dphi_dfar=(phi2[1] - phi) * inv,
                             R=R, dR_dfar=(self.R_fuel - R) * inv, T=T)

    def fuel_enthalpy_change(self, T):
        """Sensible enthalpy change of the products per kg of fuel burnt, h_fuel(T) (J/kg), and dh/dT.

        Used by the burner energy balance: (1 + f) h(T, f) = h_air(T) + f h_fuel(T).
        """
        T = np.asarray(T)
        c = self._select(self._lo[1], self._hi[1], T)
        return self._H(c, T), self._cp(c, T)

    def __repr__(self):
        return f"ThermallyPerfectGas(hc_ratio={self.hc_ratio})"


class CaloricallyPerfectGas(_GasBase):
    """Calorically perfect gas: constant cp and gamma, independent of fuel-air ratio.

    h = cp (T - T_REF), phi = cp ln(T / T_REF), R = cp (gamma - 1)/gamma. Used to reproduce textbook
    closed-form results exactly (ideal-cycle and isentropic-flow tests). Valid 1-10 000 K; the
    fuel-air ratio is accepted (0 to ``far_stoich``) but does not change the properties, and the
    burnt fuel is assumed to carry the same enthalpy as the gas.

    Parameters
    ----------
    cp : float
        Specific heat at constant pressure, J/(kg K).
    gamma : float
        Ratio of specific heats.
    far_stoich : float
        Upper limit accepted for the fuel-air ratio.
    """

    T_MIN = 1.0
    T_MAX = 10000.0

    def __init__(self, cp=1004.0, gamma=1.4, far_stoich=0.0682):
        check_range("cp", cp, 100.0, 20000.0, "J/(kg*K)")
        check_range("gamma", gamma, 1.0, 2.0, "", lower_inclusive=False)
        self.cp = float(cp)
        self.gamma = float(gamma)
        self.far_stoich = float(far_stoich)
        self.R_air = self.cp * (self.gamma - 1.0) / self.gamma

    def properties(self, T, far, check=True):
        """Constant properties (see class docstring); same interface as ThermallyPerfectGas."""
        T = np.asarray(T)
        far = np.asarray(far)
        if check:
            self.check_temperature(T)
            self.check_far(far)
        zero = np.zeros(np.broadcast(T, far).shape, dtype=np.result_type(T, far, float))
        one = zero + 1.0
        cp = self.cp * one
        return GasProperties(h=self.cp * (T - T_REF) + zero, dh_dfar=zero, cp=cp, dcp_dT=zero,
                             dcp_dfar=zero, phi=self.cp * np.log(T / T_REF) + zero, dphi_dfar=zero,
                             R=self.R_air * one, dR_dfar=zero, T=T + zero)

    def _mixture_coefficients(self, far):
        return None

    def _newton_terms(self, which, T, coef):
        if which == "h":
            return self.cp * (T - T_REF), self.cp + 0.0 * T
        return self.cp * np.log(T / T_REF), self.cp / T

    def fuel_enthalpy_change(self, T):
        """Per kg of fuel the products carry the gas enthalpy: h_fuel = cp (T - T_REF), d/dT = cp."""
        T = np.asarray(T)
        return self.cp * (T - T_REF), self.cp + 0.0 * T

    def __repr__(self):
        return f"CaloricallyPerfectGas(cp={self.cp}, gamma={self.gamma})"
