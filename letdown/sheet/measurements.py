"""Plant measurements: read them (from the flowsheet's ``measurements`` section or a CSV file) into
:class:`letdown.sheet.spec.MeasurementSpec`, with located errors.

An entry names what was measured, its value and its standard uncertainty::

    measurements:
      - {at: network.T,    value: 4.2 degC, uncertainty: 0.5 K}
      - {at: network.P,    value: 17.05 barg, uncertainty: 0.05 bar}
      - {at: supply.flow,  value: 85400 Sm3/h, uncertainty: 1 %}
      - {at: preheat.duty, value: 1050 kW, uncertainty: 3 %}
      - {at: preheat.fuel, value: 1290 kW, uncertainty: 2 %}

or, with ``letdown compare FILE --data FILE.csv``, the same three columns (``at,value,uncertainty``,
optional ``note``) with a header row.

What may be measured
    Of a stream: ``T``, ``P``, ``flow`` (molar or standard volume; a mass flow such as ``30 t/h``
    is compared with the stream's mass flow) and ``vapour_fraction``. Of a block: ``duty`` (heater,
    cooler, exchanger), ``power`` (compressor, expander; as the block reports it, absorbed or
    recovered) and ``fuel`` (a heater with an ``efficiency``: the heat of the fuel burnt, the fuel
    gas flow times its calorific value).
The uncertainty
    A standard uncertainty (one standard deviation; an instrument's expanded uncertainty at 95 %
    is usually about twice it -- JCGM 100:2008 (GUM), section 6), in the unit of a difference of
    the measured quantity (``0.5 K`` not ``0.5 degC``, ``0.05 bar`` not ``0.05 barg``) or as a
    percentage of the measured value (``3 %``). It must be positive.
"""
from __future__ import annotations

import csv
import difflib
import io
import math
import re
from dataclasses import replace

from ..errors import InputError
from ..quantities import STANDARD_ATMOSPHERE, MassFlow, parse_quantity
from .inputtext import read_text
from .kinds import MEASURABLE, PARAMETERS
from .spec import SheetSpec, MeasurementSpec, Where

#: Stream quantities that may be measured, with their quantity kinds (:mod:`letdown.quantities`).
STREAM_ATTRIBUTES = {"T": "temperature", "P": "pressure", "flow": "flow",
                     "vapour_fraction": "fraction"}

#: Block quantities that may be measured: attribute -> (quantity kind, block kinds reporting it)
#: (from each kind's declaration, :data:`letdown.equipment.registry.REGISTRY`).
BLOCK_ATTRIBUTES = dict(MEASURABLE)

#: Quantity kind of an uncertainty, by the measured quantity's kind.
UNCERTAINTY_KINDS = {"temperature": "temperature_difference", "pressure": "pressure_difference",
                     "flow": "flow", "power": "power", "fraction": "fraction"}

#: SI unit of each measured attribute (for messages and reports).
UNITS = {"T": "K", "P": "Pa", "flow": "mol/s", "mass_flow": "kg/s", "vapour_fraction": "-",
         "duty": "W", "power": "W", "fuel": "W"}

#: Columns of a measurement CSV file (``note`` optional).
CSV_COLUMNS = ("at", "value", "uncertainty", "note")

_PERCENT = re.compile(r"(%|percent)\s*$", re.IGNORECASE)


def _nearest(word, choices) -> str:
    near = difflib.get_close_matches(str(word), sorted(choices), n=2, cutoff=0.6)
    return f"; did you mean {' or '.join(repr(n) for n in near)}?" if near else ""


def parse_measurement(raw: dict, fs_parts, *, file, lines, field,
                      atmosphere=STANDARD_ATMOSPHERE) -> MeasurementSpec:
    """Check and convert one measurement entry.

    Parameters
    ----------
    raw : dict
        ``at``, ``value``, ``uncertainty`` as written (strings with units, or numbers).
    fs_parts : tuple
        ``(streams, blocks)``: the set of stream names and the block specs by name.
    file : str or None
        File the entry came from.
    lines : Mapping[str, int]
        Line of each of ``at``, ``value``, ``uncertainty`` (and ``""`` for the entry).
    field : str
        Field path of the entry (``measurements[2]``).
    atmosphere : float
        For gauge pressures [Pa].

    Returns
    -------
    MeasurementSpec

    Raises
    ------
    InputError
        An unknown stream or block, a quantity that cannot be measured there, a value or
        uncertainty with a wrong unit, an uncertainty that is not positive (file, line, field).
    """
    streams, blocks = fs_parts

    def err(message, part=""):
        return InputError(message, file=file, line=lines.get(part, lines.get("")),
                          field=f"{field}.{part}" if part else field)

    for part in ("at", "value", "uncertainty"):
        if raw.get(part) is None or (isinstance(raw.get(part), str) and not raw[part].strip()):
            raise err(f"missing field '{part}'", part if part in raw else "")
    at = str(raw["at"]).strip()
    target, dot, attribute = at.partition(".")
    if not dot or not target or not attribute:
        raise err(f"'{at}' should read name.quantity (e.g. network.T, preheat.duty)", "at")
    if target in blocks:
        kind = blocks[target].kind
        if attribute not in BLOCK_ATTRIBUTES:
            raise err(f"cannot measure '{attribute}' of block '{target}' (a block's measurable "
                      f"quantities: {', '.join(BLOCK_ATTRIBUTES)})", "at")
        qkind, kinds = BLOCK_ATTRIBUTES[attribute]
        if kind not in kinds:
            raise err(f"a {kind} reports no {attribute} (blocks that do: {', '.join(kinds)})", "at")
        if attribute == "fuel" and "efficiency" not in blocks[target].params:
            raise err(f"heater '{target}' has no efficiency, so no fuel to compare: give it an "
                      "efficiency (heat into the gas over heat of the fuel burnt)", "at")
    elif target in streams:
        if attribute not in STREAM_ATTRIBUTES:
            raise err(f"cannot measure '{attribute}' of stream '{target}' (a stream's measurable "
                      f"quantities: {', '.join(STREAM_ATTRIBUTES)})", "at")
        qkind = STREAM_ATTRIBUTES[attribute]
    else:
        raise err(f"'{target}' is neither a stream nor a block"
                  f"{_nearest(target, set(streams) | set(blocks))}", "at")

    def q(text, kind, part):
        return parse_quantity(text, kind, atmosphere=atmosphere, file=file,
                              line=lines.get(part, lines.get("")), field=f"{field}.{part}")

    value = q(raw["value"], qkind, "value")
    if isinstance(value, MassFlow):
        attribute, value = "mass_flow", value.kg_s
    text = raw["uncertainty"]
    if isinstance(text, str) and _PERCENT.search(text):
        share = q(text, "fraction", "uncertainty")
        if value == 0.0:
            raise err("a percentage of a zero value is zero; give the uncertainty in units",
                      "uncertainty")
        uncertainty = share * abs(value)
    else:
        uncertainty = q(text, UNCERTAINTY_KINDS[qkind], "uncertainty")
        if isinstance(uncertainty, MassFlow) != (attribute == "mass_flow"):
            raise err("give the uncertainty of a flow in the same kind of unit as its value "
                      "(mass with mass, molar or standard volume with molar or standard volume), "
                      "or as a percentage", "uncertainty")
        if isinstance(uncertainty, MassFlow):
            uncertainty = uncertainty.kg_s
    if not (math.isfinite(uncertainty) and uncertainty > 0.0):
        raise err(f"an uncertainty must be positive, got {text!r}", "uncertainty")
    return MeasurementSpec(at=at, target=target, attribute=attribute, value=float(value),
                           uncertainty=float(uncertainty),
                           where=Where(file, lines.get("")), field=field)


def stream_names(fs: SheetSpec) -> set:
    """Every stream of a flowsheet: its feeds and every block's outlets."""
    names = set(fs.feeds)
    for b in fs.blocks.values():
        names.update(b.outlets.values())
    return names


def read_csv(path, fs: SheetSpec) -> tuple:
    """Read measurements from a CSV file (columns ``at,value,uncertainty[,note]``, header first).

    Parameters
    ----------
    path : str or os.PathLike
    fs : SheetSpec
        The flowsheet they belong to (for names and its atmosphere).

    Returns
    -------
    tuple of MeasurementSpec
        Field paths ``data[i]`` (i from 0, the first row after the header).

    Raises
    ------
    InputError
        An unreadable file, a missing or unknown column, or a bad entry (file, line, field).
    """
    name = str(path)
    text = read_text(path, "a measurement file", field="--data")
    reader = csv.reader(io.StringIO(text))
    try:
        header = next(reader)
    except StopIteration:
        raise InputError("the file is empty (expected a header at,value,uncertainty)",
                         file=name, line=1) from None
    except csv.Error as exc:
        raise InputError(f"broken CSV: {exc}", file=name, line=1) from None
    header = [h.strip() for h in header]
    for h in header:
        if h not in CSV_COLUMNS:
            raise InputError(f"unknown column '{h}'{_nearest(h, CSV_COLUMNS)} (columns: "
                             f"{', '.join(CSV_COLUMNS)})", file=name, line=1, field="header")
    for h in CSV_COLUMNS[:3]:
        if h not in header:
            raise InputError(f"missing column '{h}' (columns: at, value, uncertainty and an "
                             "optional note)", file=name, line=1, field="header")
    if len(set(header)) != len(header):
        raise InputError("a column is named twice", file=name, line=1, field="header")
    parts = (stream_names(fs), fs.blocks)
    atmosphere = fs.extra.get("atmosphere", STANDARD_ATMOSPHERE)
    out = []
    i = 0
    while True:
        try:
            row = next(reader)
        except StopIteration:
            break
        except csv.Error as exc:
            raise InputError(f"broken CSV: {exc}", file=name, line=reader.line_num) from None
        line = reader.line_num
        if not any(cell.strip() for cell in row):
            continue
        if len(row) > len(header):
            raise InputError(f"{len(row)} cells but {len(header)} columns", file=name, line=line,
                             field=f"data[{i}]")
        raw = {h: (row[k].strip() if k < len(row) else None) for k, h in enumerate(header)}
        out.append(parse_measurement(raw, parts, file=name, lines={"": line}, field=f"data[{i}]",
                                     atmosphere=atmosphere))
        i += 1
    if not out:
        raise InputError("no measurements in the file (only a header)", file=name, line=1)
    return tuple(out)


def with_measurements(fs: SheetSpec, more) -> SheetSpec:
    """The flowsheet with further measurements appended (a new value; ``fs`` is unchanged)."""
    return replace(fs, measurements=tuple(fs.measurements) + tuple(more))


def parse_fit(fs: SheetSpec, parameter: str, within) -> tuple[str, tuple]:
    """Read ``--fit block.parameter --within LO HI``: the bracket in the parameter's units.

    Parameters
    ----------
    fs : SheetSpec
    parameter : str
        ``block.parameter``.
    within : (str, str)
        Bracket ends with units (``"900 kW"``; a plain number for an efficiency or fraction).

    Returns
    -------
    (str, (float, float))
        The parameter and its bracket [SI].

    Raises
    ------
    InputError
        An unknown block or parameter (field ``--fit``), a bracket end of the wrong unit
        (field ``--within``).
    """
    block, _, name = parameter.partition(".")
    if block not in fs.blocks:
        raise InputError(f"unknown block '{block}'{_nearest(block, fs.blocks)} (write "
                         "block.parameter)", field="--fit")
    kinds = PARAMETERS[fs.blocks[block].kind]
    if name not in kinds:
        raise InputError(f"a {fs.blocks[block].kind} has no parameter '{name}' to fit (it has: "
                         f"{', '.join(kinds) or 'none'})", field="--fit")
    atmosphere = fs.extra.get("atmosphere", STANDARD_ATMOSPHERE)
    lo, hi = (parse_quantity(t, kinds[name], atmosphere=atmosphere, field="--within")
              for t in within)
    return parameter, (lo, hi)
