"""Records of the studies (issue 15): ``--html`` on size, year, sweep, crosscheck and compare, and
``sweep``/``year`` in display units with plots that never put two units on one axis.

Unit factors are checked against their definitions, not against our own tables: 1 Btu (IT) =
1055.05585262 J and 1 ft = 0.3048 m exactly (NIST SP 811, 2008, Appendix B.8); the Celsius and
Fahrenheit scales (t/degF = 1.8 t/degC + 32)."""
from __future__ import annotations

import hashlib
import html
import json
import re
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np
import pytest

from letdown.cli import main

EXAMPLES = Path(__file__).resolve().parents[2] / "flowsheets"
GATE = EXAMPLES / "gate-station.yaml"
PROFILE = EXAMPLES / "profiles" / "harrowfield-2026.csv"
BTU = 1055.05585262          # J, NIST SP 811 B.8


def _profile(tmp_path, hours=6):
    p = tmp_path / "p.csv"
    p.write_text("\n".join(PROFILE.read_text().splitlines()[: hours + 1]) + "\n")
    return str(p)


def _runs(tmp_path):
    return {
        "size": (EXAMPLES / "sizing-station.yaml", ["size", str(EXAMPLES / "sizing-station.yaml")]),
        "year": (GATE, ["year", str(GATE), "--profile", _profile(tmp_path)]),
        "sweep": (GATE, ["sweep", str(GATE), "--vary", "supply.T=0degC:20degC:3", "--vary",
                         "goal1.at=2degC,5degC", "--plot", "supply.T:preheat.duty,warm.T",
                         "--units", "display"]),
        "crosscheck": (GATE, ["crosscheck", str(GATE)]),
        "compare": (EXAMPLES / "fired-gate-station.yaml",
                    ["compare", str(EXAMPLES / "fired-gate-station.yaml"), "--data",
                     str(EXAMPLES / "fired-gate-station-readings.csv")]),
    }


def _check_self_contained(text: str, source: Path):
    echoed = html.escape(source.read_text(encoding="utf-8"))
    assert echoed in text                                      # the input echoed whole
    assert hashlib.sha256(source.read_bytes()).hexdigest() in text
    assert "licensed staff" in text                            # the caution
    bare = text.replace(echoed, "")
    assert not re.search(r"(https?:)?//[a-z0-9.-]+\.[a-z]{2,}", bare, re.I), \
        re.search(r"(https?:)?//[a-z0-9.-]+\.[a-z]{2,}", bare, re.I).group(0)
    assert "<script" not in text and "<link" not in text and "@import" not in text
    assert "src=" not in text
    for svg in re.findall(r"<svg .*?</svg>", text, re.S):
        ET.fromstring(svg.replace("&nbsp;", " "))             # every picture is well-formed


@pytest.mark.parametrize("verb", ["size", "year", "sweep", "crosscheck", "compare"])
def test_study_record_is_self_contained_and_complete(verb, tmp_path, capsys):
    source, args = _runs(tmp_path)[verb]
    page = tmp_path / f"{verb}.html"
    code = main(args + ["--html", str(page)])
    assert code == 0, capsys.readouterr().err
    text = page.read_text(encoding="utf-8")
    _check_self_contained(text, source)
    assert "<h2>Input file</h2>" in text and "Input SHA-256" in text and "letdown version" in text
    capsys.readouterr()
    if verb == "size":
        assert main(["size", str(source), "--json"]) == 0
        d = json.loads(capsys.readouterr().out)
        assert _first_table_rows(text, "Cases") == len(d["cases"])   # one row per case
        for c in d["cases"]:
            assert html.escape(c["name"]) in text
            for w in c["warnings"]:
                assert html.escape(w["what"]) in text
    elif verb == "crosscheck":
        assert main(["crosscheck", str(source), "--json"]) == 0
        d = json.loads(capsys.readouterr().out)
        for m, ws in d["warnings"].items():
            for w in ws:
                assert html.escape(w["what"]) in text
        assert _first_table_rows(text, "Results by model") == len(d["rows"]) > 3
    elif verb == "compare":
        assert main(args + ["--json"]) == 0
        d = json.loads(capsys.readouterr().out)
        residuals = next(iter(d["results"].values()))["residuals"]
        assert _first_table_rows(text, "Residuals by model") == len(residuals) == 6
        for r in residuals:
            assert html.escape(r["at"]) in text
    elif verb == "sweep":
        assert text.count('class="plot"') == 1                 # the plot, inline
        cases = re.search(r"<h2>Cases</h2>.*?<tbody>(.*?)</tbody>", text, re.S).group(1)
        assert cases.count("<tr>") == 6
        assert "supply.T [degC]" in text and "preheat.duty [kW]" in text
    elif verb == "year":
        assert text.count('class="plot"') == 1
        assert "The year&#x27;s figures" in text or "The year's figures" in text


def _first_table_rows(text: str, heading: str) -> int:
    """Rows of the first table under the <h2> ``heading``."""
    part = text.split(f"<h2>{heading}</h2>", 1)[1]
    return part.split("<tbody>", 1)[1].split("</tbody>", 1)[0].count("<tr>")


def _grid_table():
    from letdown.sheet.loader import read_spec
    from letdown.study.sweep import parse_variable, sweep
    fs = read_spec(str(GATE))
    vary = ["supply.T=0degC:20degC:3", "goal1.at=2degC,5degC"]
    return sweep(fs, [parse_variable(fs, v) for v in vary])


def test_display_and_field_units_of_a_sweep_table():
    from letdown.report.sweep import display_table
    t = _grid_table()
    si = {c: t.column(c) for c in t.columns if c not in ("reason",)}
    disp = display_table(t, "display")
    field = display_table(t, "field")
    j = disp.header.index("supply.T [degC]")
    assert np.allclose([r[j] for r in disp.rows], si["supply.T [K]"] - 273.15, rtol=0, atol=1e-12)
    j = field.header.index("supply.T [degF]")
    assert np.allclose([r[j] for r in field.rows], (si["supply.T [K]"] - 273.15) * 1.8 + 32,
                       rtol=1e-12)
    j = field.header.index("preheat.duty [MMBtu/h]")
    assert np.allclose([r[j] for r in field.rows], si["preheat.duty [W]"] * 3600 / (BTU * 1e6),
                       rtol=1e-9)
    j = disp.header.index("network.P [barg]")
    assert np.allclose([r[j] for r in disp.rows], (si["network.P [Pa]"] - 101325.0) / 1e5,
                       rtol=1e-12)
    assert display_table(t, "si").header == t.columns


def test_grid_plot_draws_one_line_per_value_and_one_unit_per_axis():
    pytest.importorskip("matplotlib")
    from letdown.report.sweep import plot_files, plot_series
    t = _grid_table()
    x_label, panels = plot_series(t, "supply.T:preheat.duty,warm.T,network.T", "display",
                                  n_inputs=2)
    assert x_label == "supply.T [degC]"
    assert set(panels) == {"kW", "degC"}                       # two units, two panels
    assert len(panels["kW"]) == 2                               # one line per goal1.at value
    assert len(panels["degC"]) == 4                             # two outputs x two values
    for unit, series in panels.items():
        for label, x, y in series:
            assert len(x) == 3 and np.all(np.diff(x) > 0), label   # no zig-zag through the grid
            assert "goal1.at = " in label
    # the goal holds network.T at each goal1.at: each line is flat at its own target
    for label, x, y in panels["degC"]:
        if label.startswith("network.T"):
            target = float(label.split("goal1.at = ")[1].split()[0])
            assert np.allclose(y, target, atol=1e-6)
    files = plot_files(t, "supply.T:preheat.duty,warm.T", "field", n_inputs=2)
    assert files["sweep.png"][:4] == b"\x89PNG" and b"<svg" in files["sweep.svg"]


def test_sweep_units_on_the_command_line(tmp_path, capsys):
    vary = ["--vary", "supply.T=0degC,10degC"]
    assert main(["sweep", str(GATE), *vary]) == 0
    out = capsys.readouterr().out
    assert out.startswith("supply.T [K],")                     # machines: CSV in SI, unchanged
    assert main(["sweep", str(GATE), *vary, "--units", "display"]) == 0
    out = capsys.readouterr().out
    assert "supply.T [degC]" in out and "preheat.duty [kW]" in out
    out_dir = tmp_path / "o"
    assert main(["sweep", str(GATE), *vary, "--units", "field", "--out", str(out_dir)]) == 0
    assert (out_dir / "sweep.csv").read_text().startswith("supply.T [K],")   # the file stays SI


def test_year_in_field_units(tmp_path, capsys):
    from letdown.report.year import year_table
    from letdown.sheet.loader import read_spec
    from letdown.study.year import read_profile, year
    res = year(read_spec(str(GATE)), read_profile(_profile(tmp_path, 4)))
    s = res.summary()
    rows = {r[0]: r for r in year_table(res, "field").rows}
    assert rows["preheat: heat"][2] == "MMBtu"
    assert np.isclose(rows["preheat: heat"][1], s["heat_MWh"]["preheat"] * 3.6e9 / (BTU * 1e6),
                      rtol=1e-9)
    peak = next(r for k, r in rows.items() if k.startswith("preheat: peak"))
    assert np.isclose(peak[1], s["peak"]["preheat"]["duty_W"] * 3600 / (BTU * 1e6), rtol=1e-9)
    assert np.isclose(rows["fuel gas (gross)"][1], s["fuel_Sm3"] / 0.3048 ** 3 / 1e3, rtol=1e-9)
    lo = rows["network temperature, min"]
    assert lo[2] == "degF" and np.isclose(lo[1], (s["outlet_T_K"]["min"] - 273.15) * 1.8 + 32)
    si = {r[0]: r for r in year_table(res, "si").rows}
    assert si["network temperature, min"][1] == s["outlet_T_K"]["min"]
    capsys.readouterr()
    assert main(["year", str(GATE), "--profile", _profile(tmp_path, 4), "--units", "field"]) == 0
    out = capsys.readouterr().out
    assert "MMBtu" in out and "degF" in out and "licensed staff" in out


@pytest.mark.slow
@pytest.mark.parametrize("verb", ["sweep", "year", "size"])
def test_study_record_renders_in_a_browser(verb, tmp_path):
    """Headless Chromium draws the record (a screenshot with more than one colour) and lays the
    inline plot out at a real size; skips where no Chromium is installed."""
    from tests.report.test_html_browser import BROWSER, _png_is_not_blank, _run
    if BROWSER is None:
        pytest.skip("no headless Chromium installed (apt-get install chromium; .ci/run does)")
    source, args = _runs(tmp_path)[verb]
    page = tmp_path / f"{verb}.html"
    assert main(args + ["--html", str(page)]) == 0
    shot = tmp_path / "shot.png"
    _run(f"--screenshot={shot}", "--window-size=1000,1400", page.as_uri())
    assert shot.exists() and _png_is_not_blank(shot)
    if verb == "size":
        return
    probe = tmp_path / "probe.html"
    probe.write_text(page.read_text(encoding="utf-8").replace("</body>", """<script>
window.addEventListener('load', function () {
  var r = document.querySelector('svg.plot').getBoundingClientRect();
  var pre = document.createElement('pre'); pre.id = 'probe';
  pre.textContent = JSON.stringify([r.width, r.height]); document.body.appendChild(pre); });
</script></body>"""), encoding="utf-8")
    dom = _run("--dump-dom", "--virtual-time-budget=3000", probe.as_uri())
    w, h = json.loads(re.search(r'<pre id="probe">(.*?)</pre>', dom, re.S).group(1))
    assert w > 300 and h > 200, (w, h)


@pytest.mark.parametrize("verb, name", [("capacity", "district-station"), ("upsets", "gate-station")])
def test_capacity_and_upsets_records(verb, name, tmp_path, capsys):
    """The station's hydraulic studies write the same self-contained record, holding the printed
    report (and so every case, limit and caution of it)."""
    source = EXAMPLES / f"{name}.yaml"
    page = tmp_path / f"{verb}.html"
    assert main([verb, str(source), "--html", str(page)]) == 0, capsys.readouterr().err
    printed = capsys.readouterr().out
    text = page.read_text(encoding="utf-8")
    _check_self_contained(text, source)
    assert "<h2>Input file</h2>" in text and "Input SHA-256" in text
    body = html.unescape(text)
    for line in printed.strip().splitlines():
        assert line.rstrip() in body, line
    if verb == "upsets":
        assert "local codes and licensed practice" in body
