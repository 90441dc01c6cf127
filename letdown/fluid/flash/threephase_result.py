"""The result of a three-phase PT flash (:class:`ThreePhaseResult`: vapour, liquid and third
slot, which holds the aqueous liquid or a second hydrocarbon liquid), its sub-batches, and each
phase's properties. Split from :mod:`letdown.fluid.flash.threephase` along this seam (issue 12:
module size); the names are still importable from there.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ...numerics.report import SolveReport


@dataclass(frozen=True)
class ThreePhaseResult:
    """Phase fractions and compositions of a three-phase PT flash.

    Attributes
    ----------
    beta_V, beta_L, beta_W : ndarray (n,)
        Mole fractions of vapour, hydrocarbon liquid and the third slot [-] (0 where absent): the
        aqueous liquid, or where no phase has water as its largest component a second, denser
        hydrocarbon liquid (:func:`aqueous_third` tells which).
    y, x, w : ndarray (n, nc)
        Compositions of vapour, hydrocarbon liquid, third slot [-] (NaN where absent).
    n_phases : ndarray of int (n,)
    report : SolveReport
        Convergence per case; residual = largest ln-fugacity difference between present phases.
    """

    beta_V: np.ndarray
    beta_L: np.ndarray
    beta_W: np.ndarray
    y: np.ndarray
    x: np.ndarray
    w: np.ndarray
    n_phases: np.ndarray
    report: SolveReport


def take_result(res: ThreePhaseResult, idx) -> ThreePhaseResult:
    """The cases ``idx`` (indices or mask) of a three-phase result."""
    r = res.report
    return ThreePhaseResult(res.beta_V[idx], res.beta_L[idx], res.beta_W[idx], res.y[idx],
                            res.x[idx], res.w[idx], res.n_phases[idx],
                            SolveReport(r.converged[idx], r.iterations[idx], r.residual[idx],
                                        r.message))


def concat_results(a: ThreePhaseResult, b: ThreePhaseResult) -> ThreePhaseResult:
    """Two three-phase results as one batch (a's cases first)."""
    ra, rb = a.report, b.report
    cat = np.concatenate
    return ThreePhaseResult(cat([a.beta_V, b.beta_V]), cat([a.beta_L, b.beta_L]),
                            cat([a.beta_W, b.beta_W]), cat([a.y, b.y]), cat([a.x, b.x]),
                            cat([a.w, b.w]), cat([a.n_phases, b.n_phases]),
                            SolveReport(cat([ra.converged, rb.converged]),
                                        cat([ra.iterations, rb.iterations]),
                                        cat([ra.residual, rb.residual]), ra.message))


def aqueous_third(res: ThreePhaseResult, iw) -> np.ndarray:
    """Whether the third slot of each case holds an aqueous liquid (present, with water, index
    ``iw`` or None, as its largest component), (n,) bool; elsewhere it holds a second
    hydrocarbon liquid or nothing."""
    if iw is None:
        return np.zeros(res.beta_W.shape[0], dtype=bool)
    w = np.where(np.isfinite(res.w), res.w, -1.0)
    return (res.beta_W > 0.0) & (np.argmax(w, axis=1) == iw)


#: The phases of a :class:`ThreePhaseResult`, in its order, with their fraction and composition
#: attributes.
PHASES = (("vapour", "beta_V", "y"), ("liquid", "beta_L", "x"), ("aqueous", "beta_W", "w"))


def phase_properties(engine, T, P, zs, res: ThreePhaseResult) -> dict:
    """Properties of each phase of a three-phase PT flash, and of the whole.

    Each phase's properties are the engine's single-phase ones at its composition (stable root):
    h = sum_i x_i h0_i(T) + h_res (ideal-gas part plus the cubic's residual part, as
    :class:`letdown.fluid.flash.engine.CubicEngine` builds every state); the whole is the sum over
    the phases present weighted by their fractions (h, s, molar volume v).

    Parameters
    ----------
    engine : letdown.fluid.flash.engine.CubicEngine
    T, P : ndarray (n,)
        [K], [Pa].
    zs : ndarray (n, nc)
        Feed compositions [-].
    res : ThreePhaseResult
        The flash of (T, P, zs).

    Returns
    -------
    dict
        ``"vapour"``, ``"liquid"``, ``"aqueous"``: dicts of ndarrays (n,) ``h`` [J/mol], ``s``
        [J/(mol K)], ``Z`` [-], ``density`` [kg/m3], ``molar_mass`` [kg/mol], ``v`` [m3/mol]
        (those of the feed where the phase is absent), plus ``"whole"``: ``h``, ``s``, ``v``.
    """
    T = np.asarray(T, dtype=float)
    P = np.asarray(P, dtype=float)
    zs = np.asarray(zs, dtype=float)
    out = {}
    whole = {k: np.zeros(T.shape[0]) for k in ("h", "s", "v")}
    for name, beta_attr, x_attr in PHASES:
        beta = getattr(res, beta_attr)
        present = beta > 0.0
        xs = np.where(present[:, None], getattr(res, x_attr), zs)
        props = engine._phase(T, P, xs, 0)
        out[name] = {k: np.asarray(props[k], dtype=float)
                     for k in ("h", "s", "Z", "density", "molar_mass", "v")}
        for k in whole:
            whole[k] = whole[k] + np.where(present, beta * out[name][k], 0.0)
    out["whole"] = whole
    return out
