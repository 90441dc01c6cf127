"""Dew and bubble points of mixtures on a cubic model: boundary solves that are verified.

A phase boundary along an isobar (or an isotherm) is where the stability test changes its answer.
The solve has three steps, for all cases of a batch together:

1. **Points inside.** Candidate states on the line: where the line crosses the phase envelope of
   the composition (traced by continuation, :mod:`letdown.fluid.flash.envelope`), a few kelvin (or per
   cent of pressure) either side of each crossing and between consecutive crossings, the
   cricondenbar temperature; for a nearly pure gas (largest fraction 0.95 or more) a fine grid
   around the saturation temperature of its main component; and a coarse grid over the whole
   range (the only source where the envelope cannot be traced). One stability test per candidate
   (one batch) says which are two-phase.
2. **Bracket.** The dew point on an isobar is the upper end of the highest two-phase interval
   (the one a sales-gas specification means); the lower dew point is the lower end of that
   interval where the gas is the vapour there (above the critical pressure, near the
   cricondenbar); the bubble point is the lower end of the lowest interval. Each is bracketed by
   a two-phase candidate and the nearest single-phase candidate beyond it (or steps outward).
3. **Bisection** on the stability test down to a bracket of 1e-9 of the value; refinement by the
   envelope equations (see :func:`_refine`); then a check: a full flash just inside (two phases;
   near a critical point, where the split itself may not converge, the flash's stability test
   finding the second phase) and just outside (one phase). A case that fails the check raises
   :class:`~letdown.errors.ConvergenceError`; NaN means that no two-phase state exists on the line
   (the envelope, traced, does not cross it and no candidate is two-phase). A line the traced
   envelope crosses (or, for a closed envelope, an isobar between its first point and its
   cricondenbar) where no candidate is two-phase -- a range too narrow for the stability test,
   next to the critical point of a nearly pure fluid -- raises as well, rather than answer NaN.

Liquid-liquid splits the cubic models find far below a natural gas's freezing point (near 45 K
above a lean gas's cricondenbar) are not dew points: candidates below ``T_floor`` (0.45 of the
gas's mole-averaged critical temperature, at least 60 K) are not used. Above that floor, CO2-rich
and sour gases split into two liquids at 140-210 K (a methane-rich liquid of about 500 kg/m3 and
an H2S- or CO2-rich one of about 1100 kg/m3, below the H2S and CO2 triple points; found by
``bench/fuzz_envelope.py``): where the envelope of a water-free gas traces completely, an isobar
above its cricondenbar (an isotherm above its cricondentherm) has no dew point, and NaN is the
answer there whatever the stability test finds far below the envelope.
"""
from __future__ import annotations

import numpy as np

from ...errors import ConvergenceError, LetdownError
from . import twophase as fl

#: Lowest temperature searched [K] and, as a fraction of the mole-averaged critical temperature,
#: the floor of the search (see the module docstring).
T_FLOOR_ABS = 60.0
T_FLOOR_TPC = 0.45
#: Coarse grid: points, and temperature range as fractions of the smallest / largest Tc present.
GRID_POINTS = 64
GRID_T_HI = 1.6
#: Pressure range of the coarse grid on an isotherm [Pa].
GRID_P = (1e4, 5e7)
#: Offsets either side of an envelope crossing [K] (isobar) and [-] in ln P (isotherm).
OFFSETS_T = (0.02, 0.2, 1.0, 3.0)
OFFSETS_LNP = (0.001, 0.01, 0.05, 0.15)
#: Nearly pure gas: largest fraction from which the fine grid is added, and the grid [K].
NEAR_PURE = 0.95
NEAR_PURE_GRID = np.concatenate([np.linspace(-3.0, 3.0, 121), np.linspace(-0.05, 0.05, 41)])
#: Outward steps where no single-phase candidate lies beyond a two-phase one [K] / [-] in ln P.
STEP_T = 2.0
STEP_LNP = 0.1
#: Upper ends of those steps [K] / [Pa] (the lower ends: the temperature floor, 1 kPa).
STEP_T_MAX = 1500.0
STEP_P_MAX = 1e9
MAX_STEPS = 40
#: Bisection: iterations and relative bracket at which it stops [-].
BISECT_MAX = 80
BISECT_REL = 1e-9
#: The check: distance inside and outside the boundary [K] / [-] in ln P (at most half the way to
#: the two-phase candidate that started the bracket).
CHECK_T = 1e-3
CHECK_LNP = 1e-5
#: Refinement by the envelope equations (see _refine): largest move from the bisection accepted
#: [K] / [-] in ln P, the trivial-solution test on ln K [-], and the distance from a critical
#: point in T [K] and ln P [-] within which a failed refinement raises.
REFINE_MAX_T = 1.0
REFINE_MAX_LNP = 0.02
TRIVIAL_LNK = 1e-5
NEAR_CRIT_T = 10.0
NEAR_CRIT_LNP = 0.1


def _unstable(engine, T, P, zs):
    """True where the state is two-phase by the stability test (the engine's own)."""
    return engine._unstable(T, P, zs)


def _crossings(xs, ys, level):
    """Abscissae where the polyline (xs, ys) crosses ys = level (linear interpolation)."""
    out = []
    for i in range(len(xs) - 1):
        a, b = ys[i] - level, ys[i + 1] - level
        if a == 0.0:
            out.append(xs[i])
        elif a * b < 0.0:
            out.append(xs[i] + (xs[i + 1] - xs[i]) * a / (a - b))
    return out


def _envelope(fluid, z):
    """The phase envelope of z, or None where it cannot be traced."""
    try:
        return fluid._envelope_cached(z)
    except LetdownError:
        return None


def _candidates(fluid, engine, fixed, z, axis):
    """(candidate values on the line, envelope or None) for one case."""
    comps = engine.comps
    present = z > 0
    env = _envelope(fluid, z)
    cand = []
    if env is not None and len(env.T) > 1:
        if axis == "T":
            cr = _crossings(env.T, env.P, fixed)
            for c in cr:
                cand.extend(c + s * d for d in OFFSETS_T for s in (-1.0, 1.0))
            if env.cricondenbar is not None and fixed < env.cricondenbar.P:
                cand.append(env.cricondenbar.T)
        else:
            cr = _crossings(np.log(env.P), env.T, fixed)
            cr = [c for c in cr]
            for c in cr:
                cand.extend(np.exp(c + s * d) for d in OFFSETS_LNP for s in (-1.0, 1.0))
            if env.cricondentherm is not None and fixed < env.cricondentherm.T:
                cand.append(env.cricondentherm.P)
        cand.extend(cr)
        for a, b in zip(cr[:-1], cr[1:]):
            cand.append(0.5 * (a + b) if axis == "T" else np.sqrt(a * b))
    ip = int(np.argmax(z))
    if z[ip] >= NEAR_PURE:
        if axis == "T":
            Ts = fl.pure_saturation_T(engine.eos, np.array([fixed]), np.array([ip]))[0]
            if np.isfinite(Ts):
                cand.extend(Ts + NEAR_PURE_GRID)
        else:
            Ps = fl.pure_saturation_P(engine.eos, np.array([fixed]), np.array([ip]))[0][0]
            if np.isfinite(Ps):
                cand.extend(Ps * np.exp(NEAR_PURE_GRID / 30.0))
    if axis == "T":
        lo = max(T_FLOOR_ABS, 0.3 * comps.Tcs[present].min())
        hi = GRID_T_HI * comps.Tcs[present].max()
        cand.extend(np.linspace(lo, hi, GRID_POINTS))
        floor = max(T_FLOOR_ABS, T_FLOOR_TPC * float(z @ comps.Tcs))
        cand = [c for c in cand if np.isfinite(c) and c >= floor]
    else:
        cand.extend(np.exp(np.linspace(np.log(GRID_P[0]), np.log(GRID_P[1]), GRID_POINTS)))
        cand = [c for c in cand if np.isfinite(c) and c > 0]
    return np.unique(np.array(cand, dtype=float)), env


def _beyond_envelope(engine, env, fixed, z, axis):
    """True where a water-free gas's traced envelope shows that no dew point exists on the line:
    an isobar above its cricondenbar, an isotherm above its cricondentherm (see the module
    docstring: a split the stability test finds there is liquid-liquid, not a dew point)."""
    if env is None or not env.converged:
        return False
    names = engine.comps.names
    if "water" in names and z[names.index("water")] > 0.0:
        return False            # a water dew line lies outside the hydrocarbon envelope
    if axis == "T":
        return env.cricondenbar is not None and fixed > env.cricondenbar.P
    return env.cricondentherm is not None and fixed > env.cricondentherm.T


def boundary(fluid, engine, fixed, zs, kind, axis, branch="upper"):
    """Phase boundaries of a batch on a cubic engine (see the module docstring).

    Parameters
    ----------
    fluid : Fluid
        The fluid (for its cached envelopes).
    engine : CubicEngine
    fixed : ndarray (n,)
        Pressures [Pa] (axis "T") or temperatures [K] (axis "P").
    zs : ndarray (n, nc)
    kind : "dew" or "bubble"
    axis : "T" or "P"
        What is solved for.
    branch : "upper" or "lower"
        For ``kind="dew"`` on an isobar: the upper dew point (default) or the lower one (NaN
        where the lower end of the two-phase range is a bubble point).

    Returns
    -------
    ndarray (n,)
        [K] or [Pa]; NaN where no two-phase state exists on the line.

    Raises
    ------
    ConvergenceError
        A boundary was bracketed but not confirmed by the flashes either side, or no two-phase
        state was found while the envelope could not be traced to show there is none.
    """
    n = fixed.shape[0]
    out = np.full(n, np.nan)
    # 1. candidates of every case, one stability batch
    cands, envs = [], []
    for k in range(n):
        c, env = _candidates(fluid, engine, fixed[k], zs[k], axis)
        cands.append(c)
        envs.append(env)
    sizes = np.array([c.size for c in cands])
    allc = np.concatenate(cands) if n else np.zeros(0)
    fx = np.repeat(fixed, sizes)
    zz = np.repeat(zs, sizes, axis=0)
    uns = (_unstable(engine, allc, fx, zz) if axis == "T" else _unstable(engine, fx, allc, zz))
    uns = np.split(uns, np.cumsum(sizes)[:-1]) if n else []
    if kind == "dew":
        for k in range(n):
            if _beyond_envelope(engine, envs[k], fixed[k], zs[k], axis):
                uns[k] = np.zeros_like(uns[k])
    # 2. brackets: a two-phase end (inside) and a single-phase end (outside)
    # on an isotherm the axis is ln P, so that "up" means rising pressure
    upper = {("dew", "T", "upper"): True, ("dew", "T", "lower"): False,
             ("bubble", "T", "upper"): False, ("bubble", "T", "lower"): False,
             ("dew", "P", "upper"): False, ("dew", "P", "lower"): False,
             ("bubble", "P", "upper"): True, ("bubble", "P", "lower"): True}[(kind, axis, branch)]
    # the highest interval (dew on an isobar, bubble on an isotherm) or the lowest
    top = (kind == "dew") == (axis == "T")
    inside = np.full(n, np.nan)
    outside = np.full(n, np.nan)
    start = np.full(n, np.nan)
    for k in range(n):
        c, u = cands[k], uns[k]
        if not u.any():
            if envs[k] is None:
                raise ConvergenceError(
                    f"no two-phase state found on the {'isobar' if axis == 'T' else 'isotherm'} "
                    f"at {fixed[k]:.6g} {'Pa' if axis == 'T' else 'K'}, and the phase envelope "
                    f"could not be traced to show that there is none")
            env = envs[k]
            cr = (_crossings(env.T, env.P, fixed[k]) if axis == "T"
                  else list(np.exp(_crossings(np.log(env.P), env.T, fixed[k]))))
            if not cr and axis == "T" and env.converged and env.cricondenbar is not None \
                    and env.P.min() <= fixed[k] <= env.cricondenbar.P:
                # a closed envelope spans every pressure from its first point to its
                # cricondenbar, even where the traced chords stay below a sharp top
                cr = [env.cricondentherm.T if env.cricondentherm is not None
                      else env.cricondenbar.T]
            if cr and branch == "upper":
                # the traced envelope crosses the line, but no candidate was two-phase: a range
                # too narrow for the stability test (next to the critical point of a nearly pure
                # fluid); NaN would say wrongly that there is no boundary
                at = max(cr) if (top or axis == "P") else min(cr)
                raise ConvergenceError(
                    f"{kind} point at {fixed[k]:.6g} {'Pa' if axis == 'T' else 'K'}: the phase "
                    f"envelope crosses this {'isobar' if axis == 'T' else 'isotherm'} (near "
                    f"{at:.6g} {'K' if axis == 'T' else 'Pa'}), but the two-phase range there is "
                    f"too narrow for the stability test to confirm the boundary")
            continue
        iu = np.nonzero(u)[0]
        j = iu[-1] if top else iu[0]          # a two-phase candidate of the wanted interval
        if upper:
            stable_beyond = np.nonzero(~u[j + 1:])[0]
            o = c[j + 1 + stable_beyond[0]] if stable_beyond.size else np.nan
        else:
            # the lower end of the interval holding j: the last stable candidate below it
            below = np.nonzero(~u[:j])[0]
            if below.size:
                jj = below[-1] + 1
                j = jj
                o = c[below[-1]]
            else:
                o = np.nan
        inside[k] = c[j]
        outside[k] = o
        start[k] = c[j]
    # outward steps where no single-phase candidate lies beyond
    need = np.isfinite(inside) & ~np.isfinite(outside)
    step = STEP_T if axis == "T" else STEP_LNP
    sign = 1.0 if upper else -1.0
    probe = inside.copy()
    if axis == "T":
        lo_lim = np.maximum(T_FLOOR_ABS, T_FLOOR_TPC * (zs @ engine.comps.Tcs))
        hi_lim = np.full(n, STEP_T_MAX)
    else:
        lo_lim = np.full(n, GRID_P[0] / 10.0)
        hi_lim = np.full(n, STEP_P_MAX)
    for _ in range(MAX_STEPS):
        if not need.any():
            break
        i = np.nonzero(need)[0]
        if axis == "T":
            probe[i] = np.clip(probe[i] + sign * step, lo_lim[i], hi_lim[i])
            u = _unstable(engine, probe[i], fixed[i], zs[i])
        else:
            probe[i] = np.clip(probe[i] * np.exp(sign * step), lo_lim[i], hi_lim[i])
            u = _unstable(engine, fixed[i], probe[i], zs[i])
        inside[i] = np.where(u, probe[i], inside[i])
        outside[i] = np.where(u, np.nan, probe[i])
        at_limit = (probe[i] <= lo_lim[i]) | (probe[i] >= hi_lim[i])
        if np.any(u & at_limit):
            k = int(i[np.nonzero(u & at_limit)[0][0]])
            raise ConvergenceError(
                f"{kind} point at {fixed[k]:.6g}: two phases persist to the end of the search "
                f"range ({probe[k]:.6g} {'K' if axis == 'T' else 'Pa'}); there is no {kind} "
                f"point within it")
        need[i] = u
        step *= 1.5
    if need.any():
        k = int(np.nonzero(need)[0][0])
        raise ConvergenceError(f"{kind} point at {fixed[k]:.6g}: the two-phase range did not end "
                               f"within the search range")
    # 3. bisection on the stability test
    a, b = inside.copy(), outside.copy()         # a two-phase, b single-phase
    act = np.isfinite(a)
    for _ in range(BISECT_MAX):
        if not act.any():
            break
        i = np.nonzero(act)[0]
        mid = 0.5 * (a[i] + b[i]) if axis == "T" else np.sqrt(a[i] * b[i])
        u = (_unstable(engine, mid, fixed[i], zs[i]) if axis == "T"
             else _unstable(engine, fixed[i], mid, zs[i]))
        a[i] = np.where(u, mid, a[i])
        b[i] = np.where(u, b[i], mid)
        act[i] = np.abs(a[i] - b[i]) > BISECT_REL * np.abs(b[i])
    ok = np.isfinite(a)
    res = np.where(ok, 0.5 * (a + b) if axis == "T" else np.sqrt(np.abs(a * b)), np.nan)
    res, a = _refine(engine, fixed, zs, res, a, start, envs, axis, kind)
    # the check: full flashes just inside and just outside
    i = np.nonzero(ok)[0]
    if i.size:
        if axis == "T":
            d = np.minimum(CHECK_T, 0.5 * np.abs(a[i] - start[i]))
            s = np.sign(start[i] - res[i])
            Tin, Tout = a[i] + s * d, res[i] - s * np.maximum(d, 1e-9 * res[i])
            st = engine.flash_TP(np.concatenate([Tin, Tout]), np.concatenate([fixed[i], fixed[i]]),
                                 np.concatenate([zs[i], zs[i]]), cold=False)
        else:
            d = np.minimum(CHECK_LNP, 0.5 * np.abs(np.log(a[i] / start[i])))
            s = np.sign(np.log(start[i] / res[i]))
            Pin, Pout = a[i] * np.exp(s * d), res[i] * np.exp(-s * np.maximum(d, 1e-9))
            st = engine.flash_TP(np.concatenate([fixed[i], fixed[i]]), np.concatenate([Pin, Pout]),
                                 np.concatenate([zs[i], zs[i]]), cold=False)
        m = i.size
        two_in = (st.n_phases[:m] >= 2) & st.converged[:m]
        if not two_in.all():
            # near a critical point the split itself may not converge although the flash's
            # stability test finds the second phase: that test is then the evidence inside
            j = np.nonzero(~two_in)[0]
            if axis == "T":
                two_in[j] = _unstable(engine, Tin[j], fixed[i[j]], zs[i[j]])
            else:
                two_in[j] = _unstable(engine, fixed[i[j]], Pin[j], zs[i[j]])
        one_out = (st.n_phases[m:] == 1) & st.converged[m:]
        bad = ~(two_in & one_out)
        if bad.any():
            k = int(i[np.nonzero(bad)[0][0]])
            raise ConvergenceError(f"{kind} point at {fixed[k]:.6g}: the boundary found at "
                                   f"{res[k]:.6g} is not confirmed by flashes either side")
        if kind == "dew" and axis == "T" and branch == "lower":
            # a lower end where the gas is the liquid is a bubble point, not a dew point
            beta_in = st.vapour_fraction[:m]
            res[i] = np.where(beta_in > 0.5, res[i], np.nan)
    out[:] = res
    return out


def _refine(engine, fixed, zs, res, a, start, envs, axis, kind):
    """The boundary from the envelope equations (fugacity equality; Newton,
    :class:`letdown.fluid.flash.envelope.EnvelopeSystem`) started from the bisection's answer and the
    stability test's trial phase just inside.

    The stability test loses the two-phase states closest to the boundary (its trial phase falls
    to the trivial solution there): the bisection lands up to a few millikelvin inside at 5 K from
    a critical point and 0.1-0.5 K at 1-4 K (measured on invented CO2-rich and propane-rich gases).
    Where Newton converges to a non-trivial point within REFINE_MAX of the bisection, that point is
    the answer and the check flashes are made outside it and inside the bisection's two-phase end;
    where it does not, the bisection stands, except near a critical point (within NEAR_CRIT_T,
    NEAR_CRIT_LNP), where the solve raises rather than return a boundary that may be off.

    Returns (boundaries, inside ends) with the inside end moved to a two-phase state beyond the
    refined boundary.
    """
    from .envelope import EnvelopeSystem
    eos = engine.eos
    res = res.copy()
    a = a.copy()
    todo = np.nonzero(np.isfinite(res))[0]
    if todo.size == 0:
        return res, a
    # the trial phases just inside, all cases in one stability batch
    Ts = a[todo] if axis == "T" else fixed[todo]
    Ps = fixed[todo] if axis == "T" else a[todo]
    stb = fl.stability(eos, Ts, Ps, zs[todo], cold=False)
    for j, k in enumerate(todo):
        T, P = (res[k], fixed[k]) if axis == "T" else (fixed[k], res[k])
        z = zs[k]
        nc = z.size
        w = stb.ws[j]
        with np.errstate(divide="ignore", invalid="ignore"):
            lnK = np.where((z > 0) & (w > 0), np.log(z / w), 0.0)
        X0 = np.concatenate([lnK, [np.log(T), np.log(P)]])
        spec = nc + 1 if axis == "T" else nc
        ok = bool(stb.unstable[j])
        got = np.nan
        if ok:
            X, _, _, resid, ok = EnvelopeSystem(eos, z, 1.0).solve(X0, spec, X0[spec])
            ok = bool(ok) and np.max(np.abs(X[:nc])) > TRIVIAL_LNK
            got = np.exp(X[nc]) if axis == "T" else np.exp(X[nc + 1])
        if axis == "T":
            off = abs(got - res[k])
            agree = ok and off <= REFINE_MAX_T
        else:
            off = abs(np.log(got / res[k])) if ok else np.inf
            agree = ok and off <= REFINE_MAX_LNP
        # the boundary lies beyond the bisection's two-phase end, on the side of its answer
        agree = agree and (got - a[k]) * (res[k] - a[k]) >= 0.0
        if agree:
            # the refined boundary lies on the single-phase side of the bisection's two-phase end
            # (or on it): keep that end for the inside check
            res[k] = got
            continue
        env = envs[k]
        crit = env.critical if env is not None else None
        if crit is not None and abs(T - crit.T) <= NEAR_CRIT_T and \
                abs(np.log(P / crit.P)) <= NEAR_CRIT_LNP:
            raise ConvergenceError(
                f"{kind} point at {fixed[k]:.6g}: the boundary at {res[k]:.6g} lies near the "
                f"critical point ({crit.T:.5g} K, {crit.P:.5g} Pa), where the stability test "
                f"and the envelope equations "
                + (f"disagree ({got:.6g})" if ok else "could not be reconciled"))
    return res, a
