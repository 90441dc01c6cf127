"""Phase envelope of a mixture on a cubic equation of state, traced by continuation.

Method (Michelsen, Fluid Phase Equilib. 4 (1980) 1; Michelsen & Mollerup, *Thermodynamic Models:
Fundamentals and Computational Aspects*, 2nd ed., 2007, ch. 12). The unknowns are

    X = (ln K_1 .. ln K_nc, ln T, ln P),

and the nc + 2 equations

    F_i      = ln K_i + ln phi_i(T, P, y) - ln phi_i(T, P, x) = 0          (i = 1 .. nc)
    F_nc+1   = sum_i (y_i - x_i) = 0
    F_nc+2   = X_s - S = 0                                                  (the specification)

with x_i = z_i / (1 - beta + beta K_i), y_i = K_i x_i (beta = 1 for the envelope: y = z, x is the
incipient phase). Each point is solved by Newton's method with a central-difference Jacobian (one
vectorised call of the equation of state per Jacobian). From a converged point the tangent
dX/dS (J dX/dS = e_nc+2) gives

* the specified variable for the next point: the component of X changing fastest;
* the predictor: a cubic (Hermite) extrapolation in arc length through the last two points and
  their tangents;
* the step: grown after an easy point, shrunk after a hard one, halved on a failure, and capped so
  that ln T, ln P and ln K change by at most ``MAX_STEP_LNT``, ``MAX_STEP_LNP``, ``MAX_STEP_LNK``.

Both phases take the root of lowest Gibbs energy, so the trace runs through the critical point
without a switch: there all ln K pass through zero and change sign, and the phase of composition z
goes from being the vapour (dew branch) to being the liquid (bubble branch). Near the critical point
a ln K is the specified variable; the step that crosses zero is made symmetric (ln K_s -> -ln K_s,
Michelsen 1980) so that the trivial solution K = 1 is never approached. The critical point is
interpolated where the ln K cross zero: a cubic Hermite in arc length between the two points that
bracket the crossing.

The cricondentherm (largest T) and cricondenbar (largest P) are true extrema of the curve:
d ln T / d s = 0 and d ln P / d s = 0. Each is bracketed by a sign change of that tangent component
between two traced points and refined by a scalar root finder (Brent) on the curve, every trial point
solved exactly (specification ln P for the cricondentherm, ln T for the cricondenbar).

Lines of constant vapour fraction use the same equations with 0 < beta < 1 (the relation
sum (y - x) = 0 is the Rachford-Rice equation at that beta). A line of vapour fraction beta starts at
low pressure, ends at the critical point and, traced beyond it, continues as the line of
1 - beta (the phases swap): one trace gives both.

Edges (issue 11):

* components at exactly zero take no part in the trace (it runs on the others) and are given their
  K-value of infinite dilution at every point;
* a nearly pure fluid (largest fraction 0.95 or more), whose dew and bubble points lie too close
  for the stability scan, starts from its main component's saturation point;
* a branch that still rises at :data:`MAX_P` past the critical point (a liquid dissolving
  hydrogen or helium) is reported open, and so is the missing cricondenbar; a dew branch that
  reaches the limit without a critical point (a water dew line) says so;
* a trace that stops early reports where (T, P) and why; only letdown errors leave this module.

The code is in three rooms: :mod:`letdown.fluid.flash.continuation` (the equations, Newton's
method, the tracer), :mod:`letdown.fluid.flash.landmarks` (the first point, the critical point,
the extrema) and this module (the results and :func:`phase_envelope`, which runs the traces and
assembles them; the names of the other two that callers use are importable from here).

Everything is SI: T [K], P [Pa]; compositions and K-values [-].
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ...errors import ConvergenceError, InputError
from ..eos.cubic import CubicEOS
from .continuation import (  # noqa: F401  (public names of the tracer, importable from here)
    CRIT_APPROACH, CRIT_JUMP, EASY_ITER, HARD_ITER, JACOBIAN_STEP, MAX_P, MAX_POINTS,
    MAX_PREDICTION_MISS, MAX_STEP_LNK, MAX_STEP_LNP, MAX_STEP_LNT, MIN_T, NEWTON_F_NOISE,
    NEWTON_F_TOL, NEWTON_MAX_CORRECTION, NEWTON_MAX_ITER, NEWTON_STEP_TOL, START_P, STEP_FIRST,
    STEP_GROW, STEP_MAX, STEP_MIN, STEP_SHRINK, TRIVIAL_LNK, EnvelopeSystem, TraceReport, _Trace,
    trace, trace_report)
from .landmarks import (  # noqa: F401
    CRIT_NODES, EXTREMUM_XTOL, NEARLY_PURE, NEARLY_PURE_BRACKET_K, NEARLY_PURE_SS_ITER,
    _extremum, _locate_critical, _start)

#: The cricondentherm (cricondenbar) is the largest ln T (ln P) of the whole boundary: a turning
#: point more than this below a traced point is a local one and is not reported [-] (the traced
#: points lie below a true extremum to round-off, about 1e-12).
EXTREMUM_LOCAL_TOL = 1e-7
#: A line of constant vapour fraction with no first point at the start pressure is tried at this
#: many pressures between it and the critical pressure (geometric ladder).
LINE_START_RUNGS = 12


@dataclass(frozen=True)
class EnvelopePoint:
    """One point of the envelope.

    Attributes
    ----------
    T : float
        Temperature [K].
    P : float
        Pressure [Pa].
    Ks : ndarray (nc,)
        K-values y/x (y: the phase of composition z on the envelope) [-].
    """

    T: float
    P: float
    Ks: np.ndarray = field(repr=False)


@dataclass(frozen=True)
class Curve:
    """A traced curve, points in trace order.

    Attributes
    ----------
    T : ndarray (m,)
        Temperatures [K].
    P : ndarray (m,)
        Pressures [Pa].
    Ks : ndarray (m, nc)
        K-values [-] (all ones at an interpolated critical point).
    """

    T: np.ndarray
    P: np.ndarray
    Ks: np.ndarray = field(repr=False)

    def __len__(self) -> int:
        return int(self.T.shape[0])


@dataclass(frozen=True)
class Envelope:
    """Phase envelope of one composition.

    Attributes
    ----------
    zs : ndarray (nc,)
        Composition [-].
    components : tuple of str
    dew : Curve
        From the low-pressure dew point to the critical point (included as its last point).
    bubble : Curve
        From the critical point (included as its first point) down to the low-pressure bubble point.
    critical, cricondentherm, cricondenbar : EnvelopePoint or None
        None where the trace did not find one.
    lines : dict
        {vapour fraction: (T ndarray [K], P ndarray [Pa])}, each from low pressure to the critical
        point.
    converged : bool
        Every trace converged and the critical point and both extrema were found.
    reports : dict
        {what: TraceReport} for every trace, and the extrema searches.
    """

    zs: np.ndarray
    components: tuple
    dew: Curve
    bubble: Curve
    critical: EnvelopePoint | None
    cricondentherm: EnvelopePoint | None
    cricondenbar: EnvelopePoint | None
    lines: dict
    converged: bool
    reports: dict

    @property
    def T(self) -> np.ndarray:
        """The whole boundary, dew then bubble branch, critical point once [K]."""
        return np.concatenate([self.dew.T, self.bubble.T[1:] if self._joined else self.bubble.T])

    @property
    def P(self) -> np.ndarray:
        """The whole boundary, dew then bubble branch, critical point once [Pa]."""
        return np.concatenate([self.dew.P, self.bubble.P[1:] if self._joined else self.bubble.P])

    @property
    def _joined(self) -> bool:
        return self.critical is not None and len(self.bubble) > 0 and len(self.dew) > 0

    def to_dict(self) -> dict:
        """JSON-ready form, SI with the unit in each key (NaN as None)."""
        def pt(p):
            return None if p is None else {"T_K": float(p.T), "P_Pa": float(p.P)}

        def curve(c):
            return {"T_K": [float(v) for v in c.T], "P_Pa": [float(v) for v in c.P]}
        return {
            "composition": dict(zip(self.components, map(float, self.zs))),
            "critical": pt(self.critical), "cricondentherm": pt(self.cricondentherm),
            "cricondenbar": pt(self.cricondenbar),
            "dew": curve(self.dew), "bubble": curve(self.bubble),
            "lines": {f"{b:g}": {"T_K": [float(v) for v in T], "P_Pa": [float(v) for v in P]}
                      for b, (T, P) in sorted(self.lines.items())},
            "converged": self.converged,
            "reports": {k: {"converged": r.converged, "status": r.status, "message": r.message,
                            "iterations": r.iterations,
                            "residual": r.residual if np.isfinite(r.residual) else None,
                            "n_points": r.n_points}
                        for k, r in self.reports.items()},
        }


def _curve(Xs, nc) -> Curve:
    X = np.array(Xs).reshape(-1, nc + 2)
    return Curve(np.exp(X[:, nc]), np.exp(X[:, nc + 1]), np.exp(X[:, :nc]))


def _report(tr: _Trace | None, message: str, status: str | None = None) -> TraceReport:
    if tr is None:
        return trace_report(False, status or "not started", message, 0, np.nan, 0)
    return trace_report(tr.converged, tr.status, message, tr.iterations, tr.residual, len(tr.X))


def _sub_engine(engine, present):
    """The engine of the components flagged ``present`` (same model and interaction parameters)."""
    from ..components import ComponentSet
    from .engine import CubicEngine
    idx = np.flatnonzero(present)
    comps = ComponentSet([engine.comps.names[i] for i in idx])
    eos = CubicEOS(comps, engine.eos.kind, engine.eos.kijs[np.ix_(idx, idx)])
    return CubicEngine(comps, eos, getattr(engine, "volume_shift", False))


def _full_Ks(engine, zs, present, T, P, Ks_sub):
    """K-values of all components at points (T, P) whose present components have ``Ks_sub``: the
    absent ones from their equilibrium equation, ln K_i = ln phi_i(x) - ln phi_i(y), y = z."""
    T = np.atleast_1d(np.asarray(T, float))
    P = np.atleast_1d(np.asarray(P, float))
    m, nc = T.shape[0], zs.shape[0]
    Ks = np.ones((m, nc))
    if m == 0:
        return Ks
    Ks_sub = np.asarray(Ks_sub, float).reshape(m, -1)
    Ks[:, present] = Ks_sub
    y = np.broadcast_to(zs / zs.sum(), (m, nc)).copy()
    x = np.zeros((m, nc))
    x[:, present] = zs[present] / Ks_sub
    x /= x.sum(axis=1, keepdims=True)
    lnphi, _ = engine.eos.lnphi(np.concatenate([T, T]), np.concatenate([P, P]),
                                np.concatenate([y, x]), "stable")
    absent = ~present
    Ks[:, absent] = np.exp(lnphi[m:, absent] - lnphi[:m, absent])
    return Ks


def _expand(env: Envelope, engine, zs, present) -> Envelope:
    """An envelope traced on the present components, given back on all of them."""
    def curve(c):
        return Curve(c.T, c.P, _full_Ks(engine, zs, present, c.T, c.P, c.Ks))

    def point(p, critical=False):
        if p is None:
            return None
        Ks = np.ones(zs.shape[0]) if critical else _full_Ks(engine, zs, present, p.T, p.P,
                                                              p.Ks)[0]
        return EnvelopePoint(p.T, p.P, Ks)
    return Envelope(zs=zs.copy(), components=tuple(engine.comps.names), dew=curve(env.dew),
                    bubble=curve(env.bubble), critical=point(env.critical, True),
                    cricondentherm=point(env.cricondentherm), cricondenbar=point(env.cricondenbar),
                    lines=env.lines, converged=env.converged, reports=env.reports)


def phase_envelope(engine, zs, betas=(), P_start: float = START_P) -> Envelope:
    """Trace the phase envelope of composition ``zs`` on a cubic engine.

    Parameters
    ----------
    engine : CubicEngine
        The model (its ``eos`` and stability-based ``saturation_T`` for the first points).
    zs : ndarray (nc,)
        Composition [-].
    betas : sequence of float
        Vapour fractions (0 < beta < 1) of the lines of constant vapour fraction wanted [-].
    P_start : float
        Pressure of the first (dew) and last (bubble) point [Pa].

    Returns
    -------
    Envelope

    Raises
    ------
    InputError
        A pure component (no envelope, a vapour-pressure curve), vapour fractions outside (0, 1).
    ConvergenceError
        The first point could not be found or the dew branch could not be traced at all.
    """
    zs = np.asarray(zs, dtype=float)
    if zs.ndim != 1 or zs.shape[0] != engine.comps.n or not np.all(np.isfinite(zs)) \
            or np.any(zs < 0.0) or zs.sum() <= 0.0:
        raise InputError("phase envelope needs one composition of finite, non-negative mole "
                         "fractions, one per component")
    if np.count_nonzero(zs > 0) < 2:
        raise InputError("a pure component has a vapour-pressure curve, not a phase envelope")
    betas = tuple(float(b) for b in betas)
    for b in betas:
        if not 0.0 < b < 1.0:
            raise InputError(f"vapour fractions of envelope lines must lie strictly between 0 and 1 "
                             f"(got {b:g})")
    present = zs > 0
    if not present.all():
        # components at exactly zero take no part: trace the mixture of the others, then give the
        # absent ones the K-value of infinite dilution at every point (their own equation F_i = 0)
        sub = _sub_engine(engine, present)
        env = phase_envelope(sub, zs[present], betas, P_start)
        return _expand(env, engine, zs, present)
    eos = engine.eos
    nc = zs.shape[0]
    names = tuple(engine.comps.names)
    reports = {}
    main = EnvelopeSystem(eos, zs, 1.0)
    with np.errstate(all="ignore"):     # Wilson K-values overflow at the stability test's trials
        X0, t0, msg = _start(engine, main, P_start)
    if X0 is None:
        raise ConvergenceError(f"phase envelope: {msg}", result=_report(None, "dew branch", msg))
    tr = trace(main, X0, t0, P_start)
    reports["envelope"] = _report(tr, "dew branch from the low-pressure dew point, on through the "
                                      "critical point")
    if len(tr.X) < 3:
        raise ConvergenceError(f"phase envelope: the dew branch could not be traced ({tr.status})",
                               result=reports["envelope"])
    critical = None
    at_limit = tr.status.startswith("ended at the pressure limit")
    open_top = False
    if tr.crossing is not None:
        lnTc, lnPc, reports["critical"] = _locate_critical(main, tr)
        if at_limit:
            # the branch past the critical point (the bubble side) rises without turning down: a
            # liquid that dissolves a supercritical component (hydrogen, helium) needs ever higher
            # pressure; the trace stops at the limit and says so
            open_top = True
            reports["envelope"] = trace_report(
                True, f"open: past the critical point the bubble branch still rises at the pressure "
                f"limit {MAX_P:g} Pa (no upper turn: a supercritical component such as hydrogen "
                f"dissolving in the liquid)", reports["envelope"].message, tr.iterations,
                tr.residual, len(tr.X))
        critical = EnvelopePoint(float(np.exp(lnTc)), float(np.exp(lnPc)), np.ones(nc))
        crit_X = np.concatenate([np.zeros(nc), [lnTc, lnPc]])
        dew = _curve(tr.X[:tr.crossing] + [crit_X], nc)
        bubble = _curve([crit_X] + tr.X[tr.crossing:], nc)
        traces = [tr]
    else:
        # no critical point on the way (the trace ended at a limit or failed): the bubble branch
        # from its own low-pressure end
        reports["critical"] = trace_report(
            False, "none: the dew branch " + (
                f"rises to the pressure limit {MAX_P:g} Pa without a critical point (a component "
                f"that forms a second liquid, such as water, or a supercritical one)" if at_limit
                else f"stopped before a critical point ({tr.status})"),
            "critical point", 0, np.nan, 0)
        dew = _curve(tr.X, nc)
        bsys = EnvelopeSystem(eos, zs, 0.0)
        with np.errstate(all="ignore"):
            Xb, tb, msg = _start(engine, bsys, P_start)
        traces = [tr]
        if Xb is None:
            bubble = _curve([], nc)
            reports["bubble"] = _report(None, "bubble branch", msg)
        else:
            btr = trace(bsys, Xb, tb, P_start)
            reports["bubble"] = _report(btr, "bubble branch from the low-pressure bubble point")
            # beta = 0 has K = y/x with x = z: the same K-value convention after inversion
            Xs = [np.concatenate([-X[:nc], X[nc:]]) for X in btr.X][::-1]
            bubble = _curve(Xs, nc)
            traces.append(_Trace(Xs, [-t for t in btr.t][::-1]))
    extrema = {}
    for which in ("T", "P"):
        best = None
        status = "no trace long enough"
        for trc in traces:
            if len(trc.X) < 2:
                continue
            try:
                X, st = _extremum(main, trc, which)
            except ConvergenceError as exc:
                X, st = None, str(exc)
            if X is not None and (best is None or X[nc + (which == "P")] > best[nc + (which == "P")]):
                best, status = X, st
            elif best is None:
                status = st
        name = "cricondentherm" if which == "T" else "cricondenbar"
        if best is None and which == "P" and open_top:
            status = ("none: the bubble branch still rises at the pressure limit past the critical "
                      "point (no largest pressure)")
        # the extremum must be the largest value of the whole boundary: a turning point of one
        # trace below a point of another (a wet gas's water dew line, the dew branch of a nearly
        # pure fluid running to the pressure limit) is a local one, not the envelope's
        top = max(float(np.max(np.array(trc.X)[:, nc + (which == "P")])) for trc in traces
                  if len(trc.X))
        if best is not None and best[nc + (which == "P")] < top - EXTREMUM_LOCAL_TOL:
            unit = "K" if which == "T" else "Pa"
            val, at = (np.exp(best[nc]), np.exp(best[nc + 1])) if which == "T" else \
                (np.exp(best[nc + 1]), np.exp(best[nc]))
            status = (f"none: the boundary reaches {np.exp(top):.6g} {unit}, beyond the turning "
                      f"point at {val:.6g} {unit} ({'P' if which == 'T' else 'T'} = {at:.6g} "
                      f"{'Pa' if which == 'T' else 'K'}), which is therefore not the largest (a "
                      f"trace goes beyond it where it ends: a water dew line, a branch at the "
                      f"pressure limit or one that stopped)")
            best = None
        extrema[which] = None if best is None else EnvelopePoint(
            float(np.exp(best[nc])), float(np.exp(best[nc + 1])), np.exp(best[:nc]))
        reports[name] = trace_report(best is not None, status,
                                    f"{name}: extremum on the curve by Brent's method", 0,
                                    0.0 if best is not None else np.nan, 1 if best is not None else 0)
    lines = {}
    for b in sorted({min(b, 1.0 - b) for b in betas}):
        lsys = EnvelopeSystem(eos, zs, b)
        # where the mixture has no two-phase range at P_start (its bubble point there is below
        # the scan: hydrogen, CO2-rich and sour gases), the line starts at the lowest pressure of a
        # geometric ladder up to the critical pressure that has one
        ladder = [P_start]
        if critical is not None and critical.P > P_start:
            ladder += list(np.geomspace(P_start, critical.P, LINE_START_RUNGS + 2)[1:-1])
        Xl = tl = None
        first_msg = ""
        for P0 in ladder:
            with np.errstate(all="ignore"):
                try:
                    Xl, tl, msg = _start(engine, lsys, P0)
                except ConvergenceError as exc:
                    # a line that cannot start is reported, the envelope stands
                    Xl, tl, msg = None, None, f"no first point at {P0:g} Pa ({exc})"
            first_msg = first_msg or msg
            if Xl is not None:
                break
        key = f"line {b:g}"
        if Xl is None:
            tried = (f"; nor at {len(ladder) - 1} pressures from there up to the critical pressure"
                     if len(ladder) > 1 else "")
            reports[key] = _report(None, f"line of vapour fraction {b:g}", first_msg + tried)
            continue
        ltr = trace(lsys, Xl, tl, P_start)
        started = ("" if P0 == P_start else f", started at {P0:.6g} Pa ({first_msg} at "
                   f"{P_start:g} Pa)")
        reports[key] = _report(ltr, f"line of vapour fraction {b:g} (and {1 - b:g} past the "
                                    f"critical point){started}")
        if ltr.crossing is None:
            reports[key] = trace_report(False, "no critical point reached: " + ltr.status,
                                       reports[key].message, ltr.iterations, ltr.residual,
                                       len(ltr.X))
            lines[b] = _curve(ltr.X, nc)
            continue
        lnTc, lnPc, _ = _locate_critical(lsys, ltr)
        cX = np.concatenate([np.zeros(nc), [lnTc, lnPc]])
        first = _curve(ltr.X[:ltr.crossing] + [cX], nc)
        second = _curve(ltr.X[ltr.crossing:][::-1] + [cX], nc)
        lines[b] = first
        lines[1.0 - b] = second
    wanted = {}
    for b in betas:
        c = lines.get(b)
        if c is None:
            c = lines.get(min(lines, key=lambda v: abs(v - b))) if lines else None
            if c is None or min(abs(v - b) for v in lines) > 1e-12:
                continue
        wanted[b] = (c.T, c.P)
    converged = (all(r.converged for r in reports.values()) and critical is not None
                 and extrema["T"] is not None and extrema["P"] is not None)
    return Envelope(zs=zs.copy(), components=names, dew=dew, bubble=bubble, critical=critical,
                    cricondentherm=extrema["T"], cricondenbar=extrema["P"], lines=wanted,
                    converged=converged, reports=reports)
