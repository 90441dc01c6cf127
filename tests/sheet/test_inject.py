"""The inject block: methanol or MEG added to a stream, carried beside the gas like the water.

Rates are checked against Hammerschmidt (1934), Ind. Eng. Chem. 26, 851, in the form of
REFERENCE_DATA.md section 3: dT = K W / (M (100 - W)), K = 2335 degF g/mol (methanol) and 2700
(MEG) in field units, SI K = 1297 for methanol. With all of the water m_w free and neat inhibitor,
m_inh / m_w = W / (100 - W), so the rate is m_w dT M / K -- computed here by hand.
"""
import textwrap

import numpy as np
import pytest

import letdown
import letdown.fluid.aqueous.inhibitor as ih
from letdown.equipment import KINDS, StreamBatch, flash_stream
from letdown.errors import InputError
from letdown.sheet.loader import parse_spec
from letdown.sheet.solve import Sheet

#: Molar masses [g/mol] from the atomic weights (IUPAC 2013 conventional values, H 1.008,
#: C 12.011, O 15.999; values from memory): CH3OH 32.042, C2H6O2 62.068. The component table
#: carries 32.04186 and 62.06784; the hand values agree with it to 4e-6 relative.
M_METHANOL = 32.042
M_MEG = 62.068
#: 85000 Sm3/h of dry gas carrying 500 mg/Sm3 of water [kg/s]: both per the same standard volume.
WATER_KG_S = 85000.0 / 3600.0 * 500e-6

SHEET = """\
title: injection test (fictional)
gas:
  model: peng-robinson
  composition: {methane: 0.9135, ethane: 0.048, propane: 0.012, nitrogen: 0.015, carbon-dioxide: 0.0115}
  water: 500 mg/Sm3
feeds:
  supply: {T: 15 degC, P: 70 bar, flow: 85000 Sm3/h}
equipment:
  dose:      {kind: inject, from: supply, to: dosed, inhibitor: %s, %s}
  regulator: {kind: throttle, from: dosed, to: network, P_out: 30 bar}
"""

PLAIN = SHEET.replace("  dose:      {kind: inject, from: supply, to: dosed, inhibitor: %s, %s}\n",
                      "").replace("from: dosed", "from: supply")


def sheet(inhibitor="methanol", spec="depression: 8 K"):
    """The test sheet with the aqueous phase only (``losses: none``: all the inlet's water free,
    nothing lost), the case the hand calculations below cover; the losses are tested in
    tests/sheet/test_inhibitor_loss.py."""
    if "losses" not in spec:
        spec += ", losses: none"
    return Sheet(parse_spec(SHEET % (inhibitor, spec), source="inject.yaml"))


def test_rate_for_a_depression_is_hammerschmidt_by_hand():
    res = sheet("methanol", "depression: 8 K").solve()
    dose = res.equipment["dose"]
    # field units: dT = 8 K = 14.4 degF with K = 2335 degF g/mol
    by_hand = WATER_KG_S * (8.0 * 1.8) * M_METHANOL / 2335.0
    assert dose["inhibitor_rate_kg_s"] == pytest.approx(by_hand, rel=1e-5)
    # the SI constant 1297 (REFERENCE_DATA status M, rounded) gives the same to 0.02 %
    assert dose["inhibitor_rate_kg_s"] == pytest.approx(WATER_KG_S * 8.0 * M_METHANOL / 1297.0,
                                                        rel=3e-4)
    W = 100.0 * 8.0 * M_METHANOL / (2335.0 / 1.8 + 8.0 * M_METHANOL)
    assert dose["inhibitor_wt_pct"] == pytest.approx(W, rel=1e-5)
    assert dose["hydrate_depression_K"] == pytest.approx(8.0, rel=1e-12)
    assert dose["depression_target_K"] == 8.0


def test_meg_rate_for_a_depression_by_hand():
    res = sheet("MEG", "depression: 10 delta_degC").solve()
    by_hand = WATER_KG_S * (10.0 * 1.8) * M_MEG / 2700.0
    assert res.equipment["dose"]["inhibitor_rate_kg_s"] == pytest.approx(by_hand, rel=1e-5)
    assert res.equipment["dose"]["hydrate_depression_K"] == pytest.approx(10.0, rel=1e-12)


def test_given_rate_wt_pct_and_depression():
    res = sheet("methanol", "rate: 25 kg/h").solve()
    dose = res.equipment["dose"]
    rate = 25.0 / 3600.0
    assert dose["inhibitor_rate_kg_s"] == pytest.approx(rate, rel=1e-12)
    W = 100.0 * rate / (rate + WATER_KG_S)
    assert dose["inhibitor_wt_pct"] == pytest.approx(W, rel=1e-12)
    assert dose["hydrate_depression_K"] == pytest.approx(
        2335.0 * W / (M_METHANOL * (100.0 - W)) / 1.8, rel=1e-5)
    # downstream streams carry the same aqueous phase
    assert res.streams["network"].freezing["inhibitor_wt_pct"] == pytest.approx(W, rel=1e-12)


def test_gas_passes_unchanged_and_balances_close_exactly():
    res = sheet().solve()
    a, b = res.streams["supply"], res.streams["dosed"]
    assert (a.T, a.P, a.flow, a.h) == (b.T, b.P, b.flow, b.h)
    assert a.zs == b.zs
    assert res.equipment["dose"]["mole_balance_closure"] == 0.0
    assert res.equipment["dose"]["energy_balance_closure"] == 0.0
    assert res.equipment["dose"]["dP_Pa"] == 0.0


def test_downstream_hydrate_margin_grows_by_the_models_depression():
    plain = Sheet(parse_spec(PLAIN, source="plain.yaml")).solve()
    dosed = sheet("methanol", "depression: 8 K").solve()
    gains = {}
    for name, plain_name in (("dosed", "supply"), ("network", "network")):
        gains[name] = (dosed.streams[name].freezing["hydrate_margin_K"]
                       - plain.streams[plain_name].freezing["hydrate_margin_K"])
    # Each gain is the hydrate model's own depression at that stream's pressure and inhibited
    # water activity (vdW-P with a_w = gamma_w x_w), computed here directly on the dry gas.
    gas = letdown.Fluid({"methane": 0.9135, "ethane": 0.048, "propane": 0.012, "nitrogen": 0.015,
                         "carbon-dioxide": 0.0115})
    for name, gain in gains.items():
        st = dosed.streams[name]
        a_w = st.freezing["water_activity"]
        expected = gas.hydrate_T(st.P) - gas.hydrate_T(st.P, water_activity=a_w)
        assert gain == pytest.approx(expected, abs=1e-6), name
    # vdW-P is not Hammerschmidt: it gives less than the 8 K Hammerschmidt was sized for, and less
    # at the colder point (the depression scales about as T^2, Clausius-Clapeyron form, common
    # practice): 7.67 K at 70 bar, 7.02 K at 30 bar measured with the water activity model (7.55 K
    # and 6.93 K with the ideal a_w = x_w before it).
    assert 0.0 < gains["network"] < gains["dosed"] < 8.0
    # the block reports that vdW-P drop at its outlet
    drop = dosed.equipment["dose"]["hydrate_depression_vdwp_K"]
    assert drop == pytest.approx(dosed.streams["supply"].freezing["hydrate_T_K"]
                                 - dosed.streams["dosed"].freezing["hydrate_T_K"], rel=1e-12)
    # the water activity reported is gamma_w x_w: x_w by hand from the wt %, gamma_w of the
    # activity correlation (letdown.fluid.aqueous.inhibitor) at the stream's inhibited hydrate temperature
    W = dosed.equipment["dose"]["inhibitor_wt_pct"]
    x_w = (100.0 - W) / 18.015 / ((100.0 - W) / 18.015 + W / M_METHANOL)
    T_h = dosed.streams["dosed"].freezing["hydrate_T_K"]
    gamma = float(ih.water_activity_coefficient(x_w, 1.0 - x_w, T_h))
    assert gamma < 1.0
    assert dosed.streams["dosed"].freezing["water_activity"] == pytest.approx(x_w * gamma,
                                                                             rel=1e-4)


def test_rate_follows_the_depression_over_cases_and_without_margins():
    fs = sheet("methanol", "depression: 8 K")
    res = fs.solve_cases({"dose.depression": [4.0, 8.0, 0.0]})
    rate = res.equipment["dose"].details["inhibitor_rate_kg_s"]
    np.testing.assert_allclose(rate, WATER_KG_S * np.array([4.0, 8.0, 0.0]) * 1.8 * M_METHANOL
                               / 2335.0, rtol=1e-5)
    assert res.freezing is None            # a study without margins still reports the dose


def test_splitter_and_mixer_carry_the_inhibitor():
    text = (SHEET % ("methanol", "rate: 25 kg/h, losses: none")).replace(
        "  regulator: {kind: throttle, from: dosed, to: network, P_out: 30 bar}\n",
        "  tee: {kind: splitter, from: supply, to: {a: 0.5, b: rest}}\n"
        "  back: {kind: mixer, from: [dosed, b], to: network}\n").replace(
        "from: supply, to: dosed", "from: a, to: dosed")
    res = Sheet(parse_spec(text, source="mix.yaml")).solve()
    rate = 25.0 / 3600.0
    half = WATER_KG_S / 2.0
    assert res.streams["dosed"].freezing["inhibitor_wt_pct"] == pytest.approx(
        100.0 * rate / (rate + half), rel=1e-12)
    # mixed with the undosed half: the same inhibitor in all the water
    assert res.streams["network"].freezing["inhibitor_wt_pct"] == pytest.approx(
        100.0 * rate / (rate + WATER_KG_S), rel=1e-12)
    assert res.streams["b"].freezing["inhibitor_wt_pct"] == 0.0


def test_block_run_directly():
    fluid = letdown.Fluid({"methane": 0.95, "ethane": 0.05})
    inlet = flash_stream(fluid, np.array([100.0, 200.0]), np.array([[0.95, 0.05]] * 2),
                         T=np.array([280.0, 290.0]), P=np.array([5e6, 6e6]))
    assert isinstance(inlet, StreamBatch)
    out = KINDS["inject"](fluid, "dose", {"in": inlet}, {"inhibitor": "MEG", "rate": 0.01})
    assert out.outlets["out"] is inlet
    np.testing.assert_array_equal(out.details["inhibitor_rate_kg_s"], [0.01, 0.01])
    np.testing.assert_array_equal(out.mole_closure, 0.0)
    with pytest.raises(InputError) as e:
        KINDS["inject"](fluid, "dose", {"in": inlet}, {"inhibitor": "MEG", "rate": [0.01, -1.0]})
    assert e.value.field == "equipment.dose.rate" and "case 1" in e.value.message


@pytest.mark.parametrize("spec, field, words", [
    ("inhibitor: ethanol, rate: 25 kg/h", "equipment.dose.inhibitor", "unknown inhibitor"),
    ("inhibitor: methanol, rate: 25 kg/h, depression: 8 K", "equipment.dose",
     "exactly one of rate, depression"),
    ("inhibitor: methanol", "equipment.dose", "needs one of rate, depression"),
    ("inhibitor: methanol, rate: -5 kg/h", "equipment.dose.rate", "must not be negative"),
    ("inhibitor: methanol, rate: 2 kmol/h", "equipment.dose.rate", "as a mass flow"),
    ("inhibitor: methanol, depression: 45 K", "equipment.dose.depression",
     "outside the inhibitor rules"),
    ("inhibitor: methanol, depression: 8 degC", "equipment.dose.depression", "degC"),
    ("rate: 25 kg/h", "equipment.dose", "inhibitor"),
])
def test_bad_parameters_are_located(spec, field, words):
    text = SHEET.replace("inhibitor: %s, %s", spec)
    with pytest.raises(InputError) as e:
        parse_spec(textwrap.dedent(text), source="inject.yaml")
    err = e.value
    assert err.file == "inject.yaml"
    assert err.line == 9                 # the dose block's line
    assert err.field == field, str(err)
    assert words in err.message, str(err)


def test_text_report_shows_the_dose_in_kg_per_hour():
    from letdown.report.text import report_text
    res = sheet("methanol", "depression: 8 K").solve()
    text = report_text(res)
    kg_h = res.equipment["dose"]["inhibitor_rate_kg_s"] * 3600.0
    assert f"inhibitor_rate={kg_h:.5g} kg/h" in text
    assert "Inhibitor in free water [wt %]" in text
    assert "qualified, licensed staff" in text
