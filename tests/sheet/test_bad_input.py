"""Bad input is always exit 2 with file, line and field, before any solver sees the number.

Issue 10, "Why" 7: a control byte exited 3 (internal error), a NaN fraction blamed the wrong
component, a temperature of 1e30 degC was blamed on gas.water, invalid UTF-8 and model refusals
named no line, and a negative flow in a profile row or a sweep value reached the solver. Each test
here failed on the code before the fix.

The plausibility bounds (``letdown.quantities.PLAUSIBLE``) are our own choice (common practice:
numbers a practitioner would never exceed for a gas station or chilling train), not physics.
"""
import json
from pathlib import Path

import numpy as np
import pytest

from letdown.cli import main
from letdown.errors import InputError
from letdown.sheet.loader import read_spec, parse_spec
from tests.stations import gate_station

ROOT = Path(__file__).resolve().parents[2]
GATE = ROOT / "flowsheets" / "gate-station.yaml"

GOOD = gate_station("bad input test", water="50 mg/Sm3", limits=False)


def run(capsys, *argv):
    rc = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return rc, out, err


def refused(tmp_path, capsys, content, verbs=("check", "solve"), extra=()):
    """Write ``content`` (str or bytes), run each verb; every one exits 2 with one located line."""
    f = tmp_path / "station.yaml"
    if isinstance(content, bytes):
        f.write_bytes(content)
    else:
        f.write_text(content, encoding="utf-8")
    lines = []
    for verb in verbs:
        argv = [verb, f, *(("--json",) if verb == "solve" else ()), *extra]
        rc, out, err = run(capsys, *argv)
        assert rc == 2, (verb, err)
        assert out == ""
        assert "Traceback" not in err and "internal error" not in err
        msg = err.strip().splitlines()
        assert len(msg) == 1 and msg[0].startswith(f"letdown: {f}:"), err
        lines.append(msg[0])
    return lines


def test_control_byte_is_bad_input_with_its_line(tmp_path, capsys):
    text = GOOD.replace("title: bad input", "title: bad\x01input")
    for line in refused(tmp_path, capsys, text):
        assert ":1:" in line and "control character" in line and "U+0001" in line


def test_nul_byte_and_escape_are_refused(tmp_path, capsys):
    text = GOOD.replace("flow: 85000", "flow: 85\x00000")
    (line,) = refused(tmp_path, capsys, text, verbs=("check",))
    assert ":7:" in line and "U+0000" in line
    text = GOOD.replace("to: network", "to: net\x1bwork")
    (line,) = refused(tmp_path, capsys, text, verbs=("check",))
    assert ":10:" in line and "control character" in line


def test_invalid_utf8_names_its_line(tmp_path, capsys):
    raw = GOOD.encode().replace(b"P_out: 17 barg", b"P_out: 17 b\xffarg")
    for line in refused(tmp_path, capsys, raw):
        assert ":10:" in line and "UTF-8" in line


def test_utf16_file_is_named_as_such(tmp_path, capsys):
    (line,) = refused(tmp_path, capsys, GOOD.encode("utf-16"), verbs=("check",))
    assert "UTF-16" in line and ":1:" in line


def test_nan_fraction_blames_its_own_component(tmp_path, capsys):
    for line in refused(tmp_path, capsys, GOOD.replace("ethane: 0.048", "ethane: .nan")):
        assert ":4: gas.composition.ethane:" in line and "not a finite number" in line


@pytest.mark.parametrize("value", ["-0.048", ".inf", "1e30"])
def test_impossible_fraction_blames_its_own_component(tmp_path, capsys, value):
    (line,) = refused(tmp_path, capsys, GOOD.replace("ethane: 0.048", f"ethane: {value}"),
                      verbs=("check",))
    assert ":4: gas.composition.ethane:" in line


def test_normalised_fractions_may_be_percentages(tmp_path):
    text = GOOD.replace("{methane: 0.9135, ethane: 0.048, propane: 0.012, nitrogen: 0.015, "
                        "carbon-dioxide: 0.0115}",
                        "{methane: 91.35, ethane: 4.8, propane: 1.2, nitrogen: 1.5, "
                        "carbon-dioxide: 1.15}\n  normalise: true")
    fs = parse_spec(text)
    assert fs.gas.composition["ethane"] == pytest.approx(0.048)


def test_kij_must_be_finite_and_plausible(tmp_path, capsys):
    text = GOOD.replace("  water: 50", "  kij: {methane: {ethane: .nan}}\n  water: 50")
    (line,) = refused(tmp_path, capsys, text, verbs=("check",))
    assert ":5: gas.kij.methane.ethane:" in line
    text = GOOD.replace("  water: 50", "  kij: {methane: {ethane: 7}}\n  water: 50")
    (line,) = refused(tmp_path, capsys, text, verbs=("check",))
    assert ":5: gas.kij.methane.ethane:" in line and "[-1, 1]" in line


@pytest.mark.parametrize("old, new, where", [
    # the case: 1e30 degC was blamed on gas.water
    ("T: 6 degC", "T: 1e30 degC", ":7: feeds.supply.T:"),
    ("T: 6 degC", "T: 30 K", ":7: feeds.supply.T:"),
    ("T_out: 38 degC", "T_out: 2000 degC", ":9: equipment.preheat.T_out:"),
    ("P: 64 barg", "P: 1e30 barg", ":7: feeds.supply.P:"),
    ("P: 64 barg", "P: 1001 bar", ":7: feeds.supply.P:"),
    ("P_out: 17 barg", "P_out: 2000 barg", ":10: equipment.regulator.P_out:"),
    ("flow: 85000 Sm3/h", "flow: 1e30 Sm3/h", ":7: feeds.supply.flow:"),
    ("flow: 85000 Sm3/h", "flow: 1e30 t/h", ":7: feeds.supply.flow:"),
    ("dP: 0.3 bar", "dP: 1e30 bar", ":9: equipment.preheat.dP:"),
    ("T_out: 38 degC", "duty: 1e30 kW", ":9: equipment.preheat.duty:"),
    ("at: 5 degC", "at: 1e30 degC", ":12: goals[0].at:"),
    ("[0 degC, 90 degC]", "[0 degC, 1e30 degC]", ":12: goals[0].within[1]:"),
])
def test_absurd_magnitudes_refused_where_written(tmp_path, capsys, old, new, where):
    text = GOOD.replace(old, new)
    assert text != GOOD
    for line in refused(tmp_path, capsys, text):
        assert where in line and "outside" in line


def test_plausible_extremes_still_load():
    # 60 K and 1400 K, 999 bar absolute, 1e-3 mol/s: inside the stated bounds
    for old, new in (("T: 6 degC", "T: 60 K"), ("T_out: 38 degC", "T_out: 1400 K"),
                     ("P: 64 barg", "P: 999 bar"), ("flow: 85000 Sm3/h", "flow: 0.001 mol/s")):
        parse_spec(GOOD.replace(old, new))


def test_gerg_with_a_component_it_lacks_names_the_model_line(tmp_path, capsys):
    text = GOOD.replace("model: peng-robinson", "model: gerg-2008").replace(
        "carbon-dioxide: 0.0115}", "carbon-dioxide: 0.0105, neopentane: 0.001}")
    for line in refused(tmp_path, capsys, text):
        assert ":3: gas.model:" in line and "neopentane" in line


def test_model_override_refused_names_the_option(tmp_path, capsys):
    text = GOOD.replace("carbon-dioxide: 0.0115}", "carbon-dioxide: 0.0105, neopentane: 0.001}")
    f = tmp_path / "station.yaml"
    f.write_text(text)
    rc, out, err = run(capsys, "solve", f, "--model", "gerg-2008")
    assert rc == 2 and out == "" and "Traceback" not in err
    assert err.count("\n") == 1 and "--model:" in err and "neopentane" in err


def test_gerg_two_phase_refusal_names_the_model_line(tmp_path, capsys):
    # a rich gas chilled to -40 degC splits into two phases: GERG-2008 (single phase here) refuses
    text = """\
title: two phases under GERG
gas:
  model: gerg-2008
  composition: {methane: 0.80, ethane: 0.10, propane: 0.07, n-butane: 0.03}
feeds:
  feed: {T: 20 degC, P: 60 barg, flow: 100 kmol/h}
equipment:
  chill: {kind: cooler, from: feed, to: cold, T_out: -40 degC}
"""
    (line,) = refused(tmp_path, capsys, text, verbs=("solve",))
    assert ":3: gas.model:" in line and "two phases" in line


# --- profiles (letdown year) and sweep values -----------------------------------------------------

PROFILE_HEAD = "time,flow [Sm3/h],T_in [degC],P_in [barg],P_out [barg]\n"


@pytest.mark.parametrize("bad, needle", [
    ("-71082", "must be positive"),
    ("0", "must be positive"),
    ("nan", "cannot read"),
    ("1e30", "outside"),
])
def test_profile_flow_row_refused_with_file_and_line(tmp_path, bad, needle):
    from letdown.study.year import read_profile
    f = tmp_path / "profile.csv"
    f.write_text(PROFILE_HEAD + "2026-01-01T00:00,71564,3.6,62.7,17.4\n"
                 f"2026-01-01T01:00,{bad},5.0,62.7,17.4\n")
    with pytest.raises(InputError) as info:
        read_profile(f)
    e = info.value
    assert e.file == str(f) and e.line == 3 and e.field == "flow" and needle in e.message


@pytest.mark.parametrize("content, line, needle", [
    (PROFILE_HEAD + "2026-01-01T00:00,71564,3.6,62.7,17.4\n\n", 3, "empty row"),
    (PROFILE_HEAD + "2026-01-01T00:00,71564,3.6,62.7\n", 2, "5 columns"),
    (PROFILE_HEAD + "2026-01-01T00:00,71564,3.6,62.7,17.4\x00\n", 2, "control character"),
    (PROFILE_HEAD + "2026-01-01T00:00,71564,3.6,2e30,17.4\n", 2, "outside"),
])
def test_profile_malformed_rows_refused(tmp_path, content, line, needle):
    from letdown.study.year import read_profile
    f = tmp_path / "profile.csv"
    f.write_text(content)
    with pytest.raises(InputError) as info:
        read_profile(f)
    assert info.value.line == line and needle in info.value.message


def test_profile_invalid_utf8_names_the_line(tmp_path):
    from letdown.study.year import read_profile
    f = tmp_path / "profile.csv"
    f.write_bytes((PROFILE_HEAD + "2026-01-01T00:00,71564,3.6,62.7,17.4\n"
                   "2026-01-01T01:00,71564,3.6,62.7,17.4\xff\n").encode("latin-1"))
    with pytest.raises(InputError) as info:
        read_profile(f)
    assert info.value.line == 3 and "UTF-8" in info.value.message


def test_year_cli_negative_profile_flow_is_exit_2(tmp_path, capsys):
    f = tmp_path / "profile.csv"
    f.write_text(PROFILE_HEAD + "2026-01-01T00:00,-71564,3.6,62.7,17.4\n")
    rc, out, err = run(capsys, "year", GATE, "--profile", f)
    assert rc == 2 and err.count("\n") == 1 and f"{f}:2: flow:" in err


@pytest.mark.parametrize("vary, needle", [
    ("supply.flow=-85000 Sm3/h", "must be positive"),
    ("supply.flow=0 Sm3/h,85000 Sm3/h", "must be positive"),
    ("supply.flow=10 t/h,30 t/h", None),                  # a mass flow is converted, not a crash
    ("supply.T=1e30 degC", "outside"),
    ("preheat.dP=-1 bar", "must not be negative"),
    ("regulator.P_out=-5 bar", "not above vacuum"),
])
def test_sweep_values_checked_before_solving(vary, needle):
    from letdown.study.sweep import parse_variable
    fs = read_spec(GATE)
    if needle is None:
        v = parse_variable(fs, vary)
        assert np.all(v.values > 0) and np.all(np.isfinite(v.values))
        return
    with pytest.raises(InputError) as info:
        parse_variable(fs, vary)
    assert needle in info.value.message and info.value.field.startswith("vary.")


def test_sweep_cli_bad_value_is_one_line_exit_2(capsys):
    rc, out, err = run(capsys, "sweep", GATE, "--vary", "supply.flow=-1 Sm3/h")
    assert rc == 2 and out == "" and err.count("\n") == 1 and "vary.supply.flow" in err


def test_every_shipped_flowsheet_still_loads():
    for f in sorted((ROOT / "flowsheets").glob("*.yaml")):
        read_spec(f)


def test_solve_json_of_the_gate_station_unchanged(capsys):
    rc, out, err = run(capsys, "solve", GATE, "--json")
    assert rc == 0 and json.loads(out)["converged"] is True


# --- the file's own structure and the remaining numbers ---------------------------------------------

def test_alias_bomb_is_refused_not_expanded(tmp_path, capsys):
    # nine levels of ten aliases would build 1e9 values from a 1 kB file
    lines = ["a0: &a0 [x, x, x, x, x, x, x, x, x, x]"]
    for k in range(1, 10):
        lines.append(f"a{k}: &a{k} [{', '.join([f'*a{k - 1}'] * 10)}]")
    text = "\n".join(lines) + "\n" + GOOD
    (line,) = refused(tmp_path, capsys, text, verbs=("check",))
    assert "aliases" in line


def test_deep_nesting_is_refused(tmp_path, capsys):
    text = GOOD + "note: " + "[" * 5000 + "]" * 5000 + "\n"
    (line,) = refused(tmp_path, capsys, text, verbs=("check",))
    assert "nests deeper" in line


def test_invisible_line_separator_is_refused(tmp_path, capsys):
    # YAML reads U+2028 as a line break that no editor shows
    (line,) = refused(tmp_path, capsys, GOOD.replace("regulator: {", "regu\u2028lator: {"),
                      verbs=("check",))
    assert ":10:" in line and "U+2028" in line


@pytest.mark.parametrize("section, needle", [
    ("solver: {loop_max_iterations: 1000000000}", "at most 10,000"),
    ("solver: {goal_tolerance: .nan}", "not a finite number"),
    ("solver: {loop_tolerance: .inf}", "not a finite number"),
    ("solver: {loop_tolerance: 0.5}", "tests nothing"),
    ("atmosphere: 1 Pa", "an atmosphere lies in 30-120 kPa"),
    ("limits: {hydrate_margin: -3 K}", "must not be negative"),
])
def test_settings_a_solve_cannot_honour_are_refused(tmp_path, capsys, section, needle):
    (line,) = refused(tmp_path, capsys, GOOD + section + "\n", verbs=("check",))
    assert needle in line and ":13:" in line


def test_goal_targets_checked(tmp_path, capsys):
    text = GOOD.replace("hold: network.T, at: 5 degC", "hold: network.vapour_fraction, at: 1.5")
    (line,) = refused(tmp_path, capsys, text, verbs=("check",))
    assert ":12: goals[0].at:" in line and "[0, 1]" in line


def test_compare_exit_code_is_an_integer(capsys):
    # the exit codes of compare were lost in a merge (it returned None)
    f = ROOT / "flowsheets" / "fired-gate-station.yaml"
    rc, out, err = run(capsys, "compare", f, "--models", "peng-robinson")
    assert rc == 0


def test_measurement_csv_invalid_utf8_names_the_line(tmp_path):
    from letdown.sheet.measurements import read_csv
    f = tmp_path / "readings.csv"
    f.write_bytes(b"at,value,uncertainty\nnetwork.T,5 degC,0.3 K\nnetwork.T,5 deg\xb0C,0.3 K\n")
    with pytest.raises(InputError) as info:
        read_csv(f, read_spec(GATE))
    assert info.value.line == 3 and "UTF-8" in info.value.message


def test_integer_of_thousands_of_digits_is_bad_input(tmp_path, capsys):
    # Python refuses to convert integers past 4,300 digits (a ValueError, exit 3 before)
    (line,) = refused(tmp_path, capsys, GOOD.replace("ethane: 0.048", "ethane: " + "9" * 5000),
                      verbs=("check",))
    assert ":4: gas.composition.ethane:" in line and "cannot read the value" in line


def test_sweep_too_many_cases_refused_before_solving(capsys):
    # a count of 1e8 ran for hours before
    rc, out, err = run(capsys, "sweep", GATE, "--vary", "supply.T=0degC:20degC:100000000")
    assert rc == 2 and "at most 100,000" in err
    rc, out, err = run(capsys, "sweep", GATE, "--vary", "supply.T=0degC:20degC:1000",
                       "--vary", "regulator.P_out=10barg:20barg:1000")
    assert rc == 2 and "1,000,000 cases" in err and out == ""


@pytest.mark.parametrize("gas, needle", [("methane=nan", "not a finite number"),
                                         ("methane=inf", "not a finite number"),
                                         ("methane=-1", "must not be negative")])
def test_state_gas_fraction_named_for_what_it_is(capsys, gas, needle):
    rc, out, err = run(capsys, "state", "--T", "10degC", "--P", "70barg", "--gas", gas)
    assert rc == 2 and needle in err and err.count("\n") == 1


def test_implausibly_low_efficiency_refused(tmp_path, capsys):
    # a compressor at 0.00075 (0.75 slipped) reported its discharge at 2000 K with exit 0 before
    text = (ROOT / "flowsheets" / "propane-chiller.yaml").read_text().replace(
        "efficiency: 0.75", "efficiency: 0.00075")
    for line in refused(tmp_path, capsys, text):
        assert "equipment.compressor.efficiency:" in line and "below any real compressor" in line
