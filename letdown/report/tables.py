"""Stream and equipment tables built from a solved result: pure functions, no printing.

A result is read through a few attributes only (the solver's ``Result`` provides them):
``result.streams`` ({name: stream with ``T`` [K], ``P`` [Pa], ``flow`` [mol/s], ``mass_flow``
[kg/s], ``vapour_fraction`` [-], ``zs`` ({component: mole fraction} or an array in the order of
``result.components``), ``h`` [J/mol], ``s`` [J/(mol K)], ``Z`` [-], ``density`` [kg/m3],
``molar_mass`` [kg/mol]}) and ``result.equipment`` ({name: {"kind", "duty_W" or "power_W",
"dP_Pa", ...}}). A stream value may be a float or an array over cases; ``case`` picks one.

Tables are :class:`Table` values; :func:`render` lays one out for a terminal, :func:`csv_text`
writes it as CSV (numbers in the same display units, full precision).
"""
from __future__ import annotations

import csv
import io
from dataclasses import dataclass
from typing import Any, Mapping

import numpy as np

from ..derived import liquid_volume_flow
from ..quantities import STANDARD_ATMOSPHERE, format_number, unit_system

#: Fixed decimals of the stream table's rows in the terminal (an engineer's stream table: 0.01 K,
#: 0.01 bar, whole kg/h and Sm3/h); CSV keeps full precision.
STREAM_DECIMALS = {"Temperature": 2, "Pressure": 2, "Vapour fraction": 4, "Molar flow": 1,
                   "Mass flow": 0, "Water carried": 2, "Inhibitor carried": 2,
                   "Standard gas flow": 0, "Liquid volume": 2, "Density": 3, "Z": 5, "Molar mass": 3,
                   "Enthalpy": 1, "Entropy": 3, "Gross calorific value": 3, "Wobbe index": 3}

#: Width the terminal layout aims for [characters]; wider tables are split into column groups.
DEFAULT_WIDTH = 110


@dataclass(frozen=True)
class Table:
    """A titled table: one header row, then rows of cells (str or float).

    Attributes
    ----------
    title : str
    header : tuple of str
    rows : tuple of tuple
        Each row has ``len(header)`` cells. Numbers are floats in the display unit named in the
        header or in the row's first cell.
    """

    title: str
    header: tuple
    rows: tuple
    decimals: tuple = ()      # per row: fixed decimals for the terminal, or None (significant figures)


def pick(value, case: int = 0):
    """One case of a value that may be a float or an array over cases.

    >>> pick(np.array([1.0, 2.0]), 1)
    2.0
    >>> pick(3.5)
    3.5
    """
    if value is None:
        return None
    if isinstance(value, (str, bool)):
        return value
    arr = np.asarray(value)
    if arr.ndim == 0:
        return arr.item()
    flat = arr.reshape(-1)
    return flat[case].item() if flat.size > case else None


def _get(obj, name, default=None):
    if isinstance(obj, Mapping):
        return obj.get(name, default)
    return getattr(obj, name, default)


def _composition(stream, components, case) -> dict:
    zs = _get(stream, "zs")
    if zs is None:
        return {}
    if isinstance(zs, Mapping):
        return {k: pick(v, case) for k, v in zs.items()}
    arr = np.asarray(zs, dtype=float)
    if arr.ndim == 2:
        arr = arr[case]
    names = components or [f"component {i + 1}" for i in range(arr.size)]
    return dict(zip(names, arr.tolist()))


def stream_table(result, units: str = "si", *, case: int = 0, atmosphere: float | None = None
                 ) -> Table:
    """The stream table: streams as columns, properties and composition as rows.

    Parameters
    ----------
    result : object
        A solved result (see the module docstring).
    units : {"si", "field"}
        Display units (:func:`letdown.quantities.unit_system`).
    case : int
        Which case of a batch to show.
    atmosphere : float, optional
        Atmosphere for gauge pressures [Pa]; default ``result.atmosphere`` or 101325 Pa.

    Returns
    -------
    Table
        First column the quantity with its unit; one column per stream.
    """
    atm = atmosphere if atmosphere is not None else _get(result, "atmosphere", STANDARD_ATMOSPHERE)
    u = unit_system(units, atm if atm is not None else STANDARD_ATMOSPHERE)
    streams = dict(_get(result, "streams", {}) or {})
    names = list(streams)

    def row(label, key, unit_key=None, from_flow=False):
        cells = []
        for n in names:
            s = streams[n]
            v = pick(_get(s, "flow" if from_flow else key), case)
            if v is None:
                cells.append(None)
                continue
            cells.append(u[unit_key](v) if unit_key else v)
        shown = f"{label} [{u[unit_key].label}]" if unit_key else f"{label} [-]"
        return (shown, *cells)

    rows = [
        row("Temperature", "T", "T"),
        row("Pressure", "P", "P"),
        row("Vapour fraction", "vapour_fraction"),
        row("Molar flow", "flow", "flow"),
        row("Mass flow", "mass_flow", "mass_flow"),
    ]
    # the water carried beside the (water-free) gas, where the freezing figures were computed; a
    # separator's water outlet shows its free water here
    water = [(_get(streams[n], "freezing", None) or {}).get("water_flow_kg_s") for n in names]
    if any(w is not None for w in water):
        rows.append((f"Water carried [{u['mass_flow'].label}]",
                     *(None if w is None or pick(w, case) is None else u["mass_flow"](pick(w, case))
                       for w in water)))
    inh = [(_get(streams[n], "freezing", None) or {}).get("inhibitor_flow_kg_s") for n in names]
    if any(w is not None for w in inh):
        rows.append((f"Inhibitor carried [{u['mass_flow'].label}]",
                     *(None if w is None or pick(w, case) is None else u["mass_flow"](pick(w, case))
                       for w in inh)))
    # NGL and condensate: the volume of an all-liquid stream at its own state, per day
    liquid = []
    for n in names:
        st = streams[n]
        vals = [pick(_get(st, k), case) for k in ("flow", "mass_flow", "vapour_fraction", "density")]
        lv = None if any(v is None for v in vals) else liquid_volume_flow(*vals)
        liquid.append(None if lv is None or not np.isfinite(lv) else u["liquid_volume_flow"](lv))
    if any(v is not None for v in liquid):
        rows.append((f"Liquid volume [{u['liquid_volume_flow'].label}]", *liquid))
    rows += [
        row("Standard gas flow", "flow", "std_flow", from_flow=True),
        row("Density", "density", "density"),
        row("Z", "Z"),
        row("Molar mass", "molar_mass", "molar_mass"),
        row("Enthalpy", "h", "h"),
        row("Entropy", "s", "s"),
    ]
    # gas quality by ISO 6976 (15 degC / 15 degC), where every component has data
    def quality_row(label, key):
        cells = []
        for n in names:
            q = _get(streams[n], "quality", None)
            cells.append(None if not q or q.get(key) is None else q[key] / 1e6)
        return (label, *cells)
    if any(_get(streams[n], "quality", None) for n in names):
        rows.append(quality_row("Gross calorific value [MJ/Sm3]", "gross_cv_J_m3"))
        rows.append(quality_row("Wobbe index [MJ/Sm3]", "wobbe_gross_J_m3"))
    components = list(_get(result, "components", None) or [])
    comps = [_composition(streams[n], components, case) for n in names]
    order: list = []
    for c in comps:
        order.extend(k for k in c if k not in order)
    if order:
        rows.append(("Mole fractions", *([""] * len(names))))
        for k in order:
            rows.append((f"  {k}", *[c.get(k, 0.0) for c in comps]))
    decimals = tuple(STREAM_DECIMALS.get(r[0].split(" [")[0], 5 if r[0].startswith("  ") else None)
                     for r in rows)
    return Table("Streams", ("", *names), tuple(rows), decimals)


#: Equipment result keys shown in their own column, with the display unit kind.
_EQUIPMENT_COLUMNS = (("duty_W", "Duty", "duty"), ("power_W", "Power", "power"),
                      ("dP_Pa", "Pressure drop", "dP"))
#: Balance closures get columns of their own (relative, [-]).
_CLOSURE_COLUMNS = (("mole_balance_closure", "Mole closure [-]"),
                    ("energy_balance_closure", "Energy closure [-]"))
_HIDDEN = {"kind"}


def _detail(key: str, value, u) -> str:
    """Format one further equipment number, converting by the unit in its key."""
    if isinstance(value, str) or value is None:
        return f"{key}={value}"
    v = pick(value)
    if v is None:
        return f"{key}=-"
    if isinstance(v, bool):
        return key.replace("_", " ")      # a flag that is set (unset flags are left out)
    for suffix, kind in (("_W_K", "ua"), ("_W", "duty"), ("_kg_s", "mass_flow"), ("_Pa", None),
                         ("_K", None), ("_m_s", "velocity")):
        if key.endswith(suffix):
            base = key[: -len(suffix)]
            if suffix == "_Pa":
                kind = "dP" if "dP" in base or base.startswith("d") else "P"
            elif suffix == "_K":
                kind = "dT" if ("approach" in base or base.startswith(("dT", "delta"))
                                or "margin" in base or "depression" in base) else "T"
            return f"{base}={format_number(u[kind](v))} {u[kind].label}"
    return f"{key}={format_number(v)}"


def equipment_table(result, units: str = "si", *, case: int = 0,
                    atmosphere: float | None = None) -> Table:
    """The equipment table: one row per block with its kind, duty, power, pressure drop and
    further numbers.

    Parameters
    ----------
    result : object
        A solved result (``result.equipment``: {name: dict}).
    units : {"si", "field"}
    case : int
        Which case of a batch to show.
    atmosphere : float, optional
        Atmosphere for gauge pressures [Pa].

    Returns
    -------
    Table
    """
    atm = atmosphere if atmosphere is not None else _get(result, "atmosphere", STANDARD_ATMOSPHERE)
    u = unit_system(units, atm if atm is not None else STANDARD_ATMOSPHERE)
    header = ("Block", "Kind", *(f"{label} [{u[k].label}]" for _, label, k in _EQUIPMENT_COLUMNS),
              *(label for _, label in _CLOSURE_COLUMNS), "Other")
    shown = {c[0] for c in _EQUIPMENT_COLUMNS} | {c[0] for c in _CLOSURE_COLUMNS} | _HIDDEN
    rows = []
    for name, data in dict(_get(result, "equipment", {}) or {}).items():
        data = dict(data) if isinstance(data, Mapping) else dict(vars(data))
        cells: list[Any] = [name, str(data.get("kind", ""))]
        for key, _, k in _EQUIPMENT_COLUMNS:
            v = pick(data.get(key), case)
            cells.append(None if v is None else u[k](v))
        for key, _ in _CLOSURE_COLUMNS:
            cells.append(pick(data.get(key), case))
        other = [_detail(k, v if isinstance(v, str) else pick(v, case), u)
                 for k, v in data.items()
                 if k not in shown and not isinstance(v, (list, dict, tuple))
                 and not (isinstance(pick(v, case), bool) and not pick(v, case))]
        cells.append("; ".join(other))
        rows.append(tuple(cells))
    return Table("Equipment", header, tuple(rows))


def _cell_text(cell, decimals=None) -> str:
    if cell is None:
        return "-"
    if isinstance(cell, str):
        return cell
    if isinstance(cell, bool):
        return "yes" if cell else "no"
    if decimals is not None and np.isfinite(cell):
        return f"{cell:.{decimals}f}"
    return format_number(cell)


def render(table: Table, width: int = DEFAULT_WIDTH) -> str:
    """Lay a table out in fixed-width text; columns past ``width`` go into further blocks that
    repeat the first column.

    Returns
    -------
    str
        The table, title first, without a trailing newline.
    """
    decimals = tuple(table.decimals) + (None,) * (len(table.rows) - len(table.decimals))
    texts = [[_cell_text(c, d) for c in r] for r, d in zip(table.rows, decimals)]
    header = [str(h) for h in table.header]
    ncol = len(header)
    widths = [max([len(header[j])] + [len(r[j]) for r in texts if j < len(r)]) for j in range(ncol)]
    groups: list[list[int]] = []
    current: list[int] = []
    used = widths[0] if ncol else 0
    for j in range(1, ncol):
        if current and used + 2 + widths[j] > width:
            groups.append(current)
            current, used = [], widths[0]
        current.append(j)
        used += 2 + widths[j]
    if current or not groups:
        groups.append(current)
    lines = [table.title]
    numeric = [all(not isinstance(r[j], str) for r in table.rows if j < len(r) and r[j] != "")
               for j in range(ncol)]
    for g, cols in enumerate(groups):
        if g:
            lines.append("")
        cols = [0] + cols

        def fmt(cells, j):
            text = cells[j] if j < len(cells) else ""
            return text.rjust(widths[j]) if numeric[j] and j else text.ljust(widths[j])

        lines.append("  ".join(fmt(header, j) for j in cols).rstrip())
        lines.append("  ".join("-" * widths[j] for j in cols))
        for r in texts:
            lines.append("  ".join(fmt(r, j) for j in cols).rstrip())
    return "\n".join(lines)


def csv_text(table: Table) -> str:
    """The table as CSV text (numbers with 10 significant digits, empty cell for a missing one)."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(table.header)
    for r in table.rows:
        w.writerow(["" if c is None else (f"{c:.10g}" if isinstance(c, float) else c) for c in r])
    return buf.getvalue()


def profile_tables(result, units: str = "si", *, atmosphere: float | None = None) -> list:
    """One table per block that carries a profile along its length (a pipe's ``profile_x_m``,
    ``profile_T_K``, ``profile_P_Pa``): position, temperature and pressure at each step.

    Parameters
    ----------
    result : object
        A solved result of one case (``result.equipment``: {name: dict}), with the profiles kept.
    units : {"si", "field"}
    atmosphere : float, optional
        Atmosphere for gauge pressures [Pa].

    Returns
    -------
    list of Table
    """
    atm = atmosphere if atmosphere is not None else _get(result, "atmosphere", STANDARD_ATMOSPHERE)
    u = unit_system(units, atm if atm is not None else STANDARD_ATMOSPHERE)
    tables = []
    for name, data in dict(_get(result, "equipment", {}) or {}).items():
        data = dict(data) if isinstance(data, Mapping) else dict(vars(data))
        x, T, P = (data.get(k) for k in ("profile_x_m", "profile_T_K", "profile_P_Pa"))
        if not isinstance(x, (list, tuple)) or T is None or P is None:
            continue
        header = (f"Position [{u['length'].label}]", f"Temperature [{u['T'].label}]",
                  f"Pressure [{u['P'].label}]")
        rows = tuple((None if a is None else u["length"](a), None if b is None else u["T"](b),
                      None if c is None else u["P"](c)) for a, b, c in zip(x, T, P))
        tables.append(Table(f"Profile along {name}", header, rows))
    return tables
