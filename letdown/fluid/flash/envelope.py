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

Everything is SI: T [K], P [Pa]; compositions and K-values [-].
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy.optimize import brentq

from ...errors import ConvergenceError, InputError
from . import twophase as fl
from ..eos.cubic import CubicEOS

#: Pressure of the first point (the low-pressure dew point) and of the last (the low-pressure
#: bubble point) [Pa]: 1 bar, below every pressure of a let-down or chilling plant.
START_P = 1e5
#: Trace stops above this pressure [Pa]: 1000 bar, ten times a let-down or chilling plant's (a
#: curve still rising there has no critical point or no upper turn in reach: a hydrogen- or
#: helium-bearing liquid, a water dew line; the reports say so).
MAX_P = 1e8
#: Trace stops below this temperature [K] (the flash's own lower bound).
MIN_T = fl.T_LOW
#: A line of constant vapour fraction with no first point at the start pressure is tried at this
#: many pressures between it and the critical pressure (geometric ladder).
LINE_START_RUNGS = 12
#: Largest number of points in one trace.
MAX_POINTS = 600
#: Newton iterations per point; a point that needs more is retried with a shorter step.
NEWTON_MAX_ITER = 15
#: A point is converged when every equation residual is below this (ln of fugacity ratio) [-] and
#: the last Newton step is below NEWTON_STEP_TOL; 1e-10 leaves a margin of 100 below the 1e-8
#: promised for every traced point.
NEWTON_F_TOL = 1e-10
NEWTON_STEP_TOL = 1e-8
#: Residual at the round-off level of the equations: converged whatever the last step (close to the
#: critical point the Jacobian is nearly singular and the steps stay at its noise, ~1e-7).
NEWTON_F_NOISE = 1e-12
#: Largest Newton correction of any variable (ln K, ln T, ln P) in one iteration [-].
NEWTON_MAX_CORRECTION = 1.0
#: Central-difference step in the log variables [-]: truncation ~1e-12, round-off ~1e-10.
JACOBIAN_STEP = 1e-6
#: Arc-length steps in X space [-]: first, smallest (a trace that needs less has failed), largest.
STEP_FIRST = 0.05
STEP_MIN = 1e-6
STEP_MAX = 0.5
#: Largest change per step of ln T, ln P and any ln K [-] (keeps the curve finely drawn: about
#: 5 K, 15 % in pressure).
MAX_STEP_LNT = 0.02
MAX_STEP_LNP = 0.15
MAX_STEP_LNK = 0.25
#: Step growth after a point that took at most EASY_ITER Newton iterations, shrink after one that
#: took HARD_ITER or more.
EASY_ITER = 3
HARD_ITER = 6
STEP_GROW = 1.5
STEP_SHRINK = 0.6
#: A converged point further than this multiple of the step from its prediction jumped to another
#: branch (or the trivial solution) and is refused.
MAX_PREDICTION_MISS = 0.5
#: Near the critical point: a ln K specification predicted to cross zero from above this magnitude
#: first steps to CRIT_APPROACH of its value; below it, the step jumps to -ln K (symmetric).
CRIT_JUMP = 0.2
CRIT_APPROACH = 0.3
#: ln K values of the extra points either side of the critical point used to locate it [-].
CRIT_NODES = np.array([0.05, 0.1, 0.15, 0.2])
#: A point whose largest |ln K| is below this has fallen onto the trivial solution K = 1.
TRIVIAL_LNK = 1e-6
#: A composition whose largest fraction is at least this starts, where the stability scan finds no
#: dew or bubble point, from the main component's saturation point (nearly pure fluids) [-].
NEARLY_PURE = 0.95
#: Nearly pure start: successive-substitution passes per trial temperature, and the half-widths of
#: the brackets tried around the main component's saturation temperature [K].
NEARLY_PURE_SS_ITER = 50
NEARLY_PURE_BRACKET_K = (0.5, 2.0, 8.0, 30.0)
#: Root finder tolerance for the extrema, in ln T or ln P [-] (1e-12 ~ 3e-10 K).
EXTREMUM_XTOL = 1e-12


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
class TraceReport:
    """Outcome of one continuation (the same fields as every letdown solver's report).

    Attributes
    ----------
    converged : bool
        True if the trace reached a proper end (low pressure, low temperature or the pressure
        limit) with every point converged.
    status : str
        ``"complete"``, ``"ended at the pressure limit"``, ... or the reason of a failure.
    message : str
        What was traced.
    iterations : int
        Newton iterations over all points.
    residual : float
        Largest equation residual over the accepted points [-].
    n_points : int
    """

    converged: bool
    status: str
    message: str
    iterations: int
    residual: float
    n_points: int


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


# ------------------------------------------------------------------------------------------------
class EnvelopeSystem:
    """The equations of one composition at one vapour fraction beta.

    Parameters
    ----------
    eos : CubicEOS
    zs : ndarray (nc,)
        Composition [-].
    beta : float
        Molar fraction of the phase y [-]; 1 for the envelope (y = z).
    """

    def __init__(self, eos: CubicEOS, zs, beta: float = 1.0):
        self.eos = eos
        self.zs = np.asarray(zs, dtype=float)
        self.nc = self.zs.shape[0]
        self.beta = float(beta)
        self.iT = self.nc
        self.iP = self.nc + 1

    def compositions(self, X):
        """Phase compositions (x, y), normalised, for rows of X (m, nc + 2) [-]."""
        K = np.exp(X[:, :self.nc])
        x = self.zs / (1.0 - self.beta + self.beta * K)
        y = K * x
        return x, y

    def residuals(self, X):
        """Equations F_1 .. F_nc+1 for each row of X (m, nc + 2); shape (m, nc + 1)."""
        m = X.shape[0]
        nc = self.nc
        K = np.exp(X[:, :nc])
        x = self.zs / (1.0 - self.beta + self.beta * K)
        y = K * x
        T = np.exp(X[:, self.iT])
        P = np.exp(X[:, self.iP])
        xn = x / x.sum(axis=1, keepdims=True)
        yn = y / y.sum(axis=1, keepdims=True)
        lnphi, _ = self.eos.lnphi(np.concatenate([T, T]), np.concatenate([P, P]),
                                  np.concatenate([yn, xn]), "stable")
        F = np.empty((m, nc + 1))
        F[:, :nc] = X[:, :nc] + lnphi[:m] - lnphi[m:]
        F[:, nc] = np.sum(y - x, axis=1)
        return F

    def residual_jacobian(self, X):
        """F (nc + 1) and dF/dX (nc + 1, nc + 2) at X by central differences (one EOS call)."""
        n = X.shape[0]
        E = JACOBIAN_STEP * np.eye(n)
        Xs = np.concatenate([X[None, :], X + E, X - E])
        F = self.residuals(Xs)
        J = (F[1:n + 1] - F[n + 1:]).T / (2.0 * JACOBIAN_STEP)
        return F[0], J

    def solve(self, X0, s: int, S: float):
        """Newton's method at X_s = S from X0.

        Returns
        -------
        X : ndarray (nc + 2,), tangent : ndarray (nc + 2,) (dX/dS), iterations : int,
        residual : float, ok : bool
        """
        X = np.array(X0, dtype=float)
        X[s] = S
        n = X.shape[0]
        last = np.inf
        for it in range(NEWTON_MAX_ITER + 1):
            F, J = self.residual_jacobian(X)
            if not np.all(np.isfinite(F)) or not np.all(np.isfinite(J)):
                return X, None, it, np.inf, False
            res = float(np.max(np.abs(F)))
            A = np.vstack([J, np.eye(n)[s]])
            if res < NEWTON_F_TOL and (last < NEWTON_STEP_TOL
                                       or (it > 0 and res < NEWTON_F_NOISE)):
                rhs = np.zeros(n)
                rhs[-1] = 1.0
                try:
                    t = np.linalg.solve(A, rhs)
                except np.linalg.LinAlgError:
                    return X, None, it, res, False
                ok = float(np.max(np.abs(X[:self.nc]))) > TRIVIAL_LNK
                return X, t, it, res, ok
            if it == NEWTON_MAX_ITER:
                break
            try:
                dX = np.linalg.solve(A, -np.append(F, 0.0))
            except np.linalg.LinAlgError:
                return X, None, it, res, False
            big = float(np.max(np.abs(dX)))
            if not np.isfinite(big):
                return X, None, it, res, False
            if big > NEWTON_MAX_CORRECTION:
                dX *= NEWTON_MAX_CORRECTION / big
            X = X + dX
            last = float(np.max(np.abs(dX)))
        return X, None, NEWTON_MAX_ITER, res, False


def _root(f, a, b, **kw):
    """scipy's brentq, with its ValueError (no sign change, non-finite values) turned into
    letdown's ConvergenceError: only letdown errors leave the fluid layer."""
    try:
        return brentq(f, a, b, **kw)
    except ValueError as exc:
        raise ConvergenceError(f"phase envelope: a bracketed root search failed ({exc})") from None


def _unit(t, ref=None):
    t = t / np.linalg.norm(t)
    if ref is not None and np.dot(t, ref) < 0:
        t = -t
    return t


def _hermite(X0, t0, X1, t1, L, sigma):
    """Cubic Hermite through (0, X0, t0) and (L, X1, t1), evaluated at sigma (any real)."""
    u = sigma / L
    h00 = 2 * u ** 3 - 3 * u ** 2 + 1
    h10 = u ** 3 - 2 * u ** 2 + u
    h01 = -2 * u ** 3 + 3 * u ** 2
    h11 = u ** 3 - u ** 2
    return h00 * X0 + h10 * L * t0 + h01 * X1 + h11 * L * t1


@dataclass
class _Trace:
    X: list
    t: list
    iterations: int = 0
    residual: float = 0.0
    status: str = ""
    converged: bool = False
    crossing: int | None = None       # index of the first point past the critical point


def trace(system: EnvelopeSystem, X0, t0, P_end=START_P) -> _Trace:
    """Continue from the converged point X0 (tangent t0, oriented along the trace) until the curve
    comes back below ``P_end`` [Pa], leaves [MIN_T, MAX_P], or the step collapses."""
    nc = system.nc
    iT, iP = system.iT, system.iP
    tr = _Trace([np.asarray(X0, float)], [_unit(np.asarray(t0, float))])
    present = system.zs > 0
    ref = int(np.argmax(np.where(present, np.abs(X0[:nc]), -1.0)))
    sign0 = np.sign(X0[ref])
    ln_end = np.log(P_end)
    h = STEP_FIRST
    crit_jump = CRIT_JUMP
    rising_seen = False
    while len(tr.X) < MAX_POINTS:
        X, t = tr.X[-1], tr.t[-1]
        caps = [MAX_STEP_LNT / max(abs(t[iT]), 1e-300), MAX_STEP_LNP / max(abs(t[iP]), 1e-300),
                MAX_STEP_LNK / max(float(np.max(np.abs(t[:nc]))), 1e-300)]
        h = min(h, STEP_MAX, *caps)
        s = int(np.argmax(np.abs(t)))
        if len(tr.X) >= 2:
            Xp, tp = tr.X[-2], tr.t[-2]
            L = float(np.linalg.norm(X - Xp))
            guess = _hermite(Xp, tp, X, t, L, L + h)
        else:
            guess = X + h * t
        S = guess[s]
        final = False
        if s < nc and X[s] != 0.0 and (np.sign(S) != np.sign(X[s])
                                       or abs(S) < CRIT_APPROACH * abs(X[s])):
            # about to cross (or come close to) the critical point on a ln K specification
            S = -X[s] if abs(X[s]) <= crit_jump else CRIT_APPROACH * X[s]
            jumping = S == -X[s]
            guess = X + (S - X[s]) / t[s] * t
        else:
            jumping = False
        if rising_seen and t[iP] < 0 and guess[iP] < ln_end and abs(t[iP]) > 0.3 * np.max(np.abs(t)):
            # the last point exactly at the end pressure
            s, S, final = iP, ln_end, True
            guess = X + (ln_end - X[iP]) / t[iP] * t
        Xn, tn, its, res, ok = system.solve(guess, s, S)
        tr.iterations += its
        step = float(np.linalg.norm(guess - X))
        if ok and float(np.max(np.abs(Xn - guess))) > MAX_PREDICTION_MISS * max(step, 1e-12) + 1e-9:
            ok = False
        if not ok:
            if jumping:
                # approach closer before the next jump
                crit_jump = 0.5 * abs(X[s])
            h = min(h, step) * 0.5
            if h < STEP_MIN:
                tr.status = (f"step size fell below {STEP_MIN:g} at T = {np.exp(X[iT]):.6g} K, "
                             f"P = {np.exp(X[iP]):.6g} Pa")
                return tr
            continue
        tn = _unit(tn, t)
        tr.X.append(Xn)
        tr.t.append(tn)
        tr.residual = max(tr.residual, res)
        if tr.crossing is None and np.sign(Xn[ref]) != sign0:
            tr.crossing = len(tr.X) - 1
        if tn[iP] > 0:
            rising_seen = True
        if its <= EASY_ITER:
            h = step * STEP_GROW
        elif its >= HARD_ITER:
            h = step * STEP_SHRINK
        else:
            h = step
        if final or (rising_seen and tn[iP] < 0 and Xn[iP] <= ln_end + 1e-12):
            tr.status, tr.converged = "complete", True
            return tr
        if Xn[iP] > np.log(MAX_P):
            tr.status, tr.converged = f"ended at the pressure limit {MAX_P:g} Pa", True
            return tr
        if Xn[iT] < np.log(MIN_T):
            tr.status, tr.converged = f"ended at the temperature limit {MIN_T:g} K", True
            return tr
    tr.status = f"more than {MAX_POINTS} points"
    return tr


# ------------------------------------------------------------------------------------------------
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
        return lnT, lnP, TraceReport(True, "interpolated", "critical point: cubic Hermite in arc "
                                     "length between the two traced points around it", 0,
                                     np.nan, 2)
    lnT2, lnP2, spread = refined
    return lnT2, lnP2, TraceReport(
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
        return None, None, f"the first point at {P0:g} Pa did not converge (residual {res:.3g})"
    t = _unit(t)
    if t[nc + 1] < 0:
        t = -t
    return X, t, "started"


def _curve(Xs, nc) -> Curve:
    X = np.array(Xs).reshape(-1, nc + 2)
    return Curve(np.exp(X[:, nc]), np.exp(X[:, nc + 1]), np.exp(X[:, :nc]))


def _report(tr: _Trace | None, message: str, status: str | None = None) -> TraceReport:
    if tr is None:
        return TraceReport(False, status or "not started", message, 0, np.nan, 0)
    return TraceReport(tr.converged, tr.status, message, tr.iterations, tr.residual, len(tr.X))


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
            reports["envelope"] = TraceReport(
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
        reports["critical"] = TraceReport(
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
        extrema[which] = None if best is None else EnvelopePoint(
            float(np.exp(best[nc])), float(np.exp(best[nc + 1])), np.exp(best[:nc]))
        reports[name] = TraceReport(best is not None, status,
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
            reports[key] = TraceReport(False, "no critical point reached: " + ltr.status,
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
