"""The design-point cycle of ``TurbofanCycleGroup`` as one plain vectorized NumPy function (no OpenMDAO).

This is the arithmetic limit of the framework-overhead benchmark: the same physics as the OpenMDAO group,
chained element by element in the cycle's order from the package's own pure-NumPy helpers
(``components/gas``: ``thermo``, ``processes``, ``flow``), with no framework, no component-level input
validation (the helpers keep their own range checks) and no Newton solver. Two pieces of arithmetic that live
only as static methods of components are called from there, so no formula is written twice: the ISO 2533
atmosphere (``AtmosphereComp._standard``) and the turbine cooling correlation (``CoolingBleedComp._row``).

It reproduces the group with its DEFAULT options (thermally perfect gas, fuel mass included, convergent
nozzles, cooling from the correlation, fan core side at ``FPR``, ``Tt4`` given, Newton on the W2 loop); the
installed engine uses other options (``Tt41`` given, the loop closed by its own solver), which this function
does not cover. The W2 <-> HP-offtake loop is closed by secant steps on ``x = 1/W2``: the offtake per unit
flow is ``HP_power_offtake * x``, linear in ``x``, and only the part downstream of the HP spool balance
(HPT, rotor coolant, LPT, core duct and nozzle, performance) is re-evaluated in each pass.

Benchmark code (not installed); ``tests/benchmarks/test_numpy_cycle.py`` checks it against the group.
"""

import numpy as np

from bypassopt.components.atmosphere.atmosphere_comp import AtmosphereComp
from bypassopt.components.cycle.cooling_comp import CoolingBleedComp
from bypassopt.components.cycle.sizing_comp import P_STD, T_STD
from bypassopt.components.defaults import ENGINE_DEFAULTS
from bypassopt.components.gas.flow import sonic, total_from_static
from bypassopt.components.gas.processes import expansion_from_work, polytropic_compression
from bypassopt.components.gas.thermo import DRY_AIR_FAR, ThermallyPerfectGas
from bypassopt.components.validation import check_range

#: Flight condition and cycle choices of the demo scenario's design point that ``components/defaults.py`` does
#: not hold (the demo's ``[flight]`` and ``[optimizer]`` starting values; the vectorized-scaling benchmark
#: uses the same point): name -> (value, units).
DESIGN_POINT = {
    "altitude": (10668.0, "m"),
    "dT_isa": (10.0, "K"),
    "Mach0": (0.78, None),
    "Fn_required": (24000.0, "N"),
    "BPR": (10.0, None),
    "FPR": (1.5, None),
    "OPR": (40.0, None),
    "Tt4": (1650.0, "K"),
}

#: Every free input of ``TurbofanCycleGroup`` with its default options: name -> (value, SI units). The cycle
#: inputs are ``components/defaults.py``'s table.
CYCLE_INPUTS = {**ENGINE_DEFAULTS, **DESIGN_POINT}

#: Secant passes on 1/W2 stop when the W2 the thrust requirement gives differs from the W2 the offtake was
#: evaluated with by at most this (relative), at every design.
LOOP_RTOL = 1.0e-13
#: Most passes of the W2-dependent part (a RuntimeError beyond).
MAX_PASSES = 12


def default_inputs(num_designs=1):
    """The input dict of ``evaluate_cycle``: every entry of ``CYCLE_INPUTS`` as an array of ``num_designs``."""
    return {name: np.full(num_designs, float(value)) for name, (value, _units) in CYCLE_INPUTS.items()}


def _mix(gas, Tt_in, far_in, W_in, h_coolant, W_coolant):
    """Adiabatic mixing of dry coolant (enthalpy ``h_coolant``) into a stream; as ``CoolingMixComp``."""
    A_in = W_in / (1.0 + far_in)
    far_out = far_in * A_in / (A_in + W_coolant)
    W_out = W_in + W_coolant
    h_out = (W_in * gas.properties(Tt_in, far_in).h + W_coolant * h_coolant) / W_out
    Tt_out, _, _ = gas.T_from_h(h_out, far_out, label="mixed-stream enthalpy")
    return Tt_out, far_out, W_out


def _nozzle(gas, Tt, Pt, Ps0, far, velocity_coeff, discharge_coeff, label):
    """Convergent nozzle: specific gross thrust, exit Mach number and exit area per flow; as ``NozzleComp``."""
    check_range(f"{label} pressure ratio Pt/Ps0", Pt / Ps0, 1.0, np.inf, lower_inclusive=False)
    pt = gas.properties(Tt, far)
    R = pt.R
    T_full, _, _ = gas.T_from_phi(pt.phi - R * np.log(Pt / Ps0), far,
                                  label="fully expanded static entropy function")
    pf = gas.properties(T_full, far, check=False)
    V_full = np.sqrt(2.0 * (pt.h - pf.h))
    M_full = V_full / np.sqrt(pf.gamma * R * T_full)
    flux_full = Ps0 / (R * T_full) * V_full
    star = sonic(gas, Tt, Pt, far)
    choked = star.Ps >= Ps0
    Ve = np.where(choked, star.V, V_full)
    pressure_thrust = np.where(choked, (star.Ps - Ps0) / star.W_per_A, 0.0)
    flux = np.where(choked, star.W_per_A, flux_full)
    return {"Fg": velocity_coeff * Ve + pressure_thrust, "Mach": np.where(choked, 1.0, M_full),
            "area_per_flow": 1.0 / (discharge_coeff * flux)}


def evaluate_cycle(inputs, gas=None, W2_guess=None):
    """Design-point cycle of N designs in plain vectorized NumPy; the outputs of ``TurbofanCycleGroup``.

    Parameters
    ----------
    inputs : dict
        Every name of ``CYCLE_INPUTS`` mapped to an array of N values in SI units (``default_inputs``).
    gas : ThermallyPerfectGas, optional
        Working-gas model (the group's default when None).
    W2_guess : ndarray, optional
        Start of the W2 loop (kg/s), e.g. the W2 of a previous evaluation (a warm start); None starts from
        no offtake.

    Returns
    -------
    dict
        Arrays of N values named as the group's promoted outputs (station ``Tt*``/``Pt*``, ``FAR*``,
        ``W*_frac``, works, ``Fn_specific``, ``TSFC``, ``W2``, ``fuel_flow``, corrected flows, shaft powers,
        efficiencies, nozzle exit Mach numbers and areas per flow), and ``passes``: evaluations of the
        W2-dependent part that the secant on 1/W2 took.
    """
    gas = gas or ThermallyPerfectGas()
    g = {k: np.asarray(v, dtype=float) for k, v in inputs.items()}
    out = {}
    dry = DRY_AIR_FAR

    # flight condition (ISO 2533 atmosphere, real-gas total state) and inlet, 0 -> 2
    T_std, _, Ps0, _ = AtmosphereComp._standard(g["altitude"])
    Ts0 = T_std + g["dT_isa"]
    free = total_from_static(gas, Ts0, Ps0, g["Mach0"], np.zeros_like(Ts0))
    V0 = free.V
    Tt2, Pt2 = free.Tt, g["inlet_recovery"] * free.Pt
    out.update(Ts0=Ts0, Ps0=Ps0, V0=V0, Tt0=free.Tt, Pt0=free.Pt, Tt2=Tt2, Pt2=Pt2)

    # fan (2 -> 13 bypass, 2 -> 21 core side at FPR), booster (21 -> 25), LP demand
    fpr = g["FPR"]
    fan_b = polytropic_compression(gas, Tt2, fpr, g["fan_bypass_eff_poly"], dry)
    fan_c = polytropic_compression(gas, Tt2, fpr, g["fan_core_eff_poly"], dry)
    Pt13 = Pt21 = fpr * Pt2
    boost = polytropic_compression(gas, fan_c.Tt_out, g["booster_PR"], g["booster_eff_poly"], dry)
    Pt25 = g["booster_PR"] * Pt21
    bpr = g["BPR"]
    c = 1.0 / (1.0 + bpr)
    lp_demand = (bpr * fan_b.work + fan_c.work + boost.work) * c
    out.update(Tt13=fan_b.Tt_out, Pt13=Pt13, Tt21=fan_c.Tt_out, Pt21=Pt21, Tt25=boost.Tt_out, Pt25=Pt25,
               fan_bypass_work=fan_b.work, fan_core_work=fan_c.work, booster_work=boost.work,
               core_flow_frac=c, LP_power_demand=lp_demand)

    # HPC (25 -> 3, ratio from OPR), cooling and bleed extraction at 3
    hpc_pr = g["OPR"] * Pt2 / Pt25
    hpc = polytropic_compression(gas, boost.Tt_out, hpc_pr, g["hpc_eff_poly"], dry)
    Tt3, Pt3 = hpc.Tt_out, g["OPR"] * Pt2
    Tt4 = g["Tt4"]
    psi_v, _ = CoolingBleedComp._row(Tt4, g["vane_metal_temperature"], Tt3, g["vane_cooling_constant"])
    psi_r, _ = CoolingBleedComp._row(g["rotor_relative_temperature_ratio"] * Tt4, g["rotor_metal_temperature"],
                                     Tt3, g["rotor_cooling_constant"])
    burner_air = 1.0 - psi_v - psi_r - g["customer_bleed_frac"]
    out.update(hpc_PR=hpc_pr, Tt3=Tt3, Pt3=Pt3, hpc_work=hpc.work, cooling_frac_vane=psi_v,
               cooling_frac_rotor=psi_r, burner_air_frac=burner_air)

    # burner (3 -> 4): closed-form fuel-air ratio of the frozen lean mixture
    p3 = gas.properties(Tt3, dry)
    h_fuel, _ = gas.fuel_enthalpy_change(Tt4)
    far4 = (gas.properties(Tt4, dry).h - p3.h) / (g["combustion_eff"] * g["fuel_LHV"] - h_fuel)
    Pt4 = Pt3 * (1.0 - g["burner_pressure_loss"])
    W4 = c * burner_air * (1.0 + far4)
    # vane coolant (HPC exit air) mixed in, 4 -> 41
    Tt41, far41, W41 = _mix(gas, Tt4, far4, W4, p3.h, c * psi_v)
    out.update(Tt4=Tt4, FAR4=far4, Pt4=Pt4, W4_frac=W4, Tt41=Tt41, Pt41=Pt4, FAR41=far41, W41_frac=W41)

    # bypass duct (13 -> 17) and nozzle (17 -> 18) do not depend on W2
    Tt17, Pt17 = fan_b.Tt_out, Pt13 * (1.0 - g["bypass_duct_pressure_loss"])
    byp = _nozzle(gas, Tt17, Pt17, Ps0, np.zeros_like(Tt17), g["bypass_nozzle_velocity_coeff"],
                  g["bypass_nozzle_discharge_coeff"], "bypass nozzle")
    out.update(Tt17=Tt17, Pt17=Pt17, Fg18_specific=byp["Fg"], Mach18=byp["Mach"],
               area18_per_flow=byp["area_per_flow"])
    w18 = bpr * c

    def hot_section(x):
        """HP demand at offtake/W2 = offtake*x, HPT, rotor coolant, LPT, core duct and nozzle, net thrust."""
        hp_demand = hpc.work * c + g["HP_power_offtake"] * x
        hpt = expansion_from_work(gas, Tt41, hp_demand / (g["HP_mech_eff"] * W41), g["hpt_eff_poly"], far41)
        Pt44 = Pt4 / hpt.expansion_ratio
        Tt45, far45, W45 = _mix(gas, hpt.Tt_out, far41, W41, p3.h, c * psi_r)
        lpt = expansion_from_work(gas, Tt45, lp_demand / (g["LP_mech_eff"] * W45), g["lpt_eff_poly"], far45)
        Pt5 = Pt44 / lpt.expansion_ratio
        Pt7 = Pt5 * (1.0 - g["core_duct_pressure_loss"])
        core = _nozzle(gas, lpt.Tt_out, Pt7, Ps0, far45, g["core_nozzle_velocity_coeff"],
                       g["core_nozzle_discharge_coeff"], "core nozzle")
        fn = W45 * core["Fg"] + w18 * byp["Fg"] - V0
        check_range("net thrust per unit air flow", fn, 0.0, np.inf, "N*s/kg", lower_inclusive=False)
        return {"HP_power_demand": hp_demand, "Tt44": hpt.Tt_out, "Pt44": Pt44, "hpt_expansion_ratio":
                hpt.expansion_ratio, "Tt45": Tt45, "Pt45": Pt44, "FAR45": far45, "W45_frac": W45,
                "Tt5": lpt.Tt_out, "Pt5": Pt5, "lpt_expansion_ratio": lpt.expansion_ratio, "Tt7": lpt.Tt_out,
                "Pt7": Pt7, "W5_frac": W45, "Fg8_specific": core["Fg"], "Mach8": core["Mach"],
                "area8_per_flow": core["area_per_flow"], "Fn_specific": fn}

    # W2 loop: secant on x = 1/W2 for F(x) = x*Fn_required - Fn_specific(x) = 0, started from the guess (or
    # x = 0, no offtake) and one fixed-point step. F is almost linear in x (the offtake is a few per cent of the
    # HP work), so a few passes reach round-off; a converged guess needs one pass.
    fn_req = g["Fn_required"]
    x = np.zeros_like(fn_req) if W2_guess is None else 1.0 / np.asarray(W2_guess, dtype=float)
    x_old = F_old = None
    passes = 0
    while True:
        hot = hot_section(x)
        passes += 1
        fn = hot["Fn_specific"]
        F = x * fn_req - fn
        if np.all(np.abs(F) <= LOOP_RTOL * fn):
            break
        if passes >= MAX_PASSES:
            raise RuntimeError(f"the W2 loop did not converge in {MAX_PASSES} passes "
                               f"(largest relative residual {np.max(np.abs(F) / fn):.3g})")
        if x_old is None:
            x_new = fn / fn_req  # fixed-point step
        else:
            slope = (F - F_old) / (x - x_old)
            x_new = x - np.where(slope != 0.0, F / np.where(slope != 0.0, slope, 1.0), 0.0)
        x_old, F_old, x = x, F, x_new
    out.update(hot)

    # performance and sizing (W2 from the thrust requirement at the converged specific thrust)
    wf = c * burner_air * far4
    w8, v8, v18 = hot["W5_frac"], hot["Fg8_specific"], byp["Fg"]
    dke = 0.5 * (w8 * v8**2 + w18 * v18**2 - V0**2)
    heat = wf * g["fuel_LHV"]
    W2 = fn_req / fn
    out.update(fuel_flow_frac=wf, TSFC=wf / fn, jet_velocity_ratio=v18 / v8, thermal_efficiency=dke / heat,
               propulsive_efficiency=fn * V0 / dke, overall_efficiency=fn * V0 / heat, W2=W2,
               fuel_flow=W2 * wf, W2_corrected=W2 * np.sqrt(Tt2 / T_STD) / (Pt2 / P_STD),
               W25_corrected=c * W2 * np.sqrt(boost.Tt_out / T_STD) / (Pt25 / P_STD),
               W3_corrected=c * W2 * np.sqrt(Tt3 / T_STD) / (Pt3 / P_STD),
               HP_shaft_power=W2 * hot["HP_power_demand"], LP_shaft_power=W2 * lp_demand, passes=passes)
    return out
