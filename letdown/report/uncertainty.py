"""Tables and files of an uncertainty study (:mod:`letdown.study.uncertainty`): the statistics
per output, the hydrate-margin probabilities, the first-order sensitivity indices, the samples and
the run record. Pure functions returning tables or file contents; the command line writes them."""
from __future__ import annotations

import hashlib
import json
from datetime import datetime, timezone
from pathlib import Path

import numpy as np

from ..quantities import STANDARD_ATMOSPHERE
from .sweep import column_unit
from .tables import Table, csv_text, render

#: What the sensitivity index is, said under its table.
INDEX_NOTE = ("first-order index: R^2 of a least-squares regression of the output on that input "
              "alone (a composition as one group), the linear estimate of Var(E[Y|X])/Var(Y) "
              "(Saltelli et al. 2008, The Primer, 1.2.5); a sum well below 1 means interactions "
              "or curvature")


def summary_table(result, units: str = "si", atmosphere: float = STANDARD_ATMOSPHERE) -> Table:
    """Mean, standard deviation, P10/P50/P90 and the count of solved samples per output, in
    ``units`` (a spread converts as a difference)."""
    rows = []
    for s in result.stats:
        label, fn = column_unit(s.column, units, atmosphere)
        name, _, unit = label.partition(" [")

        def d(v, fn=fn, mean=s.mean):
            return float(fn(mean + v) - fn(mean)) if np.isfinite(v) and np.isfinite(mean) else None
        conv = [float(fn(v)) if np.isfinite(v) else None for v in (s.mean, s.p10, s.p50, s.p90)]
        rows.append((name, unit.rstrip("]") or "-", conv[0], d(s.std), conv[1], conv[2],
                     conv[3], str(s.n)))
    title = (f"Uncertainty: {result.n} samples ({result.sampler}, seed {result.seed}), model "
             f"{result.model}, {result.failed} failed")
    return Table(title, ("output", "unit", "mean", "std", "P10", "P50", "P90", "solved"),
                 tuple(rows))


def hydrate_table(result) -> Table | None:
    """Share of solved samples with a hydrate margin below zero and below the wanted margin: any
    stream, then each stream (None where no margin was an output)."""
    h = result.hydrate
    if not h:
        return None
    wanted = h.get("wanted")
    w_head = f"P(margin < {wanted:g} K)" if wanted is not None else "P(margin < wanted)"
    rows = [("any stream", h["below_zero"], h["below_zero_error"], h.get("below_wanted"),
             h.get("below_wanted_error"))]
    for col, (p0, pw) in h["per_stream"].items():
        rows.append((col.split(".hydrate_margin")[0], p0, None, pw, None))
    return Table(f"Hydrate margins (free water assumed), {h['n']} solved samples",
                 ("stream", "P(margin < 0)", "std error", w_head, "std error "), tuple(rows))


def sensitivity_table(result) -> Table:
    """First-order indices: one row per output that varies, one column per input, and their
    sum."""
    rows = []
    for col, idx in result.sensitivity.items():
        if not all(np.isfinite(idx)):
            continue
        rows.append((col,) + tuple(float(v) for v in idx) + (float(sum(idx)),))
    return Table("First-order sensitivity indices", ("output",) + tuple(result.inputs) + ("sum",),
                 tuple(rows))


def uncertainty_text(result, units: str = "si",
                     atmosphere: float = STANDARD_ATMOSPHERE) -> str:
    """The terminal report: statistics, hydrate probabilities, sensitivity indices."""
    parts = [render(summary_table(result, units, atmosphere))]
    ht = hydrate_table(result)
    if ht is not None:
        parts.append(render(ht))
    parts.append(render(sensitivity_table(result)) + "\n" + INDEX_NOTE)
    return "\n\n".join(parts) + "\n"


def uncertainty_files(result, *, source: str, specs, units: str = "si",
                      atmosphere: float = STANDARD_ATMOSPHERE) -> dict:
    """{file name: text}: ``samples.csv`` (one row per sample, SI), ``summary.csv`` (statistics
    in ``units``), ``hydrate.csv``, ``sensitivity.csv`` and ``run.json`` (the file and its
    SHA-256, the distributions as given, sampler, seed, sample count, model, letdown version),
    which is what makes the run reproducible."""
    from .._version import __version__
    files = {"samples.csv": result.table.csv_text(),
             "summary.csv": csv_text(summary_table(result, units, atmosphere)),
             "sensitivity.csv": csv_text(sensitivity_table(result))}
    ht = hydrate_table(result)
    if ht is not None:
        files["hydrate.csv"] = csv_text(ht)
    digest = hashlib.sha256(Path(source).read_bytes()).hexdigest()
    files["run.json"] = json.dumps({
        "flowsheet": str(source), "flowsheet_sha256": digest, "vary": list(specs),
        "sample": result.n, "sampler": result.sampler, "seed": result.seed,
        "model": result.model, "letdown_version": __version__, "failed": result.failed,
        "sensitivity_method": INDEX_NOTE,
        "written_utc": datetime.now(timezone.utc).isoformat(timespec="seconds"),
    }, indent=2) + "\n"
    return files
