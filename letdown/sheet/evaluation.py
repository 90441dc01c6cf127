"""What one pass of the solve engine produces and hands around: the evaluation of a pass (its
streams, outcomes, loops, goals and each case's fate), the failure of some cases inside a pass, and
a loop's settled tear variables (the start of the dose pass)."""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np


@dataclass
class _Evaluation:
    """Everything one pass over (a subset of) the cases produced.

    ``ok`` and ``reasons`` are per case: a failed case (a block refused it, its loop or goal did not
    converge) has ``ok`` false and the first reason it failed for; its numbers are blank (NaN)
    where the pass removed it before the end, and are blanked by :meth:`_Engine.result` otherwise.
    """

    streams: dict
    outcomes: dict
    loops: list = field(default_factory=list)
    goals: list = field(default_factory=list)
    ok: np.ndarray | None = None
    reasons: np.ndarray | None = None
    # loop step index -> (the cases of the pass at it, its converged tear variables): where the
    # dose pass (:meth:`_Engine._doses`) starts its loops
    ends: dict = field(default_factory=dict)

    def fail(self, cases, reasons) -> None:
        """Mark ``cases`` (indices or a bool mask) failed; a case keeps its first reason."""
        idx = np.flatnonzero(cases) if np.asarray(cases).dtype == bool else np.asarray(cases, int)
        why = np.broadcast_to(np.asarray(reasons, dtype=object), idx.shape)
        first = self.ok[idx]
        self.reasons[idx[first]] = why[first]
        self.ok[idx] = False


class _CasesFailed(Exception):
    """Internal (never leaves the engine): some cases of a batch failed; the others go on.

    ``mask`` (bool, over the batch the step was given) picks the failed cases, ``reasons`` (object
    array of the same length) says why.
    """

    def __init__(self, mask, reasons):
        super().__init__("cases failed")
        self.mask = mask
        self.reasons = reasons


@dataclass(frozen=True)
class _LoopEnd:
    """A loop's converged tear variables (per case), for its final pass."""

    x: np.ndarray
    zs_fallback: list
    T_last: list

    def take(self, keep) -> "_LoopEnd":
        return _LoopEnd(self.x[keep], [z[keep] for z in self.zs_fallback],
                        [T[keep] for T in self.T_last])
