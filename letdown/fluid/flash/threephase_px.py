"""P-h and P-s on the three-phase equilibrium of :mod:`letdown.fluid.flash.threephase`: the
temperature at which the equilibrium (three phases where they exist, else two or one) has a given
enthalpy or entropy, by a grown bracket and the bracketed root finder of
:mod:`letdown.numerics.rootfind`; and the equilibrium enthalpy near a known three-phase state
(for the effective heat capacity and Joule-Thomson coefficient). Split from threephase.py along
this seam (issue 12: module size); the PT equilibrium itself is there.

Temperatures [K], pressures [Pa], compositions mole fractions; cases on axis 0.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ...numerics.report import SolveReport
from .threephase import (FUG_TOL, TRIVIAL_SPLIT, ThreePhaseResult, _split3, flash_TP_three,
                         phase_properties)
from ...numerics.rootfind import bracketed_root

# P-h and P-s on the three-phase equilibrium
#: The enthalpy target is met to this [J/mol]: a temperature error of at most 1e-6 K (the
#: two-phase P-h flash's ``cubic_fluid.PH_RESIDUAL_K``) wherever the heat capacity exceeds
#: 10 J/(mol K); the entropy target to this over T [J/(mol K)]. The enthalpy of splits converged
#: to FUG_TOL scatters by about 1e-7 J/mol (measured on the wet gases of tests/fluid/test_flash_water.py),
#: 100 times below.
PX_H_TOL = 1e-5
#: Half-width of the first temperature step from the starting temperature [K]: the third phase
#: shifts the temperature of gas with a little water by a few kelvin to about 15 K (measured on the
#: LTS sheet of tests/equipment/test_separator_water.py: 12 K).
BRACKET_STEP = 2.0
#: Steps taken before a case is given up (at least doubling: 2 K * 2^8 = 512 K).
BRACKET_GROWTHS = 9
#: Lowest and highest temperatures the bracket may reach [K] (common practice: a gas with free
#: water lies far inside).
T_FLOOR, T_CEILING = 100.0, 700.0
#: Regula falsi evaluations per case (each a batch three-phase flash); Illinois converges in 10-20.
PX_MAX_ITERATIONS = 60
#: Starting temperature where none is given [K].
T_DEFAULT = 280.0


@dataclass(frozen=True)
class ThreePhasePX:
    """Outcome of :func:`flash_PX_three`.

    Attributes
    ----------
    T : ndarray (n,)
        Temperature [K] (the last iterate where a case did not converge).
    flash : ThreePhaseResult
        The three-phase PT flash at ``T``.
    report : SolveReport
        ``converged`` (a bracket found, the target met and the flash at T converged),
        ``iterations`` (three-phase flashes spent on the case), ``residual`` (target minus value,
        [J/mol] or [J/(mol K)]).
    """

    T: np.ndarray
    flash: ThreePhaseResult
    report: SolveReport


class _ResultStore:
    """Per-case three-phase results, the last one computed for each case, with its temperature."""

    def __init__(self, n, nc):
        self.T = np.full(n, np.nan)
        self.b = np.zeros((n, 3))
        self.X = np.full((n, 3, nc), np.nan)
        self.nph = np.zeros(n, dtype=int)
        self.conv = np.zeros(n, dtype=bool)
        self.iters = np.zeros(n, dtype=int)
        self.resid = np.zeros(n)

    def put(self, idx, T, res: ThreePhaseResult):
        self.T[idx] = T
        self.b[idx] = np.stack([res.beta_V, res.beta_L, res.beta_W], axis=1)
        self.X[idx] = np.stack([res.y, res.x, res.w], axis=1)
        self.nph[idx] = res.n_phases
        self.conv[idx] = res.report.converged
        self.iters[idx] = res.report.iterations
        self.resid[idx] = res.report.residual

    def result(self) -> ThreePhaseResult:
        return ThreePhaseResult(self.b[:, 0].copy(), self.b[:, 1].copy(), self.b[:, 2].copy(),
                                self.X[:, 0].copy(), self.X[:, 1].copy(), self.X[:, 2].copy(),
                                self.nph.copy(), SolveReport(self.conv.copy(), self.iters.copy(),
                                                             self.resid.copy(),
                                                             "three-phase PT flash"))


def flash_PX_three(engine, P, target, zs, which="h", T_start=None, start=None) -> ThreePhasePX:
    """Temperature at which the three-phase equilibrium has the given enthalpy (or entropy).

    Solves, per case, at the pressure P

        h(T) = sum_phases beta_k h_k(T) = h_target     (or the same with s)

    over the equilibrium of :func:`flash_TP_three` (three phases where they exist, otherwise two or
    one), whose h(T) rises with T at fixed P. A first evaluation at ``T_start``; a case already
    within the tolerance ends there. Otherwise the bracket is grown from ``T_start`` in the
    direction the residual's sign gives (a first step of :data:`BRACKET_STEP`, then the secant
    through the last two points overshot by :data:`BRACKET_OVERSHOOT`, never less than the step
    before; at most :data:`BRACKET_GROWTHS` steps inside [:data:`T_FLOOR`, :data:`T_CEILING`]) and
    closed by the bracketed root finder (Illinois regula falsi,
    :func:`letdown.numerics.rootfind.bracketed_root`).

    Iterates next to a three-phase state start their split from its phases (a few substitution
    steps instead of the stability tests); one that loses a phase or does not converge is flashed
    in full. The answer is then checked by the full :func:`flash_TP_three` at its temperature (so it
    is exactly the P-T state there); a case whose full flash misses the target is solved again
    with full flashes throughout. The adiabatic three-phase separator and the P-h / P-s flashes of
    :class:`letdown.fluid.flash.engine.CubicEngine` for fluids with water both use this routine.

    Parameters
    ----------
    engine : letdown.fluid.flash.engine.CubicEngine
    P : ndarray (n,)
        Pressure [Pa].
    target : ndarray (n,)
        Enthalpy [J/mol] (``which="h"``) or entropy [J/(mol K)] (``which="s"``).
    zs : ndarray (n, nc)
        Feed compositions [-].
    which : {"h", "s"}
    T_start : ndarray (n,), optional
        Starting temperature [K] (NaN or None: :data:`T_DEFAULT`).
    start : ThreePhaseResult, optional
        The three-phase flash at ``T_start`` if already done (saves one flash).

    Returns
    -------
    ThreePhasePX
    """
    P = np.asarray(P, dtype=float)
    target = np.asarray(target, dtype=float)
    zs = np.asarray(zs, dtype=float)
    n, nc = zs.shape
    T0 = np.full(n, T_DEFAULT) if T_start is None else np.asarray(T_start, dtype=float)
    T0 = np.clip(np.where(np.isfinite(T0), T0, T_DEFAULT), T_FLOOR, T_CEILING)
    ftol = np.full(n, PX_H_TOL) if which == "h" else PX_H_TOL / T0
    T, ok, resid, flashes, store, full = _px_solve(engine, P, target, zs, which, T0, start,
                                                    ftol, True)
    # the answer by the full flash where a warm-started split (or an earlier bracket end) led
    # to it; elsewhere the last flash of the case was the full one at T
    w = np.flatnonzero(~full)
    if w.size:
        res_w = flash_TP_three(engine.eos, T[w], P[w], zs[w])
        flashes[w] += 1
        value = phase_properties(engine, T[w], P[w], zs[w], res_w)["whole"][which]
        fw = value - target[w]
        store.put(w, T[w], res_w)
        resid[w] = np.where(ok[w], fw, resid[w])
        miss = ok[w] & (np.abs(fw) > ftol[w])
        if miss.any():
            # the warm-started path was not the equilibrium: full flashes throughout
            m = w[miss]
            Tm, okm, rm, fm, sm, _ = _px_solve(engine, P[m], target[m], zs[m], which, T0[m],
                                               None, ftol[m], False)
            T[m], ok[m], resid[m] = Tm, okm, rm
            flashes[m] += fm
            store.put(m, Tm, sm.result())
    res = store.result()
    ok &= res.report.converged
    return ThreePhasePX(T, res, SolveReport(ok, flashes, resid, f"three-phase P-{which} flash"))


#: Bracket growth after the first step: the secant's distance to the root times this [-] (with
#: a little margin) so that the next point lands past the root; common practice for a monotone
#: function whose slope changes slowly.
BRACKET_OVERSHOOT = 1.25
def _px_solve(engine, P, target, zs, which, T0, start, ftol, warm):
    """The bracket and root of :func:`flash_PX_three` (``warm``: iterates start from the phases of
    the case's last three-phase state). Returns T, converged, residual, flashes per case, the
    store of the last flash of each case, and whether that flash is a full one at T."""
    eos = engine.eos
    n, nc = zs.shape
    store = _ResultStore(n, nc)
    flashes = np.zeros(n, dtype=int)
    was_warm = np.zeros(n, dtype=bool)

    def flash(T, idx):
        if not warm:
            return flash_TP_three(eos, T, P[idx], zs[idx]), np.zeros(idx.size, dtype=bool)
        near = np.flatnonzero((store.nph[idx] == 3) & store.conv[idx])
        out = _ResultStore(idx.size, nc)
        good = np.zeros(idx.size, dtype=bool)
        if near.size:
            j = idx[near]
            betas, X, conv, iters, resid = _split3(eos, T[near], P[j], zs[j], store.X[j],
                                                   beta0=store.b[j, 1:])
            distinct = np.ones(near.size, dtype=bool)
            for a_, b_ in ((0, 1), (0, 2), (1, 2)):
                distinct &= np.sum((X[:, a_] - X[:, b_]) ** 2, axis=1) > TRIVIAL_SPLIT
            g = conv & np.all(betas > 0.0, axis=1) & distinct
            if g.any():
                out.put(near[g], T[near[g]], ThreePhaseResult(
                    betas[g, 0], betas[g, 1], betas[g, 2], X[g, 0], X[g, 1], X[g, 2],
                    np.full(int(g.sum()), 3), SolveReport(conv[g], iters[g], resid[g])))
                good[near[g]] = True
        rest = np.flatnonzero(~good)
        if rest.size:
            out.put(rest, T[rest], flash_TP_three(eos, T[rest], P[idx[rest]], zs[idx[rest]]))
        return out.result(), good

    def f(T, idx, res=None):
        w = np.zeros(idx.size, dtype=bool)
        if res is None:
            res, w = flash(T, idx)
        store.put(idx, T, res)
        was_warm[idx] = w
        flashes[idx] += 1
        value = phase_properties(engine, T, P[idx], zs[idx], res)["whole"][which]
        return value - target[idx]

    f0 = f(T0, np.arange(n), start)
    lo, hi = T0.copy(), T0.copy()
    f_lo, f_hi = f0.copy(), f0.copy()
    # grow the bracket on the side the residual points to: h below target -> root above
    up = f0 < -ftol
    down = f0 > ftol
    step = np.full(n, BRACKET_STEP)
    for k in range(BRACKET_GROWTHS):
        go_up = np.flatnonzero(up & (f_hi < 0.0) & (hi < T_CEILING))
        go_down = np.flatnonzero(down & (f_lo > 0.0) & (lo > T_FLOOR))
        if go_up.size == 0 and go_down.size == 0:
            break
        for i, sign in ((go_up, 1.0), (go_down, -1.0)):
            if i.size == 0:
                continue
            if k > 0:
                with np.errstate(divide="ignore", invalid="ignore"):
                    far, f_far = (hi[i], f_hi[i]) if sign > 0 else (lo[i], f_lo[i])
                    near, f_near = (lo[i], f_lo[i]) if sign > 0 else (hi[i], f_hi[i])
                    ds = -f_far * (far - near) / (f_far - f_near) * sign
                secant = np.isfinite(ds) & (ds > 0.0)
                step[i] = np.where(secant, np.maximum(BRACKET_OVERSHOOT * ds + 0.05 * step[i],
                                                      step[i]), 2.0 * step[i])
            if sign > 0:
                lo[i], f_lo[i] = hi[i], f_hi[i]
                hi[i] = np.minimum(lo[i] + step[i], T_CEILING)
                f_hi[i] = f(hi[i], i)
            else:
                hi[i], f_hi[i] = lo[i], f_lo[i]
                lo[i] = np.maximum(hi[i] - step[i], T_FLOOR)
                f_lo[i] = f(lo[i], i)
    T = T0.copy()
    resid = f0.copy()
    ok = ~(up | down)
    b = np.flatnonzero((up | down) & (f_lo <= 0.0) & (f_hi >= 0.0))
    if b.size:
        root = bracketed_root(lambda x, idx: f(x, b[idx]), lo[b], hi[b], f_lo[b], f_hi[b],
                              ftol=ftol[b], max_iterations=PX_MAX_ITERATIONS)
        T[b] = root.x
        resid[b] = root.fx
        ok[b] = root.converged
    # the answer may be a bracket end evaluated before the last flash of its case
    return T, ok, resid, flashes, store, ~was_warm & (store.T == T)


def enthalpy_near(engine, T, P, zs, near: ThreePhaseResult, tol=FUG_TOL):
    """Equilibrium enthalpy [J/mol] at (T, P) close to the state of a known three-phase result.

    Where ``near`` has three phases, the three-phase split is started from its compositions (a few
    substitution steps) and kept if it converges to ``tol`` with every phase present; elsewhere,
    and where that fails, the full :func:`flash_TP_three`. For the effective heat capacity and
    Joule-Thomson coefficient of multiphase states by finite differences.

    Parameters
    ----------
    engine : letdown.fluid.flash.engine.CubicEngine
    T, P : ndarray (n,)
        [K], [Pa].
    zs : ndarray (n, nc)
        Feed compositions [-].
    near : ThreePhaseResult
        The flash of the same feeds at a nearby (T, P).
    tol : float
        Convergence of the warm-started split on ln f [-].

    Returns
    -------
    ndarray (n,)
    """
    n = T.shape[0]
    h = np.empty(n)
    done = np.zeros(n, dtype=bool)
    i = np.flatnonzero(near.n_phases == 3)
    if i.size:
        X0 = np.stack([near.y[i], near.x[i], near.w[i]], axis=1)
        betas, X, conv, iters, resid = _split3(
            engine.eos, T[i], P[i], zs[i], X0, tol,
            beta0=np.stack([near.beta_L[i], near.beta_W[i]], axis=1))
        good = conv & np.all(betas > 0.0, axis=1)
        g = i[good]
        if g.size:
            r = ThreePhaseResult(betas[good, 0], betas[good, 1], betas[good, 2], X[good, 0],
                                 X[good, 1], X[good, 2], np.full(g.size, 3),
                                 SolveReport(conv[good], iters[good], resid[good], ""))
            h[g] = phase_properties(engine, T[g], P[g], zs[g], r)["whole"]["h"]
            done[g] = True
    rest = np.flatnonzero(~done)
    if rest.size:
        r = flash_TP_three(engine.eos, T[rest], P[rest], zs[rest])
        h[rest] = phase_properties(engine, T[rest], P[rest], zs[rest], r)["whole"]["h"]
    return h
