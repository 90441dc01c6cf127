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
    assert s.dew["hc_dew_T_K"] == pytest.approx(gas.dew_point(P=s.P), abs=1e-6)
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
