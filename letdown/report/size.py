"""Report of a preheat sizing (:class:`letdown.study.size.SizeResult`): terminal text. Pure
functions of the result's figures (``to_dict``)."""
from __future__ import annotations

from ..caution import CAUTION
from ..quantities import STANDARD_ATMOSPHERE, unit_system
from .tables import Table, render


#: Words for the limits in the report.
LIMIT_NAMES = {"min_T": "limits.min_T", "ice": "0 degC ice + margin",
               "hydrate": "hydrate T + margin"}


def size_text(res, units: str = "si", atmosphere: float | None = None) -> str:
    """The sizing for a terminal: one row per case, the design duty, its fuel, notes, caution."""
    d = res.to_dict()
    u = unit_system(units, STANDARD_ATMOSPHERE if atmosphere is None else atmosphere)
    T, P, duty, dT = u["T"], u["P"], u["duty"], u["dT"]

    def t(v):
        return None if v is None else T(v)

    rows = []
    for c in d["cases"]:
        rows.append((c["name"], P(c["held_P_Pa"]), t(c["hydrate_T_K"]), t(c["water_dew_T_K"]),
                     T(c["target_T_K"]), LIMIT_NAMES[c["governing_limit"]], T(c["heater_T_out_K"]),
                     duty(c["duty_W"]), duty(c["fuel_W"]), "yes" if c["met"] else "NO"))
    table = Table(f"Cases (held: {d['held']}.T by {d['heater']}; hydrate T with free water assumed)",
                  ("Case", f"P held [{P.label}]", f"Hydrate T [{T.label}]",
                   f"Water dew [{T.label}]", f"Target [{T.label}]", "Governing limit",
                   f"{d['heater']} T_out [{T.label}]", f"Duty [{duty.label}]",
                   f"Fuel [{duty.label}]", "Met"), tuple(rows))
    g = d["design"]
    lines = [f"Preheat sizing: {d['title']} (model {d['model']})", "",
             f"Limits at {d['held']}: " + ", ".join(
                 x for x in (f"limits.min_T {T(d['min_T_K']):.2f} {T.label}"
                             if d["min_T_K"] is not None else "",
                             "0 degC ice + margin" if any("ice" in c["limits_K"]
                                                           for c in d["cases"]) else "",
                             "hydrate T + margin") if x)
             + f"; margin {dT(d['hydrate_margin_K']):g} {dT.label} (limits.hydrate_margin).", "",
             render(table), "",
             f"Design duty: {duty(g['duty_W']):.1f} {duty.label} in case {g['case']}, governed by "
             f"{LIMIT_NAMES[g['governing_limit']]} ({T(g['target_T_K']):.2f} {T.label} at "
             f"{d['held']}).",
             f"Fuel at the design duty: {duty(g['fuel_W']):.1f} {duty.label} of fuel, "
             f"{g['fuel_Sm3_h']:.1f} Sm3/h of feed gas (gross calorific value "
             f"{d['gross_cv_J_Sm3'] / 1e6:.3f} MJ/Sm3, ISO 6976:2016, 15 degC / 15 degC), at a heater "
             f"efficiency of {d['efficiency']:.0%} from {d['efficiency_source']}."]
    for c in d["cases"]:
        if c["heater_duty_W"] < 0.0:
            lines.append(f"Case {c['name']}: no heat needed (the heater would have to remove "
                         f"{duty(-c['heater_duty_W']):.1f} {duty.label}).")
        for s in c["colder_streams"]:
            lines.append(f"Case {c['name']}: stream {s['stream']} is at {T(s['T_K']):.2f} "
                         f"{T.label}, below its own limit {T(s['limit_K']):.2f} {T.label}: it is "
                         f"colder than the held stream; hold it instead.")
    warnings = []
    for c in d["cases"]:
        for w in c["warnings"]:
            line = f"  {w['where']}: {w['what']}"
            if line not in warnings:
                warnings.append(line)
    if warnings:
        lines += ["", "Warnings (any case)"] + warnings
    if d["notes"]:
        lines += ["", "Notes"] + [f"  {n}" for n in d["notes"]]
    lines += ["", "Standard volumes at 15 degC and 101.325 kPa (ISO 13443).", CAUTION]
    return "\n".join(lines)
