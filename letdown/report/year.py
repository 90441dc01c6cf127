"""Report of a year of operation (:class:`letdown.study.year.YearResult`): text, files, plots."""
from __future__ import annotations

import csv
import hashlib
import io
import json
from datetime import datetime, timezone
from pathlib import Path

import numpy as np

from ..caution import CAUTION
from .figures import figure_files, pyplot


def year_text(res) -> str:
    """The year's figures for a terminal."""
    s = res.summary()
    lines = [f"A year of operation: {s['hours']} hours from {res.profile.source} "
             f"(model {s['model']})", ""]
    for name, mwh in s["heat_MWh"].items():
        peak = s["peak"].get(name)
        pk = f"; peak {peak['duty_W'] / 1e3:.1f} kW at {peak['time']}" if peak else ""
        h = s["heaters"][name]
        lines.append(f"  {name}: {mwh:,.1f} MWh of heat{pk}; "
                     f"{s['fuel_MWh'][name]:,.1f} MWh of fuel at an efficiency of "
                     f"{h['efficiency']:.0%} from {h['efficiency_source']}")
        off = s["heater_off_hours"].get(name, 0)
        if off:
            lines.append(f"    heater off in {off} hours: the gas arrived warm enough (it would "
                         "have had to cool it); its outlet floats warmer, counted as zero heat")
    lines.append(f"  fuel gas: {s['fuel_Sm3']:,.0f} Sm3 ({s['calorific_basis']} calorific value "
                 f"{s['calorific_value_J_Sm3'] / 1e6:.3f} MJ/Sm3, {s['calorific_standard']})")
    lo, hi = s["outlet_T_K"]["min"], s["outlet_T_K"]["max"]
    if lo is not None:
        lines.append(f"  {s['outlet']} temperature: {lo - 273.15:.2f} to {hi - 273.15:.2f} degC")
    if s["min_T_K"] is not None:
        lines.append(f"  hours with a stream below limits.min_T ({s['min_T_K'] - 273.15:.1f} degC): "
                     f"{s['hours_below_min_T']}")
    if s["hours_below_hydrate_T_plus_margin"] is not None:
        lines.append(f"  hours with {s['outlet']} below its hydrate temperature + "
                     f"{s['hydrate_margin_K']:.1f} K (free water assumed): "
                     f"{s['hours_below_hydrate_T_plus_margin']}")
    hh = s.get("hydrate_hours") or {}
    if hh:
        lines.append(f"  hours below the hydrate temperature (+ {s['hydrate_margin_K']:.1f} K), "
                     "free water assumed / with free water by the water dew point; least margin:")
        for name, h in hh.items():
            least = "" if h["min_margin_K"] is None else f"; least margin {h['min_margin_K']:+.2f} K"
            lines.append(f"    {name}: {h['below_hydrate_T_free_water_assumed']} "
                         f"({h['below_hydrate_T_plus_margin_free_water_assumed']}) / "
                         f"{h['below_hydrate_T_by_dew_point']} "
                         f"({h['below_hydrate_T_plus_margin_by_dew_point']}){least}")
    if s.get("peak_total") and len(s["heat_MWh"]) > 1:
        lines.append(f"  peak of all heaters: {s['peak_total']['duty_W'] / 1e3:.1f} kW at "
                     f"{s['peak_total']['time']}")
    if s.get("months"):
        lines.append("  by month (heat MWh, fuel Sm3): " + ", ".join(
            f"{m[5:]} {sum(v['heat_MWh'].values()):,.0f} / {v['fuel_Sm3']:,.0f}"
            for m, v in s["months"].items()))
    for name, dd in (s.get("duty_duration") or {}).items():
        pairs = list(zip(dd["duty_W"], dd["hours_at_or_above"]))[::-1]
        lines.append(f"  {name} duty-duration (hours at or above): " + ", ".join(
            f"{d / 1e3:,.0f} kW {h}" for d, h in pairs[::3]))
    lines.append(f"  failed hours: {s['failed_hours']}")
    if s["failed_hours"]:
        bad = np.flatnonzero(~res.converged)
        for i in bad[:5]:
            lines.append(f"    {res.profile.time[i]}: {res.reasons[i]}")
        if bad.size > 5:
            lines.append(f"    ... and {bad.size - 5} more (every hour with its reason in "
                         "hourly.csv with --out); the totals leave them out")
        else:
            lines.append("    the totals leave them out")
    lines.append("")
    if s["model_bias"]:
        lines.append(s["model_bias"])
    lines += ["Standard volumes at 15 degC and 101.325 kPa (ISO 13443).", CAUTION]
    return "\n".join(lines)


def year_files(res, *, flowsheet: str, plot: bool = True) -> dict:
    """{file name: content}: hourly.csv, summary.json, run.json and (with matplotlib) year.png/svg."""
    from .._version import __version__
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    heaters = list(res.heater_duty)
    streams = list(res.stream_T)
    hydrate = [n for n in streams if n in getattr(res, "stream_hydrate_T", {})]
    w.writerow(["time", *(f"{n}.duty [W]" for n in heaters), *(f"{n}.off" for n in heaters),
                *(f"{n}.T [K]" for n in streams), *(f"{n}.hydrate_T [K]" for n in hydrate),
                "converged", "reason"])
    for i, t in enumerate(res.profile.time):
        w.writerow([t, *(_num(res.heater_duty[n][i]) for n in heaters),
                    *(bool(res.heater_off[n][i]) if n in res.heater_off else False
                      for n in heaters),
                    *(_num(res.stream_T[n][i]) for n in streams),
                    *(_num(res.stream_hydrate_T[n][i]) for n in hydrate), bool(res.converged[i]),
                    res.reasons[i]])
    files = {"hourly.csv": buf.getvalue(),
             "summary.json": json.dumps(res.summary(), indent=2) + "\n",
             "run.json": json.dumps({
                 "flowsheet": flowsheet,
                 "flowsheet_sha256": hashlib.sha256(Path(flowsheet).read_bytes()).hexdigest(),
                 "profile": res.profile.source,
                 "profile_sha256": hashlib.sha256(Path(res.profile.source).read_bytes()).hexdigest(),
                 "model": res.model, "heater_efficiencies": res.efficiencies,
                 "calorific_basis": res.calorific,
                 "letdown_version": __version__,
                 "written_utc": datetime.now(timezone.utc).isoformat(timespec="seconds")},
                 indent=2) + "\n"}
    if plot:
        files.update(_plots(res))
    return files


def _num(x) -> str:
    return "" if not np.isfinite(x) else f"{x:.10g}"


def _plots(res) -> dict:
    plt = pyplot()
    if plt is None:
        return {}
    t = np.arange(res.profile.n) / 24.0
    fig, (a1, a2) = plt.subplots(2, 1, figsize=(9, 6), sharex=True)
    for name, d in res.heater_duty.items():
        a1.plot(t, d / 1e3, lw=0.6, label=f"{name} duty")
    a1.set_ylabel("duty [kW]")
    a1.legend(loc="upper right")
    a1.grid(True, alpha=0.3)
    a2.plot(t, res.stream_T[res.outlet] - 273.15, lw=0.6, color="tab:red", label=res.outlet)
    if res.min_T is not None:
        a2.axhline(res.min_T - 273.15, color="k", ls="--", lw=0.8, label="limits.min_T")
    a2.set_ylabel("temperature [degC]")
    a2.set_xlabel("day of the year")
    a2.legend(loc="upper right")
    a2.grid(True, alpha=0.3)
    fig.suptitle("A year of operation (engineering estimates)")
    return figure_files(fig, "year", dpi=110)


def _units(units: str, atmosphere: float | None):
    from ..quantities import STANDARD_ATMOSPHERE, DisplayUnit, unit_system
    if units == "si":            # plain SI, as the CSV columns
        return {"T": DisplayUnit("K"), "duty": DisplayUnit("W"), "energy": DisplayUnit("MWh"),
                "vol": DisplayUnit("Sm3")}
    u = unit_system("si" if units == "display" else units,
                    STANDARD_ATMOSPHERE if atmosphere is None else atmosphere)
    if units == "field":
        # 1 Btu (IT) = 1055.05585262 J (NIST SP 811, B.8), so 1 MWh = 3.412142 MMBtu; 1 m3 =
        # 1 / 0.3048**3 ft3 = 35.31467 ft3
        # at the same conditions: fuel volume kept at 15 degC / 101.325 kPa, in thousand ft3
        return {"T": u["T"], "duty": u["duty"],
                "energy": DisplayUnit("MMBtu", 3.6e9 / 1055.05585262e6),
                "vol": DisplayUnit("Mft3 (15 degC, 101.325 kPa)", 1e-3 / 0.3048 ** 3)}
    return {"T": u["T"], "duty": u["duty"], "energy": DisplayUnit("MWh"), "vol": DisplayUnit("Sm3")}


def year_table(res, units: str = "display", atmosphere: float | None = None):
    """The year's figures as a :class:`~letdown.report.tables.Table` in ``units``: ``si`` (K, W,
    MWh, Sm3 as the CSV), ``display`` (degC, kW, MWh, Sm3) or ``field`` (degF, MMBtu/h, MMBtu,
    thousand ft3 at 15 degC and 101.325 kPa)."""
    from .tables import Table
    s = res.summary()
    u = _units(units, atmosphere)
    rows = [("hours", s["hours"], "-"), ("failed hours", s["failed_hours"], "-")]
    for name, mwh in s["heat_MWh"].items():
        rows.append((f"{name}: heat", u["energy"](mwh), u["energy"].label))
        rows.append((f"{name}: fuel", u["energy"](s["fuel_MWh"][name]), u["energy"].label))
        peak = s["peak"].get(name)
        if peak:
            rows.append((f"{name}: peak duty ({peak['time']})", u["duty"](peak["duty_W"]),
                         u["duty"].label))
        rows.append((f"{name}: hours off", s["heater_off_hours"].get(name, 0), "-"))
    rows.append((f"fuel gas ({s['calorific_basis']})", u["vol"](s["fuel_Sm3"]), u["vol"].label))
    for k in ("min", "max"):
        v = s["outlet_T_K"][k]
        rows.append((f"{s['outlet']} temperature, {k}", None if v is None else u["T"](v),
                     u["T"].label))
    if s["min_T_K"] is not None:
        rows.append(("hours below limits.min_T", s["hours_below_min_T"], "-"))
    if s["hours_below_hydrate_T_plus_margin"] is not None:
        rows.append(("hours below hydrate T + margin", s["hours_below_hydrate_T_plus_margin"], "-"))
    rows = [(q, str(v) if isinstance(v, int) else v, unit) for q, v, unit in rows]
    return Table(f"A year of operation ({s['hours']} hours, model {s['model']})",
                 ("", "value", "unit"), tuple(rows))


def year_plot_files(res, units: str = "display", atmosphere: float | None = None) -> dict:
    """year.png and year.svg in ``units``: heater duties and the outlet temperature on panels of
    their own (never one axis for two units); {} without matplotlib."""
    plt = pyplot()
    if plt is None:
        return {}
    u = _units(units, atmosphere)
    t = np.arange(res.profile.n) / 24.0
    fig, (a1, a2) = plt.subplots(2, 1, figsize=(9, 6), sharex=True)
    for name, d in res.heater_duty.items():
        a1.plot(t, u["duty"](d), lw=0.6, label=f"{name} duty")
    a1.set_ylabel(f"duty [{u['duty'].label}]")
    a1.legend(loc="upper right")
    a1.grid(True, alpha=0.3)
    a2.plot(t, u["T"](res.stream_T[res.outlet]), lw=0.6, color="tab:red", label=res.outlet)
    if res.min_T is not None:
        a2.axhline(u["T"](res.min_T), color="k", ls="--", lw=0.8, label="limits.min_T")
    a2.set_ylabel(f"temperature [{u['T'].label}]")
    a2.set_xlabel("day of the year")
    a2.legend(loc="upper right")
    a2.grid(True, alpha=0.3)
    fig.suptitle("A year of operation (engineering estimates)")
    return figure_files(fig, "year", dpi=110)


def year_html_sections(res, units: str = "display", atmosphere: float | None = None) -> list:
    """[(heading, HTML)] of a year's record: the figures, the plot (inline SVG, with matplotlib),
    the report text and the failed hours."""
    from html import escape

    from .html import inline_svg, table_html, text_html
    parts = [("The year's figures", table_html(year_table(res, units, atmosphere)))]
    plots = year_plot_files(res, units, atmosphere)
    if "year.svg" in plots:
        parts.append(("Plot", inline_svg(plots["year.svg"], "a year of operation")))
    if units == "display":      # the terminal report is in display units; others have the table
        parts.append(("Report", text_html(year_text(res))))
    bad = np.flatnonzero(~res.converged)
    if bad.size:
        parts.append(("Failed hours", "<ul>" + "".join(
            f"<li>{escape(str(res.profile.time[i]))}: {escape(str(res.reasons[i]))}</li>"
            for i in bad[:200]) + "</ul>" + (f"<p>... and {bad.size - 200} more.</p>"
                                             if bad.size > 200 else "")))
    return parts
