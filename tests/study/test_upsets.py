"""Upsets (issue 13 part 6): loss of preheat, regulators failing wide open, series runs.

Hand calculations: IEC 60534-2-1:2011 for gas (clause 6.4, density form, FR = 1, N6 = 3.16 for
Kv in m3/h, W in kg/h, P in kPa) with the reducer and expander of clause 7 (N2 = 1.60e-3,
N5 = 1.80e-3, d in mm), written out here, not taken from :mod:`letdown.equipment.valve`:

    zeta1 = 0.5 (1 - (d/D1)^2)^2,  zeta2 = 1.0 (1 - (d/D2)^2)^2,  zetaB = 1 - (d/D)^4
    Fp = 1 / sqrt(1 + (zeta1 + zeta2 + zetaB1 - zetaB2) / N2 (Kv/d^2)^2)
    xTP = (xT / Fp^2) / (1 + xT (zeta1 + zetaB1) / N5 (Kv/d^2)^2)
    F_gamma = kappa / 1.40,  x_s = min(x, F_gamma xTP),  Y = 1 - x_s / (3 F_gamma xTP)
    W = N6 Fp Kv Y sqrt(x_s P1 rho1)

(``d = D1 = D2`` gives every zeta zero: no fittings, ``Fp = 1``, ``xTP = xT``.)
"""
import json
import math
from pathlib import Path

import numpy as np
import pytest

import letdown
from letdown.caution import UPSET_CAUTION
from letdown.cli import main
from letdown.equipment import valve as iec
from letdown.report.upsets import upsets_text
from letdown.sheet.loader import read_spec, parse_spec
from letdown.sheet.solve import solve
from letdown.study.upsets import all_open_flow, series_runs, upsets

ROOT = Path(__file__).resolve().parents[2]
DISTRICT = ROOT / "flowsheets" / "district-station.yaml"
GAS = {"methane": 0.9135, "ethane": 0.048, "propane": 0.012, "nitrogen": 0.015,
       "carbon-dioxide": 0.0115}
ATM = 101325.0


def hand_fail_open(Kv, xT, d, D1, D2, P1, P_set, rho1, kappa):
    """The module docstring's equations [kg/s] and the choked verdict (d, D in mm, P in Pa)."""
    k2 = (Kv / d ** 2) ** 2
    z1, z2 = 0.5 * (1 - (d / D1) ** 2) ** 2, 1.0 * (1 - (d / D2) ** 2) ** 2
    zB1, zB2 = 1 - (d / D1) ** 4, 1 - (d / D2) ** 4
    Fp = 1.0 / math.sqrt(1.0 + (z1 + z2 + zB1 - zB2) / 1.60e-3 * k2)
    xTP = (xT / Fp ** 2) / (1.0 + xT * (z1 + zB1) / 1.80e-3 * k2)
    x, x_ch = (P1 - P_set) / P1, kappa / 1.40 * xTP
    x_s = min(x, x_ch)
    Y = 1.0 - x_s / (3.0 * x_ch)
    return 3.16 * Fp * Kv * Y * math.sqrt(x_s * P1 / 1e3 * rho1) / 3600.0, x >= x_ch


@pytest.fixture(scope="module")
def district():
    return upsets(read_spec(DISTRICT))


def test_fail_open_load_of_the_shipped_district_station_by_hand(district):
    # the file as written (the 'design' case): stage1 (Kv 80, xT 0.72, 50 mm in 102/154 mm
    # pipes) from its inlet state into its protection's 18 barg
    res = solve(read_spec(DISTRICT))
    warm = res.streams["warm"]
    st = letdown.Fluid(GAS, model="peng-robinson").flash(T=warm.T, P=warm.P)
    kappa = st.density * st.w ** 2 / warm.P
    W, choked = hand_fail_open(80.0, 0.72, 50.0, 102.0, 154.0, warm.P, 18e5 + ATM, st.density,
                               kappa)
    row = next(c for f in district.fail_open if f["block"] == "stage1" for c in f["cases"]
               if c["case"] == "design")
    assert not choked and row["choked"] is False
    assert row["flow_kg_s"] == pytest.approx(W, rel=1e-9)
    assert row["flow_mol_s"] == pytest.approx(W / st.molar_mass, rel=1e-9)
    assert row["set_pressure_Pa"] == pytest.approx(18e5 + ATM, rel=1e-12)
    assert row["normal_flow_kg_s"] == pytest.approx(warm.mass_flow, rel=1e-12)
    # stage2 (Kv 150, 100 mm in 154/303 mm) into 5 barg, from the interheater's outlet
    rewarm = res.streams["rewarm"]
    st2 = letdown.Fluid(GAS, model="peng-robinson").flash(T=rewarm.T, P=rewarm.P)
    W2, _ = hand_fail_open(150.0, 0.7, 100.0, 154.0, 303.0, rewarm.P, 5e5 + ATM, st2.density,
                           st2.density * st2.w ** 2 / rewarm.P)
    row2 = next(c for f in district.fail_open if f["block"] == "stage2" for c in f["cases"]
                if c["case"] == "design")
    assert row2["flow_kg_s"] == pytest.approx(W2, rel=1e-9)


def test_loss_of_every_heater_takes_the_gas_isenthalpic_to_the_district(district):
    # heaters off: the throttles are isenthalpic and the heaters add nothing, so the district
    # gas has the supply's enthalpy at 4 barg (the heaters' dP changes nothing downstream of a
    # throttle that sets its own outlet pressure)
    sc = next(s for s in district.preheat if s["scenario"] == "every heater off")
    assert set(sc["heaters_off"]) == {"preheat", "interheat"}
    assert len(sc["goals_dropped"]) == 2 and not sc["failures"]
    gas = letdown.Fluid(GAS, model="peng-robinson")
    cases = {"winter-peak": (277.15, 32e5), "design": (281.15, 40e5),
             "summer-low": (287.15, 44e5)}
    T_district = {k: gas.flash(P=4e5 + ATM, h=gas.flash(T=T, P=P + ATM).h).T
                  for k, (T, P) in cases.items()}
    coldest = min(T_district, key=T_district.get)
    row = next(r for r in sc["streams"] if r["stream"] == "district")
    assert row["coldest_case"] == coldest
    assert row["coldest_T_K"] == pytest.approx(T_district[coldest], abs=1e-6)
    # the material margin is T - limits.min_T (-10 degC), below zero here: a hazard
    assert row["min_T_margin_K"] == pytest.approx(T_district[coldest] - 263.15, abs=1e-6)
    assert "below min_T" in row["verdict"]


def test_each_heater_alone_and_normal_operation(district):
    names = [s["scenario"] for s in district.preheat]
    assert names == ["normal operation", "every heater off", "preheat off", "interheat off"]
    normal = district.preheat[0]
    # normal operation holds the goals: mid at 8 degC, district at 5 degC in every case
    rows = {r["stream"]: r for r in normal["streams"]}
    assert rows["mid"]["coldest_T_K"] == pytest.approx(281.15, abs=1e-5)
    assert rows["district"]["coldest_T_K"] == pytest.approx(278.15, abs=1e-5)
    # preheat off: the interheater's goal still holds the district at 5 degC; the gas between
    # the stages is the coldest of the station
    pre = {r["stream"]: r for r in district.preheat[2]["streams"]}
    assert district.preheat[2]["goals_dropped"] == ["mid.T by preheat.T_out"]
    assert pre["district"]["coldest_T_K"] == pytest.approx(278.15, abs=1e-5)
    assert pre["mid"]["coldest_T_K"] < 273.15
    # the freezing figures are the solve's own (the same hydrate margin as a plain solve of
    # the scenario)
    assert pre["mid"]["hydrate_margin_K"] < 0.0 and "dry" in pre["mid"]["verdict"]


def test_series_run_all_open_passes_the_same_flow_through_each_valve(district):
    run = district.runs[0]
    assert run["blocks"] == ["stage1", "stage2"]
    gas = letdown.Fluid(GAS, model="peng-robinson")
    res = solve(read_spec(DISTRICT))
    warm = res.streams["warm"]
    row = next(c for c in run["all_open"] if c["case"] == "design")
    P1, P2 = row["inlet_P_Pa"]["stage1"], row["inlet_P_Pa"]["stage2"]
    assert P1 == pytest.approx(warm.P, rel=1e-12)
    st1 = gas.flash(T=warm.T, P=P1)
    st2 = gas.flash(P=P2, h=st1.h)               # the run's inlet enthalpy between the valves
    W1, c1 = hand_fail_open(80.0, 0.72, 50.0, 102.0, 154.0, P1, P2, st1.density,
                            st1.density * st1.w ** 2 / P1)
    W2, c2 = hand_fail_open(150.0, 0.7, 100.0, 154.0, 303.0, P2, 5e5 + ATM, st2.density,
                            st2.density * st2.w ** 2 / P2)
    assert W1 == pytest.approx(row["flow_kg_s"], rel=1e-8)
    assert W2 == pytest.approx(row["flow_kg_s"], rel=1e-8)
    assert c2 and row["choked"]["stage2"] and not row["choked"]["stage1"]
    # the one-fails figures are the (b) loads
    assert run["single_failure"]["stage1"] == next(f["cases"] for f in district.fail_open
                                                   if f["block"] == "stage1")


def test_all_open_flow_of_two_valves_without_fittings_not_choked():
    # two linear valves in series, small pressure drops (nothing choked): the flow through
    # each, by hand, at the intermediate pressure found, and the end at the set pressure
    gas = letdown.Fluid(GAS, model="peng-robinson")
    P0, T0 = np.array([40e5, 60e5]), np.array([290.0, 300.0])
    st0 = gas.flash(T=T0, P=P0)
    ratings = [{"Kv": 40.0, "xT": 0.7, "characteristic": "linear"},
               {"Kv": 60.0, "xT": 0.65, "characteristic": "linear"}]
    P_set = np.array([34e5, 50e5])
    W, P_in, chokes = all_open_flow(gas, ratings, P0, st0.h, np.tile(gas.zs, (2, 1)), P_set)
    for i in range(2):
        assert not chokes[0][i] and not chokes[1][i]
        s1 = gas.flash(T=T0[i], P=P0[i])
        s2 = gas.flash(P=P_in[1][i], h=s1.h)
        W1, _ = hand_fail_open(40.0, 0.7, 1.0, 1.0, 1.0, P0[i], P_in[1][i], s1.density,
                               s1.density * s1.w ** 2 / P0[i])
        W2, _ = hand_fail_open(60.0, 0.65, 1.0, 1.0, 1.0, P_in[1][i], P_set[i], s2.density,
                               s2.density * s2.w ** 2 / P_in[1][i])
        assert W[i] == pytest.approx(W1, rel=1e-8) and W[i] == pytest.approx(W2, rel=1e-8)
        # in series: less than the first valve alone into the same set pressure
        alone = iec.mass_flow(40.0, P0[i], P_set[i], s1.density, s1.density * s1.w ** 2 / P0[i],
                              0.7)[0]
        assert W[i] < alone


def test_random_series_runs_close_their_flow_and_pressure_balances():
    # fuzz: random inlet states, Kvs, xTs and set pressures, three valves in series; at the
    # answer every valve passes the same flow (the forward equation at the pressures found) and
    # the last outlet is at the set pressure unless a valve chokes
    rng = np.random.default_rng(6)
    n = 12
    gas = letdown.Fluid(GAS, model="peng-robinson")
    P0 = rng.uniform(20e5, 90e5, n)
    T0 = rng.uniform(280.0, 330.0, n)
    st0 = gas.flash(T=T0, P=P0)
    kvs = rng.uniform(5.0, 300.0, (3,))
    xts = rng.uniform(0.5, 0.8, (3,))
    ratings = [{"Kv": float(k), "xT": float(x), "characteristic": "linear"}
               for k, x in zip(kvs, xts)]
    P_set = P0 * rng.uniform(0.05, 0.9, n)
    W, P_in, chokes = all_open_flow(gas, ratings, P0, st0.h, np.tile(gas.zs, (n, 1)), P_set)
    assert np.all(np.isfinite(W)) and np.all(W > 0.0)
    ends = P_in[1:] + [P_set]
    for j, v in enumerate(ratings):
        st = gas.flash(P=P_in[j], h=st0.h)
        kappa = st.density * st.w ** 2 / P_in[j]
        through = iec.mass_flow(v["Kv"], P_in[j], ends[j], st.density, kappa, v["xT"])
        # choked: the flow is the valve's choked flow, reached at or before the next pressure
        assert through == pytest.approx(W, rel=1e-7)
    assert np.all(np.diff(np.array([*P_in, P_set]), axis=0) < 0.0)


def test_first_valve_choked_bounds_the_run():
    # a small first valve far upstream of a big second one: the first chokes and the run passes
    # its choked flow whatever the set pressure below
    gas = letdown.Fluid(GAS, model="peng-robinson")
    st0 = gas.flash(T=300.0, P=60e5)
    ratings = [{"Kv": 5.0, "xT": 0.7, "characteristic": "linear"},
               {"Kv": 500.0, "xT": 0.7, "characteristic": "linear"}]
    zs = np.tile(gas.zs, (2, 1))
    W, _, chokes = all_open_flow(gas, ratings, np.full(2, 60e5), np.full(2, st0.h), zs,
                                 np.array([5e5, 2e5]))
    kappa = st0.density * st0.w ** 2 / 60e5
    W_ch, _ = hand_fail_open(5.0, 0.7, 1.0, 1.0, 1.0, 60e5, 1e5, st0.density, kappa)
    assert np.all(chokes[0])
    assert W == pytest.approx(np.full(2, W_ch), rel=1e-9)


def test_runs_follow_heaters_but_not_branches():
    fs = read_spec(DISTRICT)
    assert series_runs(fs) == [["stage1", "stage2"]]
    text = DISTRICT.read_text().replace(
        "  interheat: {kind: heater, from: mid, to: rewarm, T_out: 15 degC, dP: 0.1 bar}",
        "  tee: {kind: splitter, from: mid, to: {rewarm: 0.9, bypass: rest}}")
    text = text.replace("  - {hold: district.T, at: 5 degC, by: interheat.T_out, "
                        "within: [0 degC, 90 degC]}\n", "")
    assert series_runs(parse_spec(text)) == []


def test_caution_and_reports_in_both_unit_systems(district, capsys):
    assert "local codes and licensed practice" in UPSET_CAUTION
    assert district.to_dict()["caution"] == UPSET_CAUTION
    si = upsets_text(district, "si")
    field = upsets_text(district, "field")
    assert UPSET_CAUTION in si and UPSET_CAUTION in field
    assert "degC" in si and "barg" in si and "kg/h" in si
    assert "degF" in field and "psig" in field and "lb/h" in field
    assert main(["upsets", str(DISTRICT), "--json"]) == 0
    out = capsys.readouterr()
    data = json.loads(out.out)
    assert set(data) >= {"loss_of_preheat", "fail_open", "series_runs", "caution"}
    row = data["fail_open"][0]["cases"][0]
    assert {"flow_kg_s", "flow_mol_s", "inlet_P_Pa", "set_pressure_Pa"} <= set(row)
    assert "licensed practice" in out.err


def test_a_station_without_heaters_or_protection_says_so():
    fs = parse_spec("""\
title: bare regulator (fictional)
gas: {model: peng-robinson, composition: {methane: 1.0}}
feeds:
  supply: {T: 15 degC, P: 40 barg, flow: 1000 Sm3/h}
equipment:
  regulator: {kind: throttle, from: supply, to: out, P_out: 10 barg}
""")
    res = upsets(fs)
    assert [s["scenario"] for s in res.preheat] == ["normal operation"]
    assert any("no heater" in n for n in res.notes)
    assert any("no rated throttle with protection" in n for n in res.notes)
    assert res.fail_open == () and res.runs == ()


def test_a_failed_first_case_still_gives_valid_json():
    # fuzz find: the first case's supply at 16 barg cannot feed a 16 barg regulator outlet; its
    # rated Kv was read from that failed case (NaN), and the JSON writer stopped with exit 3
    text = DISTRICT.read_text().replace("T: 4 degC, P: 32 barg", "T: 4 degC, P: 16 barg")
    res = upsets(parse_spec(text))
    assert res.any_failed and "winter-peak" in res.preheat[0]["failures"]
    data = json.loads(json.dumps(res.to_dict(), allow_nan=False))
    assert data["fail_open"][0]["Kv_rated_m3_h"] == 80.0
    assert data["fail_open"][0]["cases"][0]["flow_kg_s"] is None


def test_every_case_failing_still_lists_the_protected_regulators():
    # no case solves in normal operation (the supply below the first stage's outlet pressure in
    # every case): the regulators with protection are listed with blank loads, not forgotten
    text = DISTRICT.read_text().replace("P: 40 barg", "P: 10 barg").replace(
        "P: 32 barg", "P: 10 barg").replace("P: 44 barg", "P: 10 barg")
    res = upsets(parse_spec(text))
    assert len(res.preheat[0]["failures"]) == 3
    assert [f["block"] for f in res.fail_open] == ["stage1", "stage2"]
    assert all(c["flow_kg_s"] is None for f in res.fail_open for c in f["cases"])
    assert not any("no rated throttle with protection" in n for n in res.notes)
    json.dumps(res.to_dict(), allow_nan=False)
    assert "Fail-open load" in upsets_text(res)


def test_a_case_setting_a_heater_that_is_taken_off_is_solved_with_it_off():
    fs = parse_spec("""\
title: one heater, cases set its outlet (fictional)
gas: {model: peng-robinson, composition: {methane: 0.95, ethane: 0.05}}
feeds:
  supply: {T: 10 degC, P: 50 barg, flow: 5000 Sm3/h}
equipment:
  preheat:   {kind: heater, from: supply, to: warm, T_out: 30 degC}
  regulator: {kind: throttle, from: warm, to: out, P_out: 10 barg}
cases:
  - {name: a, preheat: {T_out: 40 degC}}
  - {name: b, preheat: {T_out: 35 degC}}
""")
    res = upsets(fs)
    off = res.preheat[1]
    assert off["scenario"] == "every heater off" and not off["failures"]
    gas = letdown.Fluid({"methane": 0.95, "ethane": 0.05}, model="peng-robinson")
    T_out = gas.flash(P=10e5 + ATM, h=gas.flash(T=283.15, P=50e5 + ATM).h).T
    row = next(r for r in off["streams"] if r["stream"] == "out")
    assert row["coldest_T_K"] == pytest.approx(T_out, abs=1e-6)
