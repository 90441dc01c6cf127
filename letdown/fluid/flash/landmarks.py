"""Landmarks of a traced envelope: its first point, its critical point, its cricondentherm and
cricondenbar (see :mod:`letdown.fluid.flash.envelope` for the method; the equations and the tracer
are in :mod:`letdown.fluid.flash.continuation`).

* The first point at the start pressure: from the stability-based saturation temperature of the
  engine, or, for a nearly pure fluid, from its main component's saturation point.
* The critical point: interpolated where the ln K cross zero, then fitted through extra points at
  fixed ln K either side.
* The extrema: where the tangent's ln T or ln P component changes sign, refined by Brent's method on
  the curve.

Everything is SI: T [K], P [Pa]; compositions and K-values [-].
"""
from __future__ import annotations

import numpy as np
from scipy.optimize import brentq

from ...errors import ConvergenceError
from . import twophase as fl
from .continuation import EnvelopeSystem, TraceReport, _Trace, trace_report, _hermite, _root, _unit

#: ln K values of the extra points either side of the critical point used to locate it [-].
CRIT_NODES = np.array([0.05, 0.1, 0.15, 0.2])
#: A composition whose largest fraction is at least this starts, where the stability scan finds no
#: dew or bubble point, from the main component's saturation point (nearly pure fluids) [-].
NEARLY_PURE = 0.95
#: Nearly pure start: successive-substitution passes per trial temperature, and the half-widths of
#: the brackets tried around the main component's saturation temperature [K].
NEARLY_PURE_SS_ITER = 50
NEARLY_PURE_BRACKET_K = (0.5, 2.0, 8.0, 30.0)
#: Root finder tolerance for the extrema, in ln T or ln P [-] (1e-12 ~ 3e-10 K).
EXTREMUM_XTOL = 1e-12


def _critical_from(tr: _Trace, nc: int):
    """Interpolated critical point (ln T, ln P) between the points bracketing the crossing."""
    b = tr.crossing
    Xa, ta, Xb, tb = tr.X[b - 1], tr.t[b - 1], tr.X[b], tr.t[b]
    r = int(np.argmax(np.abs(Xb[:nc] - Xa[:nc])))
    L = float(np.linalg.norm(Xb - Xa))

    def lnK(sig):
        return _hermite(Xa[r], ta[r], Xb[r], tb[r], L, sig)
    sig = _root(lnK, 0.0, L, xtol=1e-14 * max(L, 1.0))
    X = _hermite(Xa, ta, Xb, tb, L, sig)
    return X[nc], X[nc + 1]


def _locate_critical(system: EnvelopeSystem, tr: _Trace):
    """(ln T, ln P, TraceReport) of the critical point crossed by a trace."""
    lnT, lnP = _critical_from(tr, system.nc)
    refined = _refine_critical(system, tr)
    if refined is None:
        return lnT, lnP, trace_report(True, "interpolated", "critical point: cubic Hermite in arc "
                                     "length between the two traced points around it", 0,
                                     np.nan, 2)
    lnT2, lnP2, spread = refined
    return lnT2, lnP2, trace_report(
        True, "fitted", f"critical point: polynomial in ln K through points at ln K = "
        f"+-{', '.join(f'{u:g}' for u in CRIT_NODES)} (differs from the Hermite estimate by "
        f"{abs(np.exp(lnT2) - np.exp(lnT)):.2g} K, {abs(np.exp(lnP2) - np.exp(lnP)):.2g} Pa)",
        0, spread, 2 * len(CRIT_NODES))


def _refine_critical(system: EnvelopeSystem, tr: _Trace):
    """The critical point from extra points at fixed ln K_r = +-CRIT_NODES (r: the ln K changing
    fastest at the crossing), fitted by one polynomial in ln K_r through all of them and evaluated at
    ln K_r = 0 (T and P are smooth functions of ln K_r through the critical point).

    Returns (ln T, ln P, spread), spread being the largest change of ln T or ln P from dropping the
    outermost pair of nodes (an estimate of the fit error), or None if fewer than two nodes on
    either side converged.
    """
    nc = system.nc
    b = tr.crossing
    Xs = np.array(tr.X)
    ts = np.array(tr.t)
    r = int(np.argmax(np.abs(Xs[b, :nc] - Xs[b - 1, :nc])))
    side = np.sign(Xs[b - 1, r])
    sol = {}
    for u in sorted(np.concatenate([CRIT_NODES, -CRIT_NODES]), key=abs):
        # a guess from the trace: the Hermite arc between the traced pair bracketing ln K_r = u
        lo = max(b - 6, 0)
        hi = min(b + 6, len(Xs) - 1)
        guess = None
        for i in range(lo, hi):
            a0, a1 = Xs[i, r] - u, Xs[i + 1, r] - u
            if a0 == 0.0 or np.sign(a0) != np.sign(a1):
                L = float(np.linalg.norm(Xs[i + 1] - Xs[i]))
                sig = _root(lambda q: _hermite(Xs[i, r], ts[i, r], Xs[i + 1, r], ts[i + 1, r],
                                                L, q) - u, 0.0, L)
                guess = _hermite(Xs[i], ts[i], Xs[i + 1], ts[i + 1], L, sig)
                break
        if guess is None:
            continue
        X, _, _, _, ok = system.solve(guess, r, u)
        # a node must lie on the traced branch (not the trivial solution, not another branch)
        if ok and abs(X[nc] - guess[nc]) < 0.05 and abs(X[nc + 1] - guess[nc + 1]) < 0.2:
            sol[u] = X
    us = np.array(sorted(sol))
    if np.count_nonzero(us * side > 0) < 2 or np.count_nonzero(us * side < 0) < 2:
        return None
    Y = np.array([sol[u][nc:] for u in us])
    fit = np.polynomial.polynomial.polyfit(us, Y, len(us) - 1)[0]
    inner = np.abs(us) < np.max(np.abs(us))
    spread = np.inf
    if np.count_nonzero(inner) >= 4:
        fit2 = np.polynomial.polynomial.polyfit(us[inner], Y[inner], np.count_nonzero(inner) - 1)[0]
        spread = float(np.max(np.abs(fit - fit2)))
    return float(fit[0]), float(fit[1]), spread


def _extremum(system: EnvelopeSystem, tr: _Trace, which: str):
    """Cricondentherm (``which='T'``) or cricondenbar (``'P'``) on a trace, or None.

    The extremum of X_e (e = ln T or ln P) is bracketed by the traced pair, around the largest
    X_e, whose tangent component t_e changes sign. Along the curve there a parameter p is chosen
    that is monotonic between the pair: the other variable o (ln P or ln T) if its tangent keeps
    its sign, else the ln K changing fastest (a pair that straddles the critical point of a nearly
    pure fluid, where the curve turns in T and P at once). g(p) = dX_e/dp on the curve is driven
    to zero by Brent's method, each trial point solved with X_p specified. Where a trial point
    cannot be solved (the trivial solution K = 1 next to the critical point) the extremum is taken
    on the cubic Hermite arc between the pair, as the critical point is.

    Returns (X or None, status).
    """
    nc = system.nc
    e = system.iT if which == "T" else system.iP
    o = system.iP if which == "T" else system.iT
    Xs = np.array(tr.X)
    ts = np.array(tr.t)
    k = int(np.argmax(Xs[:, e]))
    for a, b in ((k - 1, k), (k, k + 1)):
        if a < 0 or b >= len(Xs):
            continue
        if np.sign(ts[a, e]) != np.sign(ts[b, e]):
            break
    else:
        if k == len(Xs) - 1:
            return None, "none: the curve still rises at the end of its trace"
        return None, "no sign change of the tangent next to the largest value"
    Xa, Xb = Xs[a], Xs[b]
    r = int(np.argmax(np.abs(Xb[:nc] - Xa[:nc])))
    if np.sign(ts[a, o]) == np.sign(ts[b, o]) and Xa[o] != Xb[o]:
        q = o
    elif np.sign(ts[a, r]) == np.sign(ts[b, r]) and Xa[r] != Xb[r]:
        q = r
    else:
        q = None

    def hermite_max():
        L = float(np.linalg.norm(Xb - Xa))
        sig = np.linspace(0.0, L, 201)
        vals = _hermite(Xa[e], ts[a, e], Xb[e], ts[b, e], L, sig)
        j = int(np.argmax(vals))
        lo, hi = sig[max(j - 1, 0)], sig[min(j + 1, sig.size - 1)]

        def d(u):
            h = 1e-7 * L
            return (_hermite(Xa[e], ts[a, e], Xb[e], ts[b, e], L, u + h)
                    - _hermite(Xa[e], ts[a, e], Xb[e], ts[b, e], L, u - h))
        if lo < hi and d(lo) > 0 > d(hi):
            u = brentq(d, lo, hi, xtol=1e-14 * max(L, 1.0))
        else:
            u = sig[j]
        return _hermite(Xa, ts[a], Xb, ts[b], L, u)

    if q is None:
        return hermite_max(), "interpolated on the arc between the two traced points around it"

    def point(u):
        w = (u - Xa[q]) / (Xb[q] - Xa[q])
        X, t, _, _, ok = system.solve((1 - w) * Xa + w * Xb, q, u)
        if not ok:
            raise ConvergenceError(f"envelope point at X[{q}] = {u:.12g} did not converge while "
                                   f"locating the extremum")
        return X, t

    def g(u):
        if u == Xa[q]:
            return ts[a, e] / ts[a, q]
        if u == Xb[q]:
            return ts[b, e] / ts[b, q]
        return point(u)[1][e] / point(u)[1][q]
    try:
        u = _root(g, Xa[q], Xb[q], xtol=EXTREMUM_XTOL, rtol=4 * np.finfo(float).eps)
        X, _ = point(u)
    except ConvergenceError:
        return hermite_max(), ("interpolated on the arc between two traced points (a trial point "
                               "on the curve did not converge)")
    return X, "found"


def _start_nearly_pure(system: EnvelopeSystem, P0: float):
    """First point of a nearly pure fluid, whose dew and bubble points are too close together for
    the stability scan. With the roots fixed (the phase of composition z as vapour on the dew
    side, as liquid on the bubble side, the incipient phase the other), the saturation temperature
    is bracketed around the main component's and found by Brent's method on sum z/K - 1 (dew) or
    sum K z - 1 (bubble), the K-values at each trial temperature by successive substitution from
    infinite dilution in the main component; Newton on the envelope equations then polishes it.

    Returns (X, tangent, message) or (None, None, why)."""
    eos = system.eos
    zs = system.zs
    nc = system.nc
    ip = int(np.argmax(zs))
    if zs[ip] < NEARLY_PURE:
        return None, None, "not nearly pure"
    dew = system.beta == 1.0
    P = np.array([P0])
    Ts = fl.pure_saturation_T(eos, P, np.array([ip]))
    if not np.all(np.isfinite(Ts)):
        return None, None, f"the main component has no saturation temperature at {P0:g} Pa"
    pure = np.zeros((2, nc))
    pure[:, ip] = 1.0
    lnphi, _ = eos.lnphi(np.repeat(Ts, 2), np.repeat(P, 2), pure, np.array([-1, 1]))
    lnK0 = lnphi[0] - lnphi[1]              # ln(phi_L / phi_V) = ln(y / x) at infinite dilution
    lnK0[ip] = 0.0
    state = {"lnK": lnK0.copy()}

    def g(T):
        lnK = state["lnK"].copy()
        for _ in range(NEARLY_PURE_SS_ITER):
            K = np.exp(lnK)
            if dew:
                y, x = zs, zs / K
            else:
                x, y = zs, zs * K
            xy = np.vstack([x / x.sum(), y / y.sum()])
            lp, _ = eos.lnphi(np.full(2, T), np.full(2, P0), xy, np.array([-1, 1]))
            new = lp[0] - lp[1]
            if np.max(np.abs(new - lnK)) < 1e-12:
                lnK = new
                break
            lnK = new
        state["lnK"] = lnK
        K = np.exp(lnK)
        return float(np.sum(zs / K) - 1.0) if dew else float(np.sum(zs * K) - 1.0)

    T_sat = float(Ts[0])
    lo = hi = None
    for d in NEARLY_PURE_BRACKET_K:
        a, b = T_sat - d, T_sat + d
        try:
            state["lnK"] = lnK0.copy()
            ga = g(a)
            state["lnK"] = lnK0.copy()
            gb = g(b)
        except FloatingPointError:
            continue
        if np.isfinite(ga) and np.isfinite(gb) and np.sign(ga) != np.sign(gb):
            lo, hi = a, b
            break
    if lo is None:
        return None, None, "no saturation temperature bracketed around the main component's"
    state["lnK"] = lnK0.copy()
    try:
        T = _root(g, lo, hi, xtol=1e-10)
    except ConvergenceError as exc:
        return None, None, str(exc)
    g(T)
    X0 = np.concatenate([state["lnK"], [np.log(T), np.log(P0)]])
    X, t, _, res, ok = system.solve(X0, nc + 1, np.log(P0))
    if not ok:
        return None, None, (f"the first point of the nearly pure fluid at {P0:g} Pa did not "
                            f"converge (residual {res:.3g})")
    t = _unit(t)
    if t[nc + 1] < 0:
        t = -t
    return X, t, "started from the main component's saturation point"


def _start(engine, system: EnvelopeSystem, P0: float):
    """Converged first point at P0 [Pa] and its tangent (oriented to rising pressure)."""
    eos = engine.eos
    zs = system.zs
    nc = system.nc
    z1 = zs[None, :]
    P = np.array([P0])
    beta = system.beta
    present = zs > 0
    lnKw = np.log(fl.wilson_K(eos, np.array([250.0]), P)[0])
    if beta in (0.0, 1.0):
        kind = "dew" if beta == 1.0 else "bubble"
        T = float(engine.saturation_T(P, z1, kind)[0])
        if not np.isfinite(T):
            X, t, msg = _start_nearly_pure(system, P0)
            if X is not None:
                return X, t, msg
            return None, None, f"no {kind} point found at {P0:g} Pa ({msg})"
        # the incipient phase: the stability test's trial phase just inside the two-phase region
        Ti = T * (1.0 - 1e-7) if kind == "dew" else T * (1.0 + 1e-7)
        st = fl.stability(eos, np.array([Ti]), P, z1, cold=False)
        w = st.ws[0]
        with np.errstate(divide="ignore", invalid="ignore"):
            lnK = np.log(zs / w) if kind == "dew" else np.log(w / zs)
    else:
        Td = float(engine.saturation_T(P, z1, "dew")[0])
        Tb = float(engine.saturation_T(P, z1, "bubble")[0])
        if not (np.isfinite(Td) and np.isfinite(Tb)):
            return None, None, f"no two-phase range found at {P0:g} Pa"

        def split(T):
            return fl.flash_TP(eos, np.array([T]), P, z1, cold=False)

        def f(T):
            return float(split(T).beta[0]) - beta
        T = _root(f, Tb, Td, xtol=1e-9)
        sp = split(T)
        with np.errstate(divide="ignore", invalid="ignore"):
            lnK = np.log(sp.ys[0] / sp.xs[0])
    lnK = np.where(present & np.isfinite(lnK), lnK, lnKw)
    X0 = np.concatenate([lnK, [np.log(T), np.log(P0)]])
    X, t, _, res, ok = system.solve(X0, nc + 1, np.log(P0))
    if not ok:
        msg = f"the first point at {P0:g} Pa did not converge (residual {res:.3g})"
        if beta in (0.0, 1.0):
            # a nearly pure fluid whose stability-based start is too rough for Newton (its dew
            # and bubble points a few millikelvin apart) starts from its main component instead
            Xp, tp, why = _start_nearly_pure(system, P0)
            if Xp is not None:
                return Xp, tp, why
        return None, None, msg
    t = _unit(t)
    if t[nc + 1] < 0:
        t = -t
    return X, t, "started"
