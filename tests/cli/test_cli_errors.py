"""The command line: exit codes, one-line errors naming file:line: field, nothing written on failure.

The tests marked NEEDS-SOLVER below exercise errors that only the solver can find (a throttle asked
to raise pressure, a goal whose bracket holds no solution, a loop that does not converge); they run
against letdown.sheet.solve like every other test.
"""
import json
import subprocess
import sys
from pathlib import Path

import pytest

from letdown.cli import main
from tests.stations import gate_station

ROOT = Path(__file__).resolve().parents[2]
GATE = ROOT / "flowsheets" / "gate-station.yaml"

GOOD = gate_station("cli test", model=None, limits=False)


def run(capsys, *argv):
    rc = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return rc, out, err


def solve_bad(tmp_path, capsys, text, expect_rc=2):
    f = tmp_path / "station.yaml"
    f.write_text(text)
    csv_dir = tmp_path / "out"
    rc, out, err = run(capsys, "solve", f, "--csv", csv_dir)
    assert rc == expect_rc
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith(f"letdown: {f}")
    assert "Traceback" not in err
    assert not csv_dir.exists()                         # nothing written on failure
    assert [p.name for p in tmp_path.iterdir()] == ["station.yaml"]   # no temp dir left either
    return lines[0]


@pytest.mark.parametrize("old, new, where, needle", [
    ("ethane: 0.048", "ethan: 0.048", ":3: gas.composition.ethan:", "unknown component 'ethan'"),
    ("ethane: 0.048", "ethane: 0.058", ":3: gas.composition:", "sum to 1.01, not 1"),
    ("85000 Sm3/h", "-85000 Sm3/h", ":5: feeds.supply.flow:", "negative flow"),
    ("17 barg", "17 barq", ":8: equipment.regulator.P_out:", "unknown unit 'barq'"),
    ("kind: throttle", "kind: valve", ":8: equipment.regulator.kind:", "unknown block kind 'valve'"),
    ("from: warm,", "from: wram,", ":8: equipment.regulator:", "stream 'wram' has no producer"),
    ("to: warm,", "to: supply,", ":7: equipment.preheat:", "both an inlet and an outlet"),
    ("to: warm,", "to: warm2,", ":8: equipment.regulator:", "no producer"),
])
def test_bad_input_exit_2(tmp_path, capsys, old, new, where, needle):
    text = GOOD.replace(old, new)
    assert text != GOOD
    line = solve_bad(tmp_path, capsys, text)
    assert where in line and needle in line


def test_stream_with_no_consumer_is_a_feed_nobody_takes(tmp_path, capsys):
    text = GOOD.replace("feeds:\n", "feeds:\n  spare: {T: 6 degC, P: 64 barg, flow: 1 kmol/h}\n")
    line = solve_bad(tmp_path, capsys, text)
    assert ":5: feeds.spare: feed 'spare' is not taken by any block" in line


def test_broken_yaml_exit_2(tmp_path, capsys):
    line = solve_bad(tmp_path, capsys, GOOD.replace("{kind: heater,", "{kind: heater"))
    line2 = solve_bad(tmp_path, capsys, "title: x\ngas: [1, 2\n")
    assert "broken YAML" in line and "broken YAML" in line2 and ":3:" in line2


def test_check_verb(tmp_path, capsys):
    rc, out, err = run(capsys, "check", GATE)
    assert rc == 0 and "ok" in out and err == ""
    f = tmp_path / "station.yaml"
    f.write_text(GOOD.replace("kind: heater", "kind: heatr"))
    rc, out, err = run(capsys, "check", f)
    assert rc == 2 and out == "" and ":7: equipment.preheat.kind: unknown block kind 'heatr'" in err


def test_missing_file_and_bad_arguments(tmp_path, capsys):
    rc, out, err = run(capsys, "solve", tmp_path / "nope.yaml")
    assert rc == 2 and "no such file" in err
    rc, out, err = run(capsys, "solve")
    assert rc == 2 and "FILE" in err
    rc, out, err = run(capsys, "frobnicate")
    assert rc == 2


def test_csv_target_that_is_a_file(tmp_path, capsys):
    target = tmp_path / "taken"
    target.write_text("x")
    rc, out, err = run(capsys, "solve", GATE, "--csv", target)
    assert rc == 2 and "--csv" in err and target.read_text() == "x"


def test_solve_writes_csv_and_json(tmp_path, capsys):
    rc, out, err = run(capsys, "solve", GATE, "--json", "--csv", tmp_path / "csv")
    assert rc == 0
    data = json.loads(out)                              # stdout holds only the JSON object
    assert data["converged"] is True and data["goals"][0]["met"] is True
    assert data["streams"]["network"]["T_K"] == pytest.approx(278.15, abs=1e-4)
    assert sorted(p.name for p in (tmp_path / "csv").iterdir()) == ["equipment.csv", "streams.csv"]
    assert "Temperature [degC]" in (tmp_path / "csv" / "streams.csv").read_text()
    assert [p.name for p in tmp_path.iterdir()] == ["csv"]


def test_solve_field_units(capsys):
    rc, out, err = run(capsys, "solve", GATE, "--units", "field")
    assert rc == 0 and "Temperature [degF]" in out and "MMscfd" in out
    assert "qualified, licensed staff" in out


def test_state_verb(capsys):
    rc, out, err = run(capsys, "state", "--T", "10degC", "--P", "70barg", "--gas",
                       "methane=0.9,ethane=0.1", "--json")
    assert rc == 0
    data = json.loads(out)
    assert data["T_K"] == pytest.approx(283.15) and data["P_Pa"] == pytest.approx(70e5 + 101325.0)
    # the same state again from P and h
    rc2, out2, _ = run(capsys, "state", "--P", "70barg", "--h", repr(data["h_J_mol"]), "--gas",
                       "methane=0.9,ethane=0.1", "--json")
    assert rc2 == 0 and json.loads(out2)["T_K"] == pytest.approx(283.15, abs=1e-6)


@pytest.mark.parametrize("args, needle", [
    (["--T", "10degC", "--gas", "methane=1"], "exactly two of"),
    (["--T", "10 degX", "--P", "70barg", "--gas", "methane=1"], "--T: unknown unit 'degX'"),
    (["--T", "10degC", "--P", "70barg", "--gas", "methan=1"], "--gas: unknown component"),
    (["--T", "10degC", "--P", "70barg", "--gas", "methane=0.5"], "--gas: fractions sum to 0.5"),
])
def test_state_bad_input(capsys, args, needle):
    rc, out, err = run(capsys, "state", *args)
    assert rc == 2 and needle in err and err.count("\n") == 1 and out == ""


def test_debug_shows_the_traceback(tmp_path, capsys):
    f = tmp_path / "station.yaml"
    f.write_text(GOOD.replace("17 barg", "17 barq"))
    rc, out, err = run(capsys, "solve", f, "--debug")
    assert rc == 2 and "Traceback" in err and err.strip().splitlines()[-1].startswith("letdown: ")


def test_console_entry_point_in_a_fresh_process(tmp_path):
    f = tmp_path / "station.yaml"
    f.write_text(GOOD.replace("methane: 0.9135", "methan: 0.9135"))
    p = subprocess.run([sys.executable, "-m", "letdown.cli", "check", str(f)],
                       capture_output=True, text=True, cwd=ROOT)
    assert p.returncode == 2 and p.stdout == ""
    assert p.stderr.startswith(f"letdown: {f}:3: gas.composition.methan: unknown component")


# --- NEEDS-SOLVER: errors only the solver can find ------------------------------------------------

def test_needs_solver_throttle_asked_to_raise_pressure(tmp_path, capsys):
    line = solve_bad(tmp_path, capsys, GOOD.replace("P_out: 17 barg", "P_out: 70 barg"))
    assert ":8: equipment.regulator.P_out:" in line and "above the inlet pressure" in line


def test_needs_solver_goal_bracket_without_solution(tmp_path, capsys):
    line = solve_bad(tmp_path, capsys, GOOD.replace("[0 degC, 90 degC]", "[60 degC, 90 degC]"))
    assert ":10: goals[0].within:" in line
    assert "no preheat.T_out within" in line and "network.T is" in line


def test_needs_solver_loop_that_does_not_converge(tmp_path, capsys):
    text = """\
gas: {composition: {methane: 0.9, propane: 0.1}}
feeds:
  a: {T: 20 degC, P: 60 barg, flow: 100 kmol/h}
equipment:
  mix: {kind: mixer, from: [a, back], to: m}
  cool: {kind: cooler, from: m, to: c, T_out: -20 degC}
  split: {kind: splitter, from: c, to: {product: 0.1, recycle: rest}}
  heat: {kind: heater, from: recycle, to: back, duty: 50 kW}
solver: {loop_max_iterations: 2}
"""
    line = solve_bad(tmp_path, capsys, text, expect_rc=1)
    assert "did not converge in 2 iterations" in line and "tears: back" in line


def test_bare_command_prints_the_usage_and_version_is_named(capsys):
    # issue 15, small things people expect: 'letdown' alone shows the verbs; --version the version
    from letdown import __version__
    from letdown.cli import main
    assert main([]) == 0
    out = capsys.readouterr().out
    assert out.startswith("usage: letdown") and "solve" in out and "size" in out
    assert main(["--version"]) == 0
    assert capsys.readouterr().out.strip() == f"letdown {__version__}"
