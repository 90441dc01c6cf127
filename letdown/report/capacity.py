"""Report of a station's capacity (:class:`letdown.study.capacity.CapacityResult`): terminal text.
A pure function of the result's figures (``to_dict``)."""
from __future__ import annotations

from ..caution import CAUTION
from ..quantities import STANDARD_ATMOSPHERE, unit_system
from .tables import Table, render

#: How each constraint is named in the report.
CONSTRAINT_WORDS = {"opening": "valve opening", "velocity": "velocity", "noise": "noise",
                    "sonic": "outlet Mach", "solve": "stops solving", "": "-"}


def _detail_unit(detail: str, u) -> tuple:
    """(display unit callable, label) of a constraint's detail."""
    if detail.endswith("_m_s"):
        return u["velocity"], u["velocity"].label
    if detail == "noise_dBA":
        return (lambda v: v), "dBA"
    return (lambda v: v), "-"


def capacity_text(res, units: str = "si", atmosphere: float | None = None) -> str:
    """The capacity for a terminal: one row per case (flow, capacity, margin, the governing
    constraint and block), every constraint at the file's flow and at capacity, the heaters' duty
    at capacity, notes and the caution."""
    d = res.to_dict()
    u = unit_system(units, STANDARD_ATMOSPHERE if atmosphere is None else atmosphere)
    Q, M, duty = u["std_flow"], u["mass_flow"], u["duty"]

    def q(fn, v):
        return None if v is None else fn(v)

    rows = []
    for c in d["cases"]:
        margin = None if c["margin_fraction"] is None else 100.0 * c["margin_fraction"]
        where = c["governing_block"] or "-"
        if c["governing_detail"]:
            where += f" ({c['governing_detail']})"
        rows.append((c["name"], q(Q, c["flow_mol_s"]), q(Q, c["capacity_mol_s"]),
                     q(M, c["capacity_kg_s"]), margin,
                     CONSTRAINT_WORDS.get(c["governing_constraint"], c["governing_constraint"]),
                     where, "yes" if c["found"] else "NO"))
    lim = d["limits"]
    vel = lim["max_velocity_m_s"]
    lines = [f"Capacity: {d['title']} (model {d['model']})", "",
             f"Every feed ({', '.join(d['feeds_scaled'])}) scaled together; the file's pressures "
             "and the goals held. Limits: opening "
             f"{lim['max_opening_fraction']:g} of travel ({lim['max_opening_source']}), velocity "
             + ("none" if vel is None else f"{u['velocity'](vel):.1f} {u['velocity'].label}")
             + ", noise " + ("none" if lim["max_noise_dBA"] is None
                             else f"{lim['max_noise_dBA']:.1f} dBA")
             + f", outlet Mach {lim['max_outlet_mach']:g}.", "",
             render(Table("Capacity by case",
                          ("Case", f"Flow [{Q.label}]", f"Capacity [{Q.label}]",
                           f"Capacity [{M.label}]", "Margin [%]", "Governing", "Where",
                           "Found"), tuple(rows))), ""]
    crow = []
    for c in d["cases"]:
        for k in c["constraints"]:
            fn, label = _detail_unit(k["detail"], u)
            mark = "<- governs" if (k["block"] == c["governing_block"]
                                    and k["detail"] == c["governing_detail"]) else ""
            crow.append((c["name"], k["block"], f"{k['detail']} [{label}]", q(fn, k["limit"]),
                         q(fn, k["at_flow"]), q(fn, k["at_capacity"]), mark))
    lines += [render(Table("Constraints at the file's flow and at capacity",
                           ("Case", "Block", "Quantity", "Limit", "At flow", "At capacity", ""),
                           tuple(crow))), ""]
    hrow = [(c["name"], h, q(duty, v["at_flow_W"]), q(duty, v["at_capacity_W"]))
            for c in d["cases"] for h, v in c["heaters_W"].items()]
    if hrow:
        lines += [render(Table("Heaters (the goals held at capacity)",
                               ("Case", "Heater", f"Duty at flow [{duty.label}]",
                                f"Duty at capacity [{duty.label}]"), tuple(hrow))), ""]
    for c in d["cases"]:
        if c["reason"]:
            lines.append(f"Case {c['name']}: capacity not found as a limit: {c['reason']}.")
        elif c["margin_fraction"] is not None and c["margin_fraction"] < 0.0:
            lines.append(f"Case {c['name']}: the file's flow is already beyond the "
                         f"{CONSTRAINT_WORDS[c['governing_constraint']]} limit at "
                         f"{c['governing_block']} ({100.0 * c['margin_fraction']:.1f} %).")
    sizes = d["batch_sizes"]
    lines.append(f"Solved in {len(sizes)} batch solves (each holds every case still searching; "
                 f"the first {sizes[0]} cases).")
    if d["notes"]:
        lines += ["", "Notes"] + [f"  {n}" for n in d["notes"]]
    lines += ["", "Standard volumes: Sm3 at 15 degC and 101.325 kPa (ISO 13443)"
              if units == "si" else "Standard volumes: MMscf at 60 degF and 14.696 psia",
              "The supply pressure is taken as held at every flow: where it falls with the flow, "
              "the capacity is lower.", CAUTION]
    return "\n".join(lines)
