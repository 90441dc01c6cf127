"""A calculation record people can read and file: one self-contained HTML page per solve.

The page holds a header (title, what was run: command, letdown version, input file and its SHA-256,
model, date and time, reference conditions, units; and the caution), the flowsheet drawn from the
result (:mod:`letdown.report.drawing`), the warnings grouped by severity, the stream table under
headings (conditions, flows, properties, gas quality, water and hydrates, composition), the
equipment table, goals and loops, and the input file echoed at the end.

Self-contained: inline CSS and inline SVG, no script, nothing fetched (the page opens offline).
Standard library only (``html.escape``); no template engine. Print-friendly (A4 and Letter: the page
size is left to the printer) and readable on a phone (tables scroll sideways inside their box, the
drawing scales to the width). Pure functions of their arguments.
"""
from __future__ import annotations

from html import escape

from ..caution import CAUTION
from ..quantities import STANDARD_ATMOSPHERE, format_number, unit_system
from .drawing import flowsheet_svg
from .tables import Table, _cell_text, _get, equipment_table, pick, stream_table
from .text import SEVERITY_HEADINGS, conditions_text, display_text, margins_table

#: The stream table's rows under our headings, by the row's quantity (the label before " [").
STREAM_GROUPS = (
    ("Conditions", ("Temperature", "Pressure", "Vapour fraction")),
    ("Flows", ("Molar flow", "Mass flow", "Standard gas flow", "Water carried",
               "Inhibitor carried")),
    ("Properties", ("Density", "Z", "Molar mass", "Enthalpy", "Entropy")),
    ("Gas quality (ISO 6976:2016, 15 degC / 15 degC)", ("Gross calorific value", "Wobbe index")),
)

_CSS = """
:root { --ink: #1b1b1b; --mute: #5a5a5a; --line: #c8c8c8; --hazard: #b3261e; --check: #8a5a00;
        --note: #2f5d8a; --band: #f3f3f0; }
* { box-sizing: border-box; }
body { font: 14px/1.45 system-ui, -apple-system, "Segoe UI", Roboto, sans-serif; color: var(--ink);
       margin: 0 auto; padding: 16px; max-width: 1200px; }
h1 { font-size: 1.5em; margin: 0 0 4px; } h2 { font-size: 1.15em; margin: 22px 0 6px;
     border-bottom: 2px solid var(--ink); } h3 { font-size: 1em; margin: 12px 0 4px; }
.caution { border: 1px solid var(--ink); padding: 6px 10px; margin: 8px 0; background: var(--band); }
.scroll { overflow-x: auto; -webkit-overflow-scrolling: touch; }
table { border-collapse: collapse; font-variant-numeric: tabular-nums; }
th, td { border-bottom: 1px solid var(--line); padding: 2px 8px; text-align: right; white-space: nowrap; }
th:first-child, td:first-child { text-align: left; }
tr.group th { text-align: left; background: var(--band); border-bottom: 1px solid var(--ink); }
table.run td, table.run th { text-align: left; white-space: normal; }
.sev-hazard { color: var(--hazard); } .sev-check { color: var(--check); } .sev-note { color: var(--note); }
ul.warnings { margin: 2px 0 8px; padding-left: 20px; }
svg.flowsheet { max-width: 100%; height: auto; display: block; }
svg.flowsheet .node rect, svg.flowsheet .node path, svg.flowsheet .node circle {
  fill: #fff; stroke: var(--ink); stroke-width: 1.6; }
svg.flowsheet .terminal { fill: var(--band); stroke: var(--ink); stroke-width: 1.2; }
svg.flowsheet .thin { fill: none; stroke: var(--ink); stroke-width: 1.1; }
svg.flowsheet text { font: 11px system-ui, sans-serif; text-anchor: middle; fill: var(--ink); }
svg.flowsheet text.name { font-weight: 600; } svg.flowsheet text.kind { fill: var(--mute); font-size: 10px; }
svg.flowsheet text.mark { font-size: 12px; font-weight: 700; }
svg.flowsheet .stream { fill: none; stroke: var(--ink); stroke-width: 1.4; }
svg.flowsheet .stream.recycle { stroke-dasharray: 6 3; }
svg.flowsheet .stream.hazard { stroke: var(--hazard); stroke-width: 3; stroke-dasharray: 9 3; }
svg.flowsheet marker path { fill: var(--ink); }
svg.flowsheet .label rect { fill: #fff; stroke: var(--line); }
svg.flowsheet .label.hazard rect { stroke: var(--hazard); } svg.flowsheet .label.hazard text { fill: var(--hazard); }
svg.flowsheet .legend text { text-anchor: start; } svg.flowsheet .legend .hazard-text { fill: var(--hazard); }
pre.input { background: var(--band); padding: 8px; overflow-x: auto; font-size: 12px; }
@media print { body { max-width: none; padding: 0; font-size: 10pt; } .scroll { overflow: visible; }
  h2 { break-after: avoid; } table, svg.flowsheet { break-inside: avoid; } pre.input { white-space: pre-wrap; } }
@page { margin: 14mm; }
"""


def _table_html(table: Table, groups=None, cls: str = "") -> str:
    """A :class:`Table` as HTML, its rows under ``groups`` headings where given."""
    head = "".join(f"<th>{escape(str(h))}</th>" for h in table.header)
    decimals = table.decimals or (None,) * len(table.rows)
    rows = list(zip(table.rows, decimals))
    body = []

    def row_html(row, dec):
        cells = [f"<td>{escape(str(row[0]).strip())}</td>"]
        cells += [f"<td>{escape(_cell_text(c, dec))}</td>" for c in row[1:]]
        return "<tr>" + "".join(cells) + "</tr>"
    if groups is None:
        body = [row_html(r, d) for r, d in rows]
    else:
        used = set()
        for heading, quantities in groups:
            members = [(i, r, d) for i, (r, d) in enumerate(rows)
                       if str(r[0]).split(" [")[0] in quantities]
            if not members:
                continue
            body.append(f'<tr class="group"><th colspan="{len(table.header)}">{escape(heading)}'
                        "</th></tr>")
            body += [row_html(r, d) for _, r, d in members]
            used.update(i for i, _, _ in members)
        rest = [(r, d) for i, (r, d) in enumerate(rows) if i not in used]
        comp = [(r, d) for r, d in rest if str(r[0]).startswith("  ")]
        other = [(r, d) for r, d in rest if not str(r[0]).startswith("  ")
                 and str(r[0]) != "Mole fractions"]
        if other:
            body.append(f'<tr class="group"><th colspan="{len(table.header)}">Other</th></tr>')
            body += [row_html(r, d) for r, d in other]
        if comp:
            body.append(f'<tr class="group"><th colspan="{len(table.header)}">Composition '
                        "(mole fractions)</th></tr>")
            body += [row_html(r, d) for r, d in comp]
    return (f'<div class="scroll"><table class="{cls}"><thead><tr>{head}</tr></thead><tbody>'
            + "".join(body) + "</tbody></table></div>")


def _warnings_html(result, units: str = "si", atmosphere: float = STANDARD_ATMOSPHERE) -> str:
    groups: dict = {}
    for w in _get(result, "warnings", None) or ():
        sev = _get(w, "severity", None) or "check"
        groups.setdefault(sev, []).append(w)
    if not groups:
        return "<p>No warnings.</p>"
    out = []
    for sev in sorted(groups, key=lambda k: list(SEVERITY_HEADINGS).index(k)
                      if k in SEVERITY_HEADINGS else 99):
        items = "".join(f"<li><b>{escape(str(_get(w, 'where', '')))}</b>: "
                        f"{escape(display_text(str(_get(w, 'what', '')), units, atmosphere))}</li>"
                        for w in groups[sev])
        out.append(f'<h3 class="sev-{escape(sev)}">{escape(SEVERITY_HEADINGS.get(sev, sev))} '
                   f"({len(groups[sev])})</h3><ul class=\"warnings sev-{escape(sev)}\">{items}</ul>")
    return "".join(out)


def _goals_loops_html(result) -> str:
    out = []
    goals = _get(result, "goals", None) or ()
    if goals:
        rows = "".join(
            "<tr>" + "".join(f"<td>{escape(str(c))}</td>" for c in (
                _get(g, "hold"), format_number(_get(g, "target")), format_number(_get(g, "achieved")),
                _get(g, "by"), format_number(_get(g, "value")),
                "yes" if _get(g, "met") else "NOT MET")) + "</tr>" for g in goals)
        out.append("<h3>Goals (SI)</h3><div class=\"scroll\"><table><thead><tr><th>held</th>"
                   "<th>target</th><th>achieved</th><th>by</th><th>value</th><th>met</th></tr>"
                   f"</thead><tbody>{rows}</tbody></table></div>")
    loops = _get(result, "loops", None) or ()
    if loops:
        rows = "".join(
            "<tr>" + "".join(f"<td>{escape(str(c))}</td>" for c in (
                ", ".join(_get(lp, "tears", ()) or ()), _get(lp, "iterations"),
                format_number(_get(lp, "residual"), 3),
                "yes" if _get(lp, "converged", True) else "NO")) + "</tr>" for lp in loops)
        out.append("<h3>Loops</h3><div class=\"scroll\"><table><thead><tr><th>tear streams</th>"
                   "<th>iterations</th><th>residual</th><th>converged</th></tr></thead>"
                   f"<tbody>{rows}</tbody></table></div>")
    return "".join(out)


def _labels(result, u) -> dict:
    out = {}
    for name, s in (_get(result, "streams", None) or {}).items():
        T, P = pick(_get(s, "T")), pick(_get(s, "P"))
        lines = [name]
        if T is not None:
            lines.append(f"{format_number(u['T'](T), 4)} {u['T'].label}")
        if P is not None:
            lines.append(f"{format_number(u['P'](P), 4)} {u['P'].label}")
        out[name] = lines
    return out


def _hazards(result) -> dict:
    streams = _get(result, "streams", None) or {}
    out: dict = {}
    for w in _get(result, "warnings", None) or ():
        where = _get(w, "where", "")
        if _get(w, "severity", None) == "hazard" and where in streams:
            kind = str(_get(w, "kind", "") or "hazard").replace("_", " ")
            out[where] = kind if where not in out else f"{out[where]}, {kind}"
    return out


def html_report(result, *, run: dict, input_text: str = "", units: str = "si",
                atmosphere: float | None = None) -> str:
    """The calculation record of one solved case as a self-contained HTML page.

    Parameters
    ----------
    result : object
        A solved result (``title``, ``model``, ``converged``, ``streams``, ``equipment``, ``goals``,
        ``loops``, ``warnings``; see :mod:`letdown.report.tables`).
    run : dict
        What was run, shown as given (str -> str): command, letdown version, input file and its
        SHA-256, date and time, ...
    input_text : str
        The input file, echoed at the end.
    units : {"si", "field"}
    atmosphere : float, optional
        For gauge pressures [Pa].

    Returns
    -------
    str
    """
    atm = atmosphere if atmosphere is not None else _get(result, "atmosphere", None)
    atm = STANDARD_ATMOSPHERE if atm is None else atm
    u = unit_system(units, atm)
    title = _get(result, "title", "") or "(untitled)"
    converged = _get(result, "converged", True)
    run_rows = "".join(f"<tr><th>{escape(str(k))}</th><td>{escape(str(v))}</td></tr>"
                       for k, v in run.items())
    state = ("converged" if converged else
             '<b class="sev-hazard">NOT converged: the numbers below are not a solution</b>')
    equipment = _get(result, "equipment", None) or {}
    tears = [t for lp in (_get(result, "loops", None) or ()) for t in (_get(lp, "tears", ()) or ())]
    svg = flowsheet_svg(equipment, _labels(result, u), tears, _hazards(result), title)
    margins = margins_table(result, units, atmosphere=atm)
    parts = [
        "<!DOCTYPE html>", '<html lang="en"><head><meta charset="utf-8">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>{escape(title)}: letdown calculation record</title><style>{_CSS}</style>"
        "</head><body>",
        f"<header><h1>{escape(title)}</h1><p>letdown calculation record; solve {state}.</p>",
        f'<div class="scroll"><table class="run">{run_rows}</table></div>',
        f'<p class="caution">{escape(CAUTION)}</p></header>',
        "<h2>Flowsheet</h2>", svg,
        "<h2>Warnings</h2>", _warnings_html(result, units, atm),
        "<h2>Streams</h2>",
        _table_html(stream_table(result, units, atmosphere=atm), STREAM_GROUPS, "streams"),
    ]
    if margins is not None:
        parts += ["<h3>Water and hydrates</h3>", _table_html(margins, None, "margins")]
    parts += ["<h2>Equipment</h2>",
              _table_html(equipment_table(result, units, atmosphere=atm), None, "equipment")]
    gl = _goals_loops_html(result)
    if gl:
        parts += ["<h2>Goals and loops</h2>", gl]
    parts += [f"<h2>Reference conditions</h2><p>{escape(conditions_text(units, atm))}</p>",
              "<h2>Input file</h2>", f'<pre class="input">{escape(input_text)}</pre>',
              f'<p class="caution">{escape(CAUTION)}</p>', "</body></html>"]
    return "\n".join(parts)


# --- studies ---------------------------------------------------------------------------------

def inline_svg(data: bytes | str, label: str = "") -> str:
    """A picture saved as SVG (matplotlib) made fit to sit inline in the page: no XML prolog, no
    document type, no metadata block and no namespace declarations (an inline SVG in HTML needs
    none), so the page names no address at all; ``xlink:href`` becomes ``href`` (SVG 2)."""
    import re
    text = data.decode("utf-8") if isinstance(data, bytes) else data
    text = re.sub(r"<\?xml[^>]*\?>", "", text)
    text = re.sub(r"<!DOCTYPE[^>]*>", "", text, flags=re.S)
    text = re.sub(r"<metadata>.*?</metadata>", "", text, flags=re.S)
    text = re.sub(r'\s+xmlns(:\w+)?="[^"]*"', "", text)
    text = text.replace("xlink:href", "href")
    text = text.replace("<svg ", f'<svg class="plot" role="img" aria-label="{escape(label)}" ', 1)
    return f'<div class="scroll">{text.strip()}</div>'


def table_html(table: Table) -> str:
    """A :class:`Table` as an HTML table under its title."""
    return f"<h3>{escape(table.title)}</h3>" + _table_html(table)


def text_html(text: str) -> str:
    """A report laid out for a terminal, kept as it is (fixed width)."""
    return f'<pre class="report">{escape(text)}</pre>'


def warnings_list_html(warnings) -> str:
    """Warnings [(severity, where, what)] grouped by severity (hazard first)."""
    groups: dict = {}
    for sev, where, what in warnings:
        groups.setdefault(sev or "check", []).append((where, what))
    if not groups:
        return "<p>No warnings.</p>"
    out = []
    for sev in sorted(groups, key=lambda k: list(SEVERITY_HEADINGS).index(k)
                      if k in SEVERITY_HEADINGS else 99):
        items = "".join(f"<li><b>{escape(str(w))}</b>: {escape(str(t))}</li>"
                        for w, t in groups[sev])
        out.append(f'<h3 class="sev-{escape(sev)}">{escape(SEVERITY_HEADINGS.get(sev, sev))} '
                   f"({len(groups[sev])})</h3><ul class=\"warnings sev-{escape(sev)}\">{items}</ul>")
    return "".join(out)


def study_html(title: str, *, run: dict, sections, input_text: str = "") -> str:
    """The calculation record of a study (size, year, sweep, crosscheck, compare) as one
    self-contained HTML page: the header with what was run and the caution, then ``sections``
    [(heading, HTML fragment)] in order (tables, plots as inline SVG, the report text), then the
    input file echoed.

    >>> page = study_html("Demo", run={"Model": "peng-robinson"}, sections=[("Cases", "<p>1</p>")])
    >>> "<h2>Cases</h2>" in page and "peng-robinson" in page and "<script" not in page
    True
    """
    run_rows = "".join(f"<tr><th>{escape(str(k))}</th><td>{escape(str(v))}</td></tr>"
                       for k, v in run.items())
    parts = ["<!DOCTYPE html>", '<html lang="en"><head><meta charset="utf-8">',
             '<meta name="viewport" content="width=device-width, initial-scale=1">',
             f"<title>{escape(title)}: letdown calculation record</title><style>{_CSS}"
             "svg.plot { max-width: 100%; height: auto; }"
             "pre.report { font-size: 12px; overflow-x: auto; }</style></head><body>",
             f"<header><h1>{escape(title)}</h1><p>letdown calculation record.</p>",
             f'<div class="scroll"><table class="run">{run_rows}</table></div>',
             f'<p class="caution">{escape(CAUTION)}</p></header>']
    for heading, fragment in sections:
        parts += [f"<h2>{escape(heading)}</h2>", fragment]
    parts += ["<h2>Input file</h2>", f'<pre class="input">{escape(input_text)}</pre>',
              f'<p class="caution">{escape(CAUTION)}</p>', "</body></html>"]
    return "\n".join(parts)
