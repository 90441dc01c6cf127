"""Solve a flowsheet: every block over a batch of cases, loops by Wegstein, goals by bracketing.

The order comes from :func:`letdown.sheet.graph.solve_order`: strongly connected components in
topological order, each loop with its fewest tear streams. A plain solve is a batch of one case;
``cases`` lets a study vary feed conditions and block parameters over a leading case axis, and
every block, loop and goal then works on all cases at once.

Loops
    Each tear stream is described by its component flows, pressure and enthalpy. The loop's blocks
    map a guess ``x`` to ``g(x)``; the guess is updated per variable by Wegstein's method (Wegstein,
    Commun. ACM 1 (1958) 9)::

        s = (g_k - g_{k-1}) / (x_k - x_{k-1}),  q = s / (s - 1) bounded to [Q_MIN, Q_MAX],
        x_{k+1} = q x_k + (1 - q) g_k

    starting with one plain substitution. Cases that have converged are masked out; the others go on.
    When water and inhibitor are carried (:class:`letdown.equipment.stream.Carry`: with the
    freezing margins or an ``inject`` block), each tear also carries its water and inhibitor per
    dry gas and its free water and inhibitor, which settle in the same iterations (to
    :data:`CARRY_TOLERANCE`); a case whose gas has settled before its water keeps its gas iterate
    and runs carry passes until the water settles (its iteration count and residual are those of
    the gas): the first solves the loop's blocks once more from the settled iterate (what the
    final pass will solve), the next apply only the blocks' carry rules
    (:func:`letdown.equipment.carry_rule`) to those solved outlets.
Doses
    An ``inject`` block sized by ``depression`` protects the coldest gas-carrying stream downstream
    of it, solved after it. The solve therefore runs once, the protected point of each such block
    is found from it (:func:`letdown.sheet.dosing.find_doses`; the block's own
    :func:`letdown.equipment.inject.dose` does the arithmetic), and the blocks run once more with
    the rates found (``params[common.DOSE_RATE]``), which each ``inject`` block adds to the
    inhibitor it carries. The inhibitor changes neither the gas nor the water, so that pass
    repeats every other number (its loops converge in the same iterations; the goals keep the
    values they found).
Failed cases
    Unless the solve is strict, a case that a block refuses (``InputError`` naming ``cases``) or
    whose loop does not converge leaves the pass: it is recorded with its reason and the step is
    run again for the others, which therefore get the very numbers they would get alone (every
    block, loop step and goal step is per case). The result blanks every number of a failed case
    (NaN) and computes warnings, margins and doses on the cases that lived only.
Goals
    A goal varies one block parameter inside its bracket until a held quantity meets its target: the
    two bracket ends are evaluated together (one batch of ``2 n`` cases), then all cases iterate
    with the Illinois root finder of :mod:`letdown.numerics.rootfind`. Several goals nest, the
    first outermost.

The case axis (the case variables checked and broadcast, the taking and spreading of the cases
that leave a pass) is :mod:`letdown.sheet.casebatch`; the loops and goals are the engine's mixins
:class:`letdown.sheet.loops.TearLoops` and :class:`letdown.sheet.goals.GoalSearch`.
"""
from __future__ import annotations

import dataclasses
from warnings import warn

import numpy as np

from ..equipment import KINDS, Carry, closures, flash_stream
from ..equipment.common import BY_GOAL, DOSE_RATE, INHIBITOR_EQUILIBRIUM, TRIAL, WATER_METHOD
from ..errors import ConvergenceError, InputError
from ..fluid import Fluid
from .carried import feed_carries
from .dosing import find_doses, inject_doses, inject_params
from .freezing import basis, freezing_warnings, stream_freezing
from .casebatch import (FEED_FIELDS, CASE_TEXT, _blank_stream, _case_arrays,  # noqa: F401
                        _refusal_text, _spread_loop, _spread_outcome, _spread_stream,
                        _take_outcome)  # (FEED_FIELDS re-exported: the sweep reads it)
from .blockflags import FLAG_KINDS, flag_warning, limit_warnings  # noqa: F401 (FLAG_KINDS: block flag -> kind)
from .evaluation import _CasesFailed, _Evaluation, _LoopEnd  # noqa: F401 (_LoopEnd re-exported)
from .goals import GOAL_RELATIVE_FLOOR, UNITS, GoalSearch  # noqa: F401 (re-exported)
from .graph import build_graph, solve_order
from .loops import (CARRY_MAX_PASSES, CARRY_TOLERANCE, FLOW_TOLERANCE,  # noqa: F401 (re-exported)
                    WEGSTEIN_Q_MAX, WEGSTEIN_Q_MIN, TearLoops)
from .modelchoice import model_warnings, solve_default_model
from .result import (ENERGY_CLOSURE, MOLE_CLOSURE, BatchResult, EquipmentBatch, Result,
                     WarningRecord, spread_result as _spread_result)
from .spec import SheetSpec, Where



# ------------------------------------------------------------------------------------------------
# public entry points
# ------------------------------------------------------------------------------------------------
def make_fluid(fs: SheetSpec, model: str | None = None) -> Fluid:
    """The flowsheet's shared fluid (``fs.gas``), optionally on another model.

    Raises
    ------
    InputError
        If the model or composition is not accepted (located at the ``gas`` section).
    """
    try:
        return Fluid(dict(fs.gas.composition), model=model or fs.gas.model, kij=fs.gas.kij)
    except InputError as exc:
        raise exc.located(file=fs.source, field="gas" if model is None else "model") from None


def solve(fs: SheetSpec, model: str | None = None) -> Result:
    """Solve a flowsheet for its one case.

    Parameters
    ----------
    fs : SheetSpec
        From :func:`letdown.sheet.loader.read_spec`.
    model : str, optional
        Thermodynamic model overriding ``fs.gas.model``.

    Returns
    -------
    Result

    Raises
    ------
    InputError
        A block asked for the impossible (a throttle raising pressure, ...) or a goal whose bracket
        holds no solution (with the held values at both ends), located in the file.
    ConvergenceError
        A loop or a goal did not converge, a flash failed, or a balance does not close.
    """
    return solve_cases(fs, None, model=model, margins=True).case(0)


def solve_cases(fs: SheetSpec, cases=None, model: str | None = None, *,
                strict: bool = True, margins: bool = False) -> BatchResult:
    """Solve a flowsheet for many cases at once.

    Parameters
    ----------
    fs : SheetSpec
    cases : Mapping[str, array_like], optional
        ``"<feed>.T"`` [K], ``"<feed>.P"`` [Pa], ``"<feed>.flow"`` [mol/s], ``"<feed>.zs"``
        (compositions, shape (n, nc) in the gas's component order), ``"<block>.<parameter>"``
        (SI) or ``"@goal<k>.at"`` (the target of the k-th goal, 1-based, SI; ``"goal<k>.at"``
        where no feed or block is named ``goal<k>``) -> values over the
        cases; all of one length ``n`` (or one value for all). None: one case, as in the file.
    model : str, optional
        Thermodynamic model overriding ``fs.gas.model``. Where neither names one, the model is
        chosen as a practitioner would (:mod:`letdown.sheet.modelchoice`: GERG-2008 for
        single-phase gas it covers, Peng-Robinson otherwise) and the result says which and why.
    strict : bool
        True: any case that fails raises (a block's refusal as a located ``InputError``, a loop,
        goal, flash or balance as a ``ConvergenceError``). False: every case lives or fails on
        its own. A failed case (a block refused it with ``InputError(..., cases=)``, its loop or
        goal did not converge, a flash failed, a balance does not close) is marked in
        ``converged`` with its reason in ``failures``; its numbers are NaN and its streams say
        ``converged`` false; the other cases get the numbers they get when solved alone. An
        ``InputError`` that names no cases concerns the whole input and is raised.
    margins : bool
        Also compute every stream's water content, water dew point, hydrate temperature and
        freezing margins, with their warnings (:mod:`letdown.sheet.freezing`). Off by default for
        studies: a hydrate temperature costs about 1 ms per distinct stream pressure and case.

    Returns
    -------
    BatchResult

    Raises
    ------
    InputError
        An unknown case key, arrays of different lengths, or (see :func:`solve`).
    ConvergenceError
        See :func:`solve` (with ``strict``).
    """
    if model is None and not fs.gas.model_given:
        return solve_default_model(fs, lambda m: solve_cases(fs, cases, m, strict=strict,
                                                             margins=margins))
    fluid = make_fluid(fs, model)
    base, n = _case_arrays(fs, cases)
    # the water beside the gas is carried through the blocks when the margins want it or an
    # inject block sizes a dose on it; with water a component of the gas each stream has its own
    carry = margins or any(b.kind == "inject" for b in fs.blocks.values())
    engine = _Engine(fs, fluid, base, n, strict, carry=carry)
    ev = engine.evaluate(np.arange(n), {}, tuple(enumerate(fs.goals)))
    return engine.result(ev, margins=margins)


def load(path) -> "Sheet":
    """Read a flowsheet file into a :class:`Sheet`, ready to solve (``letdown.load``; the parsed
    file alone is :func:`letdown.sheet.loader.read_spec`).

    Raises
    ------
    InputError
        If the file is not a valid flowsheet (file, line and field in the message).
    """
    from .loader import read_spec
    return Sheet(read_spec(path))


class Sheet:
    """A loaded flowsheet, ready to solve.

    Parameters
    ----------
    spec : SheetSpec
        The parsed file (:func:`letdown.sheet.loader.read_spec`), kept as :attr:`spec`.
    """

    def __init__(self, spec: SheetSpec):
        self.spec = spec

    @property
    def flowsheet(self) -> SheetSpec:
        """Deprecated name of :attr:`spec` (the parsed file); kept because a guide showed it."""
        warn("Sheet.flowsheet is now Sheet.spec", DeprecationWarning, stacklevel=2)
        return self.spec

    @property
    def title(self) -> str:
        """The flowsheet's title."""
        return self.spec.title

    def solve(self, model: str | None = None) -> Result:
        """Solve the one case of the file (see :func:`solve`)."""
        return solve(self.spec, model=model)

    def solve_cases(self, cases=None, model: str | None = None, *, strict: bool = True):
        """Solve many cases at once (see :func:`solve_cases`)."""
        return solve_cases(self.spec, cases, model=model, strict=strict)

    def __repr__(self) -> str:
        fs = self.spec
        return (f"Sheet({fs.title!r}, {len(fs.feeds)} feeds, {len(fs.blocks)} blocks, "
                f"{len(fs.goals)} goals)")


class _Engine(TearLoops, GoalSearch):
    """Runs the blocks of one flowsheet over batches of cases.

    ``sel`` (integer array) picks cases from the ``n`` base cases, repeats allowed; ``over`` holds
    further overrides (arrays aligned with ``sel``) -- how goals try values of their parameter.
    """

    def __init__(self, fs: SheetSpec, fluid: Fluid, base: dict, n: int, strict: bool,
                 carry: bool = False):
        self.fs, self.fluid, self.base, self.n, self.strict = fs, fluid, base, n, strict
        # whether the streams carry the water and inhibitor beside the gas (letdown.equipment.
        # stream.Carry); its water, unless water is a component of the gas (then each stream's own)
        self.carry = carry
        self.carry_water = carry and "water" not in fluid.components
        # the sheet's inhibitor split: by the equilibrium if any inject block counts its losses
        self.equilibrium = any(
            str(spec.params.get("losses", "equilibrium")).strip().lower() == "equilibrium"
            for spec in fs.blocks.values() if spec.kind == "inject")
        # inject block -> the dose rate found for it over the n cases [kg/s] (the second pass)
        self.dose_rates: dict = {}
        # loops whose water had not settled after CARRY_MAX_PASSES: (blocks, change)
        self.carry_unsettled: list = []
        self.G = build_graph(fs)
        self.steps = solve_order(self.G)
        self.components = tuple(fluid.components)
        self.nc = len(self.components)
        self.source = fs.source
        self.feed_zs = {name: self._zs(f.composition, f.where, f"feeds.{name}")
                        for name, f in fs.feeds.items()}
        self.guess_zs = {name: self._zs(g.composition, g.where, f"guesses.{name}")
                         for name, g in fs.guesses.items()}
        self.producer = {s: b for b, spec in fs.blocks.items() for s in spec.outlets.values()}
        # the feeds' streams per base case, kept from the first pass that varies no feed value
        # (lookup (n,) base case -> position or -1, {feed: StreamBatch}); see _feed_streams
        self._feed_memo = None
        # > 0 while a loop iterates or a goal searches: blocks refuse nothing in such trial passes
        # (an iterate may break a rule the answer keeps; letdown.equipment.common)
        self._trial = 0

    # -- small helpers ----------------------------------------------------------------------------
    def _zs(self, composition, where: Where, field_path: str) -> np.ndarray:
        """A composition mapping (or None for the gas's) as an array in component order."""
        if composition is None:
            return np.asarray(self.fluid.zs, dtype=float)
        unknown = [c for c in composition if c not in self.components]
        if unknown:
            raise InputError(f"component '{unknown[0]}' is not in the gas composition (the "
                             f"flowsheet's components are {', '.join(self.components)})",
                             file=where.file or self.source, line=where.line, field=field_path)
        zs = np.array([float(composition.get(c, 0.0)) for c in self.components])
        return zs / zs.sum()

    def _value(self, key: str, sel, over, default):
        if key in over:
            return over[key]
        if key in self.base:
            return self.base[key][sel]
        return default

    def _params(self, name: str, sel, over) -> dict:
        params = dict(self.fs.blocks[name].params)
        prefix = name + "."
        for key in list(self.base) + list(over):
            if key.startswith(prefix):
                params[key[len(prefix):]] = self._value(key, sel, over, None)
        # the parameters goals vary (flagged, not refused) and whether this pass is a trial
        params[BY_GOAL] = tuple(k[len(prefix):] for k in over if k.startswith(prefix))
        params[TRIAL] = self._trial > 0
        if self.carry:
            params[WATER_METHOD] = self.fs.gas.water_method
            params[INHIBITOR_EQUILIBRIUM] = self.equilibrium
            if name in self.dose_rates:
                params[DOSE_RATE] = self.dose_rates[name][sel]
        return params

    def _locate(self, exc: InputError, name: str) -> InputError:
        spec = self.fs.blocks[name]
        key = (exc.field or "").split(".", 2)[-1].split(".")[0]
        where = spec.field_where.get(key) or spec.where
        return exc.located(file=where.file or self.source, line=where.line,
                           field=f"equipment.{name}")

    # -- passes -----------------------------------------------------------------------------------
    def evaluate(self, sel, over, goals) -> _Evaluation:
        """Solve the cases ``sel`` with overrides ``over``, meeting ``goals`` (index, GoalSpec)."""
        if goals:
            return self._goal(goals[0], goals[1:], sel, over)
        return self._flow(sel, over)

    def _flow(self, sel, over, warm=None) -> _Evaluation:
        """One pass through the blocks for the cases ``sel``.

        A case a block refuses (an ``InputError`` naming cases) or whose loop fails is removed from
        the pass (when not ``strict``) and the step is run again for the others, so that they get
        the very numbers they would get alone; at the end the removed cases are blank (NaN).
        ``warm`` (the ``ends`` of an earlier pass of the same cases, whose gas and water this pass
        repeats): each loop starts from its converged tear variables with its gas settled, and
        runs carry passes only until its inhibitor settles.
        """
        m = len(sel)
        ev = _Evaluation(streams={}, outcomes={}, ok=np.ones(m, dtype=bool),
                         reasons=np.full(m, "", dtype=object))
        feeds = {}
        for name, feed in self.fs.feeds.items():
            values = {attr: np.broadcast_to(np.asarray(self._value(
                f"{name}.{attr}", sel, over, getattr(feed, attr)), dtype=float), (m,))
                for attr in FEED_FIELDS}
            zs = self._value(f"{name}.zs", sel, over, None)
            if zs is None:
                zs = np.tile(self.feed_zs[name], (m, 1))
            elif zs.shape[-1] != self.nc:
                raise InputError(f"case compositions for feed '{name}' have {zs.shape[-1]} "
                                 f"entries; the gas has {self.nc} components",
                                 field=f"cases.{name}.zs")
            self._check_feed(name, values, ev)
            feeds[name] = (values, zs)
        alive = np.flatnonzero(ev.ok)  # the cases still in the pass
        now_sel = sel[alive] if alive.size < m else sel
        now_over = {k: v[alive] for k, v in over.items()} if alive.size < m else over
        streams: dict = {}
        if alive.size:
            streams = self._feed_streams(feeds, alive, now_sel, over)
        outcomes: dict = {}
        loops = []                     # (record, the cases it was made for)

        def drop(lost, why):
            """Remove the failed cases ``lost`` (mask over ``alive``) from the pass."""
            nonlocal alive, streams, outcomes, now_sel, now_over
            ev.fail(alive[lost], why[lost])
            keep = ~lost
            alive = alive[keep]
            streams = {s: b.take(keep) for s, b in streams.items()}
            outcomes = {b: _take_outcome(o, keep) for b, o in outcomes.items()}
            now_sel = sel[alive]
            now_over = {k: v[alive] for k, v in over.items()}
            return keep

        for index, step in enumerate(self.steps):
            while alive.size:
                try:
                    if not step.is_loop:
                        self._run_block(step.blocks[0], streams, outcomes, now_sel, now_over)
                        break
                    entry = alive
                    start = (warm or {}).get(index)
                    start = start[1] if start is not None and np.array_equal(start[0], alive) \
                        else None
                    record, lost, why, end = self._loop(step, streams, now_sel, now_over, start)
                    if lost.any():
                        end = end.take(drop(lost, why))
                    ev.ends[index] = (alive.copy(), end)
                    if alive.size:
                        self._loop_final(step, end, streams, outcomes, now_sel, now_over)
                    loops.append((record, entry))
                    break
                except _CasesFailed as exc:
                    # a block refused some cases: drop them and run the step again for the others
                    drop(exc.mask, exc.reasons)
        if alive.size == m:
            ev.streams, ev.outcomes = streams, outcomes
            ev.loops = [record for record, _ in loops]
            return ev
        # some cases left the pass: every number of theirs is blank
        for name in self._stream_order():
            ev.streams[name] = _spread_stream(streams.get(name), alive, m, self.nc)
        for name, spec in self.fs.blocks.items():
            ev.outcomes[name] = _spread_outcome(
                outcomes.get(name), spec.kind,
                {p: ev.streams[s] for p, s in spec.outlets.items()}, alive, m)
        ev.loops = [_spread_loop(record, idx, m) for record, idx in loops]
        return ev

    def _feed_streams(self, feeds: dict, alive, sel, over) -> dict:
        """The feeds' streams of the cases ``sel`` (``alive`` picks them out of ``feeds``).

        A pass that overrides no feed value (each step of a goal's search, the final pass) has the
        very feeds of an earlier pass: the streams of the first such pass are kept per base case
        and taken again. Every case's flash is its own, so the numbers are those a new flash
        gives; a goal search no longer flashes its feeds 9 times (bench/sweep_large.py).
        """
        fixed = not any(k.partition(".")[0] in self.fs.feeds for k in over)
        if fixed and self._feed_memo is not None:
            pos = self._feed_memo[0][sel]
            if np.all(pos >= 0):
                return {name: b.take(pos) for name, b in self._feed_memo[1].items()}
        streams = {}
        for name, (values, zs) in feeds.items():
            streams[name] = flash_stream(self.fluid, values["flow"][alive], zs[alive],
                                         T=values["T"][alive], P=values["P"][alive])
        if self.carry_water:
            for name, c in feed_carries(self.fs, self.fluid, streams).items():
                streams[name] = streams[name].with_carry(c)
        elif self.carry:      # water a component: each stream's own water, not carried
            for name, st in streams.items():
                nan = np.full(st.n_cases, np.nan)
                streams[name] = st.with_carry(Carry(nan, nan))
        if fixed and self._feed_memo is None:
            ids, first = np.unique(sel, return_index=True)
            lookup = np.full(self.n, -1)
            lookup[ids] = np.arange(ids.size)
            self._feed_memo = (lookup, {name: b.take(first) for name, b in streams.items()})
        return streams

    def _check_feed(self, name: str, values: dict, ev: _Evaluation) -> None:
        """Refuse a feed value no gas can have (NaN, a non-positive absolute temperature or
        pressure, a negative flow) for its case: strict raises, naming the case variable."""
        units = {"T": "K", "P": "Pa", "flow": "mol/s"}
        for attr, v in values.items():
            with np.errstate(invalid="ignore"):
                nan = ~np.isfinite(v)
                bad = nan | ((v < 0) if attr == "flow" else (v <= 0))
            if not np.any(bad):
                continue
            key = f"{name}.{attr}"

            def error(i):
                what = ("is not a number" if nan[i] else "is negative" if attr == "flow" else
                        "is not positive (an absolute value)")
                return InputError(f"{key} = {v[i]:.6g} {units[attr]} {what}"
                                  + (f" (case {i})" if len(v) > 1 and self.strict else ""),
                                  field=f"cases.{key}")
            if self.strict:
                raise error(int(np.flatnonzero(bad)[0]))
            idx = np.flatnonzero(bad)
            ev.fail(idx, [str(error(i)) for i in idx])

    def _run_block(self, name, streams, outcomes, sel, over):
        spec = self.fs.blocks[name]
        inlets = {port: streams[s] for port, s in spec.inlets.items()}
        try:
            outcome = KINDS[spec.kind](self.fluid, name, inlets, self._params(name, sel, over))
        except InputError as exc:
            located = self._locate(exc, name)
            mask = self._case_mask(exc, len(sel))
            if mask is None:
                raise located from None
            if self.strict:
                # the block's batch index means nothing outside it (a goal runs its bracket ends
                # as one batch): name the case of the solve instead
                i = int(sel[np.flatnonzero(mask)[0]])
                raise type(located)(CASE_TEXT.sub("", located.message)
                                    + (f" (case {i})" if self.n > 1 else ""), file=located.file,
                                    line=located.line, field=located.field,
                                    cases=self._case_mask_of_solve(sel, mask)) from None
            raise _CasesFailed(mask, np.full(len(sel), _refusal_text(located, int(mask.sum())),
                                             dtype=object)) from None
        for port, stream in spec.outlets.items():
            streams[stream] = outcome.outlets[port]
        outcomes[name] = outcome

    def _case_mask_of_solve(self, sel, mask) -> np.ndarray:
        """A mask over the block's batch as a mask over the solve's ``n`` cases."""
        out = np.zeros(self.n, dtype=bool)
        out[np.asarray(sel)[mask]] = True
        return out

    @staticmethod
    def _case_mask(exc: InputError, m: int):
        """The cases an ``InputError`` concerns as a bool mask over the block's ``m`` cases, or
        None where it concerns the whole input (no ``cases``, or not a mask of this batch)."""
        if exc.cases is None:
            return None
        mask = np.asarray(exc.cases)
        if mask.dtype != bool or mask.shape != (m,) or not mask.any():
            return None
        return mask

    def _trial_blocks(self, names, streams, outcomes, sel, over):
        """Run blocks in a trial pass (a loop iteration): they refuse nothing."""
        self._trial += 1
        try:
            for name in names:
                self._run_block(name, streams, outcomes, sel, over)
        finally:
            self._trial -= 1


    # -- the result -------------------------------------------------------------------------------
    def result(self, ev: _Evaluation, margins: bool = False) -> BatchResult:
        """Assemble, warn about and check the final evaluation (with the freezing margins when
        ``margins``).

        A case whose flash failed or whose balances do not close fails here (strict: raises). The
        warnings, margins and doses are computed on the cases that lived only; a failed case has
        blank (NaN) numbers, its streams ``converged`` false, and its reason in ``failures``.
        """
        n = self.n
        for name, stream in ev.streams.items():
            bad = ev.ok & ~stream.converged
            if np.any(bad):
                if self.strict:
                    i = int(np.flatnonzero(bad)[0])
                    raise ConvergenceError(f"stream '{name}': the flash did not converge"
                                           + (f" in case {i}" if n > 1 else ""))
                ev.fail(bad, f"stream '{name}': the flash did not converge")
        closure = {}
        for name, spec in self.fs.blocks.items():
            outcome = ev.outcomes[name]
            mole, energy = closures([ev.streams[s] for s in spec.inlets.values()],
                                    [ev.streams[s] for s in spec.outlets.values()],
                                    outcome.energy_in)
            closure[name] = (mole, energy)
            for what, value, limit in (("mole", mole, MOLE_CLOSURE),
                                       ("energy", energy, ENERGY_CLOSURE)):
                bad = ev.ok & ~(value <= limit)
                if np.any(bad):
                    i = int(np.flatnonzero(bad)[0])
                    text = f"block '{name}': {what} balance closes only to "
                    if self.strict:
                        raise ConvergenceError(text + f"{value[i]:.3g} (limit {limit:g})"
                                               + (f" in case {i}" if n > 1 else ""))
                    ev.fail(bad, [text + f"{v:.3g} (limit {limit:g})" for v in value[bad]])
        found = self._doses(ev)
        if np.all(ev.ok):
            result = self._assemble(ev, margins, ev.goals, ev.loops, ev.ok, ev.reasons,
                                    found=found)
            result.__dict__["_closures"] = closure     # the same streams: no need to redo them
            return result
        keep = np.flatnonzero(ev.ok)
        lived = _Evaluation(streams={s: b.take(keep) for s, b in ev.streams.items()},
                            outcomes={b: _take_outcome(o, keep) for b, o in ev.outcomes.items()},
                            ok=np.ones(keep.size, dtype=bool),
                            reasons=np.full(keep.size, "", dtype=object))
        goals = tuple(dataclasses.replace(g, value=np.where(ev.ok, g.value, np.nan),
                                          achieved=np.where(ev.ok, g.achieved, np.nan),
                                          met=g.met & ev.ok) for g in ev.goals)
        if keep.size == 0:
            blank = {s: _blank_stream(n, self.nc) for s in ev.streams}
            return self._assemble(
                _Evaluation(streams=blank, outcomes={
                    b: _spread_outcome(None, self.fs.blocks[b].kind, {}, keep, n)
                    for b in ev.outcomes}, ok=ev.ok, reasons=ev.reasons),
                False, goals, ev.loops, ev.ok, ev.reasons, quiet=True)
        assembled = self._assemble(lived, margins, (), (), lived.ok, lived.reasons, found=found)
        # a case refused while assembling (an absurd inhibitor dose) fails in the whole batch too
        late = keep[~lived.ok]
        ev.ok[late], ev.reasons[late] = False, lived.reasons[~lived.ok]
        return _spread_result(assembled, keep, n, goals, ev.loops, ev.ok, ev.reasons)

    def _doses(self, ev: _Evaluation):
        """The doses of the ``inject`` blocks, found on the cases that lived from their protected
        points (:func:`letdown.sheet.dosing.find_doses`): (doses, notes), or None without any.
        Where a rate differs from what the block added in this pass (a ``depression`` is sized
        only now), the blocks run once more with the rates found (module docstring, Doses), and
        ``ev`` takes that pass's streams and outcomes."""
        injects = [b for step in self.steps for b in step.blocks
                   if self.fs.blocks[b].kind == "inject"]
        keep = np.flatnonzero(ev.ok)
        if not (injects and self.carry and keep.size):
            return None
        every = keep.size == self.n
        streams = ev.streams if every else {s: b.take(keep) for s, b in ev.streams.items()}
        outcomes = ev.outcomes if every else {b: _take_outcome(o, keep)
                                              for b, o in ev.outcomes.items()}
        given = inject_params(self.fs, outcomes)
        doses, notes = find_doses(self.fs, self.fluid, streams, self.steps, given, outcomes)
        rates, again = {}, False
        for b in injects:
            rate = np.zeros(self.n)
            rate[keep] = np.nan_to_num(np.asarray(doses[b]["rate_kg_s"], float))
            added = np.zeros(keep.size)       # what the block added in this pass
            if "rate" in given[b]:
                added = np.nan_to_num(np.broadcast_to(np.asarray(given[b]["rate"], float),
                                                      (keep.size,)))
            again |= not np.array_equal(rate[keep], added)
            rates[b] = rate
        if not again:
            return doses, notes
        self.dose_rates = rates
        second = self._flow(np.arange(self.n), {g.by: np.asarray(g.value, float)
                                                for g in ev.goals}, warm=ev.ends)
        ev.streams, ev.outcomes = second.streams, second.outcomes
        lost = ev.ok & ~second.ok
        if np.any(lost):
            # a case this pass lost (none should: only the inhibitor changed) fails, and the
            # doses are found again on the cases left
            ev.fail(lost, second.reasons[lost])
            return None
        return doses, notes

    def _assemble(self, ev: _Evaluation, margins: bool, goals, loops, ok, reasons, *,
                  quiet: bool = False, found=None) -> BatchResult:
        """The result of cases that all lived (``quiet``: of cases that all failed, with no
        warnings, margins or doses)."""
        warnings = []
        if quiet:
            return self._batch(ev, {}, None, warnings, goals, loops, ok, reasons)
        min_T = self.fs.limits.get("min_T")
        if min_T is not None:
            for name, stream in ev.streams.items():
                cold = stream.T < min_T
                if np.any(cold):
                    i = int(np.flatnonzero(cold)[0])
                    warnings.append(WarningRecord(
                        name, f"temperature {stream.T[i] - 273.15:.2f} degC is below limits.min_T "
                              f"{min_T - 273.15:.2f} degC", tuple(np.flatnonzero(cold).tolist()),
                        kind="min_T", severity="hazard",
                        numbers={"T_K": stream.T, "min_T_K": min_T, "margin_K": stream.T - min_T}))
        warnings.extend(model_warnings(self.fluid, ev.streams))
        freezing = None
        doses: dict = {}
        given = inject_params(self.fs, ev.outcomes)
        if margins:
            # the freezing checks run on every solve, with or without limits or gas.water
            freezing, notes = stream_freezing(self.fs, self.fluid, ev.streams, self.steps, doses,
                                              given, outcomes=ev.outcomes, found=found)
            for blocks, change in dict(self.carry_unsettled).items():
                notes.append(WarningRecord(", ".join(blocks), (
                    f"the water and inhibitor carried round this loop did not settle in "
                    f"{CARRY_MAX_PASSES} "
                    f"passes after its streams (change {change:.3g})"), kind="water_loop",
                    severity="check"))
            warnings.extend(notes)
            warnings.extend(freezing_warnings(self.fs, ev.streams, freezing))
        else:
            doses, notes = inject_doses(self.fs, self.fluid, ev.streams, self.steps, given,
                                        outcomes=ev.outcomes, found=found)
            warnings.extend(notes)
        for w in notes:
            if w.kind == "inhibitor_dose":    # a refused dose: its cases did not solve
                ev.fail(np.asarray(w.cases, dtype=int), f"block '{w.where}': {w.what}")
        # block flags: texts, kinds and severities in letdown.sheet.blockflags
        for name, outcome in ev.outcomes.items():
            spec = self.fs.blocks[name]
            for flag, values in outcome.flags.items():
                if np.any(values):
                    warnings.append(flag_warning(
                        self.fluid, name, flag, values, outcome,
                        {p: ev.streams[s] for p, s in spec.inlets.items()},
                        {p: ev.streams[s] for p, s in spec.outlets.items()}))
        # limits on velocities, valve openings and noise (letdown.sheet.blockflags)
        warnings.extend(limit_warnings(self.fs.limits, ev.outcomes))
        return self._batch(ev, doses, freezing, warnings, goals, loops, ok, reasons)

    def _batch(self, ev, doses, freezing, warnings, goals, loops, ok, reasons) -> BatchResult:
        equipment = {}
        for name, outcome in ev.outcomes.items():
            spec = self.fs.blocks[name]
            equipment[name] = EquipmentBatch(
                kind=spec.kind, inlets=dict(spec.inlets), outlets=dict(spec.outlets),
                energy_in=outcome.energy_in, duty=outcome.duty, power=outcome.power, dP=outcome.dP,
                details={**outcome.details, **doses.get(name, {})}, flags=dict(outcome.flags))
        order = [s for s in self._stream_order() if s in ev.streams]
        return BatchResult(title=self.fs.title, model=self.fluid.model,
                           components=self.components,
                           streams={s: ev.streams[s] for s in order}, equipment=equipment,
                           goals=tuple(goals), loops=tuple(loops),
                           warnings=tuple(warnings), converged=np.array(ok, dtype=bool),
                           failures=tuple(str(r) for r in reasons),
                           freezing=None if freezing is None else
                           {s: freezing[s] for s in order},
                           min_T=self.fs.limits.get("min_T"),
                           freezing_basis=None if freezing is None else
                           basis(self.fs, self.fluid))

    def _stream_order(self) -> list:
        """Streams in calculation order: feeds, then each block's outlets."""
        out = list(self.fs.feeds)
        for step in self.steps:
            for b in step.blocks:
                out.extend(s for s in self.fs.blocks[b].outlets.values() if s not in out)
        return out
