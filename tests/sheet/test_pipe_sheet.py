"""The pipe block in a flowsheet file: loading, located errors, the velocity limit, --profile, and
the shipped Millbeck village-line example."""
import json
import textwrap
from pathlib import Path

import numpy as np
import pytest

import letdown
from letdown.cli import main
from letdown.errors import InputError
from letdown.sheet.loader import parse_spec
from letdown.sheet.solve import solve

ROOT = Path(__file__).resolve().parents[2]
DISTRICT = ROOT / "flowsheets" / "millbeck-village-line.yaml"

SHEET = """\
title: test line (fictional)
gas:
  composition: {methane: 0.9135, ethane: 0.048, propane: 0.012, nitrogen: 0.015,
                carbon-dioxide: 0.0115}
feeds:
  inlet: {T: 10 degC, P: 5 barg, flow: 12000 Sm3/h}
equipment:
  line:
    kind: pipe
    from: inlet
    to: far
    length: {length}
    diameter: {diameter}
    surroundings:
      {surroundings}
limits:
  max_velocity: 20 m/s
"""


def sheet(length="3.5 km", diameter="300 mm",
          surroundings="buried: {depth: 1.2 m, soil_conductivity: 1.2 W/(m*K), ground_T: 5 degC}"):
    return (SHEET.replace("{length}", length).replace("{diameter}", diameter)
            .replace("{surroundings}", surroundings))


def bad(text):
    with pytest.raises(InputError) as err:
        parse_spec(textwrap.dedent(text), source="bad.yaml")
    return err.value


def test_pipe_parameters_in_si():
    fs = parse_spec(sheet(diameter="12 in"), "line.yaml")
    p = fs.blocks["line"].params
    assert p["length"] == 3500.0
    assert p["diameter"] == pytest.approx(12 * 0.0254, rel=1e-12)   # international inch
    assert p["surroundings"] == {"kind": "buried", "depth": 1.2, "soil_conductivity": 1.2,
                                 "ground_T": pytest.approx(278.15)}
    assert p["max_velocity"] == 20.0
    air = parse_spec(sheet(surroundings="air: {T: -5 degC, U: 1 Btu/(h*ft2*degF)}"), "a.yaml")
    # 1 Btu/(h ft2 degF) = 5.678263 W/(m2 K) (NIST SP 811, B.8)
    assert air.blocks["line"].params["surroundings"]["U"] == pytest.approx(5.678263, rel=1e-6)
    plain = parse_spec(sheet(surroundings="{U: 3 W/(m2*K), T: 0 degC}"), "u.yaml")
    assert plain.blocks["line"].params["surroundings"]["kind"] == "U"


@pytest.mark.parametrize("kw, line, match", [
    ({"length": "-3 km"}, 12, "length must be positive"),
    ({"diameter": "0 mm"}, 13, "diameter must be positive"),
    ({"diameter": "3 m"}, 15, "less than half the diameter"),
    ({"length": "300 m\n    elevation_change: 400 m"}, 13, "exceeds the length"),
    ({"surroundings": "buried: {depth: 1.2 m, soil_conductivity: 1.2 W/(m*K), ground_T: 5 degC, "
                      "cover: 2}"}, 15, "cover"),
    ({"surroundings": "water: {T: 5 degC}"}, 15, "water"),
    ({"surroundings": "buried: {depth: 1.2 m, soil_conductivity: 1.2 bar, ground_T: 5 degC}"},
     15, "not a unit of thermal conductivity"),
])
def test_bad_pipe_input_is_located(kw, line, match):
    e = bad(sheet(**kw))
    assert match in e.message
    assert e.file == "bad.yaml" and e.line == line


def test_velocity_limit_warns_naming_the_pipe():
    result = solve(parse_spec(sheet(length="300 m", diameter="180 mm"), "fast.yaml"))
    out = result.to_dict()
    warnings = [w for w in out["warnings"] if w["kind"] == "velocity_limit"]
    assert len(warnings) == 1 and warnings[0]["where"] == "line"
    v = out["equipment"]["line"]["velocity_max_m_s"]
    assert v > 20.0 and "above limits.max_velocity" in warnings[0]["what"]
    assert warnings[0]["numbers"]["velocity_max_m_s"] == pytest.approx(v)
    from letdown.report.text import report_text
    text = report_text(result, "field")
    assert "line: gas velocity" in text and "above limits.max_velocity" in text
    assert "velocity_max=" in text and "ft/s" in text          # the pipe's detail in field units
    slow = solve(parse_spec(sheet(diameter="400 mm"), "slow.yaml"))
    assert not [w for w in slow.to_dict()["warnings"] if w["kind"] == "velocity_limit"]


def test_district_example_balances_and_the_ground_warms_the_gas():
    d = letdown.load(DISTRICT).solve().to_dict()
    assert d["converged"] and all(g["met"] for g in d["goals"])
    line = d["equipment"]["village-line"]
    T_in, T_out = d["streams"]["outlet"]["T_K"], d["streams"]["village"]["T_K"]
    T_ground = line["surroundings_T_K"]
    # the gas enters colder than the ground and warms toward it, never past it
    assert T_in < T_out < T_ground
    assert line["duty_W"] > 0 and line["dP_Pa"] > 0
    assert "profile_T_K" not in line                 # profiles only on request


def test_solve_profile_json_and_report(capsys):
    assert main(["solve", str(DISTRICT), "--json", "--profile"]) == 0
    data = json.loads(capsys.readouterr().out)
    line = data["equipment"]["village-line"]
    x, T, P = line["profile_x_m"], line["profile_T_K"], line["profile_P_Pa"]
    assert len(x) == len(T) == len(P) == 21 and x[0] == 0.0 and x[-1] == pytest.approx(3500.0)
    assert T[0] == pytest.approx(data["streams"]["outlet"]["T_K"])
    assert T[-1] == pytest.approx(data["streams"]["village"]["T_K"])
    assert np.all(np.diff(P) < 0)
    assert main(["solve", str(DISTRICT), "--json"]) == 0
    assert "profile_T_K" not in capsys.readouterr().out
    assert main(["solve", str(DISTRICT), "--profile", "--units", "field"]) == 0
    text = capsys.readouterr().out
    assert "Profile along village-line" in text and "Position [ft]" in text
