"""Inhibitor through a separator (water carried beside the gas): it leaves with the phases that
hold it, and the dose protects the drum's inlet, not its saturated vapour.

References: the three-phase split of letdown.fluid.aqueous.losses.partition (itself tested in
tests/sheet/test_inhibitor_loss.py), recomputed here at the drum's state; Hammerschmidt (1934) for the
dose (REFERENCE_DATA.md section 3). The sheet is invented.
"""
import numpy as np
import pytest

import letdown
from letdown.fluid.aqueous.inhibitor import INHIBITORS
from letdown.fluid.aqueous.losses import partition
from letdown.fluid.aqueous.water import M_WATER
from letdown.report.text import report_text
from letdown.sheet.loader import parse_spec
from letdown.sheet.solve import Sheet

COMP = {"nitrogen": 0.012, "carbon-dioxide": 0.018, "methane": 0.800, "ethane": 0.085,
        "propane": 0.045, "isobutane": 0.010, "n-butane": 0.013, "isopentane": 0.005,
        "n-pentane": 0.004, "n-hexane": 0.005, "n-heptane": 0.003}
SHEET = """\
title: LTS with an inhibitor (fictional)
gas:
  model: peng-robinson
  composition: {%s}
  water: {saturated: {T: 30 degC, P: 70 barg}}
feeds:
  feed: {T: 25 degC, P: 70 barg, flow: 25 MMscfd}
equipment:
  dose:    {kind: inject, from: feed, to: dosed, inhibitor: %%s, %%s}
  chiller: {kind: cooler, from: dosed, to: chilled, T_out: 5 degC}
  jt:      {kind: throttle, from: chilled, to: cold, P_out: 40 barg}
  lts:     {kind: separator, from: cold, to: %%s}
  reheat:  {kind: heater, from: gas, to: sales, T_out: 10 degC}
""" % ", ".join(f"{k}: {v}" for k, v in COMP.items())
PORTS = "{vapour: gas, liquid: condensate, water: free-water}"
M = {name: INHIBITORS[name].M * 1e-3 for name in INHIBITORS}


def solve(inhibitor="methanol", dose="rate: 60 kg/h", ports=PORTS):
    return Sheet(parse_spec(SHEET % (inhibitor, dose, ports), source="lts-inh.yaml")).solve()


def inhibitor_kg_s(res, name):
    return res.streams[name].freezing["inhibitor_flow_kg_s"]


@pytest.fixture(scope="module")
def methanol():
    return solve()


def test_inhibitor_balance_of_the_separator_closes(methanol):
    into = inhibitor_kg_s(methanol, "cold")
    out = sum(inhibitor_kg_s(methanol, s) for s in ("gas", "condensate", "free-water"))
    assert into == pytest.approx(60.0 / 3600.0, rel=1e-12)
    assert out == pytest.approx(into, rel=1e-10)


def test_separator_splits_the_inhibitor_as_the_three_phase_flash_at_the_drum(methanol):
    # recomputed: the partition of the drum's feed (its gas, water and methanol) at its T and P
    cold = methanol.streams["cold"]
    gas = letdown.Fluid(COMP)
    zs = np.array([[cold.zs[c] for c in gas.components]])
    F = cold.flow
    w = cold.freezing["water_flow_mol_s"] / F
    inh = np.array([[inhibitor_kg_s(methanol, "cold") / M["methanol"] / F, 0.0]])
    p = partition(gas, [cold.T], [cold.P], zs, [w], inh)
    to = {"gas": p.vapour[0, 0], "condensate": p.hc_liquid[0, 0], "free-water": p.aqueous[0, 0]}
    for stream, amount in to.items():
        assert inhibitor_kg_s(methanol, stream) == pytest.approx(amount * F * M["methanol"],
                                                                 rel=1e-9)
    # the free water's strength is its own inhibitor over its own water
    fw = methanol.streams["free-water"].freezing
    m_i = inhibitor_kg_s(methanol, "free-water")
    assert fw["inhibitor_wt_pct"] == pytest.approx(
        100.0 * m_i / (m_i + fw["water_flow_mol_s"] * M_WATER), rel=1e-12)


def test_without_losses_the_inhibitor_follows_the_free_water():
    res = solve(dose="rate: 20 kg/h, losses: none")
    assert inhibitor_kg_s(res, "free-water") == pytest.approx(20.0 / 3600.0, rel=1e-12)
    assert inhibitor_kg_s(res, "gas") == 0.0 and inhibitor_kg_s(res, "condensate") == 0.0
    # the sales gas is dry of free water and carries no inhibitor credit
    assert res.streams["sales"].freezing["inhibitor_flow_kg_s"] == 0.0


def test_without_a_water_port_nor_losses_all_the_inhibitor_leaves_with_the_liquid():
    # the free water leaves with the hydrocarbon liquid, and with it all the inhibitor
    res = solve(dose="rate: 20 kg/h, losses: none", ports="{vapour: gas, liquid: condensate}")
    assert inhibitor_kg_s(res, "condensate") == pytest.approx(20.0 / 3600.0, rel=1e-12)
    assert inhibitor_kg_s(res, "gas") == 0.0


def test_without_a_water_port_the_aqueous_inhibitor_leaves_with_the_liquid(methanol):
    res = solve(ports="{vapour: gas, liquid: condensate}")
    assert inhibitor_kg_s(res, "condensate") == pytest.approx(
        inhibitor_kg_s(methanol, "condensate") + inhibitor_kg_s(methanol, "free-water"), rel=1e-9)
    assert inhibitor_kg_s(res, "gas") == pytest.approx(inhibitor_kg_s(methanol, "gas"), rel=1e-9)


def test_dose_protects_the_drum_inlet_not_its_saturated_vapour():
    # the drum's inlet and its vapour are equally cold; the inlet carries all the free water
    res = solve(dose="depression: 10 K, losses: none")
    d = res.equipment["dose"]
    assert d["protected_stream"] == "cold"
    # Hammerschmidt for 10 K with methanol (K = 2335 degF g/mol = 1297.2 K g/mol, M = 32.04):
    # W = 100 dT M / (K + dT M), the aqueous need on all the water the inlet carries
    Mm = INHIBITORS["methanol"].M
    W = 100.0 * 10.0 * Mm / (2335.0 / 1.8 + 10.0 * Mm)
    water = res.streams["cold"].freezing["water_flow_kg_s"]
    assert d["inhibitor_rate_kg_s"] == pytest.approx(water * W / (100.0 - W), rel=1e-6)


def test_report_shows_the_inhibitor_carried(methanol):
    text = report_text(methanol)
    assert "Inhibitor carried [kg/h]" in text


def test_meg_split_closes_and_stays_out_of_the_vapour():
    res = solve(inhibitor="MEG", dose="rate: 60 kg/h")
    out = sum(inhibitor_kg_s(res, s) for s in ("gas", "condensate", "free-water"))
    assert out == pytest.approx(inhibitor_kg_s(res, "cold"), rel=1e-10)
    assert inhibitor_kg_s(res, "gas") < 1e-3 * inhibitor_kg_s(res, "free-water")
