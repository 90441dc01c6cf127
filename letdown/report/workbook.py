"""A workbook people can file and open in a spreadsheet: ``--xlsx PATH`` (issue 15).

One sheet per part of the result: run information (command, letdown version, input file and its
SHA-256, model, date, units), streams, equipment, margins (water and hydrates), goals (and loops),
warnings; for a study one row per case. Numbers are stored as numbers, in the SI units of the JSON
result, with the unit in the column header (``T [K]``, ``duty [W]``); a missing number is an empty
cell. The header row (and the name column) are frozen.

Pure functions returning the workbook as bytes; the command line writes them (to a temporary file,
then renamed). Needs openpyxl (the ``xlsx`` extra); :func:`available` says whether it is there.
"""
from __future__ import annotations

import io
import json
import math
import re
from typing import Mapping

import numpy as np

#: SI unit of a JSON key, by the key's suffix (longest first), as written in a column header.
_SUFFIX_UNITS = (
    ("_J_molK", "J/(mol K)"), ("_W_K", "W/K"), ("_mol_s", "mol/s"), ("_kg_s", "kg/s"),
    ("_kg_h", "kg/h"), ("_J_mol", "J/mol"), ("_kg_m3", "kg/m3"), ("_kg_mol", "kg/mol"),
    ("_mg_Sm3", "mg/Sm3"), ("_J_Sm3", "J/Sm3"), ("_J_m3", "J/m3"), ("_Sm3_h", "Sm3/h"),
    ("_Sm3_d", "Sm3/d"), ("_m3_d", "m3/d"), ("_m3_h", "m3/h"), ("_wt_pct", "wt %"),
    ("_m_s", "m/s"), ("_MWh", "MWh"), ("_Sm3", "Sm3"), ("_Pa", "Pa"), ("_K", "K"), ("_W", "W"),
    ("_m", "m"), ("_s", "s"),
)
#: Keys that are plain ratios (unit "-").
_DIMENSIONLESS = {"Z", "vapour_fraction", "water_mole_fraction", "water_activity",
                  "relative_density", "mole_balance_closure", "energy_balance_closure",
                  "efficiency", "residual"}

#: Stream keys that go to the margins sheet (water and hydrates) rather than the streams sheet.
_MARGIN_KEYS = ("water_mg_Sm3", "water_mole_fraction", "water_dew_T_K", "water_dew_margin_K",
                "hydrate_T_K", "hydrate_structure", "hydrate_margin_K", "ice_T_K", "ice_margin_K",
                "min_T_margin_K", "outlet_min_T_margin_K", "inhibitor_wt_pct", "water_activity",
                "inhibitor_flow_kg_s", "water_flow_mol_s", "water_flow_kg_s")


def available() -> bool:
    """True when openpyxl can be imported."""
    import importlib.util
    return importlib.util.find_spec("openpyxl") is not None


def header_of(key: str) -> str:
    """A column header from a JSON key: the quantity, then its SI unit in brackets.

    >>> header_of("T_K"), header_of("flow_mol_s"), header_of("Z"), header_of("kind")
    ('T [K]', 'flow [mol/s]', 'Z [-]', 'kind')
    """
    if key in _DIMENSIONLESS:
        return f"{key} [-]"
    for suffix, unit in _SUFFIX_UNITS:
        if key.endswith(suffix) and len(key) > len(suffix):
            return f"{key[: -len(suffix)]} [{unit}]"
    return key


#: Most characters a cell holds (the spreadsheet format's own limit is 32,767).
CELL_LIMIT = 32_000
#: Characters a workbook cell cannot hold (XML 1.0 control characters).
_ILLEGAL = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f]")


def _cell(v):
    """A JSON value as a cell: numbers stay numbers, NaN/None blank, containers as JSON text.

    >>> _cell(float("nan")), _cell(np.float64(2.5)), _cell(np.bool_(True)), _cell("a\x07b")
    (None, 2.5, True, 'a?b')
    """
    if v is None:
        return None
    if isinstance(v, np.generic):
        v = v.item()
    if isinstance(v, bool):
        return v
    if isinstance(v, (int, float)):
        return None if isinstance(v, float) and not math.isfinite(v) else v
    if isinstance(v, (list, tuple, dict)):
        v = json.dumps(v, default=str) if v else None
        if v is None:
            return None
    text = _ILLEGAL.sub("?", str(v))
    if len(text) > CELL_LIMIT:         # a spreadsheet cell holds at most 32,767 characters
        return text[: CELL_LIMIT - 40] + " ... (cut: see the JSON or CSV output)"
    return text


def _records(items, first: str) -> tuple:
    """(header, rows) of a sequence of (name, flat dict): the name column, then the union of keys
    in first-seen order, each header with its unit."""
    keys: list = []
    for _, d in items:
        keys.extend(k for k in d if k not in keys)
    header = (first, *(header_of(k) for k in keys))
    rows = tuple((_cell(name), *(_cell(d.get(k)) for k in keys)) for name, d in items)
    return header, rows


def _run_rows(run: Mapping) -> tuple:
    return tuple((str(k), _cell(v)) for k, v in run.items())


def solve_sheets(data: Mapping, run: Mapping) -> list:
    """The sheets of one solved case from its JSON result ``data`` (``Result.to_json`` parsed).

    Returns
    -------
    list of (sheet name, header, rows)
    """
    sheets = [("Run", ("item", "value"), _run_rows(run)
               + (("title", _cell(data.get("title"))), ("converged", data.get("converged")),
                  ("failure", _cell(data.get("failure"))),
                  ("caution", _cell(data.get("caution")))))]
    streams, margins, comps = [], [], []
    names: list = []
    for name, s in (data.get("streams") or {}).items():
        flat = {k: v for k, v in s.items() if k not in _MARGIN_KEYS and not isinstance(v, dict)}
        streams.append((name, flat))
        margins.append((name, {k: s[k] for k in _MARGIN_KEYS if k in s}))
        comp = s.get("composition") or {}
        names.extend(c for c in comp if c not in names)
        comps.append((name, comp))
    sheets.append(("Streams", *_records(streams, "stream")))
    sheets.append(("Composition", ("stream", *(f"{c} [mole fraction]" for c in names)),
                   tuple((_cell(n), *(_cell(c.get(k)) for k in names)) for n, c in comps)))
    sheets.append(("Margins", *_records(margins, "stream")))
    equipment = []
    for name, e in (data.get("equipment") or {}).items():
        flat = {k: v for k, v in e.items() if k not in ("inlets", "outlets")}
        for side in ("inlets", "outlets"):
            ports = e.get(side) or {}
            flat[side] = ", ".join(f"{p}: {s}" for p, s in ports.items()) or None
        equipment.append((name, flat))
    sheets.append(("Equipment", *_records(equipment, "block")))
    goals = [(f"goal {i + 1}", dict(g)) for i, g in enumerate(data.get("goals") or ())]
    loops = [(f"loop {i + 1}", {k: v for k, v in lp.items() if k != "residual_history"})
             for i, lp in enumerate(data.get("loops") or ())]
    sheets.append(("Goals", *_records(goals, "goal")))
    sheets.append(("Loops", *_records(loops, "loop")))
    warnings = []
    for w in data.get("warnings") or ():
        flat = {"severity": w.get("severity"), "kind": w.get("kind"), "where": w.get("where"),
                "what": w.get("what")}
        flat.update(w.get("numbers") or {})
        warnings.append((str(len(warnings) + 1), flat))
    sheets.append(("Warnings", *_records(warnings, "no.")))
    return sheets


def table_sheets(title: str, header, rows, run: Mapping, extra: Mapping | None = None) -> list:
    """The sheets of a study: run information (plus ``extra`` items) and one row per case."""
    info = _run_rows(run) + tuple((str(k), _cell(v)) for k, v in (extra or {}).items())
    return [("Run", ("item", "value"), info),
            (title, tuple(header), tuple(tuple(_cell(c) for c in r) for r in rows))]


def workbook_bytes(sheets) -> bytes:
    """The workbook of ``sheets`` [(name, header, rows)] as .xlsx bytes: bold, frozen header row,
    and the first column frozen too where it names the row."""
    from openpyxl import Workbook
    from openpyxl.styles import Font

    wb = Workbook()
    wb.remove(wb.active)
    bold = Font(bold=True)
    for name, header, rows in sheets:
        ws = wb.create_sheet(name[:31])
        ws.append([_cell(h) for h in header])
        for c in ws[1]:
            c.font = bold
        for r in rows:
            ws.append(list(r))
        for row in ws.iter_rows():
            for c in row:
                if c.data_type == "f":      # text that starts with '=' stays text, never a formula
                    c.data_type = "s"
        ws.freeze_panes = "B2" if name != "Run" and len(header) > 1 else "A2"
        for j, h in enumerate(header, start=1):
            width = max([len(str(h))] + [len(str(r[j - 1])) for r in rows[:200] if j <= len(r)
                                         and r[j - 1] is not None])
            ws.column_dimensions[ws.cell(row=1, column=j).column_letter].width = \
                min(max(10, width + 2), 60)
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()


def flatten(d: Mapping, prefix: str = "") -> dict:
    """A nested JSON dict as one level, keeping each unit suffix at the end of the key.

    >>> flatten({"heaters_W": {"pre": 1.0}, "design": {"T_K": 2.0}, "n": 3})
    {'heaters.pre_W': 1.0, 'design.T_K': 2.0, 'n': 3}
    """
    out: dict = {}
    for k, v in d.items():
        if isinstance(v, Mapping):
            suffix = next((s for s, _ in _SUFFIX_UNITS if k.endswith(s) and len(k) > len(s)), "")
            base = k[: len(k) - len(suffix)] if suffix else k
            for ck, cv in flatten(v).items():
                out[f"{prefix}{base}.{ck}{suffix}"] = cv
        else:
            out[f"{prefix}{k}"] = v
    return out


def records_sheet(name: str, items, first: str):
    """(sheet name, header, rows) of [(row name, nested dict)], each dict flattened."""
    return (name, *_records([(n, flatten(d)) for n, d in items], first))


def sweep_sheets(table) -> list:
    """Sheets of a sweep (:class:`letdown.study.sweep.SweepTable`): one row per case, the columns
    as in ``sweep.csv`` (SI, unit in each header)."""
    return [("Run", ("item", "value"), (("model", table.model), ("cases", len(table.rows)))),
            ("Cases", tuple(table.columns), tuple(tuple(_cell(c) for c in r) for r in table.rows))]


def year_sheets(res) -> list:
    """Sheets of a year (:class:`letdown.study.year.YearResult`): one row per hour (as
    ``hourly.csv``) and the year's figures (``summary.json``, flattened)."""
    heaters = list(res.heater_duty)
    streams = list(res.stream_T)
    off = getattr(res, "heater_off", {}) or {}
    hyd = getattr(res, "stream_hydrate_T", None) or {}      # where the year carries it
    hydrate = [n for n in streams if n in hyd]
    header = ("time", *(f"{n}.duty [W]" for n in heaters), *(f"{n}.off" for n in heaters),
              *(f"{n}.T [K]" for n in streams), *(f"{n}.hydrate_T [K]" for n in hydrate),
              "converged", "reason")
    rows = tuple((t, *(_cell(float(res.heater_duty[n][i])) for n in heaters),
                  *(bool(off[n][i]) if n in off else False for n in heaters),
                  *(_cell(float(res.stream_T[n][i])) for n in streams),
                  *(_cell(float(hyd[n][i])) for n in hydrate), bool(res.converged[i]),
                  _cell(res.reasons[i]))
                 for i, t in enumerate(res.profile.time))
    summary = flatten(res.summary())
    return [("Run", ("item", "value"), (("profile", str(res.profile.source)),)),
            ("Hours", header, rows),
            ("Summary", ("item", "value"),
             tuple((header_of(k), _cell(v)) for k, v in summary.items()))]


def size_sheets(d: Mapping) -> list:
    """Sheets of a preheat sizing from its JSON figures (``SizeResult.to_dict``): one row per
    case, the design case and the heaters."""
    cases = [(c["name"], {k: v for k, v in c.items() if k not in ("name", "warnings")})
             for c in d.get("cases", ())]
    top = {k: v for k, v in d.items() if k not in ("cases", "design", "heaters")}
    sheets = [("Run", ("item", "value"),
               tuple((header_of(k), _cell(v)) for k, v in flatten(top).items())),
              records_sheet("Cases", cases, "case")]
    if d.get("design"):
        sheets.append(("Design", ("item", "value"),
                       tuple((header_of(k), _cell(v)) for k, v in flatten(d["design"]).items())))
    sheets.append(records_sheet("Heaters", list((d.get("heaters") or {}).items()), "heater"))
    warnings = [(c["name"], {"severity": w.get("severity"), "where": w.get("where"),
                             "what": w.get("what")})
                for c in d.get("cases", ()) for w in c.get("warnings", ())]
    sheets.append(records_sheet("Warnings", warnings, "case"))
    return sheets
