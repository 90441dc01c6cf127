"""The case axis of a solve: the case variables of :func:`letdown.sheet.solve.solve_cases` checked
and broadcast to one length (:func:`_case_arrays`), and the bookkeeping of cases that leave a pass
(a block refused them, their loop failed): taking the living cases out of a block's outcome and
spreading an outcome, stream or loop record of the cases left back over all ``n`` cases, blank
(NaN) where a case failed. The engine (:class:`letdown.sheet.solve._Engine`) uses these; the
result's own spreading is :func:`letdown.sheet.result.spread_result`.
"""
from __future__ import annotations

import dataclasses
import re

import numpy as np

from ..equipment import BlockOutcome, StreamBatch
from ..errors import InputError
from .kinds import NUMBERS
from .result import LoopRecord, _spread
from .spec import SheetSpec

FEED_FIELDS = ("T", "P", "flow")

#: The batch index a block puts in its messages (``common.case_text``).
CASE_TEXT = re.compile(r" \(case \d+\)")


def _case_arrays(fs: SheetSpec, cases) -> tuple[dict, int]:
    """Check the case keys and broadcast their values to one length."""
    if not cases:
        return {}, 1
    arrays = {}
    for key, values in cases.items():
        name, _, attr = str(key).partition(".")
        axis = name.startswith("@goal")         # a goal's target, whatever the file's names
        if axis:
            name = name[1:]
        if name.startswith("goal") and name[4:].isdigit() and (axis or name not in fs.feeds
                                                               and name not in fs.blocks):
            ok = attr == "at" and 1 <= int(name[4:]) <= len(fs.goals)
            # kept under the '@' key, which no block's parameters can take for their own
            key = f"@{name}.{attr}" if ok else key
        elif name in fs.feeds:
            ok = attr in FEED_FIELDS or attr == "zs"
        elif name in fs.blocks:
            ok = bool(attr) and attr != "fractions"
        else:
            ok = False
        if not ok:
            raise InputError(f"unknown case variable '{key}' (use <feed>.T, <feed>.P, <feed>.flow, "
                             "<feed>.zs, <block>.<parameter> or @goal<k>.at)", field=f"cases.{key}")
        if attr == "zs":
            a = np.atleast_2d(np.asarray(values, dtype=float))
            if np.any(a < 0) or np.any(np.abs(a.sum(axis=1) - 1.0) > 1e-6):
                raise InputError(f"case compositions '{key}' must be non-negative and sum to 1",
                                 field=f"cases.{key}")
            arrays[key] = a
        else:
            arrays[key] = np.atleast_1d(np.asarray(values, dtype=float))
    lengths = {a.shape[0] for a in arrays.values() if a.shape[0] != 1}
    if len(lengths) > 1:
        raise InputError(f"case arrays have different lengths {sorted(lengths)}", field="cases")
    n = lengths.pop() if lengths else 1
    return {k: np.broadcast_to(a, (n,) + a.shape[1:]).copy() for k, a in arrays.items()}, n



#: Which of duty, power and dP each kind of block reports: the blank outcome of a block that no
#: case of a batch reached (every case failed before it) has the same fields as a solved one.
KIND_NUMBERS = NUMBERS


def _blank_stream(n: int, nc: int) -> StreamBatch:
    """A stream of ``n`` failed cases: every number NaN, ``converged`` false."""
    nan, nan2 = np.full(n, np.nan), np.full((n, nc), np.nan)
    return StreamBatch(flow=nan, T=nan, P=nan, zs=nan2, h=nan, s=nan, Z=nan, density=nan,
                       molar_mass=nan, vapour_fraction=nan, ys=nan2, xs=nan2,
                       converged=np.zeros(n, dtype=bool))


def _spread_stream(stream: StreamBatch | None, idx, n: int, nc: int) -> StreamBatch:
    blank = _blank_stream(n, nc)
    return blank if stream is None else blank.put(idx, stream)


def _take_outcome(o: BlockOutcome, keep) -> BlockOutcome:
    """The cases ``keep`` (bool mask) of a block's outcome."""
    def t(a):
        return None if a is None else np.asarray(a)[keep]
    return BlockOutcome(outlets={p: s.take(keep) for p, s in o.outlets.items()},
                        energy_in=t(o.energy_in), duty=t(o.duty), power=t(o.power), dP=t(o.dP),
                        mole_closure=t(o.mole_closure), energy_closure=t(o.energy_closure),
                        details={k: (v if isinstance(v, str) or np.ndim(v) == 0 else t(v))
                                 for k, v in o.details.items()},
                        flags={k: t(v) for k, v in o.flags.items()})


def _spread_outcome(o: BlockOutcome | None, kind: str, outlets: dict, idx, n: int) -> BlockOutcome:
    """A block's outcome over ``n`` cases from that of the cases ``idx`` (None: no case reached
    the block), blank elsewhere."""
    if o is None:
        nan = np.full(n, np.nan)
        numbers = KIND_NUMBERS[kind]
        return BlockOutcome(outlets=outlets, energy_in=nan, mole_closure=nan, energy_closure=nan,
                            **{k: nan for k in numbers})
    return BlockOutcome(outlets=outlets, energy_in=_spread(o.energy_in, idx, n),
                        duty=_spread(o.duty, idx, n), power=_spread(o.power, idx, n),
                        dP=_spread(o.dP, idx, n), mole_closure=_spread(o.mole_closure, idx, n),
                        energy_closure=_spread(o.energy_closure, idx, n),
                        details={k: _spread(v, idx, n) for k, v in o.details.items()},
                        flags={k: _spread(v, idx, n) for k, v in o.flags.items()})


def _spread_loop(rec: LoopRecord, idx, n: int) -> LoopRecord:
    return dataclasses.replace(rec, iterations=_spread(rec.iterations, idx, n),
                               residual=_spread(rec.residual, idx, n),
                               converged=_spread(rec.converged, idx, n))


def _refusal_text(exc: InputError, n_failed: int) -> str:
    """The reason recorded for the cases a block refused: its located message without the batch
    index (which means nothing outside the block's own batch)."""
    text = CASE_TEXT.sub("", str(exc))
    if n_failed > 1:
        text += " (the figures are those of the first case it refused in the batch)"
    return text


