"""A vectorised bracketed root finder: all cases together, converged ones masked.

The Illinois variant of regula falsi (Dowell & Jarratt, BIT 11 (1971) 168): a secant step inside the
bracket, and when the same end is kept twice its function value is halved, which restores
superlinear convergence (order about 1.44). A step that is not finite or leaves the bracket (for
instance where the function is infinite at one end) falls back to bisection.

Used by the exchanger (duty meeting a minimum approach or a UA), by the flowsheet goals (through
:mod:`letdown.equipment.rootfind`) and by the three-phase P-h / P-s flash
(:func:`letdown.fluid.flash.threephase_px.flash_PX_three`).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .report import SolveReport

#: Bracket width below which a case stops, relative to the bracket it started with: a few
#: hundred units of double rounding (common practice) -- narrower brackets carry no information.
XTOL_RELATIVE = 1e-13


@dataclass(frozen=True, kw_only=True, repr=False)
class RootReport(SolveReport):
    """Outcome of :func:`bracketed_root` (arrays over cases): the fields of every letdown solver's
    :class:`letdown.numerics.report.SolveReport` and the root.

    Attributes
    ----------
    x : ndarray (n,)
        Best root estimate (the last iterate).
    fx : ndarray (n,)
        Function value there.
    converged : ndarray of bool (n,)
        ``|fx| <= ftol``.
    iterations : ndarray of int (n,)
        Function evaluations spent on each case after the two bracket ends.
    status : str
        ``"converged"`` or ``"not converged"``.
    message : str
        Human-readable summary.
    residual : float
        Largest ``|fx|`` over the cases.
    """

    x: np.ndarray = None
    fx: np.ndarray = None


def bracketed_root(f, lo, hi, f_lo, f_hi, *, ftol, max_iterations: int) -> RootReport:
    """Find ``f(x) = 0`` inside ``[lo, hi]`` for every case, where ``f_lo`` and ``f_hi`` differ in sign.

    Parameters
    ----------
    f : callable ``f(x, idx) -> ndarray``
        Evaluates the cases ``idx`` (integer array) at ``x`` (same length); the units of ``x`` and
        ``f`` are the caller's.
    lo, hi : ndarray (n,)
        Bracket ends.
    f_lo, f_hi : ndarray (n,)
        ``f`` at the ends; a case whose ends have the same sign and neither is a root must not be
        passed (the caller reports it).
    ftol : float or ndarray (n,)
        Absolute tolerance on ``|f|``.
    max_iterations : int
        Cap on evaluations per case.

    Returns
    -------
    RootReport
    """
    a = np.array(lo, dtype=float)
    b = np.array(hi, dtype=float)
    fa = np.array(f_lo, dtype=float)
    fb = np.array(f_hi, dtype=float)
    n = a.shape[0]
    ftol = np.broadcast_to(np.asarray(ftol, dtype=float), (n,))
    x = np.where(np.abs(fa) <= np.abs(fb), a, b)
    fx = np.where(np.abs(fa) <= np.abs(fb), fa, fb)
    xtol = XTOL_RELATIVE * np.maximum(np.abs(b - a), np.maximum(np.abs(a), np.abs(b)))
    iterations = np.zeros(n, dtype=int)
    active = ~(np.abs(fx) <= ftol)
    for _ in range(max_iterations):
        idx = np.flatnonzero(active)
        if idx.size == 0:
            break
        ai, bi, fai, fbi = a[idx], b[idx], fa[idx], fb[idx]
        with np.errstate(divide="ignore", invalid="ignore"):
            c = bi - fbi * (bi - ai) / (fbi - fai)
        lo_i, hi_i = np.minimum(ai, bi), np.maximum(ai, bi)
        bad = ~np.isfinite(c) | (c <= lo_i) | (c >= hi_i)
        c = np.where(bad, 0.5 * (ai + bi), c)
        fc = np.asarray(f(c, idx), dtype=float)
        iterations[idx] += 1
        x[idx], fx[idx] = c, fc
        # keep the bracket: the new point replaces b; when f(c) has the sign of f(b), the end a is
        # kept and (Illinois) its value halved; otherwise the old b becomes a.
        same_as_b = np.sign(fc) == np.sign(fbi)
        fa[idx] = np.where(same_as_b, 0.5 * fai, fbi)
        a[idx] = np.where(same_as_b, ai, bi)
        b[idx], fb[idx] = c, fc
        done = (np.abs(fc) <= ftol[idx]) | (np.abs(b[idx] - a[idx]) <= xtol[idx])
        active[idx[done]] = False
    converged = np.abs(fx) <= ftol
    residual = float(np.max(np.abs(fx))) if n else 0.0
    if np.all(converged):
        status, message = "converged", f"all {n} cases within tolerance"
    else:
        status = "not converged"
        message = (f"{int(np.sum(~converged))} of {n} cases not within tolerance after "
                   f"{int(iterations.max())} evaluations; largest |f| = {residual:.3g}")
    return RootReport(x=x, fx=fx, converged=converged, iterations=iterations, status=status,
                      message=message, residual=residual)
