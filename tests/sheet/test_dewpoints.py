"""Hydrocarbon dew points of product gases in the stream report (letdown solve --dew-points)."""
import json
import subprocess
import sys

import pytest

import letdown
from letdown.sheet.dewpoints import product_gases, with_dew_points

COLD = "flowsheets/cold-separation.yaml"


@pytest.fixture(scope="module")
def solved():
    sheet = letdown.load(COLD)
    return sheet, sheet.solve()


def test_product_gases_are_the_vapour_products(solved):
    sheet, res = solved
    assert product_gases(res, sheet.spec) == ["export-gas"]


def test_dew_point_and_cricondentherm_of_the_export_gas(solved):
    sheet, res = solved
    out = with_dew_points(res, sheet.spec)
    s = out.streams["export-gas"]
    gas = letdown.Fluid(dict(s.zs), model=res.model)
    # the same quantities computed directly (stability bisection; envelope extremum)
    assert s.dew["hc_dew_T_K"] == pytest.approx(gas.dew_temperature(P=s.P), abs=1e-6)
    assert s.dew["cricondentherm_K"] == pytest.approx(gas.envelope().cricondentherm.T, abs=1e-6)
    # the cricondentherm is the highest dew temperature at any pressure
    assert s.dew["cricondentherm_K"] >= s.dew["hc_dew_T_K"] - 1e-6
    # a gas leaving a cold separator has its dew point near that separator's temperature
    assert s.dew["hc_dew_T_K"] == pytest.approx(res.streams["cold-gas"].T, abs=1.0)
    assert "inlet-liquid" not in out.streams or out.streams["inlet-liquid"].dew is None


def test_json_carries_them_only_on_request():
    base = subprocess.run([sys.executable, "-m", "letdown.cli", "solve", COLD, "--json"],
                          capture_output=True, text=True)
    assert base.returncode == 0
    assert "hc_dew_T_K" not in json.loads(base.stdout)["streams"]["export-gas"]
    asked = subprocess.run([sys.executable, "-m", "letdown.cli", "solve", COLD, "--json",
                            "--dew-points"], capture_output=True, text=True)
    assert asked.returncode == 0
    export = json.loads(asked.stdout)["streams"]["export-gas"]
    assert export["hc_dew_T_K"] < export["cricondentherm_K"] + 1e-6


# A lean gas (the gate station's invented composition) let down from 100 to 75 barg: 75 barg is
# above its Peng-Robinson cricondenbar (about 58.9 bar), so no hydrocarbon dew point exists there.
ABOVE_CRICONDENBAR = """\
title: High-pressure export (test)
gas:
  model: peng-robinson
  composition: {methane: 0.9135, ethane: 0.048, propane: 0.012, nitrogen: 0.015, carbon-dioxide: 0.0115}
feeds:
  supply: {T: 30 degC, P: 100 barg, flow: 85000 Sm3/h}
equipment:
  regulator: {kind: throttle, from: supply, to: export, P_out: 75 barg}
"""


def test_no_dew_point_above_the_cricondenbar_is_said_in_words(tmp_path, capsys):
    """Before: the report printed 'hydrocarbon dew point -' and the JSON null, with no reason."""
    from letdown.cli.app import main
    path = tmp_path / "hp.yaml"
    path.write_text(ABOVE_CRICONDENBAR)
    assert main(["solve", str(path), "--dew-points", "--json"]) == 0
    export = json.loads(capsys.readouterr().out)["streams"]["export"]
    env = letdown.Fluid({"methane": 0.9135, "ethane": 0.048, "propane": 0.012, "nitrogen": 0.015,
                         "carbon-dioxide": 0.0115}).envelope()
    assert export["hc_dew_T_K"] is None
    assert export["hc_dew_reason"] == "above the cricondenbar"
    assert export["cricondenbar_Pa"] == pytest.approx(env.cricondenbar.P, rel=1e-9)
    assert main(["solve", str(path), "--dew-points"]) == 0
    text = capsys.readouterr().out
    line = next(ln for ln in text.splitlines() if ln.strip().startswith("export:"))
    assert "nan" not in line.lower()
    bar_g = env.cricondenbar.P / 1e5 - 1.01325
    assert f"no hydrocarbon dew point at 75.00 barg: above the cricondenbar, {bar_g:.2f} barg" in line
