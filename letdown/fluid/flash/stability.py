"""Tangent-plane stability test of a batch of feeds for cubic equations of state (Michelsen,
Fluid Phase Equilib. 9 (1982) 1): the modified tangent-plane distance minimised by successive
substitution from several trial phases at once -- Wilson vapour-like (z K), Wilson liquid-like
(z / K), nearly pure heaviest and lightest component present, and below ``COLD_TRIAL_T`` nearly pure
trials of the components that form cold second liquids -- with the Wilson (1968) K-values and the
tolerances the two-phase flash shares. Split from :mod:`letdown.fluid.flash.twophase` along this
seam (issue 12: module size); every name is still importable from there.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..kernels import native
from ..components import cold_trial_flags
from ..eos.cubic import CubicEOS

#: Tangent-plane distance below which a mixture is declared unstable. Above round-off of tm
#: (~1e-14) with margin, and far below any physically meaningful second phase amount.
TM_UNSTABLE = -1e-9
#: Converged when the largest change in ln W (stability) or in ln K (flash) is below this.
LN_TOL = 1e-11
#: Trial compositions closer than this (sum of squared differences) to the feed are trivial.
TRIVIAL_DIST = 1e-7
STABILITY_MAX_ITER = 200
#: Wilson (1968) K-value correlation: ln K = ln(Pc/P) + WILSON_C (1 + omega)(1 - Tc/T).
WILSON_C = 5.373
#: A trial stops early (``early_exit``) once its tangent-plane distance is below this: instability
#: is then proved with margin over round-off.
EARLY_EXIT_TM = -1e-6
#: Cold trial phases: below COLD_TRIAL_T [K] the stability test adds, for each of these components
#: present in the feed, a nearly pure trial phase of it (after the Wilson vapour and liquid trials
#: and the nearly pure heaviest and lightest component). Their liquids separate from methane-rich
#: liquids at low temperature (a CO2-rich second liquid). Measured: on 4,800 random natural gases
#: of tests/fluid/test_flash_properties.py at 120-300 K (Peng-Robinson and Soave), the four standard
#: trials called 97 states stable that a nearly pure CO2 trial proves unstable (tm down to -0.83),
#: all at 120-143.5 K; a nearly pure trial of every other component found none. The fuzz sweep of
#: issue 11 placed the missed cold splits of CO2-rich and sour gases at 150-215 K. 220 K covers
#: both with margin; above it the test is unchanged (and costs nothing more).
COLD_TRIAL_T = 220.0
#: At most this many cold trials per feed (the compiled kernels' fixed room, ST_MAX_COLD): both
#: paths take the first COLD_TRIAL_MAX flagged components present in the feed, and run them all
#: where the four standard trials find the feed stable.
COLD_TRIAL_MAX = 2
#: Trial phases per feed: the four standard ones and the cold ones.
N_TRIALS = 4 + COLD_TRIAL_MAX


def wilson_K(eos: CubicEOS, T, P):
    """Wilson (1968) K-value estimate, shape (n, nc) [-]."""
    c = eos.comps
    return (c.Pcs / P[:, None]) * np.exp(WILSON_C * (1.0 + c.omegas) * (1.0 - c.Tcs / T[:, None]))


@dataclass(frozen=True)
class StabilityResult:
    """Outcome of the stability test for a batch of feeds.

    Attributes
    ----------
    tm : ndarray (n,)
        Most negative modified tangent-plane distance found [-] (0 where every trial was trivial).
    unstable : ndarray of bool (n,)
    ws : ndarray (n, nc)
        Composition of the most unstable trial phase.
    trial_is_vapour : ndarray of bool (n,)
        True where that trial is lighter (larger Z) than the feed.
    tm_trials, ws_trials, vapour_trials : ndarray (NT, n), (NT, n, nc), (NT, n)
        The same for every trial phase, in the order of :data:`N_TRIALS` (the four standard
        trials, then the cold trials in the order of the flagged components present; a trial not
        run has tm 0). Not filled (None) with ``early_exit``.
    """

    tm: np.ndarray
    unstable: np.ndarray
    ws: np.ndarray
    trial_is_vapour: np.ndarray
    tm_trials: np.ndarray | None = None
    ws_trials: np.ndarray | None = None
    vapour_trials: np.ndarray | None = None


def _run_trials(eos, T, P, d, zs, present, trials, run, early_exit):
    """Successive substitution of the trial phases ``trials`` (a list of (n, nc) starts) of the
    feeds zs (d = ln z + ln phi(z)): (tm (nt, n), ln W (nt, n, nc), Z (nt, n)); tm is 0 for a
    trivial trial."""
    n, nc = zs.shape
    nt = len(trials)
    W = np.concatenate(trials, axis=0)                          # (nt*n, nc)
    Tt = np.tile(T, nt)
    Pt = np.tile(P, nt)
    dt = np.tile(d, (nt, 1))
    zt = np.tile(zs, (nt, 1))
    pres = np.tile(present, (nt, 1))
    lnW = np.where(pres, np.log(np.where(pres, W, 1.0)), -np.inf)
    active = np.tile(run, nt)
    tm = np.zeros(nt * n)
    Zw = np.zeros(nt * n)
    for it in range(STABILITY_MAX_ITER):
        idx = np.nonzero(active)[0]
        if idx.size == 0:
            break
        lw = lnW[idx]
        Wa = np.exp(lw)
        w = Wa / Wa.sum(axis=1, keepdims=True)
        lnph, Z = eos.lnphi(Tt[idx], Pt[idx], w, "stable")
        Zw[idx] = Z
        new = np.where(pres[idx], dt[idx] - lnph, -np.inf)
        with np.errstate(invalid="ignore"):
            tmi = 1.0 + np.sum(np.where(pres[idx], Wa * (lw + lnph - dt[idx] - 1.0), 0.0), axis=1)
        tm[idx] = tmi
        with np.errstate(invalid="ignore"):      # absent components: -inf - (-inf), masked
            step = np.max(np.where(pres[idx], np.abs(new - lw), 0.0), axis=1)
        lnW[idx] = new
        trivial = np.sum((w - zt[idx]) ** 2, axis=1) < TRIVIAL_DIST
        done = (step < LN_TOL) | trivial
        if early_exit:
            done |= tmi < EARLY_EXIT_TM
        tm[idx] = np.where(trivial, 0.0, tmi)
        active[idx[done]] = False
    return tm.reshape(nt, n), lnW.reshape(nt, n, nc), Zw.reshape(nt, n)


def stability(eos: CubicEOS, T, P, zs, *, lnphis_z=None, Z_z=None, early_exit=False, cold=True):
    """Tangent-plane stability test of feeds ``zs`` at (T, P), several trials per feed at once.

    Parameters
    ----------
    T, P : ndarray (n,)
        [K], [Pa].
    zs : ndarray (n, nc)
        Feed compositions [-].
    early_exit : bool
        Stop a trial as soon as it proves instability (for yes/no questions such as dew-point
        bracketing); the returned composition is then only approximate.
    cold : bool
        Run the cold trial phases (COLD_TRIAL_T). False for the vapour-liquid boundary searches
        (dew and bubble points, the envelope's first points): a CO2-rich second liquid below the
        bubble curve is not that boundary.
    """
    n, nc = zs.shape
    cold_T = COLD_TRIAL_T if cold else -np.inf
    if native.AVAILABLE:
        # the same iterations in compiled code (letdown/fluid/_flashkernels.c)
        if lnphis_z is None:
            lnphis_z, Z_z = native.lnphi(eos, T, P, zs)
        tm_min, wb, Zb, tma, wa, Za = native.stability_trials(
            eos, T, P, zs, lnphis_z, wilson_K(eos, T, P), ln_tol=LN_TOL, trivial_dist=TRIVIAL_DIST,
            max_iter=STABILITY_MAX_ITER, early_tm=EARLY_EXIT_TM, cold_T=cold_T,
            tm_unstable=TM_UNSTABLE, early_exit=early_exit, n_trials=N_TRIALS)
        if early_exit:
            return StabilityResult(tm_min, tm_min < TM_UNSTABLE, wb, Zb > Z_z)
        return StabilityResult(tm_min, tm_min < TM_UNSTABLE, wb, Zb > Z_z, tma, wa,
                               Za > Z_z[None, :])
    if lnphis_z is None:
        lnphis_z, Z_z = eos.lnphi(T, P, zs, "stable")
    with np.errstate(divide="ignore"):
        lnz = np.log(zs)
    present = zs > 0.0
    d = np.where(present, lnz + lnphis_z, -np.inf)
    K = wilson_K(eos, T, P)
    Tcs = eos.comps.Tcs
    heavy = np.argmax(np.where(present, Tcs, -np.inf), axis=1)
    light = np.argmin(np.where(present, Tcs, np.inf), axis=1)
    trials = [zs * K, zs / K]
    for idx in (heavy, light):
        W = np.where(present, 1e-3 * zs, 0.0)
        W[np.arange(n), idx] = 1.0
        trials.append(W)
    tm, lnW, Zw = _run_trials(eos, T, P, d, zs, present, trials, np.ones(n, dtype=bool),
                              early_exit)
    best = np.argmin(tm, axis=0)
    tm_min = tm[best, np.arange(n)]
    lnWb = lnW[best, np.arange(n)]
    Zb = Zw[best, np.arange(n)]
    tma = np.zeros((N_TRIALS, n))
    lnWa = np.tile(np.where(present, lnz, -np.inf), (N_TRIALS, 1, 1))
    Za = np.zeros((N_TRIALS, n))
    tma[:4], lnWa[:4], Za[:4] = tm, lnW, Zw
    # cold trials (COLD_TRIAL_T): where the four trials found the feed stable, a nearly pure trial
    # of each flagged component present, in component order (slot 4, 5, ... per feed, as in the
    # kernels); one replaces the best so far only when lower (a NaN wins, as numpy's argmin over
    # all trials in that order)
    looks_stable = (tm_min >= TM_UNSTABLE) & (T < cold_T)
    slot = np.full(n, 4)
    for j in np.flatnonzero(cold_trial_flags(eos.comps)):
        run = looks_stable & present[:, j] & (slot < N_TRIALS)
        if not run.any():
            continue
        r = np.nonzero(run)[0]
        W = np.where(present[r], 1e-3 * zs[r], 0.0)
        W[:, j] = 1.0
        tc, lc, Zc = _run_trials(eos, T[r], P[r], d[r], zs[r], present[r], [W],
                                 np.ones(r.size, dtype=bool), early_exit)
        tma[slot[r], r], lnWa[slot[r], r], Za[slot[r], r] = tc[0], lc[0], Zc[0]
        slot[r] += 1
        better = ~np.isnan(tm_min[r]) & (np.isnan(tc[0]) | (tc[0] < tm_min[r]))
        k = r[better]
        tm_min[k] = tc[0][better]
        lnWb[k] = lc[0][better]
        Zb[k] = Zc[0][better]
    Wb = np.exp(lnWb)
    wb = Wb / Wb.sum(axis=1, keepdims=True)
    if early_exit:
        return StabilityResult(tm_min, tm_min < TM_UNSTABLE, wb, Zb > Z_z)
    Wa = np.exp(lnWa)
    wa = Wa / Wa.sum(axis=2, keepdims=True)
    return StabilityResult(tm_min, tm_min < TM_UNSTABLE, wb, Zb > Z_z, tma, wa, Za > Z_z[None, :])
