"""Continuation of the envelope equations: the system of one composition at one vapour fraction,
Newton's method on it, and the tracer that follows the curve (the engine under
:mod:`letdown.fluid.flash.envelope`, which holds the method's description and the results).

The unknowns are X = (ln K_1 .. ln K_nc, ln T, ln P) and the nc + 2 equations

    F_i      = ln K_i + ln phi_i(T, P, y) - ln phi_i(T, P, x) = 0          (i = 1 .. nc)
    F_nc+1   = sum_i (y_i - x_i) = 0
    F_nc+2   = X_s - S = 0                                                  (the specification)

(Michelsen, Fluid Phase Equilib. 4 (1980) 1). Each point is solved by Newton's method with a
central-difference Jacobian; the tracer predicts along the tangent (cubic Hermite in arc length),
chooses the specified variable and the step, and jumps the critical point on a ln K
specification. Everything is SI: T [K], P [Pa]; compositions and K-values [-].
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq

from ...errors import ConvergenceError
from ...numerics.report import SolveReport
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
#: A point whose largest |ln K| is below this has fallen onto the trivial solution K = 1.
TRIVIAL_LNK = 1e-6


# ------------------------------------------------------------------------------------------------
@dataclass(frozen=True, kw_only=True, repr=False)
class TraceReport(SolveReport):
    """Outcome of one continuation: the fields of every letdown solver's
    :class:`letdown.numerics.report.SolveReport` (scalars here) and the points traced.

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

    n_points: int = 0


def trace_report(converged, status, message, iterations, residual, n_points) -> TraceReport:
    """A :class:`TraceReport` from its fields in the order the tracer knows them."""
    return TraceReport(converged=converged, iterations=iterations, residual=residual,
                       message=message, status=status, n_points=n_points)


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

