"""Polytropic compression and expansion of a thermally perfect gas, with analytic derivatives."""

import numpy as np

from bypassopt.components.validation import check_range

from .flow import FlowResult


def polytropic_compression(gas, Tt_in, pressure_ratio, eff_poly, far):
    """Exit state of a compression of pressure ratio ``pressure_ratio`` at polytropic efficiency.

    Entropy-function form (Walsh and Fletcher, *Gas Turbine Performance*; Saravanamuttoo et al.,
    *Gas Turbine Theory*): phi(Tt_out) = phi(Tt_in) + R ln(PR) / e_poly, with the work per unit
    mass w = h(Tt_out) - h(Tt_in). For a calorically perfect gas Tt_out/Tt_in =
    PR^((gamma-1)/(gamma e_poly)).

    Returns
    -------
    FlowResult
        ``Tt_out`` (K), ``work`` (J/kg) and ``d[(out, inp)]`` for inp in
        ('Tt_in', 'pressure_ratio', 'eff_poly', 'far').
    """
    Tt_in, pr, e, far = (np.asarray(x) for x in (Tt_in, pressure_ratio, eff_poly, far))
    check_range("compression pressure ratio", pr, 1.0, np.inf)
    check_range("polytropic efficiency", e, 0.0, 1.0, lower_inclusive=False)
    pin = gas.properties(Tt_in, far)
    lnpr = np.log(pr)
    phi_out = pin.phi + pin.R * lnpr / e
    Tt_out, dT_dphi, dT_dfar = gas.T_from_phi(phi_out, far, label="compressor exit entropy function")
    pout = gas.properties(Tt_out, far, check=False)
    out = FlowResult(Tt_out=Tt_out, work=pout.h - pin.h)
    dphi = {"Tt_in": pin.dphi_dT, "pressure_ratio": pin.R / (e * pr), "eff_poly": -pin.R * lnpr / e**2,
            "far": pin.dphi_dfar + pin.dR_dfar * lnpr / e}
    for k, v in dphi.items():
        dT = dT_dphi * v + (dT_dfar if k == "far" else 0.0)
        out.d["Tt_out", k] = dT
        dw = pout.cp * dT
        if k == "Tt_in":
            dw = dw - pin.cp
        if k == "far":
            dw = dw + pout.dh_dfar - pin.dh_dfar
        out.d["work", k] = dw
    return out


def expansion_from_work(gas, Tt_in, work, eff_poly, far):
    """Exit state of a turbine that delivers ``work`` (J/kg of gas) at polytropic efficiency.

    h(Tt_out) = h(Tt_in) - work; the expansion ratio Pt_in/Pt_out follows from the entropy-function
    form phi(Tt_out) = phi(Tt_in) - e_poly R ln(Pt_in/Pt_out) (same sources as compression).

    Returns
    -------
    FlowResult
        ``Tt_out`` (K), ``expansion_ratio`` (Pt_in/Pt_out) and ``d[(out, inp)]`` for inp in
        ('Tt_in', 'work', 'eff_poly', 'far').
    """
    Tt_in, w, e, far = (np.asarray(x) for x in (Tt_in, work, eff_poly, far))
    check_range("polytropic efficiency", e, 0.0, 1.0, lower_inclusive=False)
    pin = gas.properties(Tt_in, far)
    h_out = pin.h - w
    Tt_out, dT_dh, dT_dfar = gas.T_from_h(h_out, far, label="turbine exit enthalpy")
    pout = gas.properties(Tt_out, far, check=False)
    R = pin.R
    ln_er = (pin.phi - pout.phi) / (e * R)
    er = np.exp(ln_er)
    out = FlowResult(Tt_out=Tt_out, expansion_ratio=er)
    dh = {"Tt_in": pin.cp, "work": -1.0, "eff_poly": 0.0, "far": pin.dh_dfar}
    for k, v in dh.items():
        dT = dT_dh * v + (dT_dfar if k == "far" else 0.0)
        out.d["Tt_out", k] = dT + 0.0 * Tt_out
        dln = -pout.dphi_dT * dT / (e * R)
        if k == "Tt_in":
            dln = dln + pin.dphi_dT / (e * R)
        if k == "eff_poly":
            dln = dln - ln_er / e
        if k == "far":
            dln = dln + (pin.dphi_dfar - pout.dphi_dfar) / (e * R) - ln_er * pin.dR_dfar / R
        out.d["expansion_ratio", k] = er * dln
    return out
