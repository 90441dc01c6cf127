"""Water in the gas, freezing margins on every stream, and preheat sizing over operating cases."""
import json
from pathlib import Path

import numpy as np
import pytest
from scipy.optimize import brentq

import letdown
from letdown.cli import main
from letdown.errors import InputError
from letdown.sheet.loader import load, loads
from letdown.sheet.solve import Sheet
from letdown.study.size import size

ROOT = Path(__file__).resolve().parent.parent
SIZING = ROOT / "flowsheets" / "sizing-station.yaml"

# Independent constants for the hand calculations (not the library's):
R = 8.314462618                      # J/(mol K), CODATA 2018
MOL_PER_SM3 = 101325.0 / (R * 288.15)  # ideal gas, 15 degC, 101.325 kPa (ISO 13443)
MOL_PER_SCF = 14.696 * 6894.757293168 * 0.028316846592 / (R * ((60.0 - 32.0) / 1.8 + 273.15))
M_WATER = 18.01528e-3                # kg/mol
LB = 0.45359237                      # kg
PSIA = 6894.757293168                # Pa

GATE = """
title: hand-checked station
gas:
  composition: {methane: 0.9135, ethane: 0.048, propane: 0.012, nitrogen: 0.015, carbon-dioxide: 0.0115}
  WATER
feeds:
  supply: {T: 6 degC, P: 64 barg, flow: 85000 Sm3/h}
equipment:
  preheat:   {kind: heater,   from: supply, to: warm,    T_out: 38 degC, dP: 0.3 bar}
  regulator: {kind: throttle, from: warm,   to: network, P_out: 17 barg}
goals:
  - {hold: network.T, at: TARGET, by: preheat.T_out, within: [-10 degC, 90 degC]}
limits:
  min_T: 0 degC
  hydrate_margin: 3 K
"""


def gate(water="", target="5 degC"):
    return GATE.replace("WATER", water).replace("TARGET", target)


def solved(text):
    return Sheet(loads(text)).solve().to_dict()


# ---------------------------------------------------------------------------------------------
# water input forms
# ---------------------------------------------------------------------------------------------
def test_water_saturated_matches_bukacek_check_value():
    # Bukacek (1955), check value of REFERENCE_DATA.md section 3 (status C): 100 degF, 1000 psia
    # gives 60.4 lb/MMscf (per standard volume of gas, as the correlation is written).
    d = solved(gate("water: {saturated: {T: 100 degF, P: 1000 psia}}"))
    y = d["streams"]["supply"]["water_mole_fraction"]
    lb_mmscf = y * MOL_PER_SCF * M_WATER / LB * 1e6
    assert lb_mmscf == pytest.approx(60.4, rel=1e-3)
    # carried per Sm3 of dry gas: r = y / (1 - y)
    mg = d["streams"]["supply"]["water_mg_Sm3"]
    assert mg == pytest.approx(y / (1 - y) * MOL_PER_SM3 * M_WATER * 1e6, rel=1e-12)


def test_water_dew_point_form_gives_bukacek_content_and_back():
    # Bukacek (1955), REFERENCE_DATA.md section 3 (status C): 32 degF, 1000 psia gives 6.85 lb/MMscf.
    text = gate("water: {dew_point: {T: 32 degF, P: 1000 psia}}").replace("64 barg", "1000 psia")
    d = solved(text)
    s = d["streams"]["supply"]
    assert s["water_mole_fraction"] * MOL_PER_SCF * M_WATER / LB * 1e6 == pytest.approx(6.85,
                                                                                        rel=1e-3)
    # the feed sits at the stated pressure, so its water dew point is the stated one
    assert s["water_dew_T_K"] == pytest.approx(273.15, abs=1e-5)


@pytest.mark.parametrize("entry, mg_expected", [
    ("water: 100 mg/Sm3", 100.0),
    # 7 lb per MMscf of dry gas, converted by hand: lb -> mg, MMscf -> Sm3 by the ideal-gas moles
    ("water: 7 lb/MMscf", 7 * LB * 1e6 / (1e6 * MOL_PER_SCF / MOL_PER_SM3)),
    ("water: 0.0001", 1e-4 / (1 - 1e-4) * MOL_PER_SM3 * M_WATER * 1e6),
])
def test_water_content_forms_convert(entry, mg_expected):
    d = solved(gate(entry))
    for s in d["streams"].values():
        assert s["water_mg_Sm3"] == pytest.approx(mg_expected, rel=1e-9)
    r = mg_expected * 1e-6 / M_WATER / MOL_PER_SM3
    assert d["streams"]["network"]["water_mole_fraction"] == pytest.approx(r / (1 + r), rel=1e-9)


def test_lb_per_mmscf_is_sixteen_mg_per_sm3():
    # REFERENCE_DATA.md section 3: 1 lb/MMscf is about 16.02 mg/Sm3 (our ideal-gas volumes: 16.05)
    a = solved(gate("water: 1 lb/MMscf"))["streams"]["supply"]["water_mg_Sm3"]
    assert a == pytest.approx(16.02, rel=3e-3)


# ---------------------------------------------------------------------------------------------
# margins and warnings on a hand-checked stream
# ---------------------------------------------------------------------------------------------
def test_margins_of_a_stream_by_hand():
    d = solved(gate("water: {dew_point: {T: -8 degC, P: 69 barg}}"))
    fluid = letdown.Fluid({"methane": 0.9135, "ethane": 0.048, "propane": 0.012,
                           "nitrogen": 0.015, "carbon-dioxide": 0.0115})
    s = d["streams"]["network"]
    T, P = s["T_K"], s["P_Pa"]
    assert T == pytest.approx(278.15, abs=1e-5)
    hT = fluid.hydrate_T(P)
    y = fluid.water_content(265.15, 69e5 + 101325.0)      # saturated at the stated dew point
    dew = fluid.water_dew_point(float(y), P)
    assert s["hydrate_T_K"] == pytest.approx(hT, abs=1e-6)
    assert s["water_dew_T_K"] == pytest.approx(dew, abs=1e-5)
    assert s["hydrate_margin_K"] == pytest.approx(T - hT, abs=1e-6)
    assert s["water_dew_margin_K"] == pytest.approx(T - dew, abs=1e-5)
    # no free water can form (far above the water dew point): no ice limit (issue 10)
    assert s["ice_margin_K"] is None and s["ice_T_K"] is None
    assert s["min_T_margin_K"] == pytest.approx(T - 273.15, abs=1e-9)
    # 5 degC is within 3 K of the hydrate temperature (4.8 degC at 18 bar) but well above the
    # water dew point: the weaker warning, not the free-water one
    what = [w["what"] for w in d["warnings"] if w["where"] == "network"]
    assert any("hydrate margin" in w and "above its water dew point" in w for w in what), what
    assert not any("free water can form hydrate" in w for w in what)
    assert not any("no gas.water given" in w["what"] for w in d["warnings"])


def test_wet_cold_stream_warns_hydrate_risk_and_ice():
    # saturated at 30 degC, 64 barg: at 18 bar its dew point is far above 1 degC -> free water
    d = solved(gate("water: {saturated: {T: 30 degC, P: 64 barg}}", target="1 degC"))
    s = d["streams"]["network"]
    assert s["water_dew_margin_K"] < 0 and s["hydrate_margin_K"] < 3.0
    what = [w["what"] for w in d["warnings"] if w["where"] == "network"]
    assert any(w.startswith("hydrate margin") and "free water can form hydrate" in w for w in what)
    # free water at 1 degC: its ice point is 0 degC and the ice check has no margin (issue 10:
    # ice is judged against the freezing point of the free water), so +1 K and no ice warning
    assert s["ice_T_K"] == 273.15 and s["ice_margin_K"] == pytest.approx(1.0, abs=1e-5)
    assert not any(w["kind"] == "ice" for w in d["warnings"] if w["where"] == "network")


def test_no_water_given_assumes_saturated_feed_and_says_so():
    d = solved(gate())
    assert any(w["where"] == "gas" and "no gas.water given" in w["what"] for w in d["warnings"])
    s = d["streams"]["supply"]
    assert s["water_dew_T_K"] == pytest.approx(s["T_K"], abs=1e-6)
    assert not any("not evaluated" in w["what"] for w in d["warnings"])


# ---------------------------------------------------------------------------------------------
# sizing
# ---------------------------------------------------------------------------------------------
def _hand_duty(fluid, T_in, P_in, dP, P_out, flow, margin=3.0, min_T=273.15):
    """The preheat that lands the regulator outlet exactly on the governing limit."""
    limit = max(min_T, 273.15 + margin, fluid.hydrate_T(P_out) + margin)
    P_warm = P_in - dP

    def outlet_T(Tw):
        return fluid.flash(P=P_out, h=fluid.flash(T=Tw, P=P_warm).h).T - limit
    Tw = brentq(outlet_T, 273.15, 363.15, xtol=1e-10)
    duty = flow * (fluid.flash(T=Tw, P=P_warm).h - fluid.flash(T=T_in, P=P_in).h)
    return duty, limit


def test_design_duty_matches_hand_calculation():
    res = size(load(SIZING), efficiency=0.7)
    fluid = letdown.Fluid({"methane": 0.9012, "ethane": 0.052, "propane": 0.016,
                           "isobutane": 0.002, "n-butane": 0.002, "nitrogen": 0.012,
                           "carbon-dioxide": 0.0148})
    atm = 101325.0
    cases = {"winter-peak": (275.15, 70e5, 19e5, 110000.0),
             "winter-min": (275.15, 70e5, 19e5, 15000.0),
             "summer-peak": (287.15, 70e5, 19e5, 110000.0),
             "summer-min": (287.15, 62e5, 17e5, 15000.0)}
    hand = {}
    for c in res.cases:
        T_in, P_in, P_out, sm3h = cases[c.name]
        flow = sm3h / 3600.0 * MOL_PER_SM3
        hand[c.name], limit = _hand_duty(fluid, T_in, P_in + atm, 0.4e5, P_out + atm, flow)
        assert c.target == pytest.approx(limit, abs=1e-6)
        assert c.duty == pytest.approx(hand[c.name], rel=5e-3)
        assert c.governing == "hydrate"
    assert res.design_case.name == max(hand, key=hand.get) == "winter-peak"
    assert res.design_duty == pytest.approx(hand["winter-peak"], rel=5e-3)
    assert res.design_fuel == pytest.approx(res.design_duty / 0.7, rel=1e-12)
    assert res.efficiency_source.startswith("the command line")


def test_size_cli_json_and_caution(capsys):
    assert main(["size", str(SIZING), "--json", "--efficiency", "0.6"]) == 0
    out, err = capsys.readouterr()
    d = json.loads(out)
    assert d["design"]["case"] == "winter-peak" and d["efficiency"] == 0.6
    assert len(d["cases"]) == 4
    assert "qualified, licensed staff" in d["caution"] and "qualified, licensed staff" in err
    assert main(["size", str(SIZING)]) == 0
    text = capsys.readouterr().out
    assert "Design duty:" in text and "assumed" in text and "licensed staff" in text


def test_size_min_T_governs_when_it_is_highest():
    text = SIZING.read_text().replace("min_T: 0 degC", "min_T: 15 degC")
    res = size(loads(text, source="warm.yaml"))
    assert all(c.governing == "min_T" and c.target == pytest.approx(288.15) for c in res.cases)


def test_size_without_a_goal_says_what_is_needed():
    text = SIZING.read_text().split("goals:")[0] + "limits:\n  min_T: 0 degC\n"
    text = text.replace("dP: 0.4 bar}", "dP: 0.4 bar, T_out: 30 degC}")
    with pytest.raises(InputError, match="needs a goal that holds"):
        size(loads(text, source="nogoal.yaml"))


# ---------------------------------------------------------------------------------------------
# located errors
# ---------------------------------------------------------------------------------------------
@pytest.mark.parametrize("bad, line, field, message", [
    ("water: 80 mg/m3", 5, "gas.water", "cannot read water content"),
    ("water: 0.3", 5, "gas.water", "mole fraction lies in"),
    ("water: {dew_point: {T: -8 degC}}", 5, "gas.water.dew_point", "missing field 'P'"),
    ("water: {saturated: {T: 500 degC, P: 60 barg}}", 5, "gas.water.saturated.T", "200-450 K"),
])
def test_bad_water_entries_are_located(bad, line, field, message):
    with pytest.raises(InputError) as err:
        loads(gate(bad), source="w.yaml")
    e = err.value
    assert (e.file, e.line, e.field) == ("w.yaml", line, field)
    assert message in str(e)


@pytest.mark.parametrize("case, field, message", [
    ("{name: a, suply: {T: 2 degC}}", "cases[0].suply", "did you mean 'supply'"),
    ("{name: a, supply: {Tin: 2 degC}}", "cases[0].supply.Tin", "cannot set 'Tin'"),
    ("{name: a, preheat: {T_out: 30 degC}}", "cases[0].preheat.T_out", "varied by a goal"),
    ("{name: a, supply: {flow: -5 Sm3/h}}", "cases[0].supply.flow", "must be positive"),
    ("{name: a}", "cases[0]", "changes nothing"),
])
def test_bad_cases_are_located(case, field, message):
    text = SIZING.read_text().split("cases:")[0] + f"cases:\n  - {case}\n"
    with pytest.raises(InputError) as err:
        loads(text, source="c.yaml")
    e = err.value
    assert e.file == "c.yaml" and e.line == text.count("\n") and e.field == field
    assert message in str(e)
