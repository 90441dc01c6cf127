"""The one report type of letdown's iterative solvers.

Every solver (the flashes, the hydrate and dose searches, the bracketed root finder, the envelope
tracer) says how it ended with a :class:`SolveReport`: whether it converged, the iterations it
spent, its final residual in its own measure, a message and a short status. Solvers with more to
say extend it (:class:`letdown.numerics.rootfind.RootReport` carries the root and its function
value, :class:`letdown.fluid.flash.continuation.TraceReport` the number of traced points), so any
report can be read through the same five fields. Over a batch the fields are arrays over cases;
a solver of one thing (one envelope trace) gives scalars.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class SolveReport:
    """Outcome of an iterative solve, the same fields for every solver in letdown.

    Attributes
    ----------
    converged : ndarray of bool (n,), or bool
    iterations : ndarray of int (n,), or int
    residual : ndarray (n,), or float
        Final residual in the solver's own measure.
    message : str
        What was solved, or why it stopped.
    status : str
        A short word for how it ended (``"converged"``, ``"not converged"``, ``"complete"``, ...);
        empty where the solver gives none.
    """

    converged: np.ndarray
    iterations: np.ndarray
    residual: np.ndarray
    message: str = ""
    status: str = ""

    @property
    def all_converged(self) -> bool:
        """True if every case converged."""
        return bool(np.all(self.converged))

    def __repr__(self):
        n = int(np.size(self.converged))
        return (f"{type(self).__name__}({int(np.sum(self.converged))}/{n} converged, "
                f"max iterations {int(np.max(self.iterations, initial=0))}, "
                f"max residual {float(np.nanmax(self.residual, initial=0.0)):.3g}; {self.message})")
