"""Shared pieces of the cubic engine's state assembly: the finite-difference steps of the
effective heat capacity and Joule-Thomson coefficient of multiphase states, the sub-batch of a
split, and the blanking of unconverged states (used by :mod:`letdown.fluid.flash.engine` and
:mod:`letdown.fluid.flash.threestates`)."""
from __future__ import annotations

from dataclasses import replace

import numpy as np

from . import twophase as fl
from ..state import StateBatch

#: Temperature step for the effective two-phase heat capacity and Joule-Thomson coefficient [K];
#: forward differences with warm-started flashes (truncation error ~1e-4 relative, well inside
#: what these effective properties are used for).
TWO_PHASE_DT = 0.01
#: Pressure step (relative) for the two-phase Joule-Thomson coefficient [-].
TWO_PHASE_DP_REL = 1e-5
#: Split tolerance for those neighbouring flashes: h differences of ~0.3 J/mol need ~1e-9 in ln K.
TWO_PHASE_DERIV_TOL = 1e-10


def take_split(sp: fl.PTSplit, m) -> fl.PTSplit:
    """The cases ``m`` (indices or mask) of a two-phase split."""
    r = sp.report
    return fl.PTSplit(sp.beta[m], sp.xs[m], sp.ys[m], sp.n_phases[m], sp.single_is_vapour[m],
                      fl.SolveReport(r.converged[m], r.iterations[m], r.residual[m], r.message))


def blank_unconverged(st: StateBatch) -> StateBatch:
    """The states with every number of an unconverged case set to NaN."""
    if st.converged.all():
        return st
    bad = ~st.converged
    upd = {}
    for k in ("h", "s", "Z", "cp", "cv", "jt", "w", "density", "vapour_fraction"):
        a = getattr(st, k).copy()
        a[bad] = np.nan
        upd[k] = a
    return replace(st, **upd)
