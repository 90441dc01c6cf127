"""Report of a station's upsets (:class:`letdown.study.upsets.UpsetResult`): terminal text. A
pure function of the result's figures (``to_dict``)."""
from __future__ import annotations

from ..quantities import STANDARD_ATMOSPHERE, unit_system
from .tables import Table, render


def upsets_text(res, units: str = "si", atmosphere: float | None = None) -> str:
    """The upsets for a terminal: loss of preheat (coldest temperature and smallest margins of
    every stream per scenario), fail-open loads per regulator and case, series runs under both
    definitions, notes and the upset caution."""
    d = res.to_dict()
    u = unit_system(units, STANDARD_ATMOSPHERE if atmosphere is None else atmosphere)
    T, dT, P, M, F = u["T"], u["dT"], u["P"], u["mass_flow"], u["flow"]

    def q(fn, v):
        return None if v is None else fn(v)

    lines = [f"Upsets: {d['title']} (model {d['model']}; cases: {', '.join(d['cases'])})", ""]
    min_T = d["min_T_K"]
    lines.append("(a) Loss of preheat: the coldest temperature of every stream over the cases and "
                 "its smallest margins (T - limit; min_T "
                 + ("none" if min_T is None else f"{T(min_T):.2f} {T.label}")
                 + "; hydrate with free water assumed"
                 + ("" if d["hydrate_margin_K"] is None else
                    f", {dT(d['hydrate_margin_K']):g} {dT.label} wanted") + ").")
    for sc in d["loss_of_preheat"]:
        rows = []
        for s in sc["streams"]:
            rows.append((s["stream"], q(T, s["coldest_T_K"]), s["coldest_case"] or "-",
                         q(dT, s["min_T_margin_K"]), q(dT, s["hydrate_margin_K"]),
                         q(dT, s["ice_margin_K"]), q(dT, s.get("water_dew_margin_K")),
                         s["verdict"]))
        title = sc["scenario"]
        if sc["goals_dropped"]:
            title += " (goals dropped: " + "; ".join(sc["goals_dropped"]) + ")"
        lines += ["", render(Table(title, ("Stream", f"Coldest T [{T.label}]", "Case",
                                           f"min_T margin [{dT.label}]",
                                           f"Hydrate margin [{dT.label}]",
                                           f"Ice margin [{dT.label}]",
                                           f"Water dew margin [{dT.label}]", "Verdict"),
                                   tuple(rows)))]
        for case, why in sc["failures"].items():
            lines.append(f"  case {case} failed: {why}")
    lines += ["", "(b) A regulator failing wide open: its rated Kv at full travel from its inlet "
                  "state into the set pressure of its protection (IEC 60534-2-1).", ""]
    rows = []
    for f in d["fail_open"]:
        for c in f["cases"]:
            ratio = (None if not c["normal_flow_kg_s"] or c["flow_kg_s"] is None
                     else c["flow_kg_s"] / c["normal_flow_kg_s"])
            rows.append((f["block"], c["case"], q(P, c["inlet_P_Pa"]), q(P, c["set_pressure_Pa"]),
                         q(M, c["flow_kg_s"]), q(F, c["flow_mol_s"]), q(M, c["normal_flow_kg_s"]),
                         ratio, {True: "yes", False: "no", None: "-"}[c["choked"]]))
    if rows:
        lines.append(render(Table("Fail-open load on the protection",
                                  ("Regulator", "Case", f"Inlet P [{P.label}]",
                                   f"Set P [{P.label}]", f"Load [{M.label}]",
                                   f"Load [{F.label}]", f"Normal [{M.label}]",
                                   "Load / normal", "Choked"), tuple(rows))))
    else:
        lines.append("No rated throttle with a protection.")
    lines += ["", "(c) Regulators in series.",
              f"  One fails: {d['series_definitions']['single_failure']}.",
              f"  All open: {d['series_definitions']['all_open']}."]
    if not d["series_runs"]:
        lines.append("  No run of two or more rated regulators in series.")
    for r in d["series_runs"]:
        name = " -> ".join(r["blocks"])
        if "note" in r:
            lines.append(f"  Run {name}: {r['note']}.")
            continue
        rows = []
        for c in r["all_open"]:
            if not c["solved"]:
                rows.append((c["case"], None, None, None, "case failed", "-"))
                continue
            single = max((x["flow_kg_s"] for b in r["blocks"]
                          for x in (r["single_failure"][b] or [])
                          if x["case"] == c["case"] and x["flow_kg_s"] is not None), default=None)
            between = ", ".join(f"{b} {P(v):.2f}" for b, v in c["inlet_P_Pa"].items())
            chokes = ", ".join(b for b, v in c["choked"].items() if v) or "none"
            acts = ", ".join(b for b, v in c.get("intermediate_protection_acts", {}).items()
                             if v) or "none"
            rows.append((c["case"], q(M, c["flow_kg_s"]), q(M, single), between, chokes, acts))
        lines += ["", render(Table(f"Run {name}, all open into {r['blocks'][-1]}'s protection",
                                   ("Case", f"All open [{M.label}]",
                                    f"Largest single failure [{M.label}]",
                                    f"Valve inlet P [{P.label}]", "Choked",
                                    "Protection acting between"), tuple(rows)))]
    if d["notes"]:
        lines += ["", "Notes"] + [f"  {n}" for n in d["notes"]]
    lines += ["", d["caution"]]
    return "\n".join(lines)
