"""Files of a sweep: the tidy table (CSV, and Parquet when pyarrow is installed), the run record
and plots. Pure functions returning file contents; the command line writes them."""
from __future__ import annotations

import hashlib
import io
import json
from datetime import datetime, timezone
from pathlib import Path

import numpy as np

from ..errors import InputError
from .figures import figure_files, pyplot


def sweep_files(table, *, source: str, variables, mode: str, plot: str | None = None) -> dict:
    """{file name: str or bytes} for a :class:`letdown.study.sweep.SweepTable`.

    ``run.json`` records what makes the run reproducible: the flowsheet file and its SHA-256, the
    swept variables as given, the mode, the model and the letdown version.
    """
    from .._version import __version__
    files = {"sweep.csv": table.csv_text()}
    parquet = _parquet(table)
    if parquet is not None:
        files["sweep.parquet"] = parquet
    digest = hashlib.sha256(Path(source).read_bytes()).hexdigest()
    files["run.json"] = json.dumps({
        "flowsheet": str(source), "flowsheet_sha256": digest, "vary": list(variables),
        "mode": mode, "model": table.model, "letdown_version": __version__,
        "cases": len(table.rows), "failed": sum(1 for r in table.rows if not r[-2]),
        "written_utc": datetime.now(timezone.utc).isoformat(timespec="seconds"),
    }, indent=2) + "\n"
    if plot:
        files.update(plot_files(table, plot))
    return files


def _parquet(table):
    try:
        import pyarrow as pa
        import pyarrow.parquet as pq
    except ImportError:
        return None
    cols = {name: [r[i] for r in table.rows] for i, name in enumerate(table.columns)}
    buf = io.BytesIO()
    pq.write_table(pa.table(cols), buf)
    return buf.getvalue()


def plot_files(table, spec: str) -> dict:
    """PNG and SVG of outputs against one input: ``spec`` is ``X:Y1,Y2`` (column names without the
    unit). Needs matplotlib (the ``plot`` extra)."""
    x_name, _, ys = spec.partition(":")
    names = {c.split(" [")[0]: c for c in table.columns}
    wanted = [x_name.strip()] + [y.strip() for y in ys.split(",") if y.strip()]
    missing = [w for w in wanted if w not in names]
    if not ys or missing:
        raise InputError(f"--plot {spec!r}: give X:Y[,Y] from the columns "
                         f"({', '.join(n for n in names if n not in ('converged', 'reason'))})",
                         field="--plot")
    plt = pyplot()
    if plt is None:
        raise InputError("plots need matplotlib: pip install 'letdown[plot]'", field="--plot")
    x = table.column(names[wanted[0]])
    fig, ax = plt.subplots(figsize=(7, 4.5))
    order = np.argsort(x, kind="stable")
    for y_name in wanted[1:]:
        y = table.column(names[y_name])
        ax.plot(x[order], y[order], marker="o", label=names[y_name])
    ax.set_xlabel(names[wanted[0]])
    ax.grid(True, alpha=0.3)
    ax.legend()
    ax.set_title("letdown sweep (engineering estimates)")
    return figure_files(fig, "sweep")
