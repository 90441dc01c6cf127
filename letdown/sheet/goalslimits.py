"""The ``goals``, ``solver`` and ``limits`` sections of a flowsheet file: what a solve must hold,
how hard it may try, and the limits its results are judged against. Part of the loader
(:mod:`letdown.sheet.loader`).
"""
from __future__ import annotations

import math
import re

from ..quantities import MassFlow
from .kinds import PARAMETERS
from .spec import BlockSpec, GoalSpec, SolverSpec
from .yamldoc import _Doc, _Quantities, _nearest, _number, _where

#: Quantities a goal may hold: on a stream, and on a block.
STREAM_GOAL_ATTRIBUTES = {"T": "temperature", "P": "pressure", "vapour_fraction": "fraction",
                          "flow": "flow"}
BLOCK_GOAL_ATTRIBUTES = {"duty": "power", "power": "power", "min_approach": "temperature_difference"}

#: Iteration caps above this are refused: a solve that needs more has another problem, and a cap of
#: 1e9 would hang the command (our choice).
MAX_ITERATIONS = 10_000
#: A relative loop tolerance above this is no convergence test at all [-] (our choice).
MAX_LOOP_TOLERANCE = 0.1


def _split_ref(text):
    name, _, attribute = text.partition(".")
    return name, attribute


def _goal_targets(doc: _Doc) -> dict:
    """(block, parameter) -> goal index, for the exactly-one checks."""
    out = {}
    for i, g in enumerate(doc.data.get("goals") or ()):
        block, param = _split_ref(g["by"])
        if (block, param) in out:
            raise doc.err(f"{g['by']} is already varied by goal {out[(block, param)] + 1}",
                          ("goals", i, "by"), key=False)
        out[(block, param)] = i
    return out


def _goals(doc: _Doc, q: _Quantities, blocks: dict, feeds: dict) -> tuple:
    streams = set(feeds)
    for b in blocks.values():
        streams.update(b.outlets.values())
    goals = []
    held = {}
    for i, g in enumerate(doc.data.get("goals") or ()):
        path = ("goals", i)
        obj, attr = _split_ref(g["hold"])
        if obj in blocks:
            table = BLOCK_GOAL_ATTRIBUTES
        elif obj in streams:
            table = STREAM_GOAL_ATTRIBUTES
        else:
            raise doc.err(f"'{obj}' is neither a stream nor a block{_nearest(obj, streams | set(blocks))}",
                          path + ("hold",), key=False)
        if attr not in table:
            raise doc.err(f"cannot hold '{attr}' of '{obj}' (can hold: {', '.join(table)})",
                          path + ("hold",), key=False)
        if g["hold"] in held:
            raise doc.err(f"{g['hold']} is already held by goal {held[g['hold']] + 1}",
                          path + ("hold",), key=False)
        held[g["hold"]] = i
        target = q(g["at"], table[attr], path + ("at",))
        if isinstance(target, MassFlow):
            raise doc.err("hold a flow as a molar or standard-volume flow, not a mass flow",
                          path + ("at",), key=False)
        if attr == "vapour_fraction" and not 0.0 <= target <= 1.0:
            raise doc.err(f"a vapour fraction lies in [0, 1], got {g['at']!r}", path + ("at",),
                          key=False)
        if attr in ("P", "flow") and not target > 0.0:
            raise doc.err(f"{attr} must be positive, got {g['at']!r}", path + ("at",), key=False)
        bname, param = _split_ref(g["by"])
        if bname not in blocks:
            raise doc.err(f"unknown block '{bname}'{_nearest(bname, blocks)}", path + ("by",),
                          key=False)
        block = blocks[bname]
        kinds = PARAMETERS[block.kind]
        if param not in kinds:
            raise doc.err(f"a {block.kind} has no parameter '{param}' to vary "
                          f"(it has: {', '.join(kinds) or 'none'})", path + ("by",), key=False)
        lo = q(g["within"][0], kinds[param], path + ("within", 0))
        hi = q(g["within"][1], kinds[param], path + ("within", 1))
        if not lo < hi:
            raise doc.err(f"the bracket [{g['within'][0]}, {g['within'][1]}] must go from low to "
                          f"high", path + ("within",), key=False)
        goals.append(GoalSpec(hold=g["hold"], target=target, by=g["by"], within=(lo, hi),
                              where=_where(doc, path)))
        if param not in block.params:
            # the varied parameter starts in the middle of its bracket
            params = dict(block.params)
            params[param] = 0.5 * (lo + hi)
            fw = dict(block.field_where)
            fw[param] = _where(doc, path + ("by",))
            blocks[bname] = BlockSpec(block.name, block.kind, block.inlets, block.outlets, params,
                                      block.where, fw)
    return tuple(goals)


def _solver(doc: _Doc, raw: dict) -> SolverSpec:
    """The ``solver`` section, its numbers finite and its caps ones a solve can reach."""
    for key in ("loop_max_iterations", "goal_max_iterations"):
        if key in raw and raw[key] > MAX_ITERATIONS:
            raise doc.err(f"{key} takes at most {MAX_ITERATIONS:,}, got {raw[key]!r}",
                          ("solver", key), key=False)
    for key in ("loop_tolerance", "goal_tolerance"):
        if key in raw:
            _number(doc, raw[key], ("solver", key), key)
    if raw.get("loop_tolerance", 0.0) > MAX_LOOP_TOLERANCE:
        raise doc.err(f"a relative loop tolerance above {MAX_LOOP_TOLERANCE:g} tests nothing, got "
                      f"{raw['loop_tolerance']!r}", ("solver", "loop_tolerance"), key=False)
    return SolverSpec(**raw)


def _limits(doc: _Doc, q: _Quantities) -> dict:
    raw = doc.data.get("limits") or {}
    out = {}
    if "min_T" in raw:
        out["min_T"] = q(raw["min_T"], "temperature", ("limits", "min_T"))
    if "hydrate_margin" in raw:
        out["hydrate_margin"] = q(raw["hydrate_margin"], "temperature_difference",
                                  ("limits", "hydrate_margin"))
        if out["hydrate_margin"] < 0.0:
            raise doc.err(f"a hydrate margin must not be negative, got {raw['hydrate_margin']!r}",
                          ("limits", "hydrate_margin"), key=False)
    if "max_velocity" in raw:
        # the fastest gas allowed in a pipe (erosion, noise, vibration): a warning above it
        out["max_velocity"] = q(raw["max_velocity"], "velocity", ("limits", "max_velocity"))
        if not out["max_velocity"] > 0.0:
            raise doc.err(f"max_velocity must be positive, got {raw['max_velocity']!r}",
                          ("limits", "max_velocity"), key=False)
    if "outlet_min_T" in raw:
        # the coldest gas allowed into the pipe downstream of the station (buried pipe: frost
        # heave; exposed pipe and coatings): a temperature for every gas outlet, or {T, streams}
        rule = raw["outlet_min_T"]
        if isinstance(rule, dict):
            if "T" not in rule:
                raise doc.err("give the rule's temperature as T (and the streams it applies to "
                              "as streams)", ("limits", "outlet_min_T"))
            out["outlet_min_T"] = q(rule["T"], "temperature", ("limits", "outlet_min_T", "T"))
            streams = rule.get("streams")
            if streams is not None:
                if not isinstance(streams, list) or not all(isinstance(x, str) for x in streams):
                    raise doc.err("streams must be a list of stream names",
                                  ("limits", "outlet_min_T", "streams"), key=False)
                out["outlet_streams"] = tuple(streams)
        else:
            out["outlet_min_T"] = q(rule, "temperature", ("limits", "outlet_min_T"))
    # limits on the hydraulic numbers of the blocks (letdown.sheet.blockflags.limit_warnings)
    if "max_opening" in raw:
        out["max_opening"] = q(raw["max_opening"], "fraction", ("limits", "max_opening"))
        if not 0.0 < out["max_opening"] <= 1.0:
            raise doc.err(f"max_opening is a fraction of travel in (0, 1], got "
                          f"{raw['max_opening']!r}", ("limits", "max_opening"), key=False)
    if "max_noise" in raw:
        out["max_noise"] = _decibels(doc, raw["max_noise"], ("limits", "max_noise"))
    return out


#: A sound level limit outside this range [dB(A)] is a slip (hearing damage begins near 85 dB(A);
#: no limit is set below the quiet of a room; common practice).
NOISE_LIMIT_RANGE = (20.0, 200.0)


def _decibels(doc: _Doc, text, path) -> float:
    """A sound pressure level in dB(A): a number, or text such as '85 dBA' or '85 dB(A)'."""
    value = None
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        value = float(text)
    elif isinstance(text, str):
        m = re.fullmatch(r"\s*([-+]?\d+(?:\.\d*)?)\s*(dBA|dB\(A\)|dB)?\s*", text)
        value = float(m.group(1)) if m else None
    if value is None or not (math.isfinite(value)
                             and NOISE_LIMIT_RANGE[0] <= value <= NOISE_LIMIT_RANGE[1]):
        raise doc.err(f"max_noise is a sound level such as '85 dBA' (between "
                      f"{NOISE_LIMIT_RANGE[0]:g} and {NOISE_LIMIT_RANGE[1]:g}), got {text!r}",
                      path, key=False)
    return value


