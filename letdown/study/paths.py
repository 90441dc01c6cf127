"""Sweep inputs by path: what a swept path names, its quantity kind, and its values in SI.

A path names a feed's state (``<feed>.T|P|flow|energy``), a block's numeric parameter
(``<block>.<parameter>``) or one of the study's own axes, which begin with ``@`` so that no name
of the file can take them: ``@goal<k>.at`` (a goal's target) and ``@blend.<gas>`` (a component or
a named gas of the file's ``gases`` section blended into every feed). The old spellings
``goal<k>.at`` and ``blend.<gas>`` still name the axes where no feed or block has that name
(:func:`spelling_note`). Values are ranges (``START:STOP:COUNT``) or lists with units, checked
as the loader checks the same field of a file. :mod:`letdown.study.sweep` solves them;
:mod:`letdown.study.uncertainty` draws them from distributions.
"""
from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np

from ..errors import InputError
from ..fluid.components import canonical_name
from ..quantities import SI_UNITS, MassFlow, parse_quantity
from ..sheet.spec import SheetSpec

FEED_KINDS = {"T": "temperature", "P": "pressure", "flow": "flow", "energy": "power"}
#: The first character of the study's own axes (``@blend.<gas>``, ``@goal<k>.at``, the output
#: ``@goal<k>``): the file's names cannot contain it (``$defs/name`` of the schema).
AXIS_PREFIX = "@"
_GOAL = re.compile(r"goal([0-9]+)")
#: Most cases one sweep may ask for (a grid's product or a range's count): a million-case typo
#: would otherwise run for hours before anything is written (our choice; a year is 8,760 hours).
MAX_CASES = 100_000


@dataclass(frozen=True)
class Variable:
    """One swept input: its path, the quantity kind and the values in SI."""

    path: str
    kind: str
    values: np.ndarray
    #: A note for the user about the path as written (an old spelling), or "".
    note: str = ""

    @property
    def unit(self) -> str:
        return SI_UNITS.get(self.kind, "SI")


def parse_variable(fs: SheetSpec, spec: str) -> Variable:
    """``path=values`` into a :class:`Variable` (values: ``a:b:n`` range or ``a,b,c`` list).

    Raises
    ------
    InputError
        Unknown path, unit of the wrong kind, an empty or malformed value list.
    """
    path, sep, text = str(spec).partition("=")
    path, text = path.strip(), text.strip()
    if not sep or not text:
        raise InputError(f"sweep variable '{spec}' must read PATH=VALUES, e.g. supply.T=0degC:20degC:5",
                         field="vary")
    kind = variable_kind(fs, path)
    atm = fs.extra.get("atmosphere") if fs.extra else None
    kw = {"atmosphere": atm} if atm else {}
    field = f"vary.{path}"

    def q(t):
        value = parse_quantity(t.strip(), kind, field=field, **kw)
        if isinstance(value, MassFlow):
            value = value.to_molar(_feed_molar_mass(fs, path.partition(".")[0]))
        return float(value)

    if ":" in text and "," not in text:
        parts = text.split(":")
        if len(parts) != 3:
            raise InputError(f"range '{text}' must read START:STOP:COUNT", field=f"vary.{path}")
        try:
            count = int(parts[2])
        except ValueError:
            raise InputError(f"range '{text}': the count '{parts[2]}' is not a whole number",
                             field=f"vary.{path}") from None
        if count < 1:
            raise InputError(f"range '{text}': the count must be at least 1", field=f"vary.{path}")
        if count > MAX_CASES:
            raise InputError(f"range '{text}': at most {MAX_CASES:,} values", field=f"vary.{path}")
        values = np.linspace(q(parts[0]), q(parts[1]), count)
    else:
        values = np.array([q(t) for t in text.split(",") if t.strip()])
    if values.size == 0:
        raise InputError(f"no values for '{path}'", field=f"vary.{path}")
    if (study_axis(fs, path) or ("",))[0] == "blend" and (np.any(values < 0)
                                                          or np.any(values >= 1)):
        raise InputError(f"blend fractions must lie in [0, 1) (got {values.min()}..{values.max()})",
                         field=field)
    _check_values(fs, path, text, values, field)
    return Variable(path, kind, values, spelling_note(fs, path))


def study_axis(fs: SheetSpec, path: str):
    """The study's own axis a path names: ``("blend", gas)``, ``("goal", k)`` (k 1-based), or None
    for a path into the file (a feed's or block's quantity).

    ``@blend.<gas>`` and ``@goal<k>.at`` always name the axes; the old spellings ``blend.<gas>``
    and ``goal<k>.at`` do where no feed or block of the file has that name (the file's names win).

    Raises
    ------
    InputError
        A path beginning with ``@`` that is no axis.

    >>> from letdown.sheet.loader import read_spec
    >>> fs = read_spec("flowsheets/gate-station.yaml")
    >>> study_axis(fs, "@blend.hydrogen"), study_axis(fs, "goal1.at"), study_axis(fs, "supply.T")
    (('blend', 'hydrogen'), ('goal', 1), None)
    """
    head, _, attr = str(path).partition(".")
    axis = head.startswith(AXIS_PREFIX)
    if axis:
        head = head[len(AXIS_PREFIX):]
    elif head in fs.feeds or head in fs.blocks:
        return None
    goal = _GOAL.fullmatch(head)
    if head == "blend" and attr:
        return ("blend", attr)
    if goal and attr == "at":
        return ("goal", int(goal.group(1)))
    if axis:
        raise InputError(f"'{path}' is no study axis: the axes are {AXIS_PREFIX}blend.<component "
                         f"or named gas> and {AXIS_PREFIX}goal<k>.at", field=f"vary.{path}")
    return None


def spelling_note(fs: SheetSpec, path: str) -> str:
    """A note when ``path`` names a study axis in the old spelling (without ``@``), else "".

    >>> from letdown.sheet.loader import read_spec
    >>> spelling_note(read_spec("flowsheets/gate-station.yaml"), "blend.hydrogen")
    "'blend.hydrogen' is the old spelling of '@blend.hydrogen' (deprecated: a block or feed named 'blend' would take it); write '@blend.hydrogen'"
    """
    path = str(path)
    if path.startswith(AXIS_PREFIX) or study_axis(fs, path) is None:
        return ""
    head = path.partition(".")[0]
    new = AXIS_PREFIX + path
    return (f"'{path}' is the old spelling of '{new}' (deprecated: a block or feed named "
            f"'{head}' would take it); write '{new}'")


def blend_gas(fs: SheetSpec, name: str) -> dict:
    """The composition a blend axis adds: a named gas of the file's ``gases`` section, or a pure
    component ({canonical name: 1.0}).

    Raises
    ------
    InputError
        Neither a named gas nor a component (the nearest component names and the file's gases
        are suggested).
    """
    gases = getattr(fs, "gases", None) or {}
    if name in gases:
        return dict(gases[name].composition)
    try:
        return {canonical_name(name): 1.0}
    except InputError as exc:
        where = (f"; the file's named gases: {', '.join(gases)}" if gases else
                 "; a gas of your own goes in the file's 'gases' section")
        raise InputError(f"cannot blend '{name}': {exc.message.split(' (known:')[0]} and no "
                         f"named gas{where}", field=f"vary.{AXIS_PREFIX}blend.{name}") from None


def case_count(variables, mode: str = "grid") -> int:
    """Number of cases a sweep of ``variables`` makes (``grid``: the product; ``zip``: the length).

    Raises
    ------
    InputError
        More than :data:`MAX_CASES`.
    """
    sizes = [v.values.size for v in variables]
    n = int(np.prod(sizes, dtype=float)) if mode == "grid" else max(sizes, default=0)
    if n > MAX_CASES:
        raise InputError(f"the sweep makes {n:,} cases; at most {MAX_CASES:,} (split it, or use "
                         f"--zip to take the variables together)", field="vary")
    return n


def _feed_molar_mass(fs: SheetSpec, feed: str) -> float:
    """Molar mass of a feed's gas [kg/mol] (a swept mass flow becomes a molar flow with it)."""
    from ..fluid.components import COMPONENTS
    comp = fs.feeds[feed].composition or fs.gas.composition
    return sum(x * COMPONENTS[c].M for c, x in comp.items())


def _check_values(fs: SheetSpec, path: str, text: str, values, field: str) -> None:
    """The checks the loader makes on the same field of a file, on every swept value."""
    from ..sheet.loader import parameter_problem
    name, _, attr = path.partition(".")
    axis = study_axis(fs, path)
    if axis is None and name in fs.feeds and attr in ("P", "flow", "energy") \
            and np.any(values <= 0.0):
        raise InputError(f"{attr} must be positive, got {text!r}", field=field)
    if axis is None and name in fs.blocks:
        kind = fs.blocks[name].kind
        for v in values:
            problem = parameter_problem(kind, attr, float(v), text)
            if problem is not None:
                raise InputError(problem, field=field)
    if axis is not None and axis[0] == "goal":
        held = fs.goals[axis[1] - 1].hold.partition(".")[2]
        if held == "vapour_fraction" and np.any((values < 0.0) | (values > 1.0)):
            raise InputError(f"a vapour fraction lies in [0, 1], got {text!r}", field=field)
        if held in ("P", "flow") and np.any(values <= 0.0):
            raise InputError(f"{held} must be positive, got {text!r}", field=field)


def variable_kind(fs: SheetSpec, path: str) -> str:
    """Quantity kind of a sweepable path (see the module docstring)."""
    from ..sheet.loader import PARAMETERS
    name, _, attr = path.partition(".")
    axis = study_axis(fs, path)
    if axis is not None and axis[0] == "blend":
        blend_gas(fs, axis[1])          # raises with suggestions for an unknown gas
        return "fraction"
    if axis is not None:
        k = axis[1]
        if 1 <= k <= len(fs.goals):
            return _held_kind(fs, fs.goals[k - 1].hold)
        raise InputError(f"cannot sweep '{path}': the file has {len(fs.goals)} goal(s)",
                         field=f"vary.{path}")
    if name in fs.feeds and attr in FEED_KINDS:
        energy = getattr(fs.feeds[name], "energy", None)
        if attr == "flow" and energy is not None:
            raise InputError(f"cannot sweep '{path}': feed '{name}' is given by its energy "
                             f"({energy / 1e6:.6g} MW); sweep {name}.energy, or give the feed "
                             f"a flow", field=f"vary.{path}")
        return FEED_KINDS[attr]
    if name in fs.blocks:
        kinds = PARAMETERS.get(fs.blocks[name].kind, {})
        if attr in kinds and kinds[attr] not in ("text",):
            return kinds[attr]
    hint = ""
    if name == "blend" or _GOAL.fullmatch(name):
        hint = (f" ('{name}' is a name of the file here; the study's own axes are "
                f"{AXIS_PREFIX}blend.<gas> and {AXIS_PREFIX}goal<k>.at)")
    raise InputError(f"cannot sweep '{path}': use <feed>.T|P|flow|energy, <block>.<parameter>, "
                     f"{AXIS_PREFIX}goal<k>.at or {AXIS_PREFIX}blend.<component or named gas>"
                     f"{hint}", field=f"vary.{path}")


def _held_kind(fs, hold: str) -> str:
    _, _, attr = hold.partition(".")
    return {"T": "temperature", "P": "pressure", "flow": "flow", "duty": "power", "power": "power",
            "vapour_fraction": "fraction", "min_approach": "temperature_difference"}.get(attr, "fraction")
