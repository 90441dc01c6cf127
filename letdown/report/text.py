"""The terminal report of a solved flowsheet: header, stream table, equipment table, loops, goals,
warnings, the reference conditions used and the engineering caution. Pure functions returning text.

Goals, loops and warnings are read as in the JSON contract (``result.goals``: [{"hold", "target",
"achieved", "by", "value", "met"}], ``result.loops``: [{"tears", "iterations", "residual"}],
``result.warnings``: [{"where", "what", "kind", "severity", "numbers"}]); entries may be dicts or objects with those attributes.
"""
from __future__ import annotations

import re
from typing import Mapping

from ..caution import CAUTION
from ..constants import MOL_PER_SCF, MOL_PER_SM3, POUND
from ..quantities import (STANDARD_ATMOSPHERE, STANDARD_CONDITIONS, format_number, unit_system)
from .tables import DEFAULT_WIDTH, Table, equipment_table, pick, render, stream_table

#: lb of water per MMscf (60 degF, 14.696 psia) in one mg per Sm3 (15 degC, 101.325 kPa), both per
#: ideal-gas standard volume: (1e-6 / 0.45359237 lb) * (moles in 1e6 scf) / (moles in 1 Sm3), so
#: 1 lb/MMscf = 16.049 mg/Sm3 (REFERENCE_DATA.md section 3 says "about 16.02", status C).
LB_MMSCF_PER_MG_SM3 = 1e-6 / POUND * 1e6 * MOL_PER_SCF / MOL_PER_SM3

#: Unit kind of a held stream or block quantity / a varied block parameter (by attribute name).
_ATTRIBUTE_UNIT = {
    "T": "T", "P": "P", "flow": "flow", "duty": "duty", "power": "power",
    "min_approach": "dT", "T_out": "T", "hot_T_out": "T", "cold_T_out": "T", "P_out": "P",
    "dP": "dP", "hot_dP": "dP", "cold_dP": "dP", "UA": "ua",
}


def _get(obj, name, default=None):
    if isinstance(obj, Mapping):
        return obj.get(name, default)
    return getattr(obj, name, default)


def _show(value, attribute, u) -> str:
    kind = _ATTRIBUTE_UNIT.get(attribute)
    v = pick(value)
    if v is None or isinstance(v, str):
        return "-" if v is None else v
    if kind is None:
        return format_number(v)
    return f"{format_number(u[kind](v))} {u[kind].label}"


def goals_text(result, units: str = "si", atmosphere: float = STANDARD_ATMOSPHERE) -> str:
    """One line per goal: what is held, the target and what was achieved, by which parameter."""
    u = unit_system(units, atmosphere)
    lines = []
    for g in _get(result, "goals", None) or ():
        hold = str(_get(g, "hold", "?"))
        by = str(_get(g, "by", "?"))
        attr = hold.rpartition(".")[2]
        battr = by.rpartition(".")[2]
        met = pick(_get(g, "met"))
        state = "met" if met else "NOT MET"
        line = (f"  {hold} = {_show(_get(g, 'achieved'), attr, u)} (target "
                f"{_show(_get(g, 'target'), attr, u)}) by {by} = {_show(_get(g, 'value'), battr, u)}"
                f": {state}")
        message = _get(g, "message")
        if message and not met:
            line += f" -- {message}"
        lines.append(line)
    return "\n".join(["Goals"] + lines) if lines else ""


def loops_text(result) -> str:
    """One line per converged (or not) loop: tear streams, iterations, final residual."""
    lines = []
    for lp in _get(result, "loops", None) or ():
        tears = ", ".join(str(t) for t in (_get(lp, "tears") or ()))
        it = pick(_get(lp, "iterations"))
        res = pick(_get(lp, "residual"))
        conv = _get(lp, "converged")
        tail = "" if conv is None or pick(conv) else " (NOT converged)"
        lines.append(f"  tear {tears}: {it} iterations, residual {format_number(res, 3)}{tail}")
    return "\n".join(["Loops"] + lines) if lines else ""


#: Headings of the warning groups, most severe first (the severities of the JSON contract).
SEVERITY_HEADINGS = {"hazard": "Hazards (act before use)", "check": "Checks (verify before use)",
                     "note": "Notes"}


#: Quantities inside a warning's text (written in SI by the solver: degC, K differences, bar
#: absolute, barg) that :func:`display_text` turns into the display units.
_T_TEXT = re.compile(r"(?<![\w.])(-?\d+(?:\.\d+)?) degC\b")
_DT_TEXT = re.compile(r"(?<![\w.])([+-]?\d+(?:\.\d+)?) K\b")
_PA_TEXT = re.compile(r"(?<![\w.])(\d+(?:\.\d+)?) bar\b")
_PG_TEXT = re.compile(r"(?<![\w.])(-?\d+(?:\.\d+)?) barg\b")
_V_TEXT = re.compile(r"(?<![\w.])(-?\d+(?:\.\d+)?) m/s\b")
#: A number of kelvin below this is a temperature difference (margins, approaches); above it, an
#: absolute temperature, which stays in K (no display system hides it).
DT_TEXT_MAX = 200.0


def display_text(text: str, units: str = "si", atmosphere: float = STANDARD_ATMOSPHERE) -> str:
    """A warning's text with its temperatures, differences and pressures in the display units.

    The solver writes warnings in SI (degC, K differences, bar absolute, barg); ``si`` returns the
    text as it is, ``field`` converts each quantity it recognises (degF, delta_degF, psia, psig).

    >>> display_text("margin -2.00 K: -2.84 degC at 41.01 bar", "field")
    'margin -3.60 delta_degF: 26.89 degF at 594.8 psia'
    """
    if units == "si":
        return text
    u = unit_system(units, atmosphere)
    psi = u["dP"].scale                       # psi per Pa

    def temp(m):
        x = float(m.group(1)) + 273.15
        return f"{u['T'](x):.2f} {u['T'].label}"

    def diff(m):
        x = float(m.group(1))
        if abs(x) >= DT_TEXT_MAX:
            return m.group(0)
        sign = "+" if m.group(1).startswith("+") else ""
        return f"{sign}{u['dT'](x):.2f} {u['dT'].label}"

    def absolute(m):
        return f"{float(m.group(1)) * 1e5 * psi:.1f} psia"

    def gauge(m):
        return f"{u['P'](float(m.group(1)) * 1e5 + atmosphere):.1f} {u['P'].label}"
    def speed(m):
        return f"{u['velocity'](float(m.group(1))):.1f} {u['velocity'].label}"
    for pattern, fn in ((_T_TEXT, temp), (_DT_TEXT, diff), (_PG_TEXT, gauge), (_PA_TEXT, absolute),
                        (_V_TEXT, speed)):
        text = pattern.sub(fn, text)
    return text


def warnings_text(result, units: str = "si", atmosphere: float = STANDARD_ATMOSPHERE) -> str:
    """The warnings grouped by severity (hazards, checks, notes), one line each: where, what (its
    quantities in the display units, :func:`display_text`)."""
    groups: dict = {}
    for w in _get(result, "warnings", None) or ():
        where = _get(w, "where", "")
        what = display_text(_get(w, "what", w if isinstance(w, str) else ""), units, atmosphere)
        severity = _get(w, "severity", None) or "check"
        groups.setdefault(severity, []).append(f"    {where}: {what}" if where else f"    {what}")
    lines = []
    for severity in sorted(groups, key=lambda k: list(SEVERITY_HEADINGS).index(k)
                           if k in SEVERITY_HEADINGS else len(SEVERITY_HEADINGS)):
        lines.append(f"  {SEVERITY_HEADINGS.get(severity, severity)}")
        lines += groups[severity]
    return "\n".join(["Warnings"] + lines) if lines else ""


def margins_table(result, units: str = "si", *, case: int = 0,
                  atmosphere: float = STANDARD_ATMOSPHERE) -> Table | None:
    """Freezing margins of every stream (streams as columns), or None when not computed.

    Rows: temperature, hydrate formation temperature (free water assumed) and structure, water
    dew point, water content (per standard volume of dry gas), the ice point of the free water
    (blank where none can form), and the margins ``T - limit`` (hydrate, water dew point, ice,
    ``limits.min_T``, and ``limits.outlet_min_T`` where the file sets it).
    """
    u = unit_system(units, atmosphere)
    streams = _get(result, "streams", None) or {}
    cols = []
    for name, s in streams.items():
        fz = _get(s, "freezing", None)
        if fz is None and isinstance(s, Mapping) and "hydrate_T_K" in s:
            fz = s
        if fz is not None:
            cols.append((name, s, fz))
    if not cols:
        return None
    T, dT = u["T"], u["dT"]

    def temp(v):
        v = pick(v, case)
        return None if v is None else T(v)

    def diff(v):
        v = pick(v, case)
        return None if v is None else dT(v)

    water_unit, water_key, scale = ("mg/Sm3", "water_mg_Sm3", 1.0) if units == "si" else \
        ("lb/MMscf", "water_mg_Sm3", LB_MMSCF_PER_MG_SM3)
    rows = [
        (f"Temperature [{T.label}]", *(temp(_get(s, "T", _get(s, "T_K"))) for _, s, _ in cols)),
        (f"Hydrate temperature [{T.label}]", *(temp(fz.get("hydrate_T_K")) for *_, fz in cols)),
        ("Hydrate structure", *((fz.get("hydrate_structure") or "-") for *_, fz in cols)),
        (f"Water dew point [{T.label}]", *(temp(fz.get("water_dew_T_K")) for *_, fz in cols)),
        (f"Water, dry gas [{water_unit}]",
         *(None if fz.get(water_key) is None else pick(fz.get(water_key), case) * scale
           for *_, fz in cols)),
        (f"Ice point of free water [{T.label}]", *(temp(fz.get("ice_T_K")) for *_, fz in cols)),
        (f"Hydrate margin [{dT.label}]", *(diff(fz.get("hydrate_margin_K")) for *_, fz in cols)),
        (f"Water dew margin [{dT.label}]",
         *(diff(fz.get("water_dew_margin_K")) for *_, fz in cols)),
        (f"Ice margin [{dT.label}]", *(diff(fz.get("ice_margin_K")) for *_, fz in cols)),
        (f"min_T (material) margin [{dT.label}]",
         *(diff(fz.get("min_T_margin_K")) for *_, fz in cols)),
    ]
    decimals = (2, 2, None, 2, 1, 2, 2, 2, 2, 2)
    if any(fz.get("outlet_min_T_margin_K") is not None for *_, fz in cols):
        rows.append((f"outlet_min_T margin [{dT.label}]",
                     *(diff(fz.get("outlet_min_T_margin_K")) for *_, fz in cols)))
        decimals = decimals + (2,)
    if any(fz.get("inhibitor_wt_pct") is not None for *_, fz in cols):
        # inject blocks upstream: the inhibitor in the free water (all the water condensed)
        rows.insert(5, ("Inhibitor in free water [wt %]",
                        *(pick(fz.get("inhibitor_wt_pct"), case) for *_, fz in cols)))
        decimals = decimals[:5] + (2,) + decimals[5:]
    return Table("Freezing margins (T - limit, positive on the safe side; blank where the limit "
                 "does not exist)", ("", *(n for n, *_ in cols)), tuple(rows), decimals)


def freezing_basis_text(result, units: str = "si", atmosphere: float = STANDARD_ATMOSPHERE) -> str:
    """What the freezing checks assumed (the result's ``freezing_basis``), or "" without it."""
    b = _get(result, "freezing_basis", None)
    if not b:
        return ""
    dT = unit_system(units, atmosphere)["dT"]
    T = unit_system(units, atmosphere)["T"]
    lines = [f"  Hydrate margin wanted: {dT(b['hydrate_margin_K']):g} {dT.label} "
             f"({b['hydrate_margin_source']}).",
             f"  Water: {b['water']}.",
             f"  Hydrate temperature: {b['hydrate_T']}.",
             f"  Ice: {b['ice']}."]
    if b.get("min_T_K") is not None:
        lines.append(f"  limits.min_T {T(b['min_T_K']):.2f} {T.label}: the material's limit "
                     "(checked in every stream; it switches no other check).")
    if b.get("outlet_min_T_K") is not None:
        lines.append(f"  limits.outlet_min_T {T(b['outlet_min_T_K']):.2f} {T.label}: the coldest "
                     "gas allowed into the pipe downstream.")
    return "Freezing checks assumed\n" + "\n".join(lines)


def conditions_text(units: str = "si", atmosphere: float = STANDARD_ATMOSPHERE) -> str:
    """The reference conditions behind gauge pressures and standard volumes, as stated in the
    report."""
    if units == "si":
        cond = STANDARD_CONDITIONS["sm3"]
        std = (f"Sm3 at 15 degC and 101.325 kPa (ISO 13443), ideal-gas molar volume "
               f"{cond.molar_volume * 1000.0:.4f} dm3/mol")
        gauge = "barg"
    else:
        cond = STANDARD_CONDITIONS["scf"]
        per_lbmol = cond.molar_volume * 453.59237 / cond.volume
        std = (f"MMscf = 1e6 scf at 60 degF and 14.696 psia (common practice), ideal-gas molar "
               f"volume {per_lbmol:.2f} scf/lbmol")
        gauge = "psig"
    return (f"Gauge pressures ({gauge}) relative to an atmosphere of "
            f"{atmosphere / 1000.0:.6g} kPa. Standard gas volumes: {std}; the real "
            f"gas's Z of about 0.998 at those conditions is not applied.")


def dew_points_text(result, units: str = "si", atmosphere: float = STANDARD_ATMOSPHERE) -> str:
    """Hydrocarbon dew points of the product gases, where they were computed."""
    u = unit_system(units, atmosphere)
    lines = []
    for name, s in (_get(result, "streams", {}) or {}).items():
        dew = _get(s, "dew", None)
        if not dew:
            continue
        def t(key):
            v = dew.get(key)
            return "-" if v is None else f"{u['T'](v):.2f} {u['T'].label}"
        at = f"{u['P'](pick(_get(s, 'P'))):.2f} {u['P'].label}"
        if dew.get("hc_dew_T_K") is None and dew.get("hc_dew_reason"):
            why = dew["hc_dew_reason"]
            if dew.get("cricondenbar_Pa") is not None and why == "above the cricondenbar":
                why += f", {u['P'](dew['cricondenbar_Pa']):.2f} {u['P'].label}"
            first = f"no hydrocarbon dew point at {at}: {why}"
        else:
            first = f"hydrocarbon dew point {t('hc_dew_T_K')} at {at}"
        lines.append(f"  {name}: {first}; cricondentherm "
                     f"{t('cricondentherm_K')} ({dew.get('dew_point_model')})")
    if not lines:
        return ""
    return "Product gas dew points\n" + "\n".join(lines)


def report_text(result, units: str = "si", *, case: int = 0, atmosphere: float | None = None,
                width: int = DEFAULT_WIDTH) -> str:
    """The whole terminal report.

    Parameters
    ----------
    result : object
        A solved result.
    units : {"si", "field"}
    case : int
        Which case of a batch to show.
    atmosphere : float, optional
        Atmosphere for gauge pressures [Pa]; default ``result.atmosphere`` or 101325 Pa.
    width : int
        Target width of the tables [characters].

    Returns
    -------
    str
    """
    atm = atmosphere if atmosphere is not None else _get(result, "atmosphere", None)
    atm = STANDARD_ATMOSPHERE if atm is None else atm
    title = _get(result, "title", "") or "(untitled)"
    model = _get(result, "model", "?")
    converged = pick(_get(result, "converged", None))
    state = "converged" if converged else "NOT converged"
    parts = [f"{title}\nmodel: {model}; {state}"]
    parts.append(render(stream_table(result, units, case=case, atmosphere=atm), width))
    parts.append(render(equipment_table(result, units, case=case, atmosphere=atm), width))
    margins = margins_table(result, units, case=case, atmosphere=atm)
    if margins is not None:
        parts.append(render(margins, width))
    basis = freezing_basis_text(result, units, atm)
    if basis:
        parts.append(basis)
    for section in (dew_points_text(result, units, atm), loops_text(result),
                    goals_text(result, units, atm), warnings_text(result, units, atm)):
        if section:
            parts.append(section)
    parts.append(conditions_text(units, atm))
    parts.append(CAUTION)
    return "\n\n".join(parts)
