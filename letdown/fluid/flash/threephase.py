"""Three-phase (vapour, hydrocarbon liquid, aqueous liquid) PT flash for cubic equations of state.

Sequence, per case of a batch:

1. The two-phase flash :func:`letdown.fluid.flash.twophase.flash_TP` (stability test and split).
2. A tangent-plane stability test (Michelsen, Fluid Phase Equilib. 9 (1982) 1) of every phase of
   that result, with the trials of :func:`letdown.fluid.flash.twophase.stability` plus a nearly-pure-water
   trial (water 1, every other component 1e-6 of its fraction in the tested phase), which finds a
   free-water phase that the Wilson trials can miss, and a water-free liquid trial (the Wilson
   liquid-like trial with its water cut to a trace), which finds a hydrocarbon liquid beside much
   water where the Wilson liquid trial falls onto the aqueous phase. A phase whose test gives no
   number is not taken as stable: the case is reported unconverged.
3. Where a phase is unstable, a three-phase split: successive substitution on the K-values of
   two phases against the reference phase, each step with the multiphase Rachford-Rice solved as
   the minimisation of the convex function F(beta) = -sum_i z_i ln t_i,
   t_i = 1 + sum_j beta_j (K_ij - 1) (Michelsen, Fluid Phase Equilib. 9 (1982) 21; Okuno, Johns &
   Sepehrnoori, SPE J. 15 (2010) 313), by Newton steps with a step-length bound keeping every t_i
   positive (the negative-flash region). It is converged when the fugacities of every component
   agree in the three phases to ``FUG_TOL`` in ln f. The substitution is accelerated by the
   dominant eigenvalue every few steps (Crowe & Nishio, AIChE J. 21 (1975) 528, as the two-phase
   split) and finished by Newton steps on ln K (forward-difference Jacobian) where it crawls. A
   phase fraction that ends negative removes that phase and the remaining pair is split by
   :func:`letdown.fluid.flash.twophase.two_phase_flash`.

:func:`retest_two_phase` runs steps 2-3 on a two-phase result already at hand (``Fluid.flash``
of a fluid with water does so on every case with water, and on every cold two-phase answer of a
water-free mixture: :mod:`letdown.fluid.flash.threestates`). :func:`letdown.fluid.flash.threephase_px.flash_PX_three` solves the
temperature at which the three-phase equilibrium has a given enthalpy or entropy (P-h, P-s; the
bracketed root finder of :mod:`letdown.numerics.rootfind`), for ``Fluid.flash`` and the separator.

Naming (phases carry no labels in the equations): the aqueous phase is the water-richest phase with
water as its largest component; of the others, the lower mass density one is the vapour. A single
phase is vapour or hydrocarbon liquid by the phase identification parameter
(:func:`letdown.fluid.flash.twophase.is_vapour_like`), aqueous if water is its largest component.

Limits of the model (for the aqueous phase): a cubic equation with constant water interaction
parameters (data/kij_pr.csv: the gas-phase values of Soreide & Whitson 1992 for the light
hydrocarbons and nitrogen, E-PPR78 at 298.15 K or DECHEMA for the others) and van der Waals
one-fluid mixing; on Peng-Robinson, water has the Twu alpha (cubic.py), so its vapour pressure is
right to 1.5 %. It gives the water content of the vapour within 2 % of the water-content route
of letdown.fluid.aqueous.water (tests/fluid/test_threephase.py), but the gas dissolved in the water is far too
low with kij fitted to the gas side (common practice: constant kij cannot fit both sides of the
water-hydrocarbon split): methane and nitrogen at 278-298 K and 50 bar come out 3-4 orders of
magnitude below Henry's law with Sander's (2015) constants (measured, tests/fluid/test_threephase.py);
CO2, whose kij is negative, within about 20 %. The aqueous phase is therefore taken as water
(plus inhibitor) for everything downstream, and glycol or methanol in water, which need an
activity-coefficient or association term, are outside it.

Temperatures [K], pressures [Pa], compositions mole fractions; cases on axis 0.
"""
from __future__ import annotations

import numpy as np

from ..components import R
from ..eos.cubic import CubicEOS
# the result type, its sub-batches and the phase properties live in threephase_result (issue 12:
# module size); their names stay importable from here
from .threephase_result import (PHASES, ThreePhaseResult, aqueous_third,  # noqa: F401
                               concat_results, phase_properties, take_result)
from .twophase import (ACCELERATE_EVERY, K_CLIP, TM_UNSTABLE, PTSplit, SolveReport, _gdem,
                       _gibbs_split, flash_TP, is_vapour_like, stability, two_phase_flash,
                       wilson_K)

#: Converged when the largest difference of ln f_i between phases is below this [-].
FUG_TOL = 1e-9
SS_MAX_ITER = 500
#: Multiphase Rachford-Rice: Newton iterations and convergence on the gradient (sum_i x_i = 1).
RR_MAX_ITER = 100
RR_TOL = 1e-14
#: Largest fraction of the distance to the boundary t_i = 0 a Rachford-Rice step may go.
RR_BOUNDARY_FRACTION = 0.9
#: Trace amount of the non-water components in the nearly-pure-water trial (times their fraction).
WATER_TRIAL_TRACE = 1e-6
STAB_MAX_ITER = 200
STAB_TOL = 1e-11


# ------------------------------------------------------------------------------------------------
def _water_trial_stability(eos, T, P, zs, lnph_z, iw):
    """Minimum modified tangent-plane distance from a nearly-pure-water trial (n,), its trial."""
    present = zs > 0.0
    W = np.where(present, WATER_TRIAL_TRACE * zs, 0.0)
    W[:, iw] = 1.0
    return _trial_stability(eos, T, P, zs, lnph_z, W)


def _dry_liquid_trial_stability(eos, T, P, zs, lnph_z, iw):
    """Minimum modified tangent-plane distance from a water-free liquid trial (n,), its trial.

    The trial is the Wilson liquid-like one of the tested phase with its water cut to a trace
    (x_i = z_i / K_i, water WATER_TRIAL_TRACE times that): where water is abundant, the usual
    liquid-like trial is mostly water and converges onto the aqueous phase, and a hydrocarbon
    liquid beside vapour and water can be missed (found so for 50 % water with n-hexane and
    methane near 343 K and 6 bar, tests/fluid/test_flash_water.py)."""
    present = zs > 0.0
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        W = np.where(present, zs / wilson_K(eos, T, P), 0.0)
    W[:, iw] *= WATER_TRIAL_TRACE
    return _trial_stability(eos, T, P, zs, lnph_z, W)


def _trial_stability(eos, T, P, zs, lnph_z, W0):
    """Tangent-plane distance minimised by successive substitution from the trial mole numbers
    W0 (n, nc) on the liquid root (Michelsen 1982): tm (n,) (0 for a trivial trial) and the
    trial composition (n, nc)."""
    present = zs > 0.0
    n = zs.shape[0]
    with np.errstate(divide="ignore"):
        d = np.where(present, np.log(zs) + lnph_z, -np.inf)
    lnW = np.where(present, np.log(np.where(present & (W0 > 0.0), W0, 1e-300)), -np.inf)
    tm = np.zeros(n)
    active = np.arange(n)
    for _ in range(STAB_MAX_ITER):
        if active.size == 0:
            break
        pa = present[active]
        Wa = np.exp(lnW[active])
        w = Wa / Wa.sum(axis=1, keepdims=True)
        lnph, _ = eos.lnphi(T[active], P[active], w, "liquid")
        with np.errstate(invalid="ignore"):
            tm[active] = 1.0 + np.sum(np.where(pa, Wa * (lnW[active] + lnph - d[active] - 1.0),
                                               0.0), axis=1)
            new = np.where(pa, d[active] - lnph, -np.inf)
            step = np.max(np.where(pa, np.abs(new - lnW[active]), 0.0), axis=1)
        lnW[active] = new
        active = active[~(step < STAB_TOL) & np.isfinite(step)]
    Wa = np.exp(lnW)
    w = Wa / Wa.sum(axis=1, keepdims=True)
    trivial = np.sum((w - zs) ** 2, axis=1) < 1e-7
    return np.where(trivial, 0.0, tm), w


def _rr_newton_step(z, Ka, b, m):
    """One Newton step of the multiphase Rachford-Rice (see :func:`_rr_multi`) for K - 1 = Ka
    (n, m, nc) at fractions b (n, m): t (n, nc), the gradient g (n, m), the step d (n, m) and
    the change of t along it, dt (n, nc)."""
    if m == 2:
        K1, K2 = Ka[:, 0], Ka[:, 1]
        t = 1.0 + b[:, :1] * K1 + b[:, 1:] * K2
        zt = z / t
        zt2 = zt / t
        g = -np.stack([np.sum(zt * K1, axis=1), np.sum(zt * K2, axis=1)], axis=1)
        H11 = np.sum(zt2 * K1 * K1, axis=1) + 1e-300
        H12 = np.sum(zt2 * K1 * K2, axis=1)
        H22 = np.sum(zt2 * K2 * K2, axis=1) + 1e-300
        det = H11 * H22 - H12 * H12
        d = -np.stack([H22 * g[:, 0] - H12 * g[:, 1], H11 * g[:, 1] - H12 * g[:, 0]],
                      axis=1) / det[:, None]
        dt = d[:, :1] * K1 + d[:, 1:] * K2
    else:
        t = 1.0 + np.einsum("nj,nji->ni", b, Ka)
        g = -np.einsum("ni,nji->nj", z / t, Ka)       # dF/dbeta_j = -(sum_i x_ij - sum_i x_i0)
        H = np.einsum("ni,nji,nki->njk", z / t ** 2, Ka, Ka)
        H += 1e-300 * np.eye(m)
        d = -np.linalg.solve(H, g[..., None])[..., 0]
        dt = np.einsum("nj,nji->ni", d, Ka)
    return t, g, d, dt


def _rr_multi(zs, K, beta0):
    """Multiphase Rachford-Rice: phase fractions beta (n, m) of the m non-reference phases for
    K (n, m, nc) against the reference phase, by bounded Newton minimisation of the convex
    F = -sum z_i ln t_i. Returns beta and t (n, nc). A case stops once its gradient is below
    RR_TOL after a full step; two phases (m = 2, the three-phase split) solve their 2x2 Newton
    system in closed form."""
    n, m, nc = K.shape
    Km1 = K - 1.0                                        # (n, m, nc)
    beta = beta0.copy()
    active = np.arange(n)
    present = zs > 0
    for _ in range(RR_MAX_ITER):
        if active.size == 0:
            break
        z, Ka, b = zs[active], Km1[active], beta[active]
        # NaN from a case whose K-values failed ends that case below (no warning needed)
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            t, g, d, dt = _rr_newton_step(z, Ka, b, m)
        with np.errstate(divide="ignore", invalid="ignore"):
            lim = np.where(dt < 0.0, -t / dt, np.inf)
        smax = RR_BOUNDARY_FRACTION * np.min(np.where(present[active], lim, np.inf), axis=1)
        step = np.minimum(1.0, smax)
        with np.errstate(invalid="ignore"):
            beta[active] = b + step[:, None] * d
        # done: converged, or not finite (no Newton step can mend it; the caller sees the NaN)
        done = ((np.max(np.abs(g), axis=1) < RR_TOL) & (step == 1.0)) \
            | ~np.all(np.isfinite(beta[active]), axis=1)
        active = active[~done]
    t = 1.0 + np.einsum("nj,nji->ni", beta, Km1)
    return beta, t


def _split3(eos, T, P, zs, X0, tol=FUG_TOL, beta0=None):
    """Successive substitution for three phases from starting compositions X0 (n, 3, nc) (phase 0
    the reference; ``beta0`` (n, 2) the fractions of phases 1 and 2 to start the Rachford-Rice
    from), converged when ln f agree to ``tol``. Every ``ACCELERATE_EVERY`` steps the sequence of
    ln K (both phases, stacked) is extrapolated by the dominant eigenvalue where two estimates
    agree (:func:`letdown.fluid.flash.twophase._gdem`, Crowe & Nishio 1975), as in the two-phase split;
    convergence is still judged on the fugacities. Returns betas (n, 3), X (n, 3, nc),
    converged (n,), iterations, residual."""
    n, _, nc = X0.shape
    present = zs > 0.0
    tiny = 1e-300
    lnK = np.log(np.clip(X0[:, 1:, :], tiny, None)) - np.log(np.clip(X0[:, :1, :], tiny, None))
    lnK = np.where(present[:, None, :], np.clip(lnK, np.log(K_CLIP[0]), np.log(K_CLIP[1])), 0.0)
    beta = np.full((n, 2), 1.0 / 3.0) if beta0 is None else np.array(beta0, dtype=float)
    conv = np.zeros(n, dtype=bool)
    iters = np.zeros(n, dtype=int)
    resid = np.full(n, np.inf)
    X = X0.copy()
    hist = []
    dead = np.zeros(n, dtype=bool)
    for it in range(SS_MAX_ITER):
        idx = np.nonzero(~conv & ~dead)[0]
        if idx.size == 0:
            break
        K = np.exp(lnK[idx])
        b, t = _rr_multi(zs[idx], K, beta[idx])
        with np.errstate(divide="ignore", invalid="ignore"):     # a lost case: NaN, stopped below
            x0 = zs[idx] / t
            Xi = np.concatenate([x0[:, None, :], K * x0[:, None, :]], axis=1)
            Xi /= Xi.sum(axis=2, keepdims=True)
        m = idx.size
        lnph, _ = eos.lnphi(np.repeat(T[idx], 3), np.repeat(P[idx], 3), Xi.reshape(3 * m, nc),
                            "stable")
        lnph = lnph.reshape(m, 3, nc)
        with np.errstate(divide="ignore", invalid="ignore"):
            lnf = np.where(present[idx][:, None, :], np.log(Xi) + lnph, 0.0)
        res = np.max(np.abs(lnf[:, 1:, :] - lnf[:, :1, :]), axis=(1, 2))
        new = np.where(present[idx][:, None, :], lnph[:, :1, :] - lnph[:, 1:, :], 0.0)
        X[idx], beta[idx], resid[idx] = Xi, b, res
        iters[idx] += 1
        ok = res < tol
        conv[idx[ok]] = True
        lnK[idx[~ok]] = new[~ok]
        # a case whose numbers went non-finite cannot recover: stop it, unconverged
        lost = ~np.isfinite(res) | ~np.all(np.isfinite(b), axis=1)
        if lost.any():
            dead[idx[lost]] = True
            conv[idx[lost]] = False
        hist.append(lnK.reshape(n, 2 * nc).copy())
        if len(hist) > 4:
            hist.pop(0)
        if (it + 1) % ACCELERATE_EVERY == 0 and len(hist) == 4:
            lnK = _gdem(hist, lnK.reshape(n, 2 * nc), ~conv & ~dead).reshape(n, 2, nc)
            hist = []
    # Newton finish where substitution crawls (near a critical point of two of the phases)
    left = np.flatnonzero(~conv & ~dead & np.all(np.isfinite(lnK), axis=(1, 2)))
    if left.size:
        lk, b, Xn, ok, res, nit = _newton3(eos, T[left], P[left], zs[left], lnK[left],
                                            beta[left], tol)
        lnK[left], beta[left], X[left], conv[left], resid[left] = lk, b, Xn, ok, res
        iters[left] += nit
    # a lost case (fractions +-inf: a binary has no three-phase split off its three-phase line)
    # gives NaN here quietly; it is marked unconverged
    with np.errstate(invalid="ignore"):
        betas = np.concatenate([(1.0 - beta.sum(axis=1))[:, None], beta], axis=1)
    return betas, X, conv, iters, resid


#: Newton finish of the three-phase split: iterations, forward-difference step in ln K, and the
#: largest Newton step in ln K (as letdown.fluid.flash.twophase.NEWTON_MAX_ITER, NEWTON_FD_STEP,
#: NEWTON_MAX_STEP for two phases).
NEWTON3_MAX_ITER = 30
NEWTON3_FD_STEP = 1e-7
NEWTON3_MAX_STEP = 1.0


def _ss_map(eos, T, P, zs, lnK, beta):
    """One substitution map: phase fractions, compositions, the residual ln K - (ln phi_0 -
    ln phi_j) (n, 2, nc) and the largest ln f difference (n,)."""
    n, _, nc = lnK.shape
    present = zs > 0.0
    K = np.exp(lnK)
    b, t = _rr_multi(zs, K, beta)
    with np.errstate(divide="ignore", invalid="ignore"):
        x0 = zs / t
        Xi = np.concatenate([x0[:, None, :], K * x0[:, None, :]], axis=1)
        Xi /= Xi.sum(axis=2, keepdims=True)
    lnph, _ = eos.lnphi(np.repeat(T, 3), np.repeat(P, 3), Xi.reshape(3 * n, nc), "stable")
    lnph = lnph.reshape(n, 3, nc)
    with np.errstate(divide="ignore", invalid="ignore"):
        lnf = np.where(present[:, None, :], np.log(Xi) + lnph, 0.0)
    res = np.max(np.abs(lnf[:, 1:, :] - lnf[:, :1, :]), axis=(1, 2))
    G = np.where(present[:, None, :], lnK - (lnph[:, :1, :] - lnph[:, 1:, :]), 0.0)
    return b, Xi, G, res


def _newton3(eos, T, P, zs, lnK, beta, tol):
    """Newton iterations on G(ln K) = ln K - (ln phi_0(x_0) - ln phi_j(x_j)) = 0 for the two
    K-vectors of a three-phase split, Jacobian by forward differences (absent components held
    at ln K = 0). Returns ln K, beta, X, converged, residual (ln f), iterations."""
    n, _, nc = lnK.shape
    m = 2 * nc
    present = np.concatenate([zs > 0.0, zs > 0.0], axis=1)          # (n, 2 nc)
    lnK = lnK.copy()
    beta = beta.copy()
    X = np.full((n, 3, nc), np.nan)
    conv = np.zeros(n, dtype=bool)
    res = np.full(n, np.inf)
    nit = np.zeros(n, dtype=int)
    for _ in range(NEWTON3_MAX_ITER):
        i = np.flatnonzero(~conv)
        if i.size == 0:
            break
        b, Xi, G, r = _ss_map(eos, T[i], P[i], zs[i], lnK[i], beta[i])
        beta[i], X[i], res[i] = b, Xi, r
        nit[i] += 1
        ok = r < tol
        conv[i[ok]] = True
        i, G, b = i[~ok], G[~ok], b[~ok]
        if i.size == 0:
            break
        g = G.reshape(i.size, m)
        J = np.empty((i.size, m, m))
        base = lnK[i].reshape(i.size, m)
        # all perturbations of all cases in one batch
        pert = np.repeat(base[:, None, :], m, axis=1) + NEWTON3_FD_STEP * np.eye(m)[None]
        rep = lambda a: np.repeat(a, m, axis=0)
        _, _, Gp, _ = _ss_map(eos, rep(T[i]), rep(P[i]), rep(zs[i]),
                              pert.reshape(i.size * m, 2, nc), rep(b))
        J = ((Gp.reshape(i.size, m, m) - g[:, None, :]) / NEWTON3_FD_STEP).transpose(0, 2, 1)
        J = np.where(present[i][:, :, None] & present[i][:, None, :], J,
                     np.eye(m)[None] * 1.0)
        with np.errstate(invalid="ignore", over="ignore"):
            try:
                d = -np.linalg.solve(J, np.where(present[i], g, 0.0)[..., None])[..., 0]
            except np.linalg.LinAlgError:
                break
        big = np.max(np.abs(d), axis=1)
        d *= np.where(big > NEWTON3_MAX_STEP, NEWTON3_MAX_STEP / np.where(big > 0, big, 1.0),
                      1.0)[:, None]
        d = np.where(np.isfinite(d), d, 0.0)
        lnK[i] = (base + d).reshape(i.size, 2, nc)
        beta[i] = b
    return lnK, beta, X, conv, res, nit


def _mass_density(eos, T, P, xs):
    _, Z = eos.lnphi(T, P, xs, "stable")
    return (xs @ eos.comps.Ms) * P / (Z * R * T)


# ------------------------------------------------------------------------------------------------
def flash_TP_three(eos: CubicEOS, T, P, zs, split=None) -> ThreePhaseResult:
    """Vapour / hydrocarbon liquid / aqueous liquid PT flash of a batch.

    Parameters
    ----------
    eos : CubicEOS
        The model; its components must include ``water`` for an aqueous phase to be sought.
    T, P : ndarray (n,)
        Temperature [K] and pressure [Pa].
    zs : ndarray (n, nc)
        Feed compositions [-].
    split : letdown.fluid.flash.twophase.PTSplit, optional
        The two-phase flash of these cases, if already done (it is then not repeated).

    Returns
    -------
    ThreePhaseResult
    """
    return retest_two_phase(eos, T, P, zs, split)[0]


def retest_two_phase(eos: CubicEOS, T, P, zs, split=None, _depth=0):
    """Stability test of a two-phase result and, where it fails, the three-phase split.

    Steps 2 and 3 of the module's sequence on the two-phase flash ``split`` of the cases (step 1
    is run here when ``split`` is None).

    Parameters
    ----------
    eos : CubicEOS
    T, P : ndarray (n,)
        [K], [Pa].
    zs : ndarray (n, nc)
        Feed compositions [-].
    split : letdown.fluid.flash.twophase.PTSplit, optional
        Two-phase flash of the cases.

    Returns
    -------
    result : ThreePhaseResult
        The equilibrium of every case, phases named.
    unstable : ndarray of bool (n,)
        Cases whose two-phase result was not stable (split again here: into three phases, into
        another pair of phases, or not converged); elsewhere the two-phase result stands.
    """
    T = np.asarray(T, dtype=float)
    P = np.asarray(P, dtype=float)
    zs = np.asarray(zs, dtype=float)
    n, nc = zs.shape
    names = list(eos.comps.names)
    iw = names.index("water") if "water" in names else None
    sp = flash_TP(eos, T, P, zs) if split is None else split
    # phases of the two-phase result: (n, 2, nc), betas (n, 2); a single phase sits in slot 0
    X = np.stack([sp.ys, sp.xs], axis=1)
    B = np.stack([sp.beta, 1.0 - sp.beta], axis=1)
    single = sp.n_phases == 1
    X[single, 0] = zs[single]
    B[single] = [1.0, 0.0]
    conv = sp.report.converged.copy()
    iters = sp.report.iterations.copy()
    resid = np.zeros(n)
    # stability of each phase present; the most negative trial wins
    untested = np.zeros(n, dtype=bool)
    tm_best = np.zeros(n)
    w_best = np.full((n, nc), np.nan)
    for k in range(2):
        idx = np.nonzero(B[:, k] > 0.0)[0]
        if idx.size == 0:
            continue
        xk = X[idx, k]
        lnph, Zk = eos.lnphi(T[idx], P[idx], xk, "stable")
        st = stability(eos, T[idx], P[idx], xk, lnphis_z=lnph, Z_z=Zk)
        tm, w = st.tm, st.ws
        if iw is not None:
            has_w = xk[:, iw] > 0.0
            for trial in (_water_trial_stability, _dry_liquid_trial_stability):
                tmw, ww = trial(eos, T[idx], P[idx], xk, lnph, iw)
                better = has_w & (tmw < tm)
                tm = np.where(better, tmw, tm)
                w = np.where(better[:, None], ww, w)
        upd = tm < tm_best[idx]
        tm_best[idx[upd]] = tm[upd]
        w_best[idx[upd]] = w[upd]
        untested[idx[~np.isfinite(tm)]] = True
    # a phase whose test gave no number (the equation failed there) is not known to be stable:
    # the case is reported unconverged, not split
    conv &= ~untested
    unstable = (tm_best < TM_UNSTABLE) & ~untested
    nph = np.where(single, 1, 2)
    if unstable.any():
        u = np.nonzero(unstable)[0]
        two = ~single[u]
        # start: the two phases found and the trial; a single unstable phase is first split in two
        X0 = np.empty((u.size, 3, nc))
        X0[:, 0] = X[u, 0]
        X0[:, 1] = np.where(two[:, None], X[u, 1], w_best[u])
        X0[:, 2] = w_best[u]
        s1 = u[~two]
        if s1.size:
            with np.errstate(divide="ignore", invalid="ignore"):
                K = np.where(zs[s1] > 0, w_best[s1] / zs[s1], 1.0)
            tp = two_phase_flash(eos, T[s1], P[s1], zs[s1], np.clip(K, *K_CLIP))
            ok = tp.report.converged & (tp.beta > 0) & (tp.beta < 1)
            X0[~two] = np.stack([tp.ys, tp.xs, w_best[s1]], axis=1)
            # a split that did not take: the three-phase iteration starts from the trial twice
            X0[~two & ~np.isin(u, s1[ok])] = np.stack(
                [zs[s1], w_best[s1], w_best[s1]], axis=1)[~ok]
        betas, X3, ok3, it3, res3 = _split3(eos, T[u], P[u], zs[u], X0)
        # a split that failed from the two phases as reference: once more with the trial phase
        # as the reference and the two phases near their fractions (a fuzz find: a wet lean gas
        # on SRK at 201.6 K, 50 bar, vapour + free water with a methane-butane liquid trial at
        # tm -0.11, NaN from the first start, 0.924 / 0.071 / 0.0047 from this one)
        # A "converged" split with fractions far outside [0, 1] is degenerate (two of its phases
        # alike, the Rachford-Rice singular: seen at +-7e27 on the compiled path for that gas):
        # a failure, not a phase to drop.
        ok3 &= _sane_fractions(betas)
        again = np.flatnonzero(~ok3 & two)
        if again.size:
            r = u[again]
            X0b = np.stack([w_best[r], X[r, 0], X[r, 1]], axis=1)
            b2, X2, ok2, it2, res2 = _split3(eos, T[r], P[r], zs[r], X0b,
                                             beta0=RETRY_BETA_SCALE * B[r, :2])
            betas[again], X3[again], ok3[again], res3[again] = b2, X2, ok2, res2
            ok3[again] &= _sane_fractions(b2)
            it3[again] += it2
        iters[u] += it3
        all_pos = ok3 & np.all(betas > 0.0, axis=1)
        a = u[all_pos]
        X = np.concatenate([X, np.zeros((n, 1, nc))], axis=1)
        B = np.concatenate([B, np.zeros((n, 1))], axis=1)
        X[a], B[a], nph[a], resid[a] = X3[all_pos], betas[all_pos], 3, res3[all_pos]
        # a negative phase fraction: that phase does not exist; split the other two
        drop = ok3 & ~all_pos
        if drop.any():
            dd = u[drop]
            keep = np.argsort(betas[drop], axis=1)[:, 1:]          # the two largest
            r = np.arange(dd.size)
            xa, xb = X3[drop][r, keep[:, 0]], X3[drop][r, keep[:, 1]]
            with np.errstate(divide="ignore", invalid="ignore"):
                K = np.where(zs[dd] > 0, xa / xb, 1.0)
            tp = two_phase_flash(eos, T[dd], P[dd], zs[dd], np.clip(K, *K_CLIP))
            good = tp.report.converged & (tp.beta > 0) & (tp.beta < 1)
            g = dd[good]
            X[g, 0], X[g, 1], X[g, 2] = tp.ys[good], tp.xs[good], 0.0
            B[g] = np.stack([tp.beta[good], 1.0 - tp.beta[good], 0.0 * tp.beta[good]], axis=1)
            nph[g] = 2
            conv[dd[~good]] = False
            # the pair left is an answer only if stable itself (it can be the very split found
            # unstable): retested, and unconverged where the retests run out
            if g.size and _depth < RESPLIT_DEPTH:
                m_ = g.size
                sp_g = PTSplit(tp.beta[good], tp.xs[good], tp.ys[good], np.full(m_, 2),
                               tp.beta[good] >= 1.0,
                               SolveReport(np.ones(m_, dtype=bool), np.zeros(m_, int),
                                           np.zeros(m_)))
                res_g, _ = retest_two_phase(eos, T[g], P[g], zs[g], sp_g, _depth=_depth + 1)
                X[g] = np.stack([res_g.y, res_g.x, res_g.w], axis=1)
                B[g] = np.stack([res_g.beta_V, res_g.beta_L, res_g.beta_W], axis=1)
                nph[g] = res_g.n_phases
                conv[g] = res_g.report.converged
            elif g.size:
                conv[g] = False
        conv[u[~ok3]] = False
        resid[u[~ok3]] = res3[~ok3]
        # no three-phase split and no pair from it (a binary, where three phases exist only on
        # a line of (T, P), or a split that does not converge): the other two-phase splits
        # with the trial phase, the one of lowest Gibbs energy retested in turn
        lost = u[~conv[u]]
        if lost.size and _depth < RESPLIT_DEPTH:
            _resplit_pairs(eos, T, P, zs, X, B, nph, conv, iters, resid, lost, w_best,
                           single, _depth)
    else:
        X = np.concatenate([X, np.zeros((n, 1, nc))], axis=1)
        B = np.concatenate([B, np.zeros((n, 1))], axis=1)
    return _name_phases(eos, T, P, zs, X, B, nph, iw, SolveReport(
        conv, iters, resid, "three-phase PT flash")), unstable | untested


#: The second start of a failed three-phase split takes the two phases found at this share of
#: their fractions (the trial phase the rest) [-].
RETRY_BETA_SCALE = 0.9
#: A three-phase split whose phase fractions leave [-DEGENERATE_BETA, 1 + DEGENERATE_BETA] is
#: degenerate (two phases alike), not converged [-].
DEGENERATE_BETA = 10.0


def _sane_fractions(betas):
    """Cases (n,) whose phase fractions (n, 3) are finite and not far outside [0, 1]."""
    with np.errstate(invalid="ignore"):
        return np.all(np.isfinite(betas) & (betas > -DEGENERATE_BETA)
                      & (betas < 1.0 + DEGENERATE_BETA), axis=1)


#: Retests of a two-phase split found by :func:`_resplit_pairs` (each may find another).
RESPLIT_DEPTH = 2


def _resplit_pairs(eos, T, P, zs, X, B, nph, conv, iters, resid, lost, w_best, single, depth):
    """Cases ``lost`` of :func:`retest_two_phase` (an unstable answer with no three-phase split):
    two-phase splits of the feed from K = trial / phase for each phase of the answer (the
    trial phase replacing it), the converged one of lowest Gibbs energy, lower than the
    answer's, retested by :func:`retest_two_phase` (to ``RESPLIT_DEPTH``); X, B, nph, conv,
    iters and resid updated in place (the cases stay unconverged where nothing is found)."""
    m = lost.size
    Tl, Pl, zl, wl = T[lost], P[lost], zs[lost], w_best[lost]
    best_g = np.full(m, np.inf)
    best = None
    # the answer's Gibbs energy: each phase present on its stable root
    g0 = np.zeros(m)
    for k in range(2):
        b = B[lost, k]
        xk = np.where((b > 0.0)[:, None], X[lost, k], zl)
        lnph, _ = eos.lnphi(Tl, Pl, xk, "stable")
        with np.errstate(divide="ignore", invalid="ignore"):
            gk = np.sum(np.where(xk > 0, xk * (np.log(xk) + lnph), 0.0), axis=1)
        g0 += np.where(b > 0.0, b * gk, 0.0)
    for k in range(2):
        ref = np.where(single[lost][:, None] | (B[lost, k] <= 0.0)[:, None], zl, X[lost, k])
        with np.errstate(divide="ignore", invalid="ignore"):
            K = np.where(zl > 0, wl / ref, 1.0)
        K = np.where(np.isfinite(K), K, 1.0)
        tp = two_phase_flash(eos, Tl, Pl, zl, np.clip(K, *K_CLIP))
        ok = tp.report.converged & (tp.beta > 0) & (tp.beta < 1) \
            & (np.sum((tp.xs - tp.ys) ** 2, axis=1) > TRIVIAL_SPLIT)
        g = np.where(ok, _gibbs_split(eos, Tl, Pl, tp), np.inf)
        take = g < best_g
        best_g = np.where(take, g, best_g)
        if best is None:
            best = [tp.beta.copy(), tp.xs.copy(), tp.ys.copy()]
        else:
            best[0] = np.where(take, tp.beta, best[0])
            best[1] = np.where(take[:, None], tp.xs, best[1])
            best[2] = np.where(take[:, None], tp.ys, best[2])
    found = np.isfinite(best_g) & (best_g < g0 - GIBBS_LOWER)
    if not found.any():
        return
    f = np.flatnonzero(found)
    i = lost[f]
    sp = PTSplit(best[0][f], best[1][f], best[2][f], np.full(f.size, 2), best[0][f] >= 1.0,
                 SolveReport(np.ones(f.size, dtype=bool), np.zeros(f.size, int), np.zeros(f.size)))
    res, _ = retest_two_phase(eos, T[i], P[i], zs[i], sp, _depth=depth + 1)
    X[i] = np.stack([res.y, res.x, res.w], axis=1)
    B[i] = np.stack([res.beta_V, res.beta_L, res.beta_W], axis=1)
    nph[i] = res.n_phases
    conv[i] = res.report.converged
    iters[i] += res.report.iterations
    resid[i] = res.report.residual


#: A split found by :func:`_resplit_pairs` must lower G/RT by more than this [-].
GIBBS_LOWER = 1e-10


def _name_phases(eos, T, P, zs, X, B, nph, iw, report):
    """Order the phases of each case as (vapour, hydrocarbon liquid, aqueous), all cases at once.

    The aqueous phase: of the phases present with water as their largest component, the
    water-richest. The others by mass density, lightest first: two of them are vapour and
    hydrocarbon liquid; one alone is vapour unless liquid-like (:func:`is_vapour_like`); three
    (no aqueous phase among them) are vapour, hydrocarbon liquid and the heaviest liquid in the
    third slot.
    """
    n, _, nc = X.shape
    rows = np.arange(n)
    present = B > 0.0
    Xs = np.where(present[..., None], X, zs[:, None, :])
    if iw is not None:
        aq_cand = present & (np.argmax(Xs, axis=2) == iw)
        has_aq = aq_cand.any(axis=1)
        aq = np.argmax(np.where(aq_cand, Xs[:, :, iw], -np.inf), axis=1)
    else:
        has_aq = np.zeros(n, dtype=bool)
        aq = np.zeros(n, dtype=int)
    is_aq = np.zeros((n, 3), dtype=bool)
    is_aq[rows, aq] = has_aq
    rest = present & ~is_aq
    n_rest = rest.sum(axis=1)
    # densities only where two or three phases are to be told apart
    rho = np.full((n, 3), np.inf)
    many = np.flatnonzero(n_rest >= 2)
    if many.size:
        for k in range(3):
            rho[many, k] = _mass_density(eos, T[many], P[many], Xs[many, k])
    order = np.argsort(np.where(rest, rho, np.inf), axis=1, kind="stable")
    slot_of = np.full((n, 3), -1)           # slot (0 V, 1 L, 2 W) of each phase, -1 unused
    two = n_rest == 2
    slot_of[rows[two], order[two, 0]] = 0
    slot_of[rows[two], order[two, 1]] = 1
    three = n_rest == 3
    for k in range(3):
        slot_of[rows[three], order[three, k]] = k
    one = np.flatnonzero(n_rest == 1)
    if one.size:                # alone or beside water: vapour unless liquid-like
        k = order[one, 0]
        vap = is_vapour_like(eos, T[one], P[one], Xs[one, k])
        slot_of[one, k] = np.where(vap, 0, 1)
    slot_of[rows[has_aq], aq[has_aq]] = 2
    out_b = np.zeros((n, 3))
    out_x = np.full((n, 3, nc), np.nan)
    for k in range(3):
        used = slot_of[:, k] >= 0
        out_b[rows[used], slot_of[used, k]] = B[used, k]
        out_x[rows[used], slot_of[used, k]] = X[used, k]
    return ThreePhaseResult(out_b[:, 0], out_b[:, 1], out_b[:, 2], out_x[:, 0], out_x[:, 1],
                            out_x[:, 2], nph, report)


#: Phases of a warm-started three-phase split closer than this (sum of squared differences of
#: mole fractions) are one phase: the split is trivial and the case is flashed in full (as
#: letdown.fluid.flash.twophase.TRIVIAL_DIST).
TRIVIAL_SPLIT = 1e-7
