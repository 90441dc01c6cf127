"""Vapour-liquid flash for cubic equations of state, vectorised over cases.

Algorithms (Michelsen & Mollerup, *Thermodynamic Models: Fundamentals and Computational Aspects*,
2nd ed., 2007, chapters 9-12; Michelsen, Fluid Phase Equilib. 9 (1982) 1 and 21):

* **Stability**: tangent-plane distance minimised by successive substitution from several trial
  phases at once -- Wilson vapour-like (z K), Wilson liquid-like (z / K), nearly pure heaviest and
  nearly pure lightest component present -- so that trace heavies are not missed. The modified
  tangent-plane distance ``tm = 1 + sum W_i (ln W_i + ln phi_i(w) - d_i - 1)`` below ``-TM_UNSTABLE``
  proves instability.
* **Two-phase PT flash**: successive substitution on K with a bounded Rachford-Rice solve, accelerated
  by the dominant-eigenvalue extrapolation (GDEM, Crowe & Nishio 1975) every ``ACCELERATE_EVERY``
  steps, then a Newton finish on ln K with a finite-difference Jacobian for the cases still
  unconverged. A split is accepted only if its Gibbs energy is below the single phase's. Where
  more than one trial phase is unstable and their compositions differ, a split is converged from
  each (most unstable first) and the one of lowest Gibbs energy kept: the most unstable trial does
  not always lead to the lowest split (issue 11: a cold sour gas, -1.70495 against -1.70888 RT).
* **PH / PS**: a safeguarded Newton iteration on T (bracketed; bisection when a step leaves the
  bracket), with the PT flash inside; a pure component inside its dome sits at its saturation
  temperature with the vapour fraction from the lever rule.
* **Dew and bubble points**: the boundary of the unstable region, located by a grid scan of the
  stability test and refined by bisection on the sign of the tangent-plane distance (robust at
  trace-heavy compositions where Newton on the dew-point equations is fragile).

Every kernel returns a :class:`SolveReport` with per-case convergence flags; public entry points
decide whether to raise.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..kernels import native
from ..components import COLD_TRIAL_COMPONENTS, R, cold_trial_flags  # noqa: F401 (re-exported)
from ..components import critical_temperature_estimate
from ...numerics.report import SolveReport
from ..eos.cubic import CubicEOS, phase_identification
# the stability test and pure-component saturation live in their own modules (issue 12: module
# size); their names stay importable from here, as the rest of the code uses them
from .stability import (COLD_TRIAL_MAX, COLD_TRIAL_T, EARLY_EXIT_TM, LN_TOL,  # noqa: F401
                        N_TRIALS, STABILITY_MAX_ITER, TM_UNSTABLE, TRIVIAL_DIST, WILSON_C,
                        StabilityResult, _run_trials, stability, wilson_K)
from .puresat import (PURE_SAT_MAX_ITER, PURE_SAT_TOL, _pure_zs, pure_saturation_P,  # noqa: F401
                      pure_saturation_T)

FLASH_SS_MAX_ITER = 200
#: Apply GDEM extrapolation every this many successive-substitution steps.
ACCELERATE_EVERY = 5
#: GDEM is applied only for a dominant eigenvalue below this, and moves ln K by at most this.
GDEM_MAX_LAMBDA = 0.95
GDEM_MAX_STEP = 1.0
NEWTON_MAX_ITER = 30
#: Rachford-Rice: Newton with bisection, converged when the relative step or the bracket is below
#: this (a few ulps: the material balance then closes to ~1e-15).
RR_TOL = 4e-16
RR_MAX_ITER = 100
#: Range of the vapour fraction allowed inside the substitution iterations ("negative flash"): far
#: enough past [0, 1] that a barely unstable feed does not stall at the trial-phase fixed point,
#: close enough that K-values near 1 (window edges at +-1e9) cannot throw the iterate away.
NEGATIVE_FLASH_BOUNDS = (-0.5, 1.5)
#: Temperature bracket for PH/PS flashes [K]: below the normal boiling point of every component
#: except H2/He/N2 and above any let-down or chilling duty.
T_LOW = 40.0
T_HIGH = 2000.0
PH_MAX_ITER = 100
#: PH/PS convergence: relative enthalpy (entropy) residual and absolute temperature step [K].
PH_TOL_REL = 1e-12
PH_TOL_T = 1e-9
#: Trial phases whose converged compositions lie closer than this (sum of squared differences)
#: reached the same stationary point of the tangent plane: the flash converges a split from the
#: first of them only (see :func:`flash_TP`). Trials converged to LN_TOL on ln W that found the same
#: point differ by ~1e-20 in this measure; different points differ by far more than 1e-7.
DISTINCT_TRIAL_DIST = TRIVIAL_DIST
#: Largest |ln K| at which a split has collapsed onto the feed (the trivial solution) [-].
TRIVIAL_LNK = 1e-4
#: GDEM needs its two successive eigenvalue estimates to agree to this (relative).
GDEM_AGREE = 0.05
#: Newton finish: forward-difference step on ln K and the largest step taken per iteration.
NEWTON_FD_STEP = 1e-7
NEWTON_MAX_STEP = 1.0
#: A split is accepted when its Gibbs energy is below the single phase's by more than round-off
#: (this fraction of |g|).
GIBBS_MARGIN_REL = 1e-12
#: Bounds put on K-values before the split iterations (finite logarithms).
K_CLIP = (1e-300, 1e300)
#: Phase identification parameter above which a single phase is called liquid (Venkatarathnam &
#: Oellrich 2011: the ideal gas has 1).
PHASE_ID_LIQUID = 1.0
#: A single phase at or above this multiple of its estimated true critical temperature
#: (:func:`letdown.fluid.components.critical_temperature_estimate`) is called vapour whatever its phase identification
#: parameter: it is a gas in the sense of the trade (a fluid above its critical temperature gives a
#: dew point, not a bubble point, when its pressure falls; common practice in reservoir and gas
#: engineering). Two faults this answers: the parameter exceeds 1 for a hot gas where repulsion
#: dominates (a lean gas at 1500 K and 50 bar: 1.007; a fuzz find sent 1500 K gas down a
#: separator's liquid outlet), and for a dense gas near ambient temperature (the demo station gas
#: above 131 bar at 5 degC), which was named liquid with vapour fraction 0. Below the estimate the
#: parameter decides, so a dense liquid-like fluid below its critical temperature (a condensate or
#: NGL) keeps its liquid name.
VAPOUR_ABOVE_TC = 1.0



# ------------------------------------------------------------------------------------------------
def rachford_rice(zs, Ks, negative=False, beta0=None):
    """Vapour fraction from the Rachford-Rice equation.

    sum_i z_i (K_i - 1) / (1 + beta (K_i - 1)) = 0, solved by Newton steps on the Leibovici &
    Neoschil (Fluid Phase Equilib. 74 (1992) 303) form H = (beta - a)(b - beta) f, a = 1/(1 - Kmax),
    b = 1/(1 - Kmin), which removes the two poles next to the solution and stays near-linear when a
    phase is a trace; steps are kept inside a shrinking bracket (bisection when one leaves it). The
    starting bracket is the Whitson & Michelsen (1989) window.

    Parameters
    ----------
    zs, Ks : ndarray (n, nc)
    negative : bool
        Solve over the whole window between the poles ("negative flash", beta may leave [0, 1]), as
        the successive-substitution iterations need; otherwise beta is restricted to [0, 1] and the
        bound is returned where the root lies outside.
    beta0 : ndarray (n,), optional
        Starting values (the previous iterate's), used where they lie inside the bracket.

    Returns
    -------
    beta : ndarray (n,) [-]
    """
    Km1 = Ks - 1.0
    with np.errstate(divide="ignore", invalid="ignore"):
        # an infinite K (a trial's ln K past exp's range) gives NaN here, as it does in the
        # compiled kernels, which raise no warning either (that trial's split then cannot win)
        f0 = np.sum(zs * Km1, axis=1)
        f1 = np.sum(zs * Km1 / Ks, axis=1)
        lo = np.max(np.where(Ks > 1.0, (Ks * zs - 1.0) / Km1, -np.inf), axis=1)
        hi = np.min(np.where(Ks < 1.0, (1.0 - zs) / (1.0 - Ks), np.inf), axis=1)
        a_ = 1.0 / (1.0 - np.max(Ks, axis=1))
        b_ = 1.0 / (1.0 - np.min(Ks, axis=1))
    straddle = (np.max(Ks, axis=1) > 1.0) & (np.min(Ks, axis=1) < 1.0)
    if negative:
        active = straddle.copy()
    else:
        lo = np.maximum(lo, 0.0)
        hi = np.minimum(hi, 1.0)
        active = (f0 > 0.0) & (f1 < 0.0)
    lo = np.where(active, lo, 0.0)
    hi = np.where(active, hi, 1.0)
    beta = 0.5 * (lo + hi)
    if beta0 is not None:
        beta = np.where((beta0 > lo) & (beta0 < hi), beta0, beta)
    for _ in range(RR_MAX_ITER):
        if not active.any():
            break
        den = 1.0 + beta[:, None] * Km1
        t = zs * Km1 / den
        f = t.sum(axis=1)
        df = -(t * Km1 / den).sum(axis=1)
        lo = np.where(active & (f > 0.0), beta, lo)
        hi = np.where(active & (f < 0.0), beta, hi)
        pa = beta - a_
        pb = b_ - beta
        # a pole at infinity (K exactly 1) gives inf * 0 here; such rows fall to bisection below
        with np.errstate(divide="ignore", invalid="ignore"):
            H = pa * pb * f
            dH = (pb - pa) * f + pa * pb * df
            new = beta - H / dH
        # converged when the Newton step itself is a few ulps (test before the bracket check: a
        # zero step sits on the bracket end)
        done = (np.abs(new - beta) <= RR_TOL * np.maximum(np.abs(beta), 1e-300)) \
            | (hi - lo < RR_TOL) | (f == 0.0)
        bad = ((new <= lo) | (new >= hi) | ~np.isfinite(new)) & ~done
        new = np.where(bad, 0.5 * (lo + hi), new)
        new = np.where(done, beta, new)
        beta = np.where(active, new, beta)
        active &= ~done
    if negative:
        beta = np.clip(beta, NEGATIVE_FLASH_BOUNDS[0], NEGATIVE_FLASH_BOUNDS[1])
        return np.where(straddle, beta, np.where(np.max(Ks, axis=1) <= 1.0, 0.0, 1.0))
    return np.where(f0 <= 0.0, 0.0, np.where(f1 >= 0.0, 1.0, beta))


def _phase_compositions(zs, Ks, beta):
    den = 1.0 + beta[:, None] * (Ks - 1.0)
    xs = zs / den
    ys = Ks * xs
    xs = xs / xs.sum(axis=1, keepdims=True)
    ys = ys / ys.sum(axis=1, keepdims=True)
    return xs, ys


# ------------------------------------------------------------------------------------------------
# ------------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class TwoPhase:
    """Converged two-phase split (arrays over the flashed cases)."""

    beta: np.ndarray       # vapour fraction [-]
    xs: np.ndarray         # liquid composition
    ys: np.ndarray         # vapour composition
    report: SolveReport


def _residual(eos, T, P, xs, ys, Ks):
    lnphL, _ = eos.lnphi(T, P, xs, "stable")
    lnphV, _ = eos.lnphi(T, P, ys, "stable")
    return lnphL - lnphV


def two_phase_flash(eos: CubicEOS, T, P, zs, Ks, tol=LN_TOL):
    """Converge a two-phase split from initial K-values (successive substitution, GDEM, Newton).

    Parameters
    ----------
    tol : float
        Convergence on the largest change of ln K [-] (looser values serve intermediate iterates of
        an outer loop).

    Returns
    -------
    TwoPhase
    """
    n, nc = zs.shape
    use_native = native.AVAILABLE
    if use_native:
        # the substitution loop in compiled code (letdown/fluid/_flashkernels.c), case by case
        cfg = _native_split_constants(tol)
        lnK, beta, conv, iters, resid = native.two_phase_ss(eos, T, P, zs, Ks, **cfg)
    else:
        present = zs > 0.0
        lnK = np.where(present, np.log(Ks), 0.0)
        conv = np.zeros(n, dtype=bool)
        iters = np.zeros(n, dtype=int)
        resid = np.full(n, np.inf)
        hist = []  # recent ln K for GDEM
        beta = np.full(n, np.nan)
        for it in range(FLASH_SS_MAX_ITER):
            act = ~conv
            if not act.any():
                break
            idx = np.nonzero(act)[0]
            m = idx.size
            with np.errstate(over="ignore"):        # inf as in the kernels (see rachford_rice)
                K = np.exp(lnK[idx])
            b = rachford_rice(zs[idx], K, negative=True, beta0=beta[idx])
            xs, ys = _phase_compositions(zs[idx], K, b)
            # each phase on its own lowest-Gibbs root: near a critical point the phases may swap
            # character during the iterations, and forcing "liquid"/"vapour" roots would then give
            # the wrong fugacities; the phases are named by density at the end. Both phases go
            # through one call (rows stacked) to halve the per-call overhead.
            T2 = np.concatenate([T[idx], T[idx]])
            P2 = np.concatenate([P[idx], P[idx]])
            lnph, _ = eos.lnphi(T2, P2, np.concatenate([xs, ys]), "stable")
            new = np.where(present[idx], lnph[:m] - lnph[m:], 0.0)
            err = np.max(np.abs(new - lnK[idx]), axis=1)
            resid[idx] = err
            iters[idx] += 1
            beta[idx] = b
            lnK[idx] = new
            conv[idx] = err < tol
            hist.append(lnK.copy())
            if len(hist) > 4:
                hist.pop(0)
            if (it + 1) % ACCELERATE_EVERY == 0 and len(hist) == 4:
                lnK = _gdem(hist, lnK, ~conv)
                hist = []
            # K collapsing onto 1 (trivial solution) is not a split
            trivial = np.max(np.abs(lnK), axis=1) < TRIVIAL_LNK
            if trivial.any():
                conv |= trivial
                resid[trivial] = np.inf
    # Newton finish for cases not converged by substitution
    left = ~conv | ~np.isfinite(resid)
    left &= np.max(np.abs(lnK), axis=1) >= TRIVIAL_LNK
    if left.any():
        idx = np.nonzero(left)[0]
        lnK_i, ok, res, nit = _newton_lnK(eos, T[idx], P[idx], zs[idx], lnK[idx], tol)
        lnK[idx] = lnK_i
        conv[idx] = ok
        resid[idx] = res
        iters[idx] += nit
    if use_native:
        beta, xs, ys, Zx, Zy = native.split_finish(eos, T, P, zs, lnK, **cfg)
    else:
        K = np.exp(lnK)
        beta = rachford_rice(zs, K, negative=True)
        xs, ys = _phase_compositions(zs, K, beta)
    trivial = np.max(np.abs(lnK), axis=1) < TRIVIAL_LNK
    conv &= ~trivial
    # name the phases by molar volume: "vapour" is the lighter one
    if not use_native:
        _, Zx = eos.lnphi(T, P, xs, "stable")
        _, Zy = eos.lnphi(T, P, ys, "stable")
    swap = Zy < Zx
    if swap.any():
        xs, ys = np.where(swap[:, None], ys, xs), np.where(swap[:, None], xs, ys)
        beta = np.where(swap, 1.0 - beta, beta)
    return TwoPhase(beta, xs, ys, SolveReport(conv, iters, resid, "two-phase PT flash"))


def _native_split_constants(tol):
    """The constants of the substitution loop, for the compiled kernels."""
    return dict(tol=tol, max_iter=FLASH_SS_MAX_ITER, accelerate_every=ACCELERATE_EVERY,
                gdem_max_lambda=GDEM_MAX_LAMBDA, gdem_max_step=GDEM_MAX_STEP,
                gdem_agree=GDEM_AGREE, trivial_lnK=TRIVIAL_LNK, rr_tol=RR_TOL,
                rr_max_iter=RR_MAX_ITER, neg_bounds=NEGATIVE_FLASH_BOUNDS)


def _gdem(hist, lnK, mask):
    """Dominant-eigenvalue extrapolation of the substitution sequence (Crowe & Nishio, AIChE J. 21
    (1975) 528): lnK + lambda/(1 - lambda) * (last step), applied only where two successive
    estimates of the eigenvalue lambda agree (a single dominant mode), with the jump capped."""
    d1 = hist[1] - hist[0]
    d2 = hist[2] - hist[1]
    d3 = hist[3] - hist[2]
    with np.errstate(divide="ignore", invalid="ignore"):
        lam1 = np.sum(d1 * d2, axis=1) / np.sum(d1 * d1, axis=1)
        lam2 = np.sum(d2 * d3, axis=1) / np.sum(d2 * d2, axis=1)
    ok = (mask & np.isfinite(lam1) & np.isfinite(lam2) & (lam2 > 0.0) & (lam2 < GDEM_MAX_LAMBDA)
          & (np.abs(lam1 - lam2) < GDEM_AGREE * lam2))
    factor = np.where(ok, lam2 / (1.0 - lam2), 0.0)
    step = factor[:, None] * d3
    big = np.max(np.abs(step), axis=1)
    step *= np.where(big > GDEM_MAX_STEP, GDEM_MAX_STEP / np.where(big > 0, big, 1.0), 1.0)[:, None]
    return lnK + step


def _newton_lnK(eos, T, P, zs, lnK, tol=LN_TOL):
    """Newton iterations on F(ln K) = ln K + ln phi_V(y) - ln phi_L(x) = 0 with a forward-difference
    Jacobian (step 1e-7), for the few cases substitution leaves near a critical point."""
    n, nc = zs.shape
    ok = np.zeros(n, dtype=bool)
    res = np.full(n, np.inf)
    nit = np.zeros(n, dtype=int)

    def F(lk, idx):
        K = np.exp(lk)
        b = rachford_rice(zs[idx], K, negative=True)
        xs, ys = _phase_compositions(zs[idx], K, b)
        return lk - _residual(eos, T[idx], P[idx], xs, ys, K)

    h = NEWTON_FD_STEP
    for _ in range(NEWTON_MAX_ITER):
        idx = np.nonzero(~ok)[0]
        if idx.size == 0:
            break
        lk = lnK[idx]
        F0 = F(lk, idx)
        res[idx] = np.max(np.abs(F0), axis=1)
        done = res[idx] < tol
        ok[idx[done]] = True
        idx, lk, F0 = idx[~done], lk[~done], F0[~done]
        if idx.size == 0:
            break
        J = np.empty((idx.size, nc, nc))
        for j in range(nc):
            lp = lk.copy()
            lp[:, j] += h
            J[:, :, j] = (F(lp, idx) - F0) / h
        try:
            dx = np.linalg.solve(J, -F0[..., None])[..., 0]
        except np.linalg.LinAlgError:
            break
        dx = np.clip(dx, -NEWTON_MAX_STEP, NEWTON_MAX_STEP)
        lnK[idx] = lk + dx
        nit[idx] += 1
    return lnK, ok, res, nit


# ------------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class PTSplit:
    """Phase split at given T, P for a batch.

    Attributes
    ----------
    beta : (n,) vapour fraction; 1 or 0 for a single phase
    xs, ys : (n, nc) liquid and vapour compositions (equal to zs where that phase is absent)
    n_phases : (n,) int
    single_is_vapour : (n,) bool, for single-phase cases, whether the phase is called vapour
    report : SolveReport
    """

    beta: np.ndarray
    xs: np.ndarray
    ys: np.ndarray
    n_phases: np.ndarray
    single_is_vapour: np.ndarray
    report: SolveReport


def _pure_index(zs):
    nz = np.count_nonzero(zs > 0.0, axis=1)
    return nz == 1, np.argmax(zs, axis=1)


def is_vapour_like(eos: CubicEOS, T, P, zs):
    """Name a single phase 'vapour' when its temperature is at least its estimated true critical
    temperature (:data:`VAPOUR_ABOVE_TC`,
    :func:`letdown.fluid.components.critical_temperature_estimate`) or, below it, when
    its phase identification parameter is at most 1
    (Venkatarathnam & Oellrich 2011; see :func:`letdown.fluid.eos.cubic.phase_identification`). The
    name decides which separator outlet a single phase leaves by; it changes no property."""
    zs = np.atleast_2d(zs)
    return (np.asarray(T) >= VAPOUR_ABOVE_TC * critical_temperature_estimate(eos.comps, zs)) | (
        phase_identification(eos, T, P, zs) <= PHASE_ID_LIQUID)


def flash_TP(eos: CubicEOS, T, P, zs, *, K_init=None, assume=None, tol=LN_TOL, cold=True):
    """Isothermal flash of a batch.

    Parameters
    ----------
    T, P : ndarray (n,)
    zs : ndarray (n, nc)
    K_init : ndarray (n, nc), optional
        Warm-start K-values (skips the stability test for the cases where ``assume`` is 2).
    assume : ndarray of int (n,), optional
        Phase count expected from a previous solve (1 or 2); 0 or None means test stability.
    tol : float
        Convergence of the split on ln K [-].
    cold : bool
        The stability test's cold trial phases (see :func:`stability`); False for the flashes
        that confirm a vapour-liquid boundary.

    Returns
    -------
    PTSplit
    """
    n, nc = zs.shape
    if native.AVAILABLE:
        return _flash_TP_native(eos, T, P, zs, K_init, assume, tol, cold)
    beta = np.where(is_vapour_like(eos, T, P, zs), 1.0, 0.0)
    xs = zs.copy()
    ys = zs.copy()
    nph = np.ones(n, dtype=int)
    conv = np.ones(n, dtype=bool)
    iters = np.zeros(n, dtype=int)
    resid = np.zeros(n)
    pure, ipure = _pure_index(zs)
    if assume is None:
        assume = np.zeros(n, dtype=int)

    def converge(idx, K):
        """Converge splits for cases idx from K: (TwoPhase, mask of acceptable splits (lower
        Gibbs energy than the single phase), their G/RT, mask of failed iterations)."""
        K = np.where(zs[idx] > 0, K, 1.0)
        bad = ~np.all(np.isfinite(K) & (K > 0), axis=1)
        K[bad] = wilson_K(eos, T[idx[bad]], P[idx[bad]])
        tp = two_phase_flash(eos, T[idx], P[idx], zs[idx], np.clip(K, *K_CLIP), tol)
        ok = tp.report.converged & (tp.beta > 0.0) & (tp.beta < 1.0)
        g_split = np.full(idx.size, np.nan)
        if ok.any():
            # accept a split only when it lowers the Gibbs energy
            g_split = _gibbs_split(eos, T[idx], P[idx], tp)
            lnz, _ = eos.lnphi(T[idx], P[idx], zs[idx], "stable")
            with np.errstate(divide="ignore", invalid="ignore"):
                g_single = np.sum(np.where(zs[idx] > 0, zs[idx] * (np.log(zs[idx]) + lnz), 0.0),
                                  axis=1)
            ok &= g_split < g_single + GIBBS_MARGIN_REL * np.abs(g_single)
        iters[idx] += tp.report.iterations
        with np.errstate(divide="ignore", invalid="ignore"):
            lnK_end = np.log(np.clip(tp.ys / tp.xs, *K_CLIP))
        failed = ~tp.report.converged & ~(np.max(np.abs(lnK_end), axis=1) < TRIVIAL_LNK)
        return tp, ok, g_split, failed

    def store(idx, tp, take):
        sel = idx[take]
        beta[sel] = tp.beta[take]
        xs[sel] = tp.xs[take]
        ys[sel] = tp.ys[take]
        nph[sel] = 2
        resid[sel] = tp.report.residual[take]

    test = (~pure) & (assume == 0)
    warm = (~pure) & (assume == 2)
    if warm.any() and K_init is not None:
        idx = np.nonzero(warm)[0]
        tp, ok, _, _ = converge(idx, K_init[idx].copy())
        store(idx, tp, ok)
        # a warm start that does not give a split proves nothing: test stability
        test[idx[~ok]] = True
    elif warm.any():
        test |= warm
    if test.any():
        idx = np.nonzero(test)[0]
        lnph, Zz = eos.lnphi(T[idx], P[idx], zs[idx], "stable")
        st = stability(eos, T[idx], P[idx], zs[idx], lnphis_z=lnph, Z_z=Zz, cold=cold)
        u = st.unstable
        if u.any():
            ui = idx[u]
            order, keep = _split_trials(st.tm_trials[:, u], st.ws_trials[:, u])
            z = zs[ui]
            have = np.zeros(ui.size, dtype=bool)
            g_best = np.full(ui.size, np.nan)
            failed_any = np.zeros(ui.size, dtype=bool)
            for rank in range(order.shape[0]):
                c = np.nonzero(keep[rank])[0]
                if c.size == 0:
                    continue
                t = order[rank, c]
                w = st.ws_trials[t, np.nonzero(u)[0][c]]
                zc = z[c]
                with np.errstate(divide="ignore", invalid="ignore"):
                    Kv = np.where(zc > 0, w / zc, 1.0)
                    Kl = np.where(w > 0, zc / w, 1.0)
                K = np.where(st.vapour_trials[t, np.nonzero(u)[0][c]][:, None], Kv, Kl)
                tp, ok, g, failed = converge(ui[c], K)
                # the split of lowest Gibbs energy; a later trial's must be lower by more than
                # round-off (the first, most unstable trial wins a tie)
                take = ok & (~have[c] | (g < g_best[c] - GIBBS_MARGIN_REL * np.abs(g_best[c])))
                store(ui[c], tp, take)
                have[c[take]] = True
                g_best[c[take]] = g[take]
                failed_any[c] |= failed
            # stability proved a second phase but no split converged: say so
            conv[ui[failed_any & ~have]] = False
    if pure.any():
        idx = np.nonzero(pure)[0]
        beta[idx] = _pure_single_label(eos, T[idx], P[idx], zs[idx], ipure[idx])
    single_v = beta >= 1.0
    return PTSplit(beta, xs, ys, nph, single_v, SolveReport(conv, iters, resid, "PT flash"))


def _split_trials(tm, ws):
    """The trial phases a flash converges a split from, for feeds found unstable: ``order``
    (NT, n), the trial indices by increasing tm (ties by index: the first is the stability test's
    answer), and ``keep`` (NT, n), true for the unstable trials whose composition differs
    (DISTINCT_TRIAL_DIST) from every earlier kept one. The lean-gas throttle of bench/flash.py
    keeps one per feed (its unstable trials all find the same liquid); a gas with water two."""
    nt, n = tm.shape
    key = np.where(tm < TM_UNSTABLE, tm, np.inf)
    order = np.argsort(key, axis=0, kind="stable")
    cols = np.arange(n)
    ws_o = ws[order, cols]                                   # (NT, n, nc)
    keep = np.isfinite(key[order, cols])
    for r in range(1, nt):
        for q in range(r):
            same = np.sum((ws_o[r] - ws_o[q]) ** 2, axis=1) < DISTINCT_TRIAL_DIST
            keep[r] &= ~(keep[q] & same)
    return order, keep


def native_flash_constants():
    """The constants of this module that the compiled P-T flash uses (one source of truth)."""
    return dict(ln_tol=LN_TOL, trivial_dist=TRIVIAL_DIST, stability_max_iter=STABILITY_MAX_ITER,
                early_tm=EARLY_EXIT_TM, ss_max_iter=FLASH_SS_MAX_ITER,
                accelerate_every=ACCELERATE_EVERY, gdem_max_lambda=GDEM_MAX_LAMBDA,
                gdem_max_step=GDEM_MAX_STEP, gdem_agree=GDEM_AGREE, trivial_lnK=TRIVIAL_LNK,
                rr_tol=RR_TOL, rr_max_iter=RR_MAX_ITER, neg_lo=NEGATIVE_FLASH_BOUNDS[0],
                neg_hi=NEGATIVE_FLASH_BOUNDS[1], tm_unstable=TM_UNSTABLE, wilson_c=WILSON_C,
                newton_max_iter=NEWTON_MAX_ITER, newton_fd_step=NEWTON_FD_STEP,
                newton_max_step=NEWTON_MAX_STEP, gibbs_margin_rel=GIBBS_MARGIN_REL,
                k_min=K_CLIP[0], k_max=K_CLIP[1], phase_id_liquid=PHASE_ID_LIQUID,
                vapour_above_tc=VAPOUR_ABOVE_TC, cold_trial_T=COLD_TRIAL_T,
                distinct_trial_dist=DISTINCT_TRIAL_DIST)


def native_flash_constants_no_cold():
    """native_flash_constants without the cold trial phases (flash_TP(cold=False))."""
    return dict(native_flash_constants(), cold_trial_T=-np.inf)


def _flash_TP_native(eos, T, P, zs, K_init, assume, tol, cold=True):
    """flash_TP through the compiled driver (letdown/fluid/_flashkernels.c, one case at a time);
    pure components are named here, as in the numpy path."""
    beta, xs, ys, nph, conv, iters, resid = native.flash_pt(
        eos, T, P, zs, K_init, assume, tol,
        native_flash_constants if cold else native_flash_constants_no_cold)
    pure, ipure = _pure_index(zs)
    if pure.any():
        idx = np.nonzero(pure)[0]
        beta[idx] = _pure_single_label(eos, T[idx], P[idx], zs[idx], ipure[idx])
    return PTSplit(beta, xs, ys, nph, beta >= 1.0, SolveReport(conv, iters, resid, "PT flash"))


def _pure_single_label(eos, T, P, zs, ip):
    """Vapour (1) or liquid (0) for a pure component: below Tc, compare P with Psat(T); above,
    call it vapour."""
    Tc = eos.comps.Tcs[ip]
    beta = np.ones(T.shape)
    sub = T < Tc
    if sub.any():
        Psat, ok = pure_saturation_P(eos, T[sub], ip[sub])
        beta[sub] = np.where(P[sub] < Psat, 1.0, 0.0)
    return beta


def _gibbs_split(eos, T, P, tp: TwoPhase):
    lnL, _ = eos.lnphi(T, P, tp.xs, "stable")
    lnV, _ = eos.lnphi(T, P, tp.ys, "stable")
    with np.errstate(divide="ignore", invalid="ignore"):
        gL = np.sum(np.where(tp.xs > 0, tp.xs * (np.log(tp.xs) + lnL), 0.0), axis=1)
        gV = np.sum(np.where(tp.ys > 0, tp.ys * (np.log(tp.ys) + lnV), 0.0), axis=1)
    return tp.beta * gV + (1.0 - tp.beta) * gL


# ------------------------------------------------------------------------------------------------
