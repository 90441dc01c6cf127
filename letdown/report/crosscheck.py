"""Text report of a model cross-check (:class:`letdown.study.crosscheck.CrossCheck`): pure function."""
from __future__ import annotations

from ..caution import CAUTION
from ..quantities import STANDARD_ATMOSPHERE, unit_system
from .tables import Table, render

#: Short column names for the models.
SHORT = {"peng-robinson": "PR", "peng-robinson-1978": "PR78", "soave-redlich-kwong": "SRK",
         "gerg-2008": "GERG-2008"}


def crosscheck_text(cc, units: str = "si") -> str:
    """The comparison as text: one row per quantity, one column per model, spread and flag."""
    lines = [f"{cc.title}", "Second opinion: the same flowsheet with each model", "",
             render(crosscheck_table(cc, units))]
    return _crosscheck_tail(cc, lines)


def crosscheck_table(cc, units: str = "si") -> Table:
    """One row per quantity, one column per model (in ``units``), the spread and its flag."""
    u = unit_system(units, STANDARD_ATMOSPHERE)
    header = ("Result", "Unit", *(SHORT.get(m, m) for m in cc.models), "Spread", "")
    rows = []
    for r in cc.rows:
        if r.kind == "T":
            conv, diff, unit = u["T"], u["dT"], u["T"].label
        elif r.kind == "energy":
            conv = diff = u["duty"]
            unit = u["duty"].label
        else:
            conv = diff = None
            unit = "-" if r.kind == "vapour_fraction" else r.unit
        vals = [None if v != v else (conv(v) if conv else v) for v in (r.values[m] for m in cc.models)]
        spread = None if r.spread != r.spread else (diff(r.spread) if diff else r.spread)
        rows.append((r.what, unit, *vals, spread, "<- spread" if r.flagged else ""))
    return Table("Results by model", header, tuple(rows))


def _crosscheck_tail(cc, lines: list) -> str:
    n_flag = len(cc.flagged)
    lines.append("")
    lines.append(f"{n_flag} result(s) spread more than the thresholds (1 K, 0.01 vapour fraction, "
                 f"5 % of duty or power)." if n_flag else
                 "No result spreads more than the thresholds (1 K, 0.01 vapour fraction, 5 % of "
                 "duty or power).")
    lines += model_notes(cc.failures, cc.skipped, cc.warnings)
    lines += ["", "Model assumptions"]
    lines += [f"  {m}: {cc.assumptions.get(m, '')}" for m in cc.models]
    lines += ["", CAUTION]
    return "\n".join(lines)


def model_notes(failures, skipped, warnings) -> list:
    """Report lines on the models of a several-model study: those that could not solve the
    flowsheet, those left out (each with its reason), and each model's warnings.

    Parameters
    ----------
    failures, skipped : Mapping[str, str]
        Model -> why.
    warnings : Mapping[str, sequence of (where, what)]
        Model -> its warnings (models without any are not listed).
    """
    lines = []
    if failures:
        lines += ["", "Models that could not solve it"]
        lines += [f"  {m}: {why}" for m, why in failures.items()]
    if skipped:
        lines += ["", "Models left out"]
        lines += [f"  {m}: {why}" for m, why in skipped.items()]
    warned = {m: ws for m, ws in warnings.items() if ws}
    if warned:
        lines += ["", "Warnings by model"]
        for m, ws in warned.items():
            lines += [f"  {m}: {where}: {what}" for where, what in ws]
    return lines

