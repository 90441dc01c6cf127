"""Station capacity (issue 13 part 5): ``letdown capacity`` and :mod:`letdown.study.capacity`.

The hand calculations below use the IEC 60534-2-1:2011 forward equation for gas (clause 6.4,
density form, FR = 1, Table 1 constant N6 = 3.16 for Kv in m3/h, W in kg/h, P in kPa), written
out here (not the library's :mod:`letdown.equipment.valve`), with the inlet density and
isentropic exponent of the same model as the solve (the inlet state does not depend on the
flow in these sheets):

    x = (P1 - P2) / P1,  F_gamma = kappa / 1.40,  x_s = min(x, F_gamma xT),
    Y = 1 - x_s / (3 F_gamma xT),  W = N6 Kv Y sqrt(x_s P1 rho1)

and the inherent characteristics of IEC 60534-2-4 (linear phi = h, equal-percentage
phi = R^(h - 1)).
"""
import json
import math
from pathlib import Path

import numpy as np
import pytest

import letdown
from letdown.cli import main
from letdown.errors import InputError
from letdown.sheet.loader import read_spec, parse_spec
from letdown.sheet.solve import solve_cases
from letdown.study import capacity as capacity_module
from letdown.study.capacity import RESERVE_TOLERANCE, capacity

ROOT = Path(__file__).resolve().parents[2]
DISTRICT = ROOT / "flowsheets" / "district-station.yaml"
GAS = {"methane": 0.9135, "ethane": 0.048, "propane": 0.012, "nitrogen": 0.015,
       "carbon-dioxide": 0.0115}
ATM = 101325.0

ONE_VALVE = """\
title: one-valve capacity check (fictional)
gas:
  model: peng-robinson
  composition: {methane: 0.9135, ethane: 0.048, propane: 0.012, nitrogen: 0.015, carbon-dioxide: 0.0115}
feeds:
  supply: {T: 15 degC, P: 50 barg, flow: 10000 Sm3/h}
equipment:
  regulator:
    kind: throttle
    from: supply
    to: out
    P_out: POUT
    valve: {Kv: 20, xT: 0.7, characteristic: CHAR, rangeability: 30}
limits:
  max_opening: 0.8
"""


def hand_flow(Kv, T, P1, P2, xT):
    """IEC 60534-2-1 forward equation by hand [kg/s] and the choked verdict (module docstring)."""
    st = letdown.Fluid(GAS, model="peng-robinson").flash(T=T, P=P1)
    kappa = st.density * st.w ** 2 / P1
    x, x_ch = (P1 - P2) / P1, kappa / 1.40 * xT
    x_s = min(x, x_ch)
    Y = 1.0 - x_s / (3.0 * x_ch)
    return 3.16 * Kv * Y * math.sqrt(x_s * P1 / 1e3 * st.density) / 3600.0, x >= x_ch


@pytest.mark.parametrize("P_out_barg, choked", [(40.0, False), (10.0, True)])
@pytest.mark.parametrize("characteristic", ["linear", "equal-percentage"])
def test_one_valve_capacity_matches_the_hand_calculation(P_out_barg, choked, characteristic):
    fs = parse_spec(ONE_VALVE.replace("POUT", f"{P_out_barg} barg").replace("CHAR", characteristic))
    res = capacity(fs)
    c = res.cases[0]
    # the rated Kv at 0.8 of travel, by the characteristic
    phi = 0.8 if characteristic == "linear" else 30.0 ** (0.8 - 1.0)
    W, is_choked = hand_flow(20.0 * phi, 288.15, 50e5 + ATM, P_out_barg * 1e5 + ATM, 0.7)
    assert is_choked is choked
    assert c.found and c.governing == "opening" and c.governing_block == "regulator"
    # the reserve is solved to 1e-9 of the opening; the opening is linear (or logarithmic) in
    # the flow, so the flow is within a few 1e-9
    assert c.capacity_mass == pytest.approx(W, rel=1e-8)
    assert c.margin == pytest.approx(c.capacity / c.flow - 1.0, rel=1e-12)


def test_random_one_valve_cases_in_one_batch_match_the_hand_calculation():
    # fuzz: random inlet states and outlet pressures as the file's cases, solved together
    rng = np.random.default_rng(13)
    n = 6
    T = rng.uniform(275.0, 330.0, n)
    P1 = rng.uniform(20e5, 90e5, n)
    P2 = P1 * rng.uniform(0.15, 0.9, n)
    lines = "\n".join(f"  - {{name: c{i}, supply: {{T: {T[i]} K, P: {P1[i]} Pa}}, "
                      f"regulator: {{P_out: {P2[i]} Pa}}}}" for i in range(n))
    fs = parse_spec(ONE_VALVE.replace("POUT", "10 barg").replace("CHAR", "linear")
               + "cases:\n" + lines + "\n")
    res = capacity(fs)
    assert res.batches[0] == n
    for i, c in enumerate(res.cases):
        W, _ = hand_flow(16.0, T[i], P1[i], P2[i], 0.7)
        assert c.found and c.capacity_mass == pytest.approx(W, rel=1e-8), c.name


@pytest.fixture(scope="module")
def district():
    fs = read_spec(DISTRICT)
    return fs, capacity(fs)


def test_district_station_capacity_is_at_its_governing_limit_when_solved_again(district):
    fs, res = district
    assert [c.name for c in res.cases] == ["winter-peak", "design", "summer-low"]
    # an independent solve of every case at its reported capacity (one batch)
    from letdown.study.size import _case_arrays
    _, table, _ = _case_arrays(fs)
    n = len(res.cases)
    base = np.broadcast_to(table.get("supply.flow", fs.feeds["supply"].flow), (n,))
    scale = np.array([c.scale for c in res.cases])
    again = solve_cases(fs, {**table, "supply.flow": base * scale}, strict=True)
    assert np.all(again.converged)
    for g in again.goals:
        assert np.all(g.met)
    for i, c in enumerate(res.cases):
        assert c.found
        value = again.equipment[c.governing_block].details[c.governing_detail][i]
        limit = next(k.limit for k in c.constraints if k.block == c.governing_block
                     and k.detail == c.governing_detail)
        # at its limit to 1e-6 (the check), relative for a velocity
        assert abs(value - limit) <= 1e-6 * max(1.0, abs(limit)), (c.name, value, limit)
        # and no other constraint is beyond its limit there
        for k in c.constraints:
            v = again.equipment[k.block].details[k.detail][i]
            assert v <= k.limit * (1.0 + 10 * RESERVE_TOLERANCE), (c.name, k)
        assert again.streams["supply"].flow[i] == pytest.approx(c.capacity, rel=1e-12)


def test_district_station_figures(district):
    fs, res = district
    byname = {c.name: c for c in res.cases}
    # winter peak: 26,000 Sm3/h at 32 barg is already beyond the 20 m/s at stage1's inlet pipe
    w = byname["winter-peak"]
    assert w.governing == "velocity" and w.governing_block == "stage1"
    assert w.margin < 0.0
    at_flow = next(k.at_flow for k in w.constraints if k.detail == w.governing_detail
                   and k.block == "stage1")
    assert at_flow > 20.0
    # the velocity grows in proportion to the mass flow at a fixed inlet state (the preheat
    # goal holds the stage1 outlet, so the inlet temperature moves a little: within 1 %)
    assert w.scale == pytest.approx(20.0 / at_flow, rel=0.01)
    # design and summer-low are governed by the second stage, whose inlet state the first stage
    # and the interheater hold whatever the supply: the same capacity
    assert byname["design"].governing_block == "stage2"
    assert byname["summer-low"].capacity == pytest.approx(byname["design"].capacity, rel=1e-7)
    # heaters at capacity: more gas, more duty for the same held temperatures
    assert byname["design"].heaters["preheat"][1] > byname["design"].heaters["preheat"][0]


def test_every_evaluation_is_one_batch_of_the_cases_still_searching(monkeypatch, district):
    fs, _ = district
    sizes = []
    real = capacity_module.solve_cases

    def spy(fs_, cases=None, *args, **kw):
        sizes.append(len(next(iter(cases.values()))))
        return real(fs_, cases, *args, **kw)
    monkeypatch.setattr(capacity_module, "solve_cases", spy)
    res = capacity(fs)
    assert sizes == list(res.batches)
    assert sizes[0] == 3 and sizes[-1] == 3 and max(sizes) == 3
    # a handful of batches, not one solve per case and iteration
    assert len(sizes) <= 12


def test_a_sheet_with_nothing_to_limit_it_is_refused():
    # the gate station without its regulator's rating: no valve, velocity or noise limit
    text = (ROOT / "flowsheets" / "gate-station.yaml").read_text()
    start = text.index("  regulator:\n")
    end = text.index("goals:")
    text = (text[:start] + "  regulator: {kind: throttle, from: warm, to: network, P_out: 17 barg}\n"
            + text[end:])
    with pytest.raises(InputError, match="needs something that limits the flow"):
        capacity(parse_spec(text))


def test_a_case_that_fails_at_its_own_flow_is_reported_not_raised():
    text = ONE_VALVE.replace("POUT", "10 barg").replace("CHAR", "linear") + """\
cases:
  - {name: fine, supply: {T: 15 degC}}
  - {name: raises-pressure, regulator: {P_out: 60 barg}}
"""
    res = capacity(parse_spec(text))
    fine, bad = res.cases
    assert fine.found
    assert not bad.found and "fails at its own flow" in bad.reason
    assert "above the inlet pressure" in bad.reason
    assert not res.all_found


def test_capacity_does_not_depend_on_the_flow_the_file_gives():
    # a trickle (0.01 Sm3/h) and a flow beyond the limit: the same capacity, found from either
    # side, far from the first bracket (the first-order estimate sets it)
    text = ONE_VALVE.replace("POUT", "10 barg").replace("CHAR", "linear") + """\
cases:
  - {name: trickle, supply: {flow: 0.01 Sm3/h}}
  - {name: beyond, supply: {flow: 200000 Sm3/h}}
"""
    res = capacity(parse_spec(text))
    trickle, beyond = res.cases
    W, _ = hand_flow(16.0, 288.15, 50e5 + ATM, 10e5 + ATM, 0.7)
    assert trickle.found and beyond.found
    assert trickle.capacity_mass == pytest.approx(W, rel=1e-8)
    assert beyond.capacity_mass == pytest.approx(W, rel=1e-8)
    assert trickle.margin > 1e5 and beyond.margin < 0.0


def test_liquid_at_the_valve_is_said_not_searched():
    # -60 degC at 50 barg: the gas is two-phase at the valve, where IEC 60534-2-1's gas
    # equations do not apply (the throttle blanks its rating and flags it)
    text = ONE_VALVE.replace("POUT", "10 barg").replace("CHAR", "linear") + """\
cases:
  - {name: cold, supply: {T: -60 degC}}
  - {name: warm, supply: {T: 15 degC}}
"""
    res = capacity(parse_spec(text))
    cold, warm = res.cases
    assert not cold.found and "liquid at the inlet or outlet" in cold.reason
    assert np.isnan(cold.capacity) and warm.found
    assert res.batches[0] == 2 and max(res.batches[1:]) == 1


def test_cli_json_and_text_in_both_unit_systems(capsys, district):
    assert main(["capacity", str(DISTRICT), "--json"]) == 0
    out = capsys.readouterr()
    data = json.loads(out.out)
    case = data["cases"][1]
    for key in ("flow_mol_s", "flow_kg_s", "capacity_mol_s", "capacity_kg_s", "margin_fraction",
                "governing_constraint", "governing_block"):
        assert key in case
    assert data["limits"]["max_velocity_m_s"] == 20.0
    assert "licensed staff" in out.err
    assert main(["capacity", str(DISTRICT), "--units", "field"]) == 0
    text = capsys.readouterr().out
    assert "MMscfd" in text and "ft/s" in text and "65.617" in text   # 20 m/s in ft/s
    from letdown.report.capacity import capacity_text
    text = capacity_text(district[1], "si")
    assert "Sm3/h" in text and "m/s" in text and "licensed staff" in text


def test_a_bore_too_small_for_any_flow_is_named_without_numpy_warnings():
    # fuzz find: a 0.05 mm bore in 102 mm pipes passes no flow through its reducers at any Kv;
    # the search used to end with 'a limit still broken' and a RuntimeWarning from the noise
    import warnings
    text = ONE_VALVE.replace("POUT", "10 barg").replace("CHAR", "linear").replace(
        "rangeability: 30}", "rangeability: 30, size: 0.05 mm, inlet_pipe: 102 mm, "
        "outlet_pipe: 154 mm, wall_thickness: 7 mm, FL: 0.9, Fd: 0.42}")
    with warnings.catch_warnings():
        warnings.simplefilter("error", RuntimeWarning)
        res = capacity(parse_spec(text))
    c = res.cases[0]
    assert not c.found and np.isnan(c.capacity)
    assert "no Kv of regulator passes the flow through its reducers" in c.reason


def test_every_case_failing_at_its_own_flow_is_reported_not_refused():
    # no case solves, so no result carries a valve's figures: the reasons are reported (the
    # refusal 'needs something that limits the flow' would be wrong: the file has a rated valve)
    text = ONE_VALVE.replace("POUT", "60 barg").replace("CHAR", "linear")
    res = capacity(parse_spec(text))
    c = res.cases[0]
    assert not c.found and "fails at its own flow" in c.reason
    assert "above the inlet pressure" in c.reason and res.batches == (1,)
    json.dumps(res.to_dict(), allow_nan=False)


def test_a_goal_that_can_no_longer_be_held_limits_the_capacity():
    # the preheater given a duty bracket of 0-140 kW: beyond some flow the goal holding the gas
    # between the stages cannot be met, and the capacity is the largest flow that still solves
    text = DISTRICT.read_text().replace(
        "T_out: 30 degC, dP: 0.2 bar}", "duty: 100 kW, dP: 0.2 bar}").replace(
        "by: preheat.T_out, within: [0 degC, 90 degC]", "by: preheat.duty, within: [0 kW, 140 kW]")
    res = capacity(parse_spec(text))
    design = next(c for c in res.cases if c.name == "design")
    assert design.governing == "solve" and not design.found
    assert "goal 1" in design.reason
    # within the bracket at the capacity found: the preheater at its 140 kW, every limit kept
    duty = design.heaters["preheat"][1]
    assert duty <= 140e3 and duty == pytest.approx(140e3, rel=1e-6)
    assert all(k.at_capacity <= k.limit for k in design.constraints)
    assert 1.0 < design.scale < next(c for c in capacity(read_spec(DISTRICT)).cases
                                     if c.name == "design").scale
