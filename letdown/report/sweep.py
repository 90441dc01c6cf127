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
from ..quantities import STANDARD_ATMOSPHERE, unit_system
from .figures import figure_files, pyplot
from .tables import Table


def sweep_files(table, *, source: str, variables, mode: str, plot: str | None = None,
                units: str = "si", atmosphere: float = STANDARD_ATMOSPHERE) -> dict:
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
        files.update(plot_files(table, plot, units, atmosphere, n_inputs=len(variables)))
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


def column_unit(column: str, units: str = "si", atmosphere: float = STANDARD_ATMOSPHERE):
    """(header in display units, converter) of a sweep column named ``path [SI unit]``.

    ``units``: ``si`` keeps the SI column as it is; ``display`` (degC, barg, kW, kmol/h, kg/h) and
    ``field`` (degF, psig, MMBtu/h or hp, lbmol/h, lb/h) convert it. A temperature whose name says
    margin, approach or a difference converts as a difference; so does a pressure drop.

    >>> column_unit("warm.T [K]", "display")[0], column_unit("warm.T [K]", "display")[1](273.15)
    ('warm.T [degC]', 0.0)
    >>> column_unit("preheat.duty [W]", "field")[0]
    'preheat.duty [MMBtu/h]'
    """
    name, _, rest = column.partition(" [")
    si = rest[:-1] if rest.endswith("]") else ""
    if units == "si" or not si:
        return column, (lambda v: v)
    quantity = name.rpartition(".")[2].lower()
    diff = any(w in quantity for w in ("margin", "approach", "depression")) or \
        quantity.startswith(("dt", "delta"))
    key = {"K": "dT" if diff else "T", "W": "power" if quantity == "power" else "duty",
           "Pa": "dP" if quantity.startswith("dp") or quantity.endswith("dp") else "P",
           "mol/s": "flow", "kg/s": "mass_flow", "W/K": "ua", "m3/s": "liquid_volume_flow"}.get(si)
    if key is None:
        return column, (lambda v: v)
    u = unit_system("si" if units == "display" else units, atmosphere)[key]
    return f"{name} [{u.label}]", u


def display_table(table, units: str = "si", atmosphere: float = STANDARD_ATMOSPHERE) -> Table:
    """The sweep as a :class:`Table` in ``units`` (one row per case; a failed case keeps its
    inputs, blank outputs and its reason)."""
    conv = [column_unit(c, units, atmosphere) for c in table.columns]
    rows = []
    for r in table.rows:
        row = []
        for (_, fn), v in zip(conv, r):
            if isinstance(v, float):
                row.append(fn(v) if np.isfinite(v) else None)
            else:
                row.append(v)
        rows.append(tuple(row))
    return Table(f"Sweep ({len(rows)} cases, model {table.model})", tuple(h for h, _ in conv),
                 tuple(rows))


def _plot_names(table) -> dict:
    """{name a --plot may use: column}: each column's name without its unit, and a goal's column
    (``preheat.T_out (goal1 holds network.T) [K]``) also by the parameter it varies."""
    names = {c.split(" [")[0]: c for c in table.columns}
    for name, col in list(names.items()):
        if " (goal" in name:
            names.setdefault(name.split(" (goal")[0], col)
    return names


def plot_series(table, spec: str, units: str = "si",
                atmosphere: float = STANDARD_ATMOSPHERE, n_inputs: int | None = None):
    """What :func:`plot_files` draws: (x label, {unit: [(line label, x, y)]}), x sorted within
    each line, one panel per unit, one line per output and combination of the other inputs."""
    x_name, _, ys = spec.partition(":")
    names = _plot_names(table)
    wanted = [x_name.strip()] + [y.strip() for y in ys.split(",") if y.strip()]
    missing = [w for w in wanted if w not in names]
    if not ys or missing:
        raise InputError(f"--plot {spec!r}: give X:Y[,Y] from the columns "
                         f"({', '.join(n for n in names if n not in ('converged', 'reason'))})",
                         field="--plot")
    x_col = names[wanted[0]]
    x_label, x_fn = column_unit(x_col, units, atmosphere)
    x = np.array([x_fn(v) for v in table.column(x_col)], dtype=float)
    inputs = list(table.columns[:n_inputs]) if n_inputs else []
    others = [c for c in inputs if c != x_col]
    if others:
        keys = [tuple(r[table.columns.index(c)] for c in others) for r in table.rows]
        groups = list(dict.fromkeys(keys))
    else:
        keys, groups = [()] * len(table.rows), [()]
    panels: dict = {}
    for y_name in wanted[1:]:
        label, fn = column_unit(names[y_name], units, atmosphere)
        unit = label.rpartition(" [")[2].rstrip("]") if " [" in label else "-"
        y = np.array([fn(v) for v in table.column(names[y_name])], dtype=float)
        for g in groups:
            sel = np.array([k == g for k in keys])
            order = np.argsort(x[sel], kind="stable")
            tag = ", ".join(f"{column_unit(c, units, atmosphere)[0].split(' [')[0]} = "
                            f"{_fmt(column_unit(c, units, atmosphere)[1](v))} "
                            f"{column_unit(c, units, atmosphere)[0].partition(' [')[2][:-1]}"
                            for c, v in zip(others, g))
            panels.setdefault(unit, []).append(
                (y_name + (f" ({tag})" if tag else ""), x[sel][order], y[sel][order]))
    return x_label, panels


def plot_files(table, spec: str, units: str = "si", atmosphere: float = STANDARD_ATMOSPHERE,
               n_inputs: int | None = None) -> dict:
    """PNG and SVG of outputs against one input: ``spec`` is ``X:Y1,Y2`` (column names without the
    unit). Needs matplotlib (the ``plot`` extra).

    Outputs of different units never share an axis: each unit gets its own panel (small multiples
    over the same x). In a grid (``n_inputs`` input columns, more than one), each panel draws one
    line per combination of the other inputs' values, labelled with them, instead of one line
    through every case."""
    x_name, _, ys = spec.partition(":")
    names = _plot_names(table)
    wanted = [x_name.strip()] + [y.strip() for y in ys.split(",") if y.strip()]
    missing = [w for w in wanted if w not in names]
    if not ys or missing:
        raise InputError(f"--plot {spec!r}: give X:Y[,Y] from the columns "
                         f"({', '.join(n for n in names if n not in ('converged', 'reason'))})",
                         field="--plot")
    plt = pyplot()
    if plt is None:
        raise InputError("plots need matplotlib: pip install 'letdown[plot]'", field="--plot")
    x_label, panels = plot_series(table, spec, units, atmosphere, n_inputs)
    fig, axes = plt.subplots(len(panels), 1, figsize=(7, 2.2 + 2.6 * len(panels)), sharex=True,
                             squeeze=False)
    for ax, (unit, series) in zip(axes[:, 0], panels.items()):
        for label, x, y in series:
            ax.plot(x, y, marker="o", label=label)
        ax.set_ylabel(", ".join(dict.fromkeys(lab.split(" (")[0] for lab, _, _ in series))
                      + f" [{unit}]")
        ax.grid(True, alpha=0.3)
        ax.legend(fontsize=8)
    axes[-1, 0].set_xlabel(x_label)
    axes[0, 0].set_title("letdown sweep (engineering estimates)")
    return figure_files(fig, "sweep")


def _fmt(v) -> str:
    return f"{v:.6g}" if isinstance(v, float) else str(v)


def sweep_html_sections(table, variables, mode: str, plot: str | None = None,
                        units: str = "si", atmosphere: float = STANDARD_ATMOSPHERE) -> list:
    """[(heading, HTML)] of a sweep's record: what was varied, the cases in ``units``, the plot
    (inline SVG, when ``plot`` is given) and the failed cases."""
    from .html import inline_svg, table_html
    from html import escape
    parts = [("What was varied",
              "<ul>" + "".join(f"<li>{escape(v)}</li>" for v in variables) + "</ul>"
              f"<p>{'every combination (grid)' if mode == 'grid' else 'taken together (zip)'}; "
              f"{len(table.rows)} cases.</p>")]
    if plot:
        files = plot_files(table, plot, units, atmosphere, n_inputs=len(variables))
        parts.append(("Plot", inline_svg(files["sweep.svg"], f"sweep {plot}")))
    parts.append(("Cases", table_html(display_table(table, units, atmosphere))))
    failed = [(i, r) for i, r in enumerate(table.rows) if not r[-2]]
    if failed:
        parts.append(("Failed cases", "<ul>" + "".join(
            f"<li>case {i + 1}: {escape(str(r[-1]))}</li>" for i, r in failed)
            + "</ul>"))
    return parts
