"""Goals of the solve engine: a block parameter varied inside its bracket until a held quantity
meets its target, all cases together (the bracket ends as one batch, then the Illinois root finder
of :mod:`letdown.numerics.rootfind`); several goals nest, the first outermost. A mixin of the
engine."""
from __future__ import annotations

import numpy as np

from ..errors import ConvergenceError, InputError
from ..numerics.rootfind import bracketed_root
from .evaluation import _Evaluation
from .result import GoalRecord

#: A goal is met within ``max(goal_tolerance, GOAL_RELATIVE_FLOOR * |target|)``: below this the
#: flash's own rounding (about 1e-12 relative) would make a large target unreachable.
GOAL_RELATIVE_FLOOR = 1e-10

#: SI units of the quantities goals hold or vary (for messages).
UNITS = {"T": "K", "P": "Pa", "flow": "mol/s", "vapour_fraction": "", "duty": "W", "power": "W",
         "min_approach": "K", "T_out": "K", "P_out": "Pa", "dP": "Pa", "hot_T_out": "K",
         "cold_T_out": "K", "UA": "W/K", "efficiency": "", "hot_dP": "Pa", "cold_dP": "Pa"}


class GoalSearch:
    """The goal methods of :class:`letdown.sheet.solve._Engine`."""

    # -- goals ------------------------------------------------------------------------------------
    def _held(self, goal, ev: _Evaluation) -> np.ndarray:
        name, _, attr = goal.hold.partition(".")
        if name in ev.streams and name not in self.fs.blocks:
            return np.where(ev.ok, np.asarray(getattr(ev.streams[name], attr), dtype=float), np.nan)
        outcome = ev.outcomes[name]
        if attr == "min_approach":
            values = outcome.details.get("min_approach_K")
        else:
            values = getattr(outcome, attr)
        if values is None:          # a blank outcome: no case reached the block
            return np.full(len(ev.ok), np.nan)
        return np.where(ev.ok, np.asarray(values, dtype=float), np.nan)

    def _goal(self, indexed_goal, rest, sel, over) -> _Evaluation:
        number, goal = indexed_goal
        m = len(sel)
        lo, hi = goal.within
        target = np.broadcast_to(np.asarray(
            self._value(f"@goal{number + 1}.at", sel, over, goal.target), dtype=float), (m,))
        tol = np.maximum(self.fs.solver.goal_tolerance, GOAL_RELATIVE_FLOOR * np.abs(target))

        def run(local, x, trial=True):
            o = {k: v[local] for k, v in over.items()}
            o[goal.by] = np.asarray(x, dtype=float)
            self._trial += trial          # the search is a trial; only the final pass refuses
            try:
                return self.evaluate(sel[local], o, rest)
            finally:
                self._trial -= trial

        every = np.arange(m)
        ends = run(np.r_[every, every], np.r_[np.full(m, lo), np.full(m, hi)])
        held = self._held(goal, ends)
        f_lo, f_hi = held[:m] - target, held[m:] - target
        at_lo, at_hi = np.abs(f_lo) <= tol, np.abs(f_hi) <= tol
        no_root = ~(at_lo | at_hi) & ~(np.sign(f_lo) != np.sign(f_hi))
        no_root |= ~(np.isfinite(f_lo) & np.isfinite(f_hi)) & ~(at_lo | at_hi)
        if np.any(no_root) and self.strict:
            i = int(np.flatnonzero(no_root)[0])
            raise self._no_solution(number, goal, target[i], held[i], held[m + i],
                                    f" (case {i})" if m > 1 else "")
        x = np.where(at_lo, lo, np.where(at_hi, hi, np.where(np.abs(f_lo) <= np.abs(f_hi), lo, hi)))
        iterations = np.zeros(m, dtype=int)
        search = np.flatnonzero(~no_root & ~at_lo & ~at_hi)
        if search.size:
            report = bracketed_root(
                lambda xs, i: self._held(goal, run(search[i], xs)) - target[search[i]],
                np.full(search.size, lo), np.full(search.size, hi), f_lo[search], f_hi[search],
                ftol=tol[search], max_iterations=self.fs.solver.goal_max_iterations)
            x[search] = report.x
            iterations[search] = report.iterations
        final = run(every, x, trial=False)
        achieved = self._held(goal, final)
        met = np.abs(achieved - target) <= tol
        unmet = ~met & ~no_root
        if np.any(unmet) and self.strict:
            i = int(np.flatnonzero(unmet)[0])
            raise ConvergenceError(self._unmet_text(number, goal, target[i], achieved[i], x[i]))
        if np.any(no_root):
            # a bracket end that failed says why; otherwise the held values at the two ends
            bad = np.flatnonzero(no_root)
            final.fail(bad, [ends.reasons[i] or ends.reasons[m + i] or
                             str(self._no_solution(number, goal, target[i], held[i], held[m + i], ""))
                             for i in bad])
        if np.any(unmet):
            bad = np.flatnonzero(unmet)
            final.fail(bad, [self._unmet_text(number, goal, target[i], achieved[i], x[i])
                             for i in bad])
        final.goals.insert(0, GoalRecord(hold=goal.hold, target=target.copy(), by=goal.by, value=x,
                                         achieved=achieved, met=met, iterations=iterations))
        return final

    def _unmet_text(self, number, goal, target, achieved, x) -> str:
        return (f"goal {number + 1} ({goal.hold} at {target:.6g} by {goal.by}) did not converge "
                f"in {self.fs.solver.goal_max_iterations} iterations: {goal.hold} = "
                f"{achieved:.6g} at {goal.by} = {x:.6g}")

    def _no_solution(self, number, goal, target, at_lo, at_hi, case) -> InputError:
        held_unit = UNITS.get(goal.hold.partition(".")[2], "")
        by_unit = UNITS.get(goal.by.partition(".")[2], "")
        lo, hi = goal.within

        def q(v, unit):
            return f"{v:.6g} {unit}".rstrip()
        where = goal.where
        return InputError(
            f"goal {number + 1}: no {goal.by} within [{q(lo, by_unit)}, {q(hi, by_unit)}] brings "
            f"{goal.hold} to {q(target, held_unit)}{case}: {goal.hold} is "
            f"{q(at_lo, held_unit)} at {q(lo, by_unit)} and {q(at_hi, held_unit)} at "
            f"{q(hi, by_unit)}", file=where.file or self.source, line=where.line,
            field=f"goals[{number}].within")
