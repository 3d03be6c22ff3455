"""Compressible-flow functions of a thermally perfect gas, with analytic derivatives."""

import numpy as np

from bypassopt.components.validation import check_range

_NEWTON_TOL = 1e-13
_NEWTON_MAXITER = 60


class FlowResult:
    """Values as attributes and first derivatives in ``d[(output, input)]`` (arrays)."""

    def __init__(self, **values):
        self.__dict__.update(values)
        self.d = {}

    def __repr__(self):
        keys = [k for k in self.__dict__ if k != "d"]
        return "FlowResult(" + ", ".join(keys) + ")"


def _static_residual(gas, ht, Ts, Mach, far):
    p = gas.properties(Ts, far, check=False)
    a2 = p.gamma * p.R * Ts
    res = ht - p.h - 0.5 * Mach**2 * a2
    return res, p, a2


def static_from_total(gas, Tt, Pt, Mach, far):
    """Return the static state of an isentropic stream at Mach number ``Mach`` from its total state.

    Solves h(Tt) = h(Ts) + V^2/2 with V = Mach*sqrt(gamma(Ts) R Ts) for Ts by Newton iteration, then
    Ps = Pt exp((phi(Ts) - phi(Tt))/R). With a calorically perfect gas this reduces to the
    isentropic relations of NACA Report 1135. Derivatives follow from the implicit-function theorem.

    Returns
    -------
    FlowResult
        ``Ts`` (K), ``Ps`` (Pa), ``V`` (m/s), ``a`` (m/s), ``rho`` (kg/m^3), ``W_per_A`` (flow per unit
        area rho*V, kg/(s m^2)), and derivatives ``d[(out, inp)]`` for out in those names and inp in
        ('Tt', 'Pt', 'Mach', 'far').
    """
    Tt, Pt, Mach, far = (np.asarray(x) for x in (Tt, Pt, Mach, far))
    check_range("Mach number", Mach, 0.0, 1.0)
    check_range("total pressure", Pt, 0.0, np.inf, "Pa", lower_inclusive=False)
    gas.check_temperature(Tt, "total temperature")
    gas.check_far(far)
    pt = gas.properties(Tt, far, check=False)
    # Newton on real parts
    ht_r, M_r, f_r = np.real(pt.h), np.real(Mach), np.real(far)
    Ts = np.real(Tt) / (1.0 + 0.2 * M_r**2) + 0.0 * f_r
    for _ in range(_NEWTON_MAXITER):
        res, p, a2 = _static_residual(gas, ht_r, Ts, M_r, f_r)
        dres = -p.cp - 0.5 * M_r**2 * p.R * (p.gamma + Ts * p.dgamma_dT)
        step = -res / dres
        Ts = Ts + step
        if np.all(np.abs(step) <= _NEWTON_TOL * Ts):
            break
    else:  # pragma: no cover
        raise RuntimeError("static temperature iteration did not converge")
    gas.check_temperature(Ts, "static temperature")
    # complex-step carrying correction and implicit derivatives
    res, p, a2 = _static_residual(gas, pt.h, Ts, Mach, far)
    dres_dTs = -p.cp - 0.5 * Mach**2 * p.R * (p.gamma + Ts * p.dgamma_dT)
    Ts = Ts - res / dres_dTs
    dres_dTt = pt.cp
    dres_dM = -Mach * a2
    dres_df = pt.dh_dfar - p.dh_dfar - 0.5 * Mach**2 * Ts * (p.dgamma_dfar * p.R + p.gamma * p.dR_dfar)
    dTs = {"Tt": -dres_dTt / dres_dTs, "Mach": -dres_dM / dres_dTs, "far": -dres_df / dres_dTs}
    dTs["Pt"] = np.zeros_like(dTs["Tt"])

    # re-evaluate at the corrected Ts (exact to first order; for complex step it carries the
    # perturbation of Ts into every static property)
    p = gas.properties(Ts, far, check=False)
    R = p.R
    expo = (p.phi - pt.phi) / R
    Ps = Pt * np.exp(expo)
    a2 = p.gamma * R * Ts
    a = np.sqrt(a2)
    V = Mach * a
    rho = Ps / (R * Ts)
    W_per_A = rho * V

    out = FlowResult(Ts=Ts, Ps=Ps, V=V, a=a, rho=rho, W_per_A=W_per_A)
    d = out.d
    for k in ("Tt", "Pt", "Mach", "far"):
        d["Ts", k] = dTs[k]
    # ln Ps = ln Pt + (phi(Ts) - phi(Tt))/R
    dexpo_dTs = p.dphi_dT / R
    dlnPs = {
        "Tt": dexpo_dTs * dTs["Tt"] - pt.dphi_dT / R,
        "Pt": 1.0 / Pt,
        "Mach": dexpo_dTs * dTs["Mach"],
        "far": dexpo_dTs * dTs["far"] + (p.dphi_dfar - pt.dphi_dfar) / R - expo * p.dR_dfar / R,
    }
    # a^2 = gamma(Ts, f) R(f) Ts
    da2_dTs = R * (p.gamma + Ts * p.dgamma_dT)
    for k in ("Tt", "Pt", "Mach", "far"):
        d["Ps", k] = Ps * dlnPs[k]
        da2 = da2_dTs * dTs[k]
        if k == "far":
            da2 = da2 + Ts * (p.dgamma_dfar * R + p.gamma * p.dR_dfar)
        d["a", k] = da2 / (2.0 * a)
        d["V", k] = Mach * d["a", k] + (a if k == "Mach" else 0.0)
        # rho = Ps / (R Ts)
        drho = d["Ps", k] / (R * Ts) - rho * dTs[k] / Ts
        if k == "far":
            drho = drho - rho * p.dR_dfar / R
        d["rho", k] = drho
        d["W_per_A", k] = d["rho", k] * V + rho * d["V", k]
    return out


def sonic(gas, Tt, Pt, far):
    """Sonic (choked) state: ``static_from_total`` at Mach 1; ``W_per_A`` is the choked flow per area."""
    Tt = np.asarray(Tt)
    one = np.ones(np.broadcast(Tt, np.asarray(Pt), np.asarray(far)).shape)
    return static_from_total(gas, Tt, Pt, one, far)


def total_from_static(gas, Ts, Ps, Mach, far):
    """Total state of a stream of static temperature ``Ts``, pressure ``Ps`` and Mach number ``Mach``.

    V = Mach*sqrt(gamma(Ts) R Ts), h(Tt) = h(Ts) + V^2/2 (inverted by Newton iteration),
    Pt = Ps exp((phi(Tt) - phi(Ts))/R). Valid for any Mach number >= 0.

    Returns
    -------
    FlowResult
        ``Tt``, ``Pt``, ``V``, ``a`` and ``d[(out, inp)]`` for inp in ('Ts', 'Ps', 'Mach', 'far').
    """
    Ts, Ps, Mach, far = (np.asarray(x) for x in (Ts, Ps, Mach, far))
    check_range("Mach number", Mach, 0.0, np.inf)
    check_range("static pressure", Ps, 0.0, np.inf, "Pa", lower_inclusive=False)
    gas.check_temperature(Ts, "static temperature")
    ps = gas.properties(Ts, far)
    R = ps.R
    a2 = ps.gamma * R * Ts
    a = np.sqrt(a2)
    V = Mach * a
    ht = ps.h + 0.5 * V**2
    Tt, dTt_dht, dTt_dfar_h = gas.T_from_h(ht, far, label="total enthalpy")
    pt = gas.properties(Tt, far, check=False)
    expo = (pt.phi - ps.phi) / R
    Pt = Ps * np.exp(expo)

    out = FlowResult(Tt=Tt, Pt=Pt, V=V, a=a)
    d = out.d
    da2 = {"Ts": R * (ps.gamma + Ts * ps.dgamma_dT), "Ps": 0.0 * Ts, "Mach": 0.0 * Ts,
           "far": Ts * (ps.dgamma_dfar * R + ps.gamma * ps.dR_dfar)}
    for k in ("Ts", "Ps", "Mach", "far"):
        d["a", k] = da2[k] / (2.0 * a)
        d["V", k] = Mach * d["a", k] + (a if k == "Mach" else 0.0)
        dht = V * d["V", k] + (ps.cp if k == "Ts" else 0.0) + (ps.dh_dfar if k == "far" else 0.0)
        d["Tt", k] = dTt_dht * dht + (dTt_dfar_h if k == "far" else 0.0)
        dexpo = pt.dphi_dT * d["Tt", k] / R
        if k == "Ts":
            dexpo = dexpo - ps.dphi_dT / R
        if k == "far":
            dexpo = dexpo + (pt.dphi_dfar - ps.dphi_dfar) / R - expo * ps.dR_dfar / R
        d["Pt", k] = Pt * dexpo + (np.exp(expo) if k == "Ps" else 0.0)
    return out


def mach_from_flow_per_area(gas, Tt, Pt, W_per_A, far):
    """Subsonic Mach number at which a stream of total state (Tt, Pt) carries ``W_per_A`` kg/(s m^2).

    Newton iteration on the subsonic branch of the mass-flow function; a flow per area above the
    choked value has no subsolution and raises a clear error.

    Returns
    -------
    FlowResult
        ``Mach`` and ``d[('Mach', inp)]`` for inp in ('Tt', 'Pt', 'W_per_A', 'far').
    """
    Tt, Pt, W_per_A, far = (np.asarray(x) for x in (Tt, Pt, W_per_A, far))
    check_range("flow per unit area", W_per_A, 0.0, np.inf, "kg/(s*m**2)", lower_inclusive=False)
    star = sonic(gas, np.real(Tt), np.real(Pt), np.real(far))
    ratio = np.real(W_per_A) / star.W_per_A
    # The choked flow itself (ratio 1) has an infinite dMach/dflow: only strictly subsonic flows.
    check_range("flow per unit area / choked flow per unit area (1 = choked)", ratio, 0.0, 1.0 - 1e-9,
                upper_inclusive=False)
    # Newton on real parts, starting from a low-Mach estimate; converged on the residual, because the
    # flow function is flat near Mach 1 and a test on the Mach step would stall there.
    M = np.clip(0.6 * ratio, 0.01, 0.99)
    Tr, Pr, Wr, fr = np.real(Tt), np.real(Pt), np.real(W_per_A), np.real(far)
    for _ in range(4 * _NEWTON_MAXITER):
        s = static_from_total(gas, Tr, Pr, M, fr)
        res = Wr - s.W_per_A
        if np.all(np.abs(res) <= 1e-13 * Wr):
            break
        step = res / s.d["W_per_A", "Mach"]
        M = np.clip(M + step, 1e-6, 0.5 * (M + 1.0))
    else:  # pragma: no cover
        raise RuntimeError("Mach number from flow per area did not converge")
    s = static_from_total(gas, Tt, Pt, M, far)
    dW_dM = s.d["W_per_A", "Mach"]
    M = M + (W_per_A - s.W_per_A) / dW_dM
    out = FlowResult(Mach=M)
    out.d["Mach", "W_per_A"] = 1.0 / dW_dM
    for k in ("Tt", "Pt", "far"):
        out.d["Mach", k] = -s.d["W_per_A", k] / dW_dM
    return out
