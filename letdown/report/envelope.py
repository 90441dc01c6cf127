"""Phase-envelope output: a text summary, CSV files, a JSON object and a picture.

Pure functions of an :class:`letdown.fluid.flash.envelope.Envelope` and a list of operating points
``[(name, T [K], P [Pa])]``; nothing here prints. matplotlib is imported only inside
:func:`plot_envelope` (optional: other commands start without it).
"""
from __future__ import annotations

import csv
import io

import numpy as np

from ..caution import CAUTION
from ..quantities import STANDARD_ATMOSPHERE, format_number, unit_system

#: The caution carried by every output that may size equipment or judge liquid drop-out.


def _absolute(u):
    """Absolute pressure in the system's pressure-difference unit (bar or psi): an envelope runs
    down to 1 bar, where a gauge scale says little."""
    from ..quantities import DisplayUnit
    d = u["dP"]
    return DisplayUnit(f"{d.label}a", d.scale, 0.0)


def _key_points(env):
    return [("critical point", env.critical), ("cricondentherm", env.cricondentherm),
            ("cricondenbar", env.cricondenbar)]


def envelope_text(env, stream: str, model: str, points=(), units: str = "si",
                  atmosphere: float = STANDARD_ATMOSPHERE, notes=()) -> str:
    """A short summary: the key points, the traced curves, where each stream sits and ``notes``
    (one line each, e.g. the model's dew-point bias)."""
    u = unit_system(units, atmosphere)
    uT, uP = u["T"], _absolute(u)
    lines = [f"Phase envelope of stream '{stream}' ({model})", ""]
    width = max(len(n) for n, _ in _key_points(env))
    for name, p in _key_points(env):
        if p is None:
            lines.append(f"  {name.ljust(width)}  not found (see the trace reports)")
        else:
            lines.append(f"  {name.ljust(width)}  {format_number(uT(p.T)).rjust(10)} {uT.label}"
                         f"  {format_number(uP(p.P)).rjust(10)} {uP.label}")
    lines.append("")
    lines.append(f"  dew branch {len(env.dew)} points, bubble branch {len(env.bubble)} points"
                 + (f"; lines of vapour fraction {', '.join(f'{b:g}' for b in sorted(env.lines))}"
                    if env.lines else ""))
    for what, r in env.reports.items():
        if not r.converged:
            lines.append(f"  warning: {what}: {r.status}")
    if points:
        lines.append("")
        lines.append("  Streams")
        w = max(len(n) for n, _, _ in points)
        for name, T, P in points:
            lines.append(f"    {name.ljust(w)}  {format_number(uT(T)).rjust(10)} {uT.label}"
                         f"  {format_number(uP(P)).rjust(10)} {uP.label}")
    for note in notes:
        lines += ["", f"  note: {note}"]
    lines.append("")
    lines.append(CAUTION)
    return "\n".join(lines)


def envelope_dict(env, stream: str, model: str, points=(), notes=()) -> dict:
    """JSON-ready object (SI, unit in each key)."""
    d = {"stream": stream, "model": model, "notes": list(notes)}
    d.update(env.to_dict())
    d["operating_points"] = [{"stream": n, "T_K": float(T), "P_Pa": float(P)}
                             for n, T, P in points]
    d["caution"] = CAUTION
    return d


def envelope_csv_files(env, points=()) -> dict:
    """{file name: CSV text}: ``envelope.csv`` (curve, T_K, P_Pa, one row per traced point, in
    trace order) and ``points.csv`` (what, T_K, P_Pa: the key points and every stream)."""
    out = io.StringIO()
    w = csv.writer(out, lineterminator="\n")
    w.writerow(["curve", "T_K", "P_Pa"])
    for name, c in (("dew", env.dew), ("bubble", env.bubble)):
        for T, P in zip(c.T, c.P):
            w.writerow([name, repr(float(T)), repr(float(P))])
    for b, (Ts, Ps) in sorted(env.lines.items()):
        for T, P in zip(Ts, Ps):
            w.writerow([f"vapour fraction {b:g}", repr(float(T)), repr(float(P))])
    pts = io.StringIO()
    w = csv.writer(pts, lineterminator="\n")
    w.writerow(["what", "T_K", "P_Pa"])
    for name, p in _key_points(env):
        if p is not None:
            w.writerow([name, repr(float(p.T)), repr(float(p.P))])
    for name, T, P in points:
        w.writerow([f"stream {name}", repr(float(T)), repr(float(P))])
    return {"envelope.csv": out.getvalue(), "points.csv": pts.getvalue()}


def plot_envelope(env, path: str, title: str, points=(), units: str = "si",
                  atmosphere: float = STANDARD_ATMOSPHERE, hydrate=None) -> None:
    """Draw the envelope, its key points and the operating points into ``path`` (.png or .svg);
    ``hydrate`` = (T array [K], P array [Pa]) adds the hydrate formation curve (free water assumed).

    Raises
    ------
    ImportError
        matplotlib is not installed.
    """
    import matplotlib
    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    u = unit_system(units, atmosphere)
    uT, uP = u["T"], _absolute(u)
    fig, ax = plt.subplots(figsize=(8, 6))
    try:
        ax.plot(uT(env.dew.T), uP(env.dew.P), color="tab:red", label="dew curve")
        ax.plot(uT(env.bubble.T), uP(env.bubble.P), color="tab:blue", label="bubble curve")
        for b, (Ts, Ps) in sorted(env.lines.items()):
            ax.plot(uT(np.asarray(Ts)), uP(np.asarray(Ps)), color="grey", lw=0.8, ls="--")
            k = len(Ts) // 3
            ax.annotate(f"{b:g}", (uT(Ts[k]), uP(Ps[k])), fontsize=7, color="grey")
        if hydrate is not None:
            Th, Ph = (np.asarray(a, dtype=float) for a in hydrate)
            ok = np.isfinite(Th)
            if ok.any():
                ax.plot(uT(Th[ok]), uP(Ph[ok]), color="tab:purple", lw=1.2,
                        label="hydrate curve (free water)")
        marks = {"critical point": ("o", "black"), "cricondentherm": ("s", "tab:red"),
                 "cricondenbar": ("^", "tab:blue")}
        for name, p in _key_points(env):
            if p is not None:
                m, c = marks[name]
                ax.plot([uT(p.T)], [uP(p.P)], marker=m, color=c, ls="none", label=name)
        for name, T, P in points:
            ax.plot([uT(T)], [uP(P)], marker="x", color="tab:green", ls="none")
            ax.annotate(name, (uT(T), uP(P)), fontsize=8, xytext=(4, 4),
                        textcoords="offset points")
        if points:
            ax.plot([], [], marker="x", color="tab:green", ls="none", label="streams")
        ax.set_xlabel(f"Temperature [{uT.label}]")
        ax.set_ylabel(f"Pressure [{uP.label}]")
        ax.set_title(title, fontsize=10)
        ax.grid(True, alpha=0.3)
        ax.legend(fontsize=8, loc="best")
        fig.text(0.01, 0.005, CAUTION, fontsize=6, color="grey")
        fig.savefig(path)
    finally:
        plt.close(fig)
