"""Exhaust nozzle (convergent or fully expanding): specific gross thrust, exit state, exit area per flow."""

import numpy as np
import openmdao.api as om

from bypassopt.components.gas.flow import sonic
from bypassopt.components.gas.thermo import DRY_AIR_FAR
from bypassopt.components.ranges import range_kwargs
from bypassopt.components.validation import InputRangeError, check_range, first_bad_node
from bypassopt.components.options import declare_gas, declare_num_nodes

_PREFIX = {"core": "core_nozzle", "bypass": "bypass_nozzle"}
#: Smallest nozzle pressure ratio above 1 accepted: the jet velocity's derivatives grow as 1/sqrt(NPR - 1) and
#: are 0/0 (NaN) at NPR = 1 to round-off, so a stream this close to ambient is refused with a clear error.
NPR_MIN_EXCESS = 1e-9


class NozzleComp(om.ExplicitComponent):
    r"""Isentropic exhaust nozzle with velocity and discharge coefficients: convergent or fully expanding.

    The nozzle entry total state :math:`(T_t, P_t, f)` (station ``station_in``) expands
    isentropically; ``stream='bypass'`` is dry air (:math:`f = 0`, no fuel-air-ratio input). Ambient
    static pressure :math:`p_0` (``Ps0``).

    **Fully expanded state** (exit static pressure :math:`p_0`; entropy-function form of
    field-reference section 3.1, energy equation :math:`h_t = h + V^2/2`):

    .. math:: \phi(T_{full}) = \phi(T_t) - R\ln(P_t/p_0), \qquad
              V_{full} = \sqrt{2\,(h(T_t) - h(T_{full}))},

    :math:`\rho_{full} = p_0/(R T_{full})`, :math:`M_{full} = V_{full}/\sqrt{\gamma(T_{full}) R T_{full}}`.
    For a calorically perfect gas :math:`V_{full} = \sqrt{2 c_p T_t (1 - (p_0/P_t)^{(\gamma-1)/\gamma})}`
    (NACA Report 1135 isentropic relations with the energy equation).

    **Convergent nozzle** (``expansion='convergent'``): the sonic state :math:`(T^*, p^*, V^*, \rho^*)`
    from ``bypassopt.components.gas.flow.sonic`` gives the critical pressure ratio :math:`P_t/p^*`
    (:math:`((\gamma+1)/2)^{\gamma/(\gamma-1)}` for a calorically perfect gas, NACA Report 1135).
    Below it (:math:`p^* < p_0`) the nozzle is unchoked and the exit is the fully expanded subsonic
    state (exit Mach < 1, :math:`p_e = p_0`); at or above it the nozzle is choked, the exit is sonic
    (:math:`p_e = p^*`) and it produces pressure thrust. **Fully expanding nozzle**
    (``expansion='full'``, an ideally contoured convergent-divergent nozzle): the exit is always the
    fully expanded state.

    **Gross thrust: velocity and discharge coefficients.** The velocity coefficient :math:`C_v` is the
    ratio of the actual to the ideal (isentropic) exit velocity and, as the textbooks define it (from
    memory: Walsh & Fletcher, *Gas Turbine Performance*, nozzle chapter; Saravanamuttoo et al., *Gas
    Turbine Theory*, propulsive nozzle), it scales the momentum term only; the pressure term acts on
    the effective exit area per unit flow :math:`A_{e,eff}/W = 1/(\rho_e V_e)` of the ideal isentropic
    exit state and is not scaled. Specific gross thrust per unit nozzle flow (N per kg/s):

    .. math:: F_{g,sp} = C_v V_e + (p_e - p_0)\frac{A_{e,eff}}{W}
              = C_v V_e + \frac{p_e - p_0}{\rho_e V_e}
              \quad(\text{'full' and unchoked: } p_e = p_0,\ F_{g,sp} = C_v V_{full}),

    with :math:`(p_e, \rho_e, V_e)` the ideal isentropic exit state (sonic when choked). The discharge
    coefficient :math:`C_d` (effective / geometric area, i.e. actual / ideal flow through a given
    geometric area) only sets the geometric exit area per unit flow,
    :math:`A_e/W = 1/(C_d \rho_e V_e)`: the flow and its pressure thrust pass through the effective
    area :math:`C_d A_e`, so :math:`C_d` changes the nozzle size for a given flow, not the thrust per
    unit flow. (An earlier version of this component scaled the pressure term by :math:`C_v` as well, i.e. used
    :math:`C_v` as a gross-thrust coefficient.)

    ``V{throat}_jet`` equals :math:`F_{g,sp}`: the effective jet velocity, i.e. the velocity a fully
    expanded jet would need to give the same gross thrust per unit flow (momentum loss :math:`C_v` and
    unscaled pressure thrust included), so the stream's gross thrust is its flow times
    ``V{throat}_jet``. The station ``station_throat`` variables (``Mach``, ``Ps``, ``area``) describe
    the exit plane: the throat of a convergent nozzle, the exit of a fully expanding one. The fully
    expanded state (``V/Ts/rho/Mach{throat}_full``, ideal, without :math:`C_v`) is output in both modes
    for the afterbody scrubbing drag.

    **Smoothness at the choking point.** Let :math:`G(p_e) = C_v V(p_e) + (p_e - p_0)/(\rho(p_e) V(p_e))`
    be the thrust of the isentropic stream (fixed :math:`T_t, P_t, f`) expanded to :math:`p_e`. Along the
    isentrope :math:`V\,dV = -dp/\rho`, so

    .. math:: \frac{dG}{dp_e} = \frac{1 - C_v}{\rho V} + (p_e - p_0)\frac{d(1/(\rho V))}{dp_e}.

    The unchoked thrust is :math:`G(p_0)`, the choked one :math:`G(p^*)`; they are equal where
    :math:`p^* = p_0`, so the **value is continuous**. Differentiating :math:`G(p^*) - G(p_0)` with
    respect to any input :math:`x` (:math:`T_t, P_t, p_0, f`) at the joint gives the **slope jump**

    .. math:: \Delta\frac{dF_{g,sp}}{dx} = \frac{1 - C_v}{\rho^* V^*}\,\frac{d(p^* - p_0)}{dx},

    which vanishes only for :math:`C_v = 1`. With :math:`C_v = 1` the thrust is :math:`C^1` (explicitly,
    at fixed :math:`T_t`: unchoked, :math:`h(T_{full})` falls by :math:`R T_{full}\,dP_t/P_t` so
    :math:`dV_{full}/dP_t = p_0/(\rho_{full} V_{full} P_t)`; choked, :math:`V^*` is fixed and
    :math:`p^*, \rho^* \propto P_t`, so :math:`d/dP_t[(p^* - p_0)/(\rho^* V^*)] = p^*/(P_t \rho^* V^*)`;
    at the joint both are :math:`p_0/(\rho^* V^* P_t)`). With :math:`C_v < 1` the gradient of the gross
    thrust is **not** continuous at choking: the unchoked slope in :math:`P_t` is
    :math:`C_v p_0/(\rho^* V^* P_t)`, the choked one :math:`p_0/(\rho^* V^* P_t)` (ratio :math:`1/C_v`,
    1 % for :math:`C_v = 0.99`); in :math:`p_0` they are :math:`-C_v/(\rho^* V^*)` and
    :math:`-1/(\rho^* V^*)`. As elasticities :math:`(P_t/F_{g,sp})\,dF_{g,sp}/dP_t`, using
    :math:`\rho^* V^{*2} = \gamma^* p^*`, they are :math:`1/\gamma^*` and :math:`1/(C_v\gamma^*)`, a jump
    of :math:`(1 - C_v)/(C_v\gamma^*)` (0.0076 for :math:`C_v = 0.99`, :math:`\gamma^* = 1.33`). This
    kink belongs to the textbook loss model (the momentum of the extra expansion :math:`V_{full} - V^*`
    carries the loss, the pressure thrust that replaces it when choked does not), not to the numerics;
    an optimizer only meets it if a design crosses the critical pressure ratio. The exit flow per area
    :math:`\rho_e V_e` (hence ``area``) does not involve :math:`C_v` and stays :math:`C^1` (the
    mass-flux function is stationary at Mach 1, so both branches have slope :math:`\rho^* V^*/P_t` in
    :math:`P_t`). The branch is selected with ``np.where`` on the real pressure ratio. The exit Mach
    number and exit static pressure are continuous but their slopes jump at choking (they are pinned at
    1 and :math:`p_0` on either side): that is the physics, not a numerical artefact.

    Valid range: :math:`P_t/p_0 > 1` (else ``InputRangeError``: the stream cannot produce thrust);
    :math:`T_t`, the fully expanded and (convergent) sonic static temperatures inside the gas model's
    range (200-2400 K for ``ThermallyPerfectGas``, so :math:`T_t \gtrsim 240` K for a convergent nozzle);
    fuel-air ratio 0 to stoichiometric; :math:`0 < C_v, C_d \le 1`. Outside it (or NaN) ``compute``
    raises ``bypassopt.components.validation.InputRangeError``.
    """

    def initialize(self):
        """Declare options."""
        declare_num_nodes(self.options)
        declare_gas(self.options)
        self.options.declare("station_in", types=str, default="7", desc="Station number at nozzle entry.")
        self.options.declare("station_throat", types=str, default="8",
                             desc="Station number of the nozzle exit plane (throat of a convergent nozzle).")
        self.options.declare("stream", default="core", values=("core", "bypass"),
                             desc="'core' (reads the fuel-air ratio; prefix core_nozzle) or 'bypass' (dry "
                                  "air; prefix bypass_nozzle).")
        self.options.declare("expansion", default="convergent", values=("convergent", "full"),
                             desc="'convergent' (choked exit with pressure thrust above the critical "
                                  "pressure ratio) or 'full' (exit always expanded to Ps0).")

    def _names(self):
        o = self.options
        si, st, px = o["station_in"], o["station_throat"], _PREFIX[o["stream"]]
        return {"Tt": f"Tt{si}", "Pt": f"Pt{si}", "far": f"FAR{si}", "Ps0": "Ps0",
                "Cv": f"{px}_velocity_coeff", "Cd": f"{px}_discharge_coeff",
                "Fg": f"Fg{st}_specific", "Vjet": f"V{st}_jet", "Mach": f"Mach{st}", "Ps": f"Ps{st}",
                "area": f"area{st}_per_flow", "V_full": f"V{st}_full", "Ts_full": f"Ts{st}_full",
                "rho_full": f"rho{st}_full", "Mach_full": f"Mach{st}_full"}

    def _keys(self):
        """Local symbols of the gas-state inputs."""
        return ("Tt", "Pt", "Ps0", "far") if self.options["stream"] == "core" else ("Tt", "Pt", "Ps0")

    def setup(self):
        """Declare inputs and outputs."""
        nn = self.options["num_nodes"]
        n = self._names()
        ones = np.ones(nn)
        core = self.options["stream"] == "core"
        self.add_input(n["Tt"], val=(800.0 if core else 320.0) * ones, units="K",
                       desc="Total temperature at nozzle entry.")
        self.add_input(n["Pt"], val=1.6e5 * ones, units="Pa", desc="Total pressure at nozzle entry.")
        if core:
            self.add_input(n["far"], val=0.025 * ones, units=None, desc="Fuel-air ratio of the core stream.")
        self.add_input("Ps0", val=101325.0 * ones, units="Pa", desc="Ambient static pressure.")
        self.add_input(n["Cv"], val=0.99 * ones, units=None,
                       desc="Nozzle velocity coefficient: actual / ideal (isentropic) exit velocity; "
                            "scales the momentum term only.")
        self.add_input(n["Cd"], val=0.98 * ones, units=None,
                       desc="Nozzle discharge coefficient: actual / ideal flow through the exit area "
                            "(effective / geometric area); sets the area, not the thrust per flow.")

        self.add_output(n["Fg"], val=500.0 * ones, units="N*s/kg",
                        desc="Gross thrust per unit nozzle flow, "
                             "Cv*V_exit + (P_exit - Ps0)/(rho_exit*V_exit) (ideal isentropic exit state).")
        self.add_output(n["Vjet"], val=500.0 * ones, units="m/s",
                        desc="Effective jet velocity (equals the specific gross thrust: Cv times the exit "
                             "velocity plus the unscaled pressure thrust per unit flow).")
        self.add_output(n["Mach"], val=0.9 * ones, units=None, desc="Mach number at the nozzle exit plane.")
        self.add_output(n["Ps"], val=101325.0 * ones, units="Pa",
                        desc="Static pressure at the nozzle exit plane.")
        self.add_output(n["area"], val=3.0e-3 * ones, units="m**2*s/kg",
                        desc="Exit-plane (geometric) area per unit nozzle flow, 1/(Cd*rho_exit*V_exit).")
        self.add_output(n["V_full"], val=500.0 * ones, units="m/s",
                        desc="Velocity of the jet fully expanded to Ps0 (isentropic).")
        self.add_output(n["Ts_full"], val=700.0 * ones, units="K",
                        desc="Static temperature of the jet fully expanded to Ps0.")
        self.add_output(n["rho_full"], val=0.5 * ones, units="kg/m**3",
                        desc="Density of the jet fully expanded to Ps0.")
        self.add_output(n["Mach_full"], val=0.9 * ones, units=None,
                        desc="Mach number of the jet fully expanded to Ps0.")

    def setup_partials(self):
        """Declare the sparse (elementwise) partial derivatives."""
        nn = self.options["num_nodes"]
        ar = np.arange(nn)
        n = self._names()
        ks = [n[k] for k in self._keys()]
        for of in ("Fg", "Vjet"):
            for wrt in ks + [n["Cv"]]:
                self.declare_partials(n[of], wrt, rows=ar, cols=ar)
        for wrt in ks + [n["Cd"]]:
            self.declare_partials(n["area"], wrt, rows=ar, cols=ar)
        for of in ("Mach", "V_full", "Ts_full", "rho_full", "Mach_full"):
            for wrt in ks:
                self.declare_partials(n[of], wrt, rows=ar, cols=ar)
        if self.options["expansion"] == "convergent":
            for wrt in ks:
                self.declare_partials(n["Ps"], wrt, rows=ar, cols=ar)
        else:
            self.declare_partials(n["Ps"], "Ps0", rows=ar, cols=ar, val=np.ones(nn))

    def _check(self, inputs):
        """Raise InputRangeError for inputs outside the valid range and for a pressure ratio not above 1."""
        gas = self.options["gas"]
        n = self._names()
        where = self.pathname
        check_range(n["Tt"], inputs[n["Tt"]], gas.T_MIN, gas.T_MAX, "K", where=where)
        check_range(n["Pt"], inputs[n["Pt"]], 0.0, np.inf, "Pa", lower_inclusive=False, where=where)
        check_range("Ps0", inputs["Ps0"], 0.0, np.inf, "Pa", lower_inclusive=False, where=where)
        if self.options["stream"] == "core":
            check_range(n["far"], inputs[n["far"]], 0.0, gas.far_stoich, "", where=where)
        for k in ("Cv", "Cd"):
            check_range(n[k], inputs[n[k]], **range_kwargs(n[k], 0.0, 1.0, lower_inclusive=False), where=where)
        Pt, Ps0 = np.real(inputs[n["Pt"]]), np.real(inputs["Ps0"])
        npr = Pt / Ps0
        bad = npr <= 1.0 + NPR_MIN_EXCESS
        if np.any(bad):
            i, node = first_bad_node(bad)
            raise InputRangeError(f"{where}: nozzle pressure ratio Pt/Ps0 = {npr[i]:.6g} is not above 1: "
                                  f"the stream cannot produce thrust ({n['Pt']} = {Pt[i]:.6g} Pa, "
                                  f"Ps0 = {Ps0[i]:.6g} Pa{node}).")

    def _evaluate(self, inputs):
        """Fully expanded and exit states with derivatives wrt the local symbols Tt, Pt, Ps0, far."""
        gas = self.options["gas"]
        n = self._names()
        Tt, Pt, Ps0 = inputs[n["Tt"]], inputs[n["Pt"]], inputs["Ps0"]
        if self.options["stream"] == "core":
            far = inputs[n["far"]]
        else:
            far = np.full(Tt.shape, DRY_AIR_FAR, dtype=Tt.dtype)
        keys = ("Tt", "Pt", "Ps0", "far")  # far derivatives are dropped for the bypass stream

        # fully expanded isentropic state at Ps0
        pt = gas.properties(Tt, far)
        R = pt.R
        ln_npr = np.log(Pt / Ps0)
        phi_full = pt.phi - R * ln_npr
        T_full, dT_dphi, dT_dfar = gas.T_from_phi(phi_full, far,
                                                  label="fully expanded static entropy function")
        pf = gas.properties(T_full, far, check=False)
        dphi = {"Tt": pt.dphi_dT, "Pt": -R / Pt, "Ps0": R / Ps0, "far": pt.dphi_dfar - pt.dR_dfar * ln_npr}
        dT = {k: dT_dphi * dphi[k] + (dT_dfar if k == "far" else 0.0) for k in keys}
        dh = pt.h - pf.h
        V_full = np.sqrt(2.0 * dh)
        dV = {}
        for k in keys:
            ddh = -pf.cp * dT[k]
            if k == "Tt":
                ddh = ddh + pt.cp
            if k == "far":
                ddh = ddh + pt.dh_dfar - pf.dh_dfar
            dV[k] = ddh / V_full
        a2 = pf.gamma * R * T_full
        a = np.sqrt(a2)
        M_full = V_full / a
        rho_full = Ps0 / (R * T_full)
        dM, drho = {}, {}
        for k in keys:
            da2 = R * (pf.gamma + T_full * pf.dgamma_dT) * dT[k]
            dr = -rho_full * dT[k] / T_full
            if k == "far":
                da2 = da2 + T_full * (pf.dgamma_dfar * R + pf.gamma * pf.dR_dfar)
                dr = dr - rho_full * pf.dR_dfar / R
            if k == "Ps0":
                dr = dr + 1.0 / (R * T_full)
            dM[k] = dV[k] / a - V_full * da2 / (2.0 * a2 * a)
            drho[k] = dr
        flux_full = rho_full * V_full
        dflux_full = {k: drho[k] * V_full + rho_full * dV[k] for k in keys}

        v = {"V_full": V_full, "Ts_full": T_full, "rho_full": rho_full, "Mach_full": M_full}
        d = {}
        for k in keys:
            d["V_full", k] = dV[k]
            d["Ts_full", k] = dT[k]
            d["rho_full", k] = drho[k]
            d["Mach_full", k] = dM[k]

        if self.options["expansion"] == "full":
            zero = np.zeros(Tt.shape, dtype=np.result_type(Tt, Pt, Ps0, far))
            v.update(Ve=V_full, Pth=zero, flux=flux_full, Mach=M_full)
            for k in keys:
                d["Ve", k] = dV[k]
                d["Pth", k] = zero
                d["flux", k] = dflux_full[k]
                d["Mach", k] = dM[k]
            return v, d

        # convergent: sonic state, choked where the critical pressure is at or above ambient
        star = sonic(gas, Tt, Pt, far)
        sd = star.d
        F = star.W_per_A
        choked = np.real(star.Ps) >= np.real(Ps0)
        # pressure thrust per unit flow (p* - p0)/(rho* V*) when choked; zero (p_e = p0) when not
        Pth_c = (star.Ps - Ps0) / F
        one = np.ones(Tt.shape, dtype=np.result_type(Tt, Pt, Ps0, far))
        v.update(Ve=np.where(choked, star.V, V_full), Pth=np.where(choked, Pth_c, 0.0 * one),
                 flux=np.where(choked, F, flux_full),
                 Mach=np.where(choked, one, M_full), Ps=np.where(choked, star.Ps, Ps0 * one))
        for k in keys:
            if k == "Ps0":
                dV_c = 0.0
                dPth_c = -1.0 / F
                dF = dPs = 0.0
            else:
                dV_c = sd["V", k]
                dPth_c = sd["Ps", k] / F - Pth_c * sd["W_per_A", k] / F
                dF = sd["W_per_A", k]
                dPs = sd["Ps", k]
            d["Ve", k] = np.where(choked, dV_c, dV[k])
            d["Pth", k] = np.where(choked, dPth_c, 0.0)
            d["flux", k] = np.where(choked, dF, dflux_full[k])
            d["Mach", k] = np.where(choked, 0.0, dM[k])
            d["Ps", k] = np.where(choked, dPs, 1.0 if k == "Ps0" else 0.0)
        return v, d

    def compute(self, inputs, outputs):
        """Evaluate the nozzle at every node."""
        self._check(inputs)
        n = self._names()
        v, _ = self._evaluate(inputs)
        Fg = inputs[n["Cv"]] * v["Ve"] + v["Pth"]
        outputs[n["Fg"]] = Fg
        outputs[n["Vjet"]] = Fg
        outputs[n["Mach"]] = v["Mach"]
        outputs[n["Ps"]] = v["Ps"] if "Ps" in v else inputs["Ps0"]
        outputs[n["area"]] = 1.0 / (inputs[n["Cd"]] * v["flux"])
        for k in ("V_full", "Ts_full", "rho_full", "Mach_full"):
            outputs[n[k]] = v[k]

    def compute_partials(self, inputs, partials):
        """Evaluate the analytic partial derivatives."""
        n = self._names()
        v, d = self._evaluate(inputs)
        Cv, Cd = inputs[n["Cv"]], inputs[n["Cd"]]
        area = 1.0 / (Cd * v["flux"])
        convergent = self.options["expansion"] == "convergent"
        for k in self._keys():
            wrt = n[k]
            dFg = Cv * d["Ve", k] + d["Pth", k]
            partials[n["Fg"], wrt] = dFg
            partials[n["Vjet"], wrt] = dFg
            partials[n["area"], wrt] = -area * d["flux", k] / v["flux"]
            partials[n["Mach"], wrt] = d["Mach", k]
            if convergent:
                partials[n["Ps"], wrt] = d["Ps", k]
            for of in ("V_full", "Ts_full", "rho_full", "Mach_full"):
                partials[n[of], wrt] = d[of, k]
        partials[n["Fg"], n["Cv"]] = v["Ve"]
        partials[n["Vjet"], n["Cv"]] = v["Ve"]
        partials[n["area"], n["Cd"]] = -area / Cd
