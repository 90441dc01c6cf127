"""The workbook (`--xlsx PATH`, issue 15): it opens with openpyxl and holds the same numbers as the
JSON result (or the study's own figures) to 1e-12 relative; nothing is half-written on failure."""
from __future__ import annotations

import json
import math
from pathlib import Path

import pytest

from letdown.cli import main
from letdown.report import workbook

openpyxl = pytest.importorskip("openpyxl")

EXAMPLES = Path(__file__).resolve().parents[2] / "flowsheets"
FILES = sorted(EXAMPLES.glob("*.yaml"))
PROFILE = EXAMPLES / "profiles" / "harrowfield-2026.csv"


def _sheet(wb, name):
    rows = list(wb[name].iter_rows(values_only=True))
    return list(rows[0]), rows[1:]


def _same(a, b):
    """Equal as the JSON holds it: numbers to 1e-12 relative, None for a blank cell."""
    if b is None or b == "" or (isinstance(b, (dict, list)) and not b):
        return a is None                                   # a cell cannot hold an empty text
    if isinstance(b, bool):
        return a is b
    if isinstance(b, (int, float)):
        return isinstance(a, (int, float)) and not isinstance(a, bool) and \
            math.isclose(a, b, rel_tol=1e-12, abs_tol=1e-300)
    if isinstance(b, (dict, list)):
        return json.loads(a) == b
    return a == b


def _check_records(wb, name, items, drop=()):
    """Every key of every item (dict) is in the row of the item's name under header_of(key)."""
    header, rows = _sheet(wb, name)
    by_name = {r[0]: r for r in rows}
    checked = 0
    for item, d in items:
        row = by_name[item]
        for k, v in d.items():
            if k in drop or isinstance(v, dict):
                continue
            j = header.index(workbook.header_of(k))
            assert _same(row[j], v), (name, item, k, row[j], v)
            checked += 1
    return checked


@pytest.mark.parametrize("path", FILES, ids=[f.stem for f in FILES])
def test_solve_workbook_holds_the_json_numbers(path, tmp_path, capsys):
    target = tmp_path / "r.xlsx"
    assert main(["solve", str(path), "--json", "--xlsx", str(target)]) == 0
    data = json.loads(capsys.readouterr().out)
    wb = openpyxl.load_workbook(target)
    assert wb.sheetnames == ["Run", "Streams", "Composition", "Margins", "Equipment", "Goals",
                             "Loops", "Warnings"]
    for ws in wb:
        assert ws.freeze_panes in ("A2", "B2")          # the header row stays in view
    streams = data["streams"]
    n = _check_records(wb, "Streams", streams.items(), drop=workbook._MARGIN_KEYS)
    n += _check_records(wb, "Margins", [(s, {k: d[k] for k in workbook._MARGIN_KEYS if k in d})
                                        for s, d in streams.items()])
    header, rows = _sheet(wb, "Composition")
    for r in rows:
        for c, v in streams[r[0]]["composition"].items():
            assert _same(r[header.index(f"{c} [mole fraction]")], v)
            n += 1
    n += _check_records(wb, "Equipment", data["equipment"].items(), drop=("inlets", "outlets"))
    header, rows = _sheet(wb, "Warnings")
    assert len(rows) == len(data["warnings"])
    for r, w in zip(rows, data["warnings"]):
        assert r[header.index("what")] == w["what"] and r[header.index("severity")] == w["severity"]
        for k, v in (w.get("numbers") or {}).items():
            assert _same(r[header.index(workbook.header_of(k))], v)
    header, rows = _sheet(wb, "Goals")
    assert len(rows) == len(data["goals"])
    for r, g in zip(rows, data["goals"]):
        for k, v in g.items():
            if not isinstance(v, dict):
                assert _same(r[header.index(workbook.header_of(k))], v)
    run = dict(_sheet(wb, "Run")[1])
    import hashlib
    assert run["Input SHA-256"] == hashlib.sha256(path.read_bytes()).hexdigest()
    assert run["Model"] == data["model"] and run["letdown version"]
    assert run["Command"] == f"letdown solve {path} --json --xlsx {target}"   # as given
    assert "licensed" in run["caution"]
    assert n > 100


def test_headers_carry_units():
    assert workbook.header_of("hydrate_margin_K") == "hydrate_margin [K]"
    assert workbook.header_of("gross_cv_J_m3") == "gross_cv [J/m3]"
    assert workbook.header_of("s_J_molK") == "s [J/(mol K)]"
    assert workbook.header_of("UA_W_K") == "UA [W/K]"
    assert workbook.header_of("inhibitor_wt_pct") == "inhibitor [wt %]"


def test_size_workbook_one_row_per_case(tmp_path, capsys):
    f = EXAMPLES / "sizing-station.yaml"
    target = tmp_path / "s.xlsx"
    code = main(["size", str(f), "--json", "--xlsx", str(target)])
    data = json.loads(capsys.readouterr().out)
    assert code in (0, 1)
    wb = openpyxl.load_workbook(target)
    header, rows = _sheet(wb, "Cases")
    assert [r[0] for r in rows] == [c["name"] for c in data["cases"]]
    n = 0
    for r, c in zip(rows, data["cases"]):
        for k, v in workbook.flatten({k: v for k, v in c.items()
                                      if k not in ("name", "warnings")}).items():
            assert _same(r[header.index(workbook.header_of(k))], v), (k, v)
            n += 1
    assert n > 20
    design = {k: v for k, v in _sheet(wb, "Design")[1]}
    assert _same(design["heat [W]"], data["design"]["heat_W"])


def test_sweep_workbook_is_the_table(tmp_path):
    from letdown.sheet.loader import read_spec
    from letdown.study.sweep import parse_variable, sweep

    f = EXAMPLES / "gate-station.yaml"
    target = tmp_path / "w.xlsx"
    vary = ["supply.T=0degC:20degC:3", "goal1.at=2degC,5degC"]
    args = ["sweep", str(f), "--xlsx", str(target)] + [a for v in vary for a in ("--vary", v)]
    assert main(args) == 0
    fs = read_spec(str(f))
    table = sweep(fs, [parse_variable(fs, v) for v in vary])
    header, rows = _sheet(openpyxl.load_workbook(target), "Cases")
    assert tuple(header) == table.columns and len(rows) == len(table.rows) == 6
    for r, t in zip(rows, table.rows):
        for a, b in zip(r, t):
            assert _same(a, b if b != "" else None), (a, b)


def test_year_workbook_one_row_per_hour(tmp_path):
    prof = tmp_path / "p.csv"
    prof.write_text("\n".join(PROFILE.read_text().splitlines()[:7]) + "\n")
    target = tmp_path / "y.xlsx"
    out = tmp_path / "out"
    assert main(["year", str(EXAMPLES / "gate-station.yaml"), "--profile", str(prof),
                 "--xlsx", str(target), "--out", str(out)]) == 0
    import csv
    with open(out / "hourly.csv") as fh:
        hourly = list(csv.reader(fh))
    header, rows = _sheet(openpyxl.load_workbook(target), "Hours")
    assert header == hourly[0] and len(rows) == 6
    for r, h in zip(rows, hourly[1:]):
        for a, b in zip(r, h):
            if b in ("True", "False"):
                assert a is (b == "True")
            elif b and b[0].isdigit() and "T" not in b:
                assert math.isclose(a, float(b), rel_tol=1e-9)   # the CSV keeps 10 digits
    summary = json.loads((out / "summary.json").read_text())
    s = dict(_sheet(openpyxl.load_workbook(target), "Summary")[1])
    assert _same(s["fuel [Sm3]"], summary["fuel_Sm3"])
    assert _same(s["heat.preheat [MWh]"], summary["heat_MWh"]["preheat"])


def test_no_openpyxl_is_refused_before_solving(tmp_path, monkeypatch, capsys):
    monkeypatch.setattr(workbook, "available", lambda: False)
    target = tmp_path / "r.xlsx"
    assert main(["solve", str(EXAMPLES / "gate-station.yaml"), "--xlsx", str(target)]) == 2
    err = capsys.readouterr()
    assert "--xlsx" in err.err and "openpyxl" in err.err and err.out == ""
    assert not target.exists()


def test_failed_write_leaves_nothing(tmp_path, monkeypatch, capsys):
    target = tmp_path / "r.xlsx"
    target.write_bytes(b"old")                              # an older workbook stays whole
    monkeypatch.setattr(workbook, "workbook_bytes", lambda sheets: b"x" * 10)
    import letdown.cli as cli

    real = Path.write_bytes

    def failing(self, data):
        if self.name.endswith(".tmp"):
            real(self, data[:3])                            # a partial write, then the failure
            raise OSError(28, "No space left on device")
        return real(self, data)
    monkeypatch.setattr(Path, "write_bytes", failing)
    assert cli.main(["solve", str(EXAMPLES / "gate-station.yaml"), "--xlsx", str(target)]) == 2
    assert "--xlsx" in capsys.readouterr().err
    assert target.read_bytes() == b"old"
    assert [p.name for p in tmp_path.iterdir()] == ["r.xlsx"]


def test_missing_directory_is_refused_before_solving(tmp_path, capsys):
    target = tmp_path / "nowhere" / "r.xlsx"
    assert main(["solve", str(EXAMPLES / "gate-station.yaml"), "--xlsx", str(target)]) == 2
    assert "--xlsx" in capsys.readouterr().err
    assert not target.parent.exists()


def test_odd_values_survive_the_round_trip():
    """A little fuzzing: odd names and numbers (unicode, control characters, NaN, inf, 1e-300,
    1e300, negative zero, huge text) go in; numbers come back to 1e-12 or blank, text whole or
    with its control characters replaced, and the file always opens."""
    import random
    rng = random.Random(15)
    specials = [float("nan"), float("inf"), -float("inf"), 1e-300, 1e300, -0.0, 0.1 + 0.2,
                2.0 ** 53 + 1, 123456789.123456789]
    for trial in range(20):
        streams = {}
        for k in range(rng.randint(0, 6)):
            name = rng.choice(["gas", "Gäs-ü", "流れ", "a b", "x\x07y", "=SUM(A1)", "-1"]) + str(k)
            streams[name] = {"T_K": rng.choice(specials + [rng.uniform(50, 900)]),
                             "P_Pa": rng.choice([rng.uniform(1e3, 2e7), None]),
                             "flow_mol_s": rng.choice(specials),
                             "composition": {"methane": rng.random(), "ethane": None},
                             "hydrate_structure": rng.choice(["sI", "sII", None]),
                             "note": "z" * rng.choice([3, 40_000])}
        data = {"title": "t\x00", "streams": streams, "equipment": {}, "goals": [], "loops": [],
                "warnings": [{"where": "w", "what": "x" * 10, "severity": "hazard",
                              "numbers": {"margin_K": rng.choice(specials)}}]}
        wb = openpyxl.load_workbook(__import__("io").BytesIO(
            workbook.workbook_bytes(workbook.solve_sheets(data, {"Command": "letdown solve"}))))
        header, rows = _sheet(wb, "Streams")
        for r in rows:
            src = streams[next(n for n in streams if workbook._cell(n) == r[0])]
            for key in ("T_K", "P_Pa", "flow_mol_s"):
                got, want = r[header.index(workbook.header_of(key))], src[key]
                if want is None or not math.isfinite(want):
                    assert got is None, (key, got, want)
                else:
                    assert math.isclose(got, want, rel_tol=1e-12, abs_tol=0.0), (key, got, want)
            note = r[header.index("note")]
            assert len(note) <= workbook.CELL_LIMIT
        assert len(rows) == len(streams)
        assert all(c.data_type != "f" for ws in wb for row in ws.iter_rows() for c in row)
