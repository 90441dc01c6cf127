"""Water in the gas, freezing margins on every stream, and preheat sizing over operating cases."""
import json
from pathlib import Path

import numpy as np
import pytest
from scipy.optimize import brentq

import letdown
from letdown.cli import main
from letdown.errors import InputError
from letdown.sheet.loader import read_spec, parse_spec
from letdown.sheet.solve import Sheet
from letdown.study.size import size
from tests.stations import gate_station

ROOT = Path(__file__).resolve().parents[2]
SIZING = ROOT / "flowsheets" / "sizing-station.yaml"

# Independent constants for the hand calculations (not the library's):
R = 8.314462618                      # J/(mol K), CODATA 2018
MOL_PER_SM3 = 101325.0 / (R * 288.15)  # ideal gas, 15 degC, 101.325 kPa (ISO 13443)
MOL_PER_SCF = 14.696 * 6894.757293168 * 0.028316846592 / (R * ((60.0 - 32.0) / 1.8 + 273.15))
M_WATER = 18.01528e-3                # kg/mol
LB = 0.45359237                      # kg
PSIA = 6894.757293168                # Pa

GATE = "\n" + gate_station("hand-checked station", model=None, edits={
    "0.0115}\n": "0.0115}\n  WATER\n", "at: 5 degC": "at: TARGET",
    "within: [0 degC": "within: [-10 degC"})


def gate(water="", target="5 degC"):
    return GATE.replace("WATER", water).replace("TARGET", target)


def solved(text):
    return Sheet(parse_spec(text)).solve().to_dict()


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
    res = size(read_spec(SIZING), efficiency=0.7)
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
    assert "Design heat:" in text and "assumed" in text and "licensed staff" in text


def test_size_min_T_governs_when_it_is_highest():
    text = SIZING.read_text().replace("min_T: 0 degC", "min_T: 15 degC")
    res = size(parse_spec(text, source="warm.yaml"))
    assert all(c.governing == "min_T" and c.target == pytest.approx(288.15) for c in res.cases)


def test_size_without_a_goal_says_what_is_needed():
    text = SIZING.read_text().split("goals:")[0] + "limits:\n  min_T: 0 degC\n"
    text = text.replace("dP: 0.4 bar}", "dP: 0.4 bar, T_out: 30 degC}")
    with pytest.raises(InputError, match="needs a goal that holds"):
        size(parse_spec(text, source="nogoal.yaml"))


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
        parse_spec(gate(bad), source="w.yaml")
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
        parse_spec(text, source="c.yaml")
    e = err.value
    assert e.file == "c.yaml" and e.line == text.count("\n") and e.field == field
    assert message in str(e)


# ---------------------------------------------------------------------------------------------
# the station is sized, not one stream (issue 10, "size says met when it is not")
# ---------------------------------------------------------------------------------------------
GAS = """gas:
  model: peng-robinson
  composition: {methane: 0.9135, ethane: 0.048, propane: 0.012, nitrogen: 0.015, carbon-dioxide: 0.0115}
  water: 50 mg/Sm3
"""
LIMITS = """limits:
  min_T: 0 degC
  hydrate_margin: 3 K
"""
GATE_GAS = {"methane": 0.9135, "ethane": 0.048, "propane": 0.012, "nitrogen": 0.015,
            "carbon-dioxide": 0.0115}


def _sheet(equipment, goal, extra=""):
    return parse_spec("title: test station (fictional)\n" + GAS
                 + "feeds:\n  supply: {T: 6 degC, P: 64 barg, flow: 85000 Sm3/h}\n"
                 + "equipment:\n" + equipment + "goals:\n  - " + goal + "\n" + LIMITS + extra,
                 source="t.yaml")


def test_size_not_met_when_a_stream_upstream_of_the_heater_is_cold():
    # a first regulator before the preheater: 'mid' (about -7.5 degC at 41 bar, hydrate 11.6 degC)
    # is cold for a reason the preheater cannot fix; the case is not met and 'mid' is named
    fs = _sheet("  first:     {kind: throttle, from: supply, to: mid, P_out: 40 barg}\n"
                "  preheat:   {kind: heater, from: mid, to: warm, dP: 0.3 bar}\n"
                "  regulator: {kind: throttle, from: warm, to: network, P_out: 17 barg}\n",
                "{hold: network.T, at: 5 degC, by: preheat.T_out, within: [-10 degC, 90 degC]}")
    d = size(fs).to_dict()
    case = d["cases"][0]
    assert case["met"] is False
    named = {s["stream"] for s in case["streams_not_met"]}
    assert "mid" in named and "network" not in named
    mid = next(s for s in case["streams_not_met"] if s["stream"] == "mid")
    assert mid["upstream_of_sized_heater"] is True and mid["T_K"] < mid["limit_K"]


def test_size_raises_the_held_target_until_every_downstream_stream_meets_its_limit():
    # the goal holds 'mid' (between the two regulators); 'network' after the second regulator is
    # colder. Sized honestly, the design is that of holding 'network' at its own limit.
    equipment = ("  preheat:   {kind: heater, from: supply, to: warm, dP: 0.3 bar}\n"
                 "  first:     {kind: throttle, from: warm, to: mid, P_out: 40 barg}\n"
                 "  regulator: {kind: throttle, from: mid, to: network, P_out: 17 barg}\n")
    held_mid = size(_sheet(equipment, "{hold: mid.T, at: 5 degC, by: preheat.T_out, "
                                      "within: [-10 degC, 90 degC]}"))
    held_net = size(_sheet(equipment, "{hold: network.T, at: 5 degC, by: preheat.T_out, "
                                      "within: [-10 degC, 90 degC]}"))
    c = held_mid.cases[0]
    assert c.met and held_net.cases[0].met
    assert c.governing_stream == "network" and c.governing == "hydrate"
    # the goal tolerance (1e-6 K) and the raise tolerance (RAISE_TOL) set the agreement
    assert held_mid.design_heat == pytest.approx(held_net.design_heat, rel=1e-5)
    d = held_mid.to_dict()["cases"][0]
    assert d["streams_not_met"] == []


def test_fixed_preheater_counts_in_design_heat_and_fuel():
    # a fixed first-stage heater (15 degC, its own efficiency 0.9), then the sized one (0.7 from
    # the command line). Hand calculation with the same fluid: each duty F (h_out - h_in).
    fs = _sheet("  stage1:    {kind: heater, from: supply, to: mild, T_out: 15 degC, dP: 0.2 bar, "
                "efficiency: 0.9}\n"
                "  preheat:   {kind: heater, from: mild, to: warm, dP: 0.3 bar}\n"
                "  regulator: {kind: throttle, from: warm, to: network, P_out: 17 barg}\n",
                "{hold: network.T, at: 5 degC, by: preheat.T_out, within: [-10 degC, 90 degC]}")
    res = size(fs, efficiency=0.7)
    fluid = letdown.Fluid(GATE_GAS)
    atm = 101325.0
    flow = 85000.0 / 3600.0 * MOL_PER_SM3
    P1 = 64e5 + atm
    stage1 = flow * (fluid.flash(T=288.15, P=P1 - 0.2e5).h - fluid.flash(T=279.15, P=P1).h)
    second, _ = _hand_duty(fluid, 288.15, P1 - 0.2e5, 0.3e5, 17e5 + atm, flow)
    assert res.design_heat == pytest.approx(stage1 + second, rel=5e-3)
    assert res.design_fuel == pytest.approx(stage1 / 0.9 + second / 0.7, rel=5e-3)
    d = res.to_dict()
    assert d["design"]["heaters_W"]["stage1"] == pytest.approx(stage1, rel=5e-3)
    assert d["heaters"]["stage1"]["efficiency"] == 0.9
    assert d["heaters"]["stage1"]["sized"] is False and d["heaters"]["preheat"]["sized"] is True


def test_free_water_by_dew_point_lets_the_dew_point_govern():
    # Corrow Moor: water dew point about -19.5 degC at 19 barg, hydrate 7.0 degC. Trusting the
    # dew point, neither hydrate nor ice governs (no free water above -19.5 + 3 degC): min_T does.
    res = size(read_spec(SIZING), free_water="by-dew-point")
    for c in res.cases:
        assert c.water_dew_T + 3.0 < 273.15
        assert c.governing == "min_T" and c.target == pytest.approx(273.15, abs=1e-9)
        assert c.met
    d = res.to_dict()
    assert d["free_water"] == "by-dew-point"
    assert size(read_spec(SIZING)).to_dict()["free_water"] == "always"
    from letdown.report.size import size_text
    assert "free water only below the water dew point" in size_text(res)
    assert "free water assumed in every stream" in size_text(size(read_spec(SIZING)))


def test_ice_still_governs_when_min_T_is_a_steel_rating_below_zero():
    # a 4 barg district main, limits.min_T -20 degC (the steel's rating): hydrate T at 5 bar is
    # about -14 degC, so ice + margin (3 degC) governs, not -11 degC
    text = gate().replace("17 barg", "4 barg").replace("min_T: 0 degC", "min_T: -20 degC")
    res = size(parse_spec(text, source="district.yaml"))
    c = res.cases[0]
    assert c.governing == "ice" and c.target == pytest.approx(276.15, abs=1e-9)


def test_a_size_case_that_fails_is_recorded_and_the_rest_sized(tmp_path, capsys):
    # the bracket stops at 34 degC: three cases need 35.5 degC and fail; summer-min is sized
    text = SIZING.read_text().replace("within: [-10 degC, 90 degC]", "within: [-10 degC, 34 degC]")
    res = size(parse_spec(text, source="narrow.yaml"))
    full = size(read_spec(SIZING))
    by_name = {c.name: c for c in res.cases}
    assert not by_name["winter-peak"].met and "goal" in by_name["winter-peak"].reason
    assert by_name["summer-min"].met and by_name["summer-min"].reason == ""
    assert by_name["summer-min"].duty == pytest.approx(
        next(c for c in full.cases if c.name == "summer-min").duty, rel=1e-9)
    f = tmp_path / "narrow.yaml"
    f.write_text(text)
    assert main(["size", str(f), "--json"]) == 1
    out = json.loads(capsys.readouterr().out)
    assert len(out["cases"]) == 4
    assert [c["met"] for c in out["cases"]] == [False, False, False, True]
    assert all(c["reason"] for c in out["cases"][:3])


def test_cubic_size_output_states_its_bias_against_gerg_2008():
    # re-measured here: the gate station sized with each cubic model and with GERG-2008
    pytest.importorskip("pyaga8")
    from letdown.report.size import size_text
    from letdown.study.model_bias import CUBIC_BIAS
    gate_file = ROOT / "flowsheets" / "gate-station.yaml"
    ref = size(read_spec(gate_file), model="gerg-2008")
    from letdown.fluid.fluid import MODEL_NAMES
    assert set(CUBIC_BIAS) == set(MODEL_NAMES.values()) - {"gerg-2008"}   # every cubic model
    assert not any("against GERG-2008" in x for x in size_text(ref).splitlines())
    for model, bias in CUBIC_BIAS.items():
        res = size(read_spec(gate_file), model=model)
        dT = res.design_case.heater_T_out - ref.design_case.heater_T_out
        rel = res.design_heat / ref.design_heat - 1.0
        # the figures are printed to 0.01 K and 0.1 %: they must agree to that rounding
        assert dT == pytest.approx(bias["preheat_T_out_K"], abs=0.006)
        assert 100 * rel == pytest.approx(bias["size_duty_pct"], abs=0.06)
        line = [x for x in size_text(res).splitlines() if "against GERG-2008" in x]
        assert len(line) == 1 and f"{bias['preheat_T_out_K']:+.2f} K" in line[0]
        assert res.to_dict()["model_bias"] == line[0].strip()
    assert ref.to_dict()["model_bias"] is None


def test_two_sized_heaters_each_hold_their_own_stream_at_its_limit():
    # the two-stage station with a second goal: the preheater holds 'mid' (between the regulators)
    # and the interstage heater 'grid'. Hand calculation, stage by stage, with the same fluid.
    text = (ROOT / "flowsheets" / "two-stage-letdown.yaml").read_text().replace(
        "goals:\n", "goals:\n  - {hold: mid.T, at: 15 degC, by: preheat.T_out, "
                    "within: [5 degC, 90 degC]}\n")
    res = size(parse_spec(text, source="two.yaml"), efficiency=0.8)
    c = res.cases[0]
    assert c.met, c.short
    assert [s["heater"] for s in c.sized] == ["preheat", "interheat"]
    fluid = letdown.Fluid({"methane": 0.902, "ethane": 0.055, "propane": 0.014, "n-butane": 0.004,
                           "nitrogen": 0.013, "carbon-dioxide": 0.012})
    atm = 101325.0
    flow = 150000.0 / 3600.0 * MOL_PER_SM3
    d1, lim1 = _hand_duty(fluid, 281.15, 70e5 + atm, 0.2e5, 36e5 + atm, flow)
    d2, lim2 = _hand_duty(fluid, lim1, 36e5 + atm, 0.2e5, 8e5 + atm, flow)
    first, second = c.sized
    assert first["held"] == "mid" and first["target_T_K"] == pytest.approx(lim1, abs=1e-6)
    assert second["held"] == "grid" and second["target_T_K"] == pytest.approx(lim2, abs=1e-6)
    assert first["duty_W"] == pytest.approx(d1, rel=5e-3)
    assert second["duty_W"] == pytest.approx(d2, rel=5e-3)
    assert res.design_heat == pytest.approx(d1 + d2, rel=5e-3)
    assert res.design_fuel == pytest.approx((d1 + d2) / 0.8, rel=5e-3)
    from letdown.report.size import size_text
    assert "interheat" in size_text(res) and "Met: yes" in size_text(res)


def test_size_without_min_T_says_no_material_limit_was_applied():
    # trusting a -19.5 degC water dew point with no limits.min_T sizes the main far below 0 degC;
    # the note says why (found by fuzzing the sizing station without its limits section)
    full = SIZING.read_text()
    text = full.split("limits:")[0] + full.split("hydrate_margin: 3 K\n")[1]
    res = size(parse_spec(text, source="nolimits.yaml"), free_water="by-dew-point")
    assert all(c.target < 273.15 - 15 for c in res.cases)
    assert any("no limits.min_T: no material limit" in n and "far below 0 degC" in n
               for n in res.notes)
