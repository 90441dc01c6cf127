"""Counter-current two-stream heat exchanger, checked slice by slice.

The hot stream passes duty ``Q`` to the cold stream. One specification fixes ``Q``: ``hot_T_out``,
``cold_T_out``, ``duty``, ``min_approach`` (smallest hot-cold temperature difference anywhere in the
exchanger) or ``UA``. Pressure drops ``hot_dP`` and ``cold_dP`` (default 0) are taken to fall in
proportion to the heat passed (common practice for a first estimate).

The temperature profile is computed in ``SLICES`` equal enthalpy slices (P-h flashes of both streams
at the slice boundaries, all slices and cases in one batch flash). Position ``k`` (0 at the hot
inlet, ``SLICES`` at the hot outlet) has::

    h_hot,k  = h_hot,in  - (k / N) Q / F_hot
    h_cold,k = h_cold,in + (1 - k / N) Q / F_cold        (counter-current)

so a temperature cross inside the exchanger -- where a phase change bends one curve -- shows even
when both ends are fine. ``UA`` is the slice-wise sum ``sum_k (Q / N) / LMTD_k`` (each slice's log-mean
temperature difference); it is infinite where the profile touches or crosses.

A ``min_approach`` or ``UA`` specification is met by the bracketed root finder of
:mod:`letdown.numerics.rootfind` over ``0 <= Q <= Q_max``, where ``Q_max`` is the smaller of the
duties that bring the hot outlet to the cold inlet temperature or the cold outlet to the hot inlet
temperature.

Guards: heat passes from hot to cold and never across a temperature cross. A specification the file
(or a case array) gives that cannot be met otherwise is refused for the cases concerned
(``InputError`` with ``cases=``, the parameter named): a ``cold_T_out`` above the hot inlet
temperature, a ``hot_T_out`` below the cold inlet temperature, a negative ``duty``, an outlet
temperature that sends heat from the cold side to the hot, a ``min_approach`` wider than the
difference of the inlet temperatures, a ``UA`` with a hot inlet no warmer than the cold, and any
``duty``, ``hot_T_out`` or ``cold_T_out`` whose profile crosses (by more than
:data:`CROSS_TOLERANCE`) at an end or inside. Where a goal varies the specification, the same
conditions are flagged instead (``temperature_cross``, ``reverse_duty``, ``spec_unmet``: hazards in
the flowsheet result). A profile that only touches (zero approach, infinite area) is flagged
``temperature_cross``. Empty streams pass no heat and are not judged.
"""
from __future__ import annotations

import numpy as np

from .common import TINY_FLOW, Refusals, array_param, by_goal, finish, one_of, outlet_pressure
from ..numerics.rootfind import bracketed_root
from .stream import StreamBatch, flash_stream

#: Enthalpy slices of the profile check (about 20 resolves a dew-point bend to a fraction of a
#: kelvin for natural-gas streams; common practice).
SLICES = 20

SPECS = ("hot_T_out", "cold_T_out", "duty", "min_approach", "UA")

#: A given outlet temperature counts as beyond the other side's inlet, and a profile as crossed,
#: past this [K]: the rounding of the P-h flashes of the profile (about 1e-9 K), far below any
#: design approach. Within it a profile only touches (flagged, not refused).
CROSS_TOLERANCE = 1e-6

#: Minimum-approach target is met to this [K]; far below any design margin.
APPROACH_TOLERANCE = 1e-6
#: UA target is met to this, relative [-].
UA_RELATIVE_TOLERANCE = 1e-9
#: Cap on profile evaluations per root search (Illinois needs about 10-20).
MAX_ROOT_ITERATIONS = 100
#: The surrogate profile for min_approach and UA: T-P flashes at this many temperatures spanning
#: the inlet temperatures widened by SURROGATE_MARGIN [K] on each side (pressure drop and
#: Joule-Thomson effects can carry an outlet slightly outside them).
SURROGATE_POINTS = 81
SURROGATE_MARGIN = 5.0
#: Secant steps on the exact profile after the surrogate (two or three usually settle it), and the
#: relative duty step of the surrogate's slope estimate.
MAX_POLISH_STEPS = 8
POLISH_STEP = 1e-4
#: A UA whose root the search leaves unsettled is accepted where the exact profile brackets it
#: within this fraction of the duty [-] (or reaches it only within it of the largest duty). Near a
#: pinch UA grows only with the logarithm of the vanishing approach, so a large UA can need an
#: approach below the flash's rounding, where no residual tolerance is met although the duty is
#: fixed to this fraction (measured: a lean gas at 10.6 bar against one at 127 bar, UA 3.5e4 W/K,
#: met 1e-13 K from the pinch; the search used to leave the duty at 2e-10 W instead of 3.7 kW and
#: call the UA unmeetable).
UA_DUTY_TOLERANCE = 1e-9


def _profile(fluid, hot: StreamBatch, cold: StreamBatch, Q, P_hot_out, P_cold_out, guess=None):
    """Both streams at the ``SLICES + 1`` slice boundaries for duty ``Q`` (n,) [W].

    ``guess``, if given, is a pair of (n, N+1) temperature arrays [K] that start the P-h flashes.

    Returns
    -------
    states : StreamBatch
        ``2 n (N+1)`` states, ordered (side, case, position): hot first, then cold.
    T_hot, T_cold : ndarray (n, N+1)
        Temperatures along the exchanger [K] from the hot inlet end.
    """
    n = hot.n_cases
    frac = np.linspace(0.0, 1.0, SLICES + 1)[None, :]           # position k / N
    q_hot = np.where(hot.flow > 0, Q / np.maximum(hot.flow, TINY_FLOW), 0.0)[:, None]
    q_cold = np.where(cold.flow > 0, Q / np.maximum(cold.flow, TINY_FLOW), 0.0)[:, None]
    h_hot = hot.h[:, None] - frac * q_hot
    P_hot = hot.P[:, None] - frac * (hot.P - P_hot_out)[:, None]
    h_cold = cold.h[:, None] + (1.0 - frac) * q_cold
    P_cold = cold.P[:, None] - (1.0 - frac) * (cold.P - P_cold_out)[:, None]
    m = SLICES + 1
    zs = np.concatenate([np.repeat(hot.zs, m, axis=0), np.repeat(cold.zs, m, axis=0)])
    flow = np.concatenate([np.repeat(hot.flow, m), np.repeat(cold.flow, m)])
    T_guess = None if guess is None else np.concatenate([guess[0].ravel(), guess[1].ravel()])
    states = flash_stream(fluid, flow, zs, P=np.concatenate([P_hot.ravel(), P_cold.ravel()]),
                          h=np.concatenate([h_hot.ravel(), h_cold.ravel()]), T_guess=T_guess)
    T = states.T.reshape(2, n, m)
    return states, T[0], T[1]


def _approach_and_ua(Q, T_hot, T_cold):
    """Smallest temperature difference [K], where it is (fraction of Q from the hot end) and UA [W/K]."""
    dT = T_hot - T_cold
    k_min = np.argmin(dT, axis=1)
    min_dT = dT[np.arange(dT.shape[0]), k_min]
    a, b = dT[:, :-1], dT[:, 1:]
    with np.errstate(divide="ignore", invalid="ignore"):
        lmtd = np.where(np.abs(a - b) > 1e-12 * np.abs(a), (a - b) / np.log(a / b), a)
        slices = (np.abs(Q) / SLICES)[:, None] / lmtd
        total = np.sum(slices, axis=1)      # NaN where the profile touches: replaced below
    touching = np.any(dT <= 0.0, axis=1)
    UA = np.where(touching, np.inf, total)
    UA = np.where(Q == 0.0, 0.0, UA)
    return min_dT, k_min / SLICES, UA


def _max_duty(fluid, hot, cold, P_hot_out, P_cold_out):
    """Largest duty the end temperatures allow [W] (>= 0)."""
    both = flash_stream(fluid, np.concatenate([hot.flow, cold.flow]),
                        np.concatenate([hot.zs, cold.zs]),
                        T=np.concatenate([cold.T, hot.T]), P=np.concatenate([P_hot_out, P_cold_out]))
    n = hot.n_cases
    q_hot = hot.flow * (hot.h - both.h[:n])
    q_cold = cold.flow * (both.h[n:] - cold.h)
    return np.maximum(np.minimum(q_hot, q_cold), 0.0)


def run(fluid, name: str, inlets, params):
    """Exchange heat between a hot and a cold batch.

    Parameters
    ----------
    fluid : letdown.fluid.Fluid
    name : str
        Block name (for error messages).
    inlets : Mapping[str, StreamBatch]
        ``{"hot": stream, "cold": stream}``.
    params : Mapping
        One of ``hot_T_out`` [K], ``cold_T_out`` [K], ``duty`` [W], ``min_approach`` [K], ``UA``
        [W/K]; optional ``hot_dP``, ``cold_dP`` [Pa].

    Returns
    -------
    BlockOutcome
        ``outlets={"hot": ..., "cold": ...}``, ``duty`` [W] (hot to cold); details ``UA_W_K``,
        ``min_approach_K``, ``min_approach_at`` (fraction of the duty from the hot end),
        ``hot_dP_Pa``, ``cold_dP_Pa``; flags ``temperature_cross`` (the profile touches or crosses)
        , ``reverse_duty`` (heat from the cold side to the hot) and ``spec_unmet`` (a
        ``min_approach`` or ``UA`` the inlet temperatures cannot give), set where a goal varies
        the specification or the search failed (see the module docstring).

    Raises
    ------
    InputError
        If none or several specifications are given, an outlet pressure is not positive, or (with
        ``cases=``) a given specification cannot be met without a temperature cross or heat
        flowing from cold to hot (see the module docstring).
    """
    hot, cold = inlets["hot"], inlets["cold"]
    n = hot.n_cases
    spec = one_of(params, SPECS, name)
    P_hot_out = outlet_pressure({"dP": params.get("hot_dP", 0.0)}, hot, name, required=True)
    P_cold_out = outlet_pressure({"dP": params.get("cold_dP", 0.0)}, cold, name, required=True)
    value = array_param(params, spec, n, name)
    flowing = (hot.flow > 0) & (cold.flow > 0)
    given = not by_goal(params, spec)
    # refusals are collected and raised together once the profile is known (one error, every case)
    refusals = Refusals(params, name)
    if given:
        _refuse_given(refusals, spec, value, hot, cold, flowing)
    unmet = np.zeros(n, dtype=bool)
    guess = None
    if spec == "duty":
        Q = value
    elif spec == "hot_T_out":
        Q = hot.flow * (hot.h - flash_stream(fluid, hot.flow, hot.zs, T=value, P=P_hot_out).h)
    elif spec == "cold_T_out":
        Q = cold.flow * (flash_stream(fluid, cold.flow, cold.zs, T=value, P=P_cold_out).h - cold.h)
    else:
        Q, unmet, model = _solve_duty(fluid, hot, cold, P_hot_out, P_cold_out, spec, value)
    Q = np.where((hot.flow > 0) & (cold.flow > 0), Q, 0.0)
    if spec in ("min_approach", "UA"):
        guess = model(Q, np.arange(n))
    states, T_hot, T_cold = _profile(fluid, hot, cold, Q, P_hot_out, P_cold_out, guess)
    min_dT, where, UA = _approach_and_ua(Q, T_hot, T_cold)
    m = SLICES + 1
    hot_out = states.take(np.arange(n) * m + SLICES)
    cold_out = states.take(n * m + np.arange(n) * m)
    cross = np.any(T_hot - T_cold <= 0.0, axis=1) & (Q != 0.0)
    reverse = flowing & (Q < 0.0)
    if given:
        _refuse_profile(refusals, spec, Q, T_hot, T_cold, min_dT, where, flowing, refusals.reasons)
    refusals.raise_any()
    details = {"UA_W_K": np.where(np.isfinite(UA), UA, np.nan), "min_approach_K": min_dT,
               "min_approach_at": where, "hot_dP_Pa": hot.P - P_hot_out,
               "cold_dP_Pa": cold.P - P_cold_out}
    outlets = {"hot": hot_out, "cold": cold_out}
    carried = hot.carry is not None and cold.carry is not None
    if carried:
        outlets, _ = carry(fluid, name, inlets, outlets, params)
    return finish(inlets, outlets, 0.0, own_carry=carried, duty=Q, details=details,
                  flags={"temperature_cross": cross, "spec_unmet": unmet, "reverse_duty": reverse})


def carry(fluid, name: str, inlets, outlets, params) -> tuple[dict, dict]:
    """The exchanger's carry rule (:func:`letdown.equipment.common.carry`): each side keeps its
    own water and inhibitor (the two streams never meet)."""
    return {side: s.with_carry(inlets[side].carry.kept()) for side, s in outlets.items()}, {}


def _K(T) -> str:
    return f"{T:.2f} K ({T - 273.15:.2f} degC)"


def _refuse_given(refuse, spec, value, hot, cold, flowing):
    """Refuse the cases whose given specification the inlet temperatures rule out."""
    tol = CROSS_TOLERANCE
    if spec == "cold_T_out":
        refuse.add(flowing & (value > hot.T + tol),
               lambda i: f"the cold outlet {_K(value[i])} would be hotter than the hot inlet "
                         f"{_K(hot.T[i])}, a temperature cross: lower cold_T_out below the hot inlet "
                         "by the approach the exchanger is designed for, or give min_approach",
               spec)
        refuse.add(flowing & (value < cold.T - tol),
               lambda i: f"the cold outlet {_K(value[i])} is colder than the cold inlet "
                         f"{_K(cold.T[i])}: heat would pass from the cold side to the hot; raise "
                         "cold_T_out above the cold inlet, or swap the hot and cold streams",
               spec)
    elif spec == "hot_T_out":
        refuse.add(flowing & (value < cold.T - tol),
               lambda i: f"the hot outlet {_K(value[i])} would be colder than the cold inlet "
                         f"{_K(cold.T[i])}, a temperature cross: raise hot_T_out above the cold "
                         "inlet by the approach the exchanger is designed for, or give min_approach",
               spec)
        refuse.add(flowing & (value > hot.T + tol),
               lambda i: f"the hot outlet {_K(value[i])} is hotter than the hot inlet "
                         f"{_K(hot.T[i])}: heat would pass from the cold side to the hot; lower "
                         "hot_T_out below the hot inlet, or swap the hot and cold streams", spec)
    elif spec == "duty":
        refuse.add(flowing & (value < 0.0),
               lambda i: f"duty {value[i]:.6g} W is negative: the duty is the heat passed from the "
                         "hot side to the cold; give zero or more, or swap the hot and cold streams",
               spec)
    elif spec == "min_approach":
        refuse.add(flowing & (hot.T - cold.T < value - tol),
               lambda i: f"min_approach {value[i]:.6g} K is wider than the difference of the inlet "
                         f"temperatures, {hot.T[i] - cold.T[i]:.6g} K (hot inlet {_K(hot.T[i])}, "
                         f"cold inlet {_K(cold.T[i])}): no duty keeps it; give a smaller "
                         "min_approach or warmer hot (colder cold) inlets",
               spec)
    elif spec == "UA":
        refuse.add(flowing & (hot.T <= cold.T),
               lambda i: f"the hot inlet {_K(hot.T[i])} is no warmer than the cold inlet "
                         f"{_K(cold.T[i])}: no heat passes from hot to cold; swap the hot and "
                         "cold streams", spec)


def _refuse_profile(refuse, spec, Q, T_hot, T_cold, min_dT, where, flowing, earlier):
    """Refuse the cases whose profile crosses, or passes heat from cold to hot (beyond the cases
    refused ``earlier`` for their inlet temperatures)."""
    flowing = flowing & ~np.logical_or.reduce([b for b, _, _ in earlier] + [np.zeros_like(flowing)])
    refuse.add(flowing & (min_dT < -CROSS_TOLERANCE) & (Q > 0.0),
           lambda i: f"{spec} {_quantity(spec, Q, T_hot, T_cold, i)} cannot be met without a "
                     f"temperature cross: the hot side would be {-min_dT[i]:.2f} K colder than the "
                     f"cold side at {100 * where[i]:.0f} % of the duty"
                     + ("" if spec == "duty" else f" ({Q[i]:.6g} W)") + " from the hot "
                     "end; ask for less heat (give min_approach, or a smaller duty or outlet "
                     "change)", spec)
    refuse.add(flowing & (Q < 0.0),
           lambda i: f"{spec} {_quantity(spec, Q, T_hot, T_cold, i)} makes the duty negative "
                     f"({Q[i]:.6g} W): heat would pass from the cold side to the hot; swap the hot "
                     "and cold streams", spec)


def _quantity(spec, Q, T_hot, T_cold, i) -> str:
    if spec == "hot_T_out":
        return _K(T_hot[i, -1])
    if spec == "cold_T_out":
        return _K(T_cold[i, 0])
    return f"{Q[i]:.6g} W"


def _interp_rows(x, xp, fp):
    """Row-wise linear interpolation: ``x`` (n, k) in the increasing rows of ``xp`` (n, G) -> (n, k).

    Clamped at the ends, like :func:`numpy.interp`.
    """
    G = xp.shape[1]
    j = np.clip(np.sum(xp[:, None, :] < x[:, :, None], axis=2), 1, G - 1)
    rows = np.arange(x.shape[0])[:, None]
    x0, x1 = xp[rows, j - 1], xp[rows, j]
    y0, y1 = fp[rows, j - 1], fp[rows, j]
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.clip(np.where(x1 > x0, (x - x0) / (x1 - x0), 0.0), 0.0, 1.0)
    return y0 + t * (y1 - y0)


def _surrogate(fluid, hot, cold, P_hot_out, P_cold_out):
    """Cheap profile model: each stream's h(T) on a grid of T-P flashes at its mean pressure.

    Returns a function ``Q (n,) -> (T_hot, T_cold)`` at the slice boundaries (no flash).
    """
    n = hot.n_cases
    T_low = np.minimum(hot.T, cold.T) - SURROGATE_MARGIN
    T_high = np.maximum(hot.T, cold.T) + SURROGATE_MARGIN
    grid = T_low[:, None] + (T_high - T_low)[:, None] * np.linspace(0.0, 1.0, SURROGATE_POINTS)
    G = SURROGATE_POINTS
    states = flash_stream(fluid, np.zeros(2 * n * G),
                          np.concatenate([np.repeat(hot.zs, G, axis=0), np.repeat(cold.zs, G, axis=0)]),
                          T=np.concatenate([grid.ravel(), grid.ravel()]),
                          P=np.concatenate([np.repeat(0.5 * (hot.P + P_hot_out), G),
                                            np.repeat(0.5 * (cold.P + P_cold_out), G)]))
    h = states.h.reshape(2, n, G)
    # enthalpy rises with temperature at fixed pressure; keep the rows increasing against noise
    h_hot, h_cold = np.maximum.accumulate(h[0], axis=1), np.maximum.accumulate(h[1], axis=1)
    frac = np.linspace(0.0, 1.0, SLICES + 1)[None, :]

    def model(Q, idx):
        q_hot = np.where(hot.flow[idx] > 0, Q / np.maximum(hot.flow[idx], TINY_FLOW), 0.0)[:, None]
        q_cold = np.where(cold.flow[idx] > 0, Q / np.maximum(cold.flow[idx], TINY_FLOW), 0.0)[:, None]
        T_hot = _interp_rows(hot.h[idx, None] - frac * q_hot, h_hot[idx], grid[idx])
        T_cold = _interp_rows(cold.h[idx, None] + (1.0 - frac) * q_cold, h_cold[idx], grid[idx])
        return T_hot, T_cold
    return model


def _solve_duty(fluid, hot, cold, P_hot_out, P_cold_out, spec, target):
    """Duty meeting a minimum approach or a UA, all cases together.

    Returns ``(Q, unmet, model)``: duty [W], cases whose specification cannot be met, and the
    surrogate profile ``model(Q, idx) -> (T_hot, T_cold)`` (its temperatures start P-h flashes).

    First on the cheap surrogate profile (T-P grid, interpolation; no P-h flash), then polished by
    secant steps on the exact slice profile; cases the polish does not settle fall back to the
    bracketed root finder on the exact profile.
    """
    n = hot.n_cases
    Q_max = _max_duty(fluid, hot, cold, P_hot_out, P_cold_out)
    every = np.arange(n)

    def residual(T_hot, T_cold, Q, idx):
        min_dT, _, UA = _approach_and_ua(Q, T_hot, T_cold)
        return (min_dT - target[idx]) if spec == "min_approach" else (UA - target[idx])

    model = _surrogate(fluid, hot, cold, P_hot_out, P_cold_out)

    def exact(Q, idx):
        _, T_hot, T_cold = _profile(fluid, hot.take(idx), cold.take(idx), Q,
                                    P_hot_out[idx], P_cold_out[idx], model(Q, idx))
        return residual(T_hot, T_cold, Q, idx)

    def cheap(Q, idx):
        return residual(*model(Q, idx), Q, idx)

    if spec == "min_approach":
        ftol = np.full(n, APPROACH_TOLERANCE)
    else:
        ftol = UA_RELATIVE_TOLERANCE * np.abs(target)
    # the surrogate's own root: min approach falls with Q; UA rises from 0 to +inf at Q_max
    s_lo, s_hi = cheap(np.zeros(n), every), cheap(Q_max, every)
    if spec == "min_approach":
        unmet = (s_lo < 0.0) | (Q_max <= 0.0)
        at_max = s_hi >= 0.0          # even the largest duty keeps the approach: take it
    else:
        unmet = (Q_max <= 0.0) | ~(target > 0.0)
        at_max = np.zeros(n, dtype=bool)
    Q = np.where(at_max & ~unmet, Q_max, 0.0)
    search = np.flatnonzero(~unmet & ~at_max)
    if search.size == 0:
        return Q, unmet, model
    rough = bracketed_root(lambda q, i: cheap(q, search[i]), np.zeros(search.size), Q_max[search],
                           s_lo[search], s_hi[search], ftol=0.01 * ftol[search],
                           max_iterations=MAX_ROOT_ITERATIONS)
    # secant polish on the exact profile, starting from the surrogate root and its slope
    q0 = rough.x
    dq = POLISH_STEP * np.maximum(Q_max[search], TINY_FLOW)
    slope = (cheap(q0 + dq, search) - cheap(q0 - dq, search)) / (2.0 * dq)
    q, f = q0, exact(q0, search)
    settled = np.abs(f) <= ftol[search]
    for _ in range(MAX_POLISH_STEPS):
        go = np.flatnonzero(~settled)
        if go.size == 0:
            break
        with np.errstate(divide="ignore", invalid="ignore"):
            q_new = q[go] - f[go] / slope[go]
        ok = np.isfinite(q_new) & (q_new > 0.0) & (q_new < Q_max[search[go]])
        go = go[ok]
        if go.size == 0:
            break
        f_new = exact(q_new[ok], search[go])
        with np.errstate(divide="ignore", invalid="ignore"):
            new_slope = (f_new - f[go]) / (q_new[ok] - q[go])
        slope[go] = np.where(np.isfinite(new_slope) & (new_slope != 0.0), new_slope, slope[go])
        q[go], f[go] = q_new[ok], f_new
        settled[go] = np.abs(f_new) <= ftol[search[go]]
    Q[search] = q
    rest = search[~settled]
    if rest.size:
        e_lo, e_hi = exact(np.zeros(rest.size), rest), exact(Q_max[rest], rest)
        bracketed = np.sign(e_lo) != np.sign(e_hi)
        report = bracketed_root(lambda x, i: exact(x, rest[i]), np.zeros(rest.size), Q_max[rest],
                                e_lo, e_hi, ftol=ftol[rest], max_iterations=MAX_ROOT_ITERATIONS)
        Q[rest] = report.x
        unmet[rest] = ~(report.converged & bracketed)
    if spec == "UA":
        _settle_ua(Q, unmet, Q_max, target, exact)
    return Q, unmet, model


def _settle_ua(Q, unmet, Q_max, target, exact) -> None:
    """Accept (in place) the unsettled UA cases whose duty the exact profile fixes to within
    :data:`UA_DUTY_TOLERANCE`: the search's duty, else the largest duty (see the constant)."""
    for candidate in (Q, Q_max):
        late = np.flatnonzero(unmet & (Q_max > 0.0) & (target > 0.0))
        if late.size == 0:
            return
        c = np.clip(candidate[late], 0.0, Q_max[late])
        lo = c * (1.0 - UA_DUTY_TOLERANCE)
        hi = np.minimum(c * (1.0 + UA_DUTY_TOLERANCE), Q_max[late])
        below = exact(lo, late) < 0.0                    # UA rises with the duty
        r_hi = exact(hi, late)
        ok = below & (c > 0.0) & ((r_hi >= 0.0) | (hi >= Q_max[late]))
        Q[late[ok]] = c[ok]
        unmet[late[ok]] = False
