"""Tear streams and loops of the solve engine: the guess of a tear stream, its variables (component
flows, P, h and the water and inhibitor carried beside the gas), Wegstein's iteration over all
cases of a batch, the final pass from the settled tears, and what a block refuses at the last
iterate of a loop that did not converge (the method is in :mod:`letdown.sheet.solve`'s
docstring). A mixin of the engine: it uses the engine's blocks, parameters and fluid."""
from __future__ import annotations

import numpy as np

from ..equipment import Carry, StreamBatch, carry_rule, flash_stream
from ..equipment.common import TINY_FLOW
from ..equipment.stream import INHIBITOR_NAMES
from ..errors import ConvergenceError, InputError
from ..constants import R
from .evaluation import _CasesFailed, _LoopEnd
from .result import LoopRecord

#: Wegstein's factor ``q`` is bounded to [Q_MIN, Q_MAX] = [-5, 0], the classical bounds (common
#: practice): up to six-fold acceleration of a slowly converging variable, never damping. On the
#: cold-separation loop of tests/sheet/test_solve.py damping (Q_MAX = 0.9) took 28 iterations and plain
#: substitution 31, against 17 with these bounds (our measurement).
WEGSTEIN_Q_MIN = -5.0
WEGSTEIN_Q_MAX = 0.0

#: Component flows of tear streams must settle to this relative change [-] whatever the solver's
#: loop tolerance, so that every block's mole balance closes to 1e-9 (DESIGN.md).
FLOW_TOLERANCE = 1e-10

#: The water carried beside the gas (:class:`letdown.equipment.stream.Carry`) in a loop's tear
#: streams must settle to this relative change [-] (each variable against its own size), as the
#: water carry settled before it moved into the solve: far below any printed digit.
CARRY_TOLERANCE = 1e-12

#: A loop whose gas has settled runs at most this many further passes for its water alone (its
#: stream numbers are then fixed; Wegstein settles a water recycle of fraction f <= 0.5 in two
#: passes, f = 0.95 in about 80). Water still moving after them is reported (``water_loop``).
CARRY_MAX_PASSES = 100


class TearLoops:
    """The loop methods of :class:`letdown.sheet.solve._Engine`."""

    # -- loops ------------------------------------------------------------------------------------
    def _guess(self, tear: str, step, streams, sel) -> StreamBatch:
        """Starting value of a tear stream: its ``guesses`` entry, else the loop's main inlet."""
        m = len(sel)
        # the water of a tear starts from none (as a stream not yet reached)
        water = None if not self.carry else Carry.zeros(m) if self.carry_water else Carry(
            np.full(m, np.nan), np.full(m, np.nan))
        if tear in self.fs.guesses:
            g = self.fs.guesses[tear]
            return flash_stream(self.fluid, np.full(m, g.flow), np.tile(self.guess_zs[tear], (m, 1)),
                                T=np.full(m, g.T), P=np.full(m, g.P)).with_carry(water)
        inside = set(step.blocks)
        external = [streams[s] for b in step.blocks for s in self.fs.blocks[b].inlets.values()
                    if self.producer.get(s) not in inside and s in streams]
        if not external:
            spec = self.fs.blocks[step.blocks[0]]
            raise InputError(f"the loop through {', '.join(step.blocks)} needs a starting value: "
                             f"add tear stream '{tear}' under 'guesses'",
                             file=spec.where.file or self.source, line=spec.where.line,
                             field="guesses")
        flows = np.stack([s.flow for s in external])
        main = np.argmax(flows, axis=0)
        pick = np.arange(m)
        T = np.stack([s.T for s in external])[main, pick]
        P = np.stack([s.P for s in external])[main, pick]
        zs = np.stack([s.zs for s in external])[main, pick]
        return flash_stream(self.fluid, flows.sum(axis=0), zs, T=T, P=P).with_carry(water)

    def _carry_width(self) -> int:
        """Variables of one tear's carry: water per dry gas and free water (when the water is
        carried), inhibitor per dry gas and free inhibitor (k each)."""
        return (2 if self.carry_water else 0) + 2 * len(INHIBITOR_NAMES)

    def _pack(self, tears) -> np.ndarray:
        """Tear streams -> variables (m, n_tears * (nc + 2)): component flows, P, h; then, when
        water and inhibitor are carried, :meth:`_carry_width` more per tear."""
        x = np.concatenate([np.column_stack([s.component_flows, s.P, s.h]) for s in tears], axis=1)
        if not self.carry:
            return x
        m = x.shape[0]
        carries = [Carry.zeros(m) if s.carry is None else s.carry for s in tears]
        water = (lambda c: [c.water_ratio, c.free_water]) if self.carry_water else (lambda c: [])
        return np.concatenate([x] + [np.column_stack(water(c) + [c.inhibitor_ratio,
                                                                 c.free_inhibitor])
                                     for c in carries], axis=1)

    def _unpack(self, x, zs_fallback, T_guess) -> list:
        """Variables -> tear streams (P-h flashes started at ``T_guess``); zs kept from
        ``zs_fallback`` where a tear is empty."""
        nc, out = self.nc, []
        for t, (zs0, T0) in enumerate(zip(zs_fallback, T_guess)):
            block = x[:, t * (nc + 2):(t + 1) * (nc + 2)]
            comp = np.maximum(block[:, :nc], 0.0)
            flow = comp.sum(axis=1)
            zs = np.where((flow > TINY_FLOW)[:, None], comp / np.maximum(flow, TINY_FLOW)[:, None], zs0)
            out.append(flash_stream(self.fluid, flow, zs, P=block[:, nc], h=block[:, nc + 1],
                                    T_guess=T0))
        if self.carry:
            carries = self._unpack_carries(x, len(out) * (nc + 2), [s.n_cases for s in out])
            out = [s.with_carry(c) for s, c in zip(out, carries)]
        return out

    def _unpack_carry(self, x, tears) -> list:
        """The tear streams ``tears`` (already solved) with the carry of the variables ``x``."""
        G = len(tears) * (self.nc + 2)
        fake = self._unpack_carries(x, G, [t.n_cases for t in tears])
        return [t.with_carry(c) for t, c in zip(tears, fake)]

    def _unpack_carries(self, x, G, sizes) -> list:
        w, k = self._carry_width(), len(INHIBITOR_NAMES)
        out = []
        for t, n in enumerate(sizes):
            c = np.maximum(x[:, G + t * w: G + (t + 1) * w], 0.0)
            if self.carry_water:
                water, c = (c[:, 0], c[:, 1]), c[:, 2:]
            else:
                water = (np.full(n, np.nan),) * 2
            out.append(Carry(*water, c[:, :k], c[:, k:]))
        return out

    def _carry_blocks(self, names, streams, outcomes, sel, over) -> None:
        """Carry the water and inhibitor through blocks whose gas is solved (``outcomes``): each
        block's carry rule (:func:`letdown.equipment.carry_rule`) on its solved outlets."""
        self._trial += 1
        try:
            for name in names:
                spec = self.fs.blocks[name]
                inlets = {port: streams[s] for port, s in spec.inlets.items()}
                if not all(i.carry is not None for i in inlets.values()):
                    continue
                outlets, _ = carry_rule(spec.kind)(self.fluid, name, inlets,
                                                   outcomes[name].outlets,
                                                   self._params(name, sel, over))
                for port, stream in spec.outlets.items():
                    streams[stream] = outlets[port]
        finally:
            self._trial -= 1

    def _scales(self, tears) -> tuple[np.ndarray, np.ndarray]:
        """Per-variable scales for the residual, and a mask of the flow variables."""
        cols, flow_cols = [], []
        for s in tears:
            cols.append(np.column_stack([np.repeat(np.maximum(s.flow, TINY_FLOW)[:, None], self.nc,
                                                   axis=1), s.P, np.abs(s.h) + R * s.T]))
            flow_cols.append(np.r_[np.ones(self.nc, dtype=bool), False, False])
        return np.concatenate(cols, axis=1), np.concatenate(flow_cols)

    def _loop(self, step, streams, sel, over, start: "_LoopEnd | None" = None):
        """Converge one loop's tear streams for the cases ``sel`` (Wegstein, converged cases
        masked).

        Returns
        -------
        record : LoopRecord
        lost : ndarray of bool (m,)
            Cases that failed: not converged, or refused by a block inside the loop (only when not
            ``strict``; strict raises).
        reasons : ndarray of object (m,)
        end : _LoopEnd
            The converged tear variables, for :meth:`_loop_final`.
        """
        tol = self.fs.solver.loop_tolerance
        flow_tol = min(tol, FLOW_TOLERANCE)
        m = len(sel)
        tears = step.tears
        if start is None:
            guesses = [self._guess(t, step, streams, sel) for t in tears]
            zs_fallback = [g.zs for g in guesses]
            T_last = [np.array(g.T) for g in guesses]   # each tear's latest temperature, per case
            x = self._pack(guesses)
        else:       # the converged variables of an earlier pass whose gas this one repeats
            zs_fallback = [np.array(z) for z in start.zs_fallback]
            T_last = [np.array(T) for T in start.T_last]
            x = np.array(start.x)
        x_prev = np.full_like(x, np.nan)
        g_prev = np.full_like(x, np.nan)
        inside = set(step.blocks)
        needed = {s for b in step.blocks for s in self.fs.blocks[b].inlets.values()
                  if self.producer.get(s) not in inside or s in tears}
        outside = {s: streams[s] for s in needed if s in streams and s not in tears}
        iterations = np.zeros(m, dtype=int)
        residual = np.full(m, np.inf)
        active = np.ones(m, dtype=bool)
        refused = np.zeros(m, dtype=bool)
        reasons = np.full(m, "", dtype=object)
        diverged = np.zeros(m, dtype=bool)
        # cases whose gas has settled (their iterate, count and residual are final) while their
        # water, carried in the same tear variables, may still be settling
        settled = np.full(m, start is not None)
        G = len(tears) * (self.nc + 2)          # the gas variables; the carried water follows
        history = []
        done_iterations = 0
        carry_passes = 0
        carry_change = np.zeros(m)
        # the last full pass made with every case's gas settled: (its cases, its tear inlets, its
        # outcomes). Its gas is the final pass's, so a carry pass applies the blocks' carry rules
        # to its outlets instead of solving them again
        held = None
        while True:
            a = np.flatnonzero(active)
            if a.size == 0:
                break
            if np.any(~settled[a]):
                if done_iterations >= self.fs.solver.loop_max_iterations:
                    break
            elif carry_passes >= CARRY_MAX_PASSES:
                break
            over_a = {k: v[a] for k, v in over.items()}
            local = {s: b.take(a) for s, b in outside.items()}
            if held is not None and np.array_equal(held[0], a):
                # the gas settled: carry the water and inhibitor alone through its solved outlets
                carried = self._unpack_carry(x[a], [held[1][t] for t in tears])
                local.update(zip(tears, carried))
                self._carry_blocks(step.blocks, local, held[2], sel[a], over_a)
                outcomes = held[2]
            else:
                tears_in = self._unpack(x[a], [z[a] for z in zs_fallback],
                                        [T[a] for T in T_last])
                local.update(zip(tears, tears_in))
                outcomes: dict = {}
            try:
                # a trial pass: blocks refuse nothing while the loop iterates (an iterate may
                # break a rule the answer keeps); the final pass refuses
                if outcomes is not (held[2] if held is not None else None):
                    self._trial_blocks(step.blocks, local, outcomes, sel[a], over_a)
                    if self.carry and not np.any(~settled[a]):
                        held = (a.copy(), dict(zip(tears, tears_in)), outcomes)
            except _CasesFailed as exc:
                # refused inside the loop: those cases leave it; the iteration is done again for
                # the others from the same values (so their numbers are as if alone)
                bad = a[exc.mask]
                refused[bad], reasons[bad], active[bad] = True, exc.reasons[exc.mask], False
                continue
            new = ~settled[a]                   # cases whose gas still iterates
            if new.any():
                done_iterations += 1
            else:
                carry_passes += 1
            produced = [local[t] for t in tears]
            # a settled case keeps the temperatures its final pass starts from
            for T, s in zip(T_last, produced):
                T[a[new]] = s.T[new]
            g = self._pack(produced)
            scale, is_flow = self._scales(produced)
            change = np.abs(g[:, :G] - x[a, :G]) / scale
            r_all = np.max(change, axis=1)
            r_flow = np.max(change[:, is_flow], axis=1)
            r_all = np.where(np.isfinite(r_all), r_all, np.inf)
            iterations[a[new]] += 1
            residual[a[new]] = r_all[new]
            if new.any():
                history.append(float(np.max(r_all[new])))
            gas_done = settled[a] | ((r_all <= tol) & (r_flow <= flow_tol))
            if g.shape[1] > G:
                # the water: each variable against its own size (a loop without water settles)
                w = np.abs(g[:, G:] - x[a, G:]) / np.maximum(np.abs(g[:, G:]), 1e-30)
                w = np.max(w, axis=1)
                carry_change[a] = np.where(np.isfinite(w), w, np.inf)
                done = gas_done & (carry_change[a] <= CARRY_TOLERANCE)
            else:
                done = gas_done
            # an iterate with no state (a tear's flash failed: the loop has run off the model's
            # range) ends those cases at once; x keeps their last iterate that had one
            lost_state = ~np.isfinite(np.max(g[:, :G], axis=1))
            if np.any(lost_state):
                gone = a[lost_state]
                active[gone], diverged[gone] = False, True
                done = done | lost_state
            # Wegstein step for the cases still going
            xa, xp, gp = x[a], x_prev[a], g_prev[a]
            dx = xa - xp
            with np.errstate(divide="ignore", invalid="ignore"):
                s = (g - gp) / dx
                q = s / (s - 1.0)
            size = np.concatenate([scale, np.maximum(np.abs(g[:, G:]), 1e-30)], axis=1)
            q = np.where(np.isfinite(q) & (np.abs(dx) > 1e-14 * size), q, 0.0)
            q = np.clip(q, WEGSTEIN_Q_MIN, WEGSTEIN_Q_MAX)
            x_new = q * xa + (1.0 - q) * g
            # a settled gas keeps its iterate (its final pass starts there); water with no number
            # (a trial pass the water split could not take) starts again from none
            x_new[:, :G] = np.where(gas_done[:, None], xa[:, :G], x_new[:, :G])
            x_new[:, G:] = np.where(np.isfinite(x_new[:, G:]), x_new[:, G:], 0.0)
            x_prev[a], g_prev[a] = xa, g
            x[a] = np.where(done[:, None], xa, x_new)
            settled[a] |= gas_done
            active[a[done]] = False
        # a case whose gas settled but whose water did not in CARRY_MAX_PASSES passes has its
        # stream numbers; its water is reported unsettled (a water_loop record), as before
        unsettled = active & settled & ~diverged
        if np.any(unsettled):
            if self._trial == 0:          # a goal's search passes are not the answer
                self.carry_unsettled.append((tuple(step.blocks),
                                             float(np.max(carry_change[unsettled]))))
            active[unsettled] = False
        converged = ~active & ~refused & ~diverged
        record = LoopRecord(blocks=tuple(step.blocks), tears=tuple(tears), iterations=iterations,
                            residual=residual, history=tuple(history), converged=converged)
        unconverged = active | diverged
        if np.any(unconverged):
            bad = np.flatnonzero(unconverged)
            i = int(bad[0])
            if diverged[i]:
                text = (f"the loop through {', '.join(step.blocks)} (tears: {', '.join(tears)}) "
                        f"diverged: at iteration {iterations[i]} a tear stream's state fell "
                        f"outside the model's range")
            else:
                text = (f"the loop through {', '.join(step.blocks)} (tears: {', '.join(tears)}) "
                        f"did not converge in {self.fs.solver.loop_max_iterations} iterations")
            if self.strict:
                raise ConvergenceError(
                    f"{text}: residual {residual[i]:.3g} (tolerance {tol:g})"
                    + (f" in {bad.size} of {m} cases" if m > 1 else "")
                    + "; last residuals " + ", ".join(f"{r:.3g}" for r in history[-5:])
                    + self._refusal_hint(step, streams, tears, x, zs_fallback, T_last, sel, over),
                    result=record)
            reasons[bad] = [f"{text}: residual {r:.3g} (tolerance {tol:g})"
                            for r in residual[bad]]
        return record, ~converged, reasons, _LoopEnd(x, zs_fallback, T_last)

    def _loop_final(self, step, end: "_LoopEnd", streams, outcomes, sel, over) -> None:
        """The final pass through a loop's blocks from its converged tear values."""
        streams.update(zip(step.tears, self._unpack(end.x, end.zs_fallback, end.T_last)))
        for name in step.blocks:
            self._run_block(name, streams, outcomes, sel, over)

    def _refusal_hint(self, step, streams, tears, x, zs_fallback, T_last, sel, over) -> str:
        """What a block of a loop that did not converge refuses at the last iterate, or "" (a
        specification no iterate can meet often keeps a loop from converging)."""
        trial = dict(streams)
        trial.update(zip(tears, self._unpack(x, zs_fallback, T_last)))
        try:
            for name in step.blocks:
                self._run_block(name, trial, {}, sel, over)
        except InputError as exc:
            return f"; at the last iterate {exc}"
        return ""
