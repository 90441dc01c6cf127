"""Text report of a check against measurements (:class:`letdown.study.compare.Comparison`): pure
function of the comparison."""
from __future__ import annotations

import math

from ..caution import CAUTION
from ..quantities import STANDARD_ATMOSPHERE, format_number, unit_system
from .crosscheck import SHORT, model_notes
from .tables import Table, render

#: Display unit keys (value, difference) by the SI unit of a measured quantity or parameter.
_DISPLAY = {"K": ("T", "dT"), "Pa": ("P", "dP"), "mol/s": ("std_flow", "std_flow"),
            "kg/s": ("mass_flow", "mass_flow"), "W": ("duty", "duty"), "W/K": ("ua", "ua")}


def _converters(u, unit: str, attribute: str = ""):
    """(value converter, difference converter, label) for a quantity in SI ``unit``."""
    keys = _DISPLAY.get(unit)
    if keys is None:
        return (lambda v: v), (lambda v: v), "-"
    value_key, diff_key = keys
    if attribute == "power":
        value_key = diff_key = "power"
    return u[value_key], u[diff_key], u[value_key].label


def _fmt(v) -> str:
    return "-" if v is None or not math.isfinite(v) else format_number(v)


def _score_text(s) -> str:
    per = "-" if not math.isfinite(s.chi2_per_dof) else format_number(s.chi2_per_dof)
    verdict = {True: "consistent", False: "not consistent", None: "no degrees of freedom"}
    return (f"chi2 = {format_number(s.chi2)} for {s.dof} degree(s) of freedom, chi2/dof = {per}, "
            f"RMS of normalised residuals = {format_number(s.rms)} "
            f"({verdict[s.consistent]} with the stated uncertainties at 95 %)")


def compare_table(cmp, units: str = "si", atmosphere: float | None = None) -> Table:
    """Measured values with their uncertainty, each model's value and normalised residual z, in
    ``units`` (one row per measurement)."""
    u = unit_system(units, atmosphere if atmosphere is not None else STANDARD_ATMOSPHERE)
    models = [m for m in cmp.models if m in cmp.results]
    first = cmp.results[models[0]]
    header = ["Measurement", "Unit", "Measured", "Uncertainty"]
    for m in models:
        header += [SHORT.get(m, m), f"z {SHORT.get(m, m)}"]
    rows = []
    for k, r in enumerate(first.residuals):
        attribute = r.at.partition(".")[2]
        conv, diff, label = _converters(u, r.unit, attribute)
        row = [r.at, label, conv(r.measured), diff(r.uncertainty)]
        for m in models:
            rm = cmp.results[m].residuals[k]
            row += [conv(rm.model), rm.normalised]
        rows.append(tuple(row))
    return Table("Residuals by model", tuple(header), tuple(rows))


def compare_text(cmp, units: str = "si", atmosphere: float | None = None) -> str:
    """The comparison as text: measured values, each model's value and normalised residual, the
    scores, the fitted parameter with its 95 % interval, and the caution."""
    u = unit_system(units, atmosphere if atmosphere is not None else STANDARD_ATMOSPHERE)
    models = [m for m in cmp.models if m in cmp.results]
    lines = [cmp.title, "Check against plant measurements (residual = model - measured; "
             "z = residual / standard uncertainty)", ""]
    if models:
        lines.append(render(compare_table(cmp, units, atmosphere)))
        lines += ["", "Scores"]
        lines += [f"  {m}: {_score_text(cmp.results[m].score)}" for m in models]
    if cmp.fit_parameter is not None:
        lines += ["", f"Fit of {cmp.fit_parameter} (weighted least squares; 95 % interval = value "
                      "-+ 1.96 standard uncertainties from the Jacobian)"]
        for m in models:
            c = cmp.results[m]
            if c.fit is None:
                lines.append(f"  {m}: fit failed: {c.fit_failure}")
                continue
            f = c.fit
            attribute = f.parameter.partition(".")[2]
            conv, diff, label = _converters(u, f.unit, attribute)
            if attribute.endswith("dP") or attribute == "min_approach":
                conv = diff            # a difference, not a level (no gauge or degC offset)
                label = diff.label
            unit = "" if label == "-" else f" {label}"
            lo, hi = f.interval
            text = (f"  {m}: {f.parameter} = {_fmt(conv(f.value))}{unit} "
                    f"(standard uncertainty {_fmt(diff(f.standard_uncertainty))}{unit}; 95 % "
                    f"interval {_fmt(conv(lo))} to {_fmt(conv(hi))}{unit}); {_score_text(f.score)}; "
                    f"{f.evaluations} batched solves")
            if f.at_bound:
                text += "; at the end of the bracket: widen --within (the interval is unreliable)"
            if not f.converged:
                text += f"; NOT converged: {f.message}"
            lines.append(text)
    lines += model_notes(cmp.failures, cmp.skipped, {m: cmp.results[m].warnings for m in models})
    lines += ["", CAUTION]
    return "\n".join(lines)
