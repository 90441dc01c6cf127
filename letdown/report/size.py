"""Report of a preheat sizing (:class:`letdown.study.size.SizeResult`): terminal text. Pure
functions of the result's figures (``to_dict``)."""
from __future__ import annotations

from ..caution import CAUTION
from ..quantities import STANDARD_ATMOSPHERE, unit_system
from .tables import Table, render


#: Words for the limits in the report (any other kind is shown by its own name).
LIMIT_NAMES = {"min_T": "limits.min_T", "ice": "ice point + margin",
               "hydrate": "hydrate T + margin", "goal as written": "the goal as written"}


def _limit(kind: str) -> str:
    return LIMIT_NAMES.get(kind, kind)


def size_tables(res, units: str = "si", atmosphere: float | None = None) -> list:
    """The sizing's tables in ``units``: one row per case, then (where the file sizes several
    heaters) the further sized heaters. Used by the terminal text and the HTML record."""
    d = res.to_dict()
    u = unit_system(units, STANDARD_ATMOSPHERE if atmosphere is None else atmosphere)
    T, P, duty = u["T"], u["P"], u["duty"]

    def t(v):
        return None if v is None else T(v)

    def q(fn, v):
        return None if v is None else fn(v)

    fixed = [h for h, info in d["heaters"].items() if not info["sized"]]
    rows = []
    for c in d["cases"]:
        gov = _limit(c["governing_limit"])
        if c["governing_stream"] != d["held"]:
            gov += f" at {c['governing_stream']}"
        rows.append((c["name"], q(P, c["held_P_Pa"]), t(c["hydrate_T_K"]), t(c["water_dew_T_K"]),
                     t(c["target_T_K"]), gov, t(c["heater_T_out_K"]), q(duty, c["duty_W"]),
                     *(q(duty, c["heaters_W"][h]) for h in fixed), q(duty, c["heat_W"]),
                     q(duty, c["fuel_W"]), "yes" if c["met"] else "NO"))
    rule = ("free water assumed in every stream" if d["free_water"] == "always"
            else "free water only below the water dew point")
    table = Table(f"Cases (held: {d['held']}.T by {d['heater']}; {rule})",
                  ("Case", f"P held [{P.label}]", f"Hydrate T [{T.label}]",
                   f"Water dew [{T.label}]", f"Target [{T.label}]", "Governing limit",
                   f"{d['heater']} T_out [{T.label}]", f"{d['heater']} [{duty.label}]",
                   *(f"{h} [{duty.label}]" for h in fixed), f"Heat [{duty.label}]",
                   f"Fuel [{duty.label}]", "Met"), tuple(rows))
    more = []
    for c in d["cases"]:
        for sz in c.get("sized_heaters", [])[1:]:
            gov = _limit(sz["governing_limit"])
            if sz["governing_stream"] != sz["held"]:
                gov += f" at {sz['governing_stream']}"
            more.append((c["name"], sz["heater"], sz["held"], q(P, sz["held_P_Pa"]),
                         t(sz["hydrate_T_K"]), t(sz["water_dew_T_K"]), t(sz["target_T_K"]), gov,
                         t(sz["heater_T_out_K"]), q(duty, sz["duty_W"])))
    tables = [table]
    if more:
        tables.append(Table("Further sized heaters (each holds its own stream)",
                            ("Case", "Heater", "Held", f"P held [{P.label}]",
                             f"Hydrate T [{T.label}]", f"Water dew [{T.label}]",
                             f"Target [{T.label}]", "Governing limit", f"T_out [{T.label}]",
                             f"Duty [{duty.label}]"), tuple(more)))
    return tables


def size_text(res, units: str = "si", atmosphere: float | None = None) -> str:
    """The sizing for a terminal: one row per case, the design heat, its fuel, every stream that
    misses its limit, failed cases, notes, the model's bias and the caution."""
    d = res.to_dict()
    u = unit_system(units, STANDARD_ATMOSPHERE if atmosphere is None else atmosphere)
    T, duty, dT = u["T"], u["duty"], u["dT"]
    tables = size_tables(res, units, atmosphere)
    kinds = []
    for c in d["cases"]:
        kinds.extend(k for k in c["limits_K"] if k not in kinds)
    lines = [f"Preheat sizing: {d['title']} (model {d['model']})", "",
             "Limits of every stream the station makes: "
             + ", ".join(_limit(k) for k in kinds)
             + f"; margin {dT(d['hydrate_margin_K']):g} {dT.label} (limits.hydrate_margin).",
             f"Free water: {d['free_water_rule']}.", ""]
    for t in tables:
        lines += [render(t), ""]
    g = d["design"]
    cv = (f"{d['calorific_basis']} calorific value {d['calorific_value_J_Sm3'] / 1e6:.3f} MJ/Sm3, "
          f"{d['calorific_standard']}")
    if g is None:
        lines.append("No case solved: there is no design heat.")
    else:
        by = _limit(g["governing_limit"]) + (f" at {g['governing_stream']}"
                                             if g["governing_stream"] != d["held"] else "")
        lines.append(f"Design heat: {duty(g['heat_W']):.1f} {duty.label} in case {g['case']} ("
                     + ", ".join(f"{h} {duty(v):.1f} {duty.label}"
                                 for h, v in g["heaters_W"].items())
                     + f"), {d['heater']} governed by {by} ({T(g['target_T_K']):.2f} {T.label} at "
                     f"{d['held']}).")
        lines.append(f"Fuel in the design case: {duty(g['fuel_W']):.1f} {duty.label} of fuel, "
                     f"{g['fuel_Sm3_h']:.1f} Sm3/h of feed gas ({cv}).")
        if not g["met"]:
            lines.append("The design case does not meet every limit (below): its heat is a lower "
                         "bound.")
    for h, info in d["heaters"].items():
        lines.append(f"  {h}: efficiency {info['efficiency']:.0%} from {info['efficiency_source']}"
                     + (" (sized)" if info["sized"] else " (fixed, as the file says)"))
    lines.append("Met: " + ("yes, in every case" if d["all_met"] else
                            "NO: " + ", ".join(c["name"] for c in d["cases"] if not c["met"])))
    for c in d["cases"]:
        if c["reason"]:
            lines.append(f"Case {c['name']} failed: {c['reason']}.")
        for h, v in c["heaters_as_solved_W"].items():
            if v is not None and v < 0.0:
                lines.append(f"Case {c['name']}: {h} needs no heat (it would have to remove "
                             f"{duty(-v):.1f} {duty.label}); counted as zero.")
        for s in c["streams_not_met"]:
            h = s.get("sized_heater", d["heater"])
            if s["downstream_of_sized_heater"]:
                why = f"downstream of {h}, which did not bring it to its limit"
            elif s["upstream_of_sized_heater"]:
                why = f"upstream of {h}: no sized heater can warm it; hold it with a goal on a " \
                      "heater before it"
            else:
                why = f"not downstream of {h}: no sized heater can warm it"
            lines.append(f"Case {c['name']}: NOT MET at stream {s['stream']}: {T(s['T_K']):.2f} "
                         f"{T.label}, below its {_limit(s['limit'])} {T(s['limit_K']):.2f} "
                         f"{T.label} ({why}).")
    warnings = []
    for c in d["cases"]:
        for w in c["warnings"]:
            line = f"  [{w.get('severity', 'check')}] {w['where']}: {w['what']}"
            if line not in warnings:
                warnings.append(line)
    if warnings:
        lines += ["", "Warnings (any case)"] + warnings
    if d["notes"]:
        lines += ["", "Notes"] + [f"  {n}" for n in d["notes"]]
    lines.append("")
    if d["model_bias"]:
        lines.append(d["model_bias"])
    lines += ["Standard volumes at 15 degC and 101.325 kPa (ISO 13443).", CAUTION]
    return "\n".join(lines)
