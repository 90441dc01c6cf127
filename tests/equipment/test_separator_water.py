"""The separator's water: what leaves with the vapour, the hydrocarbon liquid and the water outlet.

Water carried beside the gas (``gas.water`` or saturated feeds): the vapour leaves with at most
the water content of gas saturated at the drum's T and P by ``gas.water_method`` (the route of the
water dew point), the hydrocarbon liquid with the water the cubic equation dissolves in it
(:func:`letdown.fluid.aqueous.water.water_in_liquid`), the ``water`` outlet with the rest. Every
reference number below is recomputed here from the fluid's own routes (water content, water dew
point, EOS fugacities), never copied from a solve: the water model is being refitted on another
branch, so no water content is written down as a number.
"""
import textwrap

import numpy as np
import pytest

import letdown
from letdown.fluid.components import R
from letdown.fluid.aqueous.water import water_in_liquid
from letdown.fluid.aqueous.water import (M_WATER, MOL_PER_SM3, V_LIQUID, water_content,
                                         water_dew_point, water_vapour_pressure)
from letdown.report.text import report_text
from letdown.sheet.loader import parse_spec
from letdown.sheet.solve import Sheet, solve_cases

COLD = "flowsheets/cold-separation.yaml"
SEPARATORS = {"inlet-sep": ("field-gas", "wet-gas", "inlet-liquid", "inlet-water"),
              "cold-sep": ("cold-feed", "cold-gas", "cold-liquid", "cold-water")}
#: The water balance of a separator closes to this, relative (the split is by difference).
BALANCE = 1e-10
#: The water dew point is bisected to 1e-7 K (letdown.fluid.aqueous.water.DEW_T_TOL): a gas saturated at
#: the drum's temperature has its dew point within that of it.
DEW_TOL_K = 2e-7

#: A small LTS: gas cooled, throttled and separated cold; the water given explicitly.
LTS = """\
title: LTS water test (fictional)
gas:
  model: peng-robinson
  composition: {nitrogen: 0.012, carbon-dioxide: 0.018, methane: 0.800, ethane: 0.085,
                propane: 0.045, isobutane: 0.010, n-butane: 0.013, isopentane: 0.005,
                n-pentane: 0.004, n-hexane: 0.005, n-heptane: 0.003}
  %s
feeds:
  feed: {T: 25 degC, P: 70 barg, flow: 25 MMscfd}
equipment:
  chiller: {kind: cooler, from: feed, to: chilled, T_out: 5 degC}
  jt:      {kind: throttle, from: chilled, to: cold, P_out: 40 barg}
  lts:     {kind: separator, from: cold, to: %s}
"""


def lts(water="", ports="{vapour: gas, liquid: condensate, water: free-water}"):
    return Sheet(parse_spec(LTS % (water, ports), source="lts.yaml"))


def water_flow(res, name):
    return res.streams[name].freezing["water_flow_mol_s"]


def saturated_ratio(gas, T, P, method):
    """Water per dry gas of gas saturated at (T, P) by the method, recomputed here."""
    y = float(np.asarray(water_content(gas, T, P, method=method)).reshape(-1)[0])
    return y / (1.0 - y)


@pytest.fixture(scope="module")
def cold():
    return letdown.load(COLD).solve()


@pytest.fixture(scope="module")
def cold_gas():
    with open(COLD) as f:
        import yaml
        comp = yaml.safe_load(f)["gas"]["composition"]
    return letdown.Fluid(comp)


@pytest.mark.parametrize("sep", list(SEPARATORS))
def test_water_balance_of_each_separator_closes(cold, sep):
    inlet, vap, liq, wat = SEPARATORS[sep]
    w_in = water_flow(cold, inlet)
    out = water_flow(cold, vap) + water_flow(cold, liq) + water_flow(cold, wat)
    assert w_in > 0.0
    assert abs(out - w_in) <= BALANCE * w_in
    # the equipment details tell the same split
    eq = cold.equipment[sep]
    assert eq["free_water_mol_s"] == pytest.approx(water_flow(cold, wat), rel=1e-15)
    assert eq["free_water_kg_s"] == pytest.approx(eq["free_water_mol_s"] * M_WATER, rel=1e-15)
    assert (eq["water_in_vapour_mol_s"] + eq["water_in_liquid_mol_s"] + eq["free_water_mol_s"]
            == pytest.approx(eq["water_in_mol_s"], rel=BALANCE))


def test_cold_separator_vapour_leaves_saturated_and_drops_free_water(cold, cold_gas):
    inlet, vap, liq, wat = SEPARATORS["cold-sep"]
    s = cold.streams[vap]
    # saturated at the drum's T and P by the file's method (Bukacek 1955, the default)
    r_sat = saturated_ratio(cold_gas, s.T, s.P, "bukacek")
    assert s.freezing["water_flow_mol_s"] == pytest.approx(r_sat * s.flow, rel=1e-12)
    y_sat = r_sat / (1.0 + r_sat)
    assert s.freezing["water_mole_fraction"] == pytest.approx(y_sat, rel=1e-12)
    # the liquid holds what the cubic equation dissolves at saturation
    L = cold.streams[liq]
    xs = np.array([[L.zs[c] for c in cold_gas.components]])
    x_w = float(water_in_liquid(cold_gas, np.array([L.T]), np.array([L.P]), xs)[0])
    assert water_flow(cold, liq) == pytest.approx(x_w / (1.0 - x_w) * L.flow, rel=1e-12)
    # the rest is free water, by difference from the inlet's water
    free = water_flow(cold, inlet) - r_sat * s.flow - x_w / (1.0 - x_w) * L.flow
    assert free > 0.0
    assert water_flow(cold, wat) == pytest.approx(free, rel=1e-9)
    # the water outlet holds no gas: no water per dry gas, no dew point
    assert cold.streams[wat].flow == 0.0
    assert cold.streams[wat].freezing["water_mg_Sm3"] is None


def test_vapour_water_dew_point_is_the_separator_temperature(cold, cold_gas):
    _, vap, _, _ = SEPARATORS["cold-sep"]
    s = cold.streams[vap]
    assert s.freezing["water_dew_T_K"] == pytest.approx(s.T, abs=DEW_TOL_K)
    # and by the dew-point route directly, from the water content the stream reports
    dew = water_dew_point(s.freezing["water_mole_fraction"], s.P, fluid=cold_gas)
    assert dew == pytest.approx(s.T, abs=DEW_TOL_K)
    # upstream the gas is far wetter than that: its dew point is well above the drum temperature
    assert cold.streams["cold-feed"].freezing["water_dew_T_K"] > s.T + 10.0


@pytest.mark.parametrize("method", ["bukacek", "eos"])
def test_lts_vapour_saturated_by_the_file_method(method):
    res = lts(f"water_method: {method}").solve()
    # saturated at the vapour's own composition (eos; Bukacek ignores the composition)
    gas = letdown.Fluid(dict(res.streams["gas"].zs))
    s = res.streams["gas"]
    r_sat = saturated_ratio(gas, s.T, s.P, method)
    assert water_flow(res, "gas") == pytest.approx(r_sat * s.flow, rel=1e-10)
    assert s.freezing["water_dew_T_K"] == pytest.approx(s.T, abs=DEW_TOL_K)
    w_in = water_flow(res, "cold")
    out = water_flow(res, "gas") + water_flow(res, "condensate") + water_flow(res, "free-water")
    assert abs(out - w_in) <= BALANCE * w_in
    assert water_flow(res, "free-water") > 0.0


def test_drier_than_saturation_sends_nothing_to_the_water_outlet():
    res = lts("water: 50 mg/Sm3").solve()
    gas = letdown.Fluid(dict(res.streams["feed"].zs))
    s, L = res.streams["gas"], res.streams["condensate"]
    r_in = 50e-6 / M_WATER / MOL_PER_SM3       # per dry gas, as gas.water is given
    # the inlet is drier than saturated at the drum (what the vapour alone could hold)
    assert r_in < saturated_ratio(gas, s.T, s.P, "bukacek")
    assert water_flow(res, "free-water") == 0.0
    w_in = r_in * res.streams["cold"].flow
    assert water_flow(res, "cold") == pytest.approx(w_in, rel=1e-12)
    assert abs(water_flow(res, "gas") + water_flow(res, "condensate") - w_in) <= BALANCE * w_in
    # vapour and liquid are at the same fraction of their saturated contents
    xs = np.array([[L.zs[c] for c in gas.components]])
    x_w = float(water_in_liquid(gas, np.array([L.T]), np.array([L.P]), xs)[0])
    frac_V = water_flow(res, "gas") / (saturated_ratio(gas, s.T, s.P, "bukacek") * s.flow)
    frac_L = water_flow(res, "condensate") / (x_w / (1.0 - x_w) * L.flow)
    assert frac_V == pytest.approx(frac_L, rel=1e-12)
    assert frac_V < 1.0
    # the vapour is above its water dew point
    assert s.freezing["water_dew_T_K"] < s.T


def test_without_a_water_port_the_free_water_leaves_with_the_liquid():
    three = lts().solve()
    two = lts(ports="{vapour: gas, liquid: condensate}").solve()
    assert water_flow(two, "gas") == pytest.approx(water_flow(three, "gas"), rel=1e-12)
    assert water_flow(two, "condensate") == pytest.approx(
        water_flow(three, "condensate") + water_flow(three, "free-water"), rel=1e-12)


def test_batch_of_cases_splits_each_case():
    T = np.array([298.15, 288.15, 310.0, 283.15])
    fs = parse_spec(LTS % ("", "{vapour: gas, liquid: condensate, water: free-water}"),
               source="lts.yaml")
    batch = solve_cases(fs, {"feed.T": T}, margins=True)
    gas = letdown.Fluid(dict(batch.case(0).streams["feed"].zs))
    fz = batch.freezing
    F = {k: np.asarray(batch.streams[k].flow) for k in ("cold", "gas", "condensate")}
    w = {k: fz[k].water_flow for k in ("cold", "gas", "condensate", "free-water")}
    np.testing.assert_allclose(w["gas"] + w["condensate"] + w["free-water"], w["cold"],
                               rtol=BALANCE, atol=0.0)
    # saturated at each case's drum state (the feed is saturated warmer, so always wetter)
    s = batch.streams["gas"]
    y = water_content(gas, np.asarray(s.T), np.asarray(s.P), method="bukacek")
    np.testing.assert_allclose(w["gas"], y / (1.0 - y) * F["gas"], rtol=1e-12)
    assert np.all(w["free-water"] > 0.0)
    # a warmer feed carries more water, so more comes out at the same drum temperature
    order = np.argsort(T)
    assert np.all(np.diff(w["free-water"][order]) > 0.0)


def test_water_outlet_in_json_and_report(cold):
    d = cold.to_dict()
    wat = d["streams"]["cold-water"]
    assert wat["water_flow_mol_s"] == pytest.approx(water_flow(cold, "cold-water"), rel=1e-15)
    assert wat["water_flow_kg_s"] == pytest.approx(wat["water_flow_mol_s"] * M_WATER, rel=1e-15)
    assert d["equipment"]["cold-sep"]["free_water_kg_s"] == pytest.approx(wat["water_flow_kg_s"],
                                                                          rel=1e-15)
    text = report_text(cold)
    row = next(line for line in text.splitlines() if line.startswith("Water carried [kg/h]"))
    # the stream table lists the cold-water column; its entry is the free water in kg/h
    kg_h = [f"{cold.streams[n].freezing['water_flow_kg_s'] * 3600.0:.2f}"
            for n in ("field-gas", "wet-gas")]
    assert row.split()[3:5] == kg_h
    assert f"free_water={wat['water_flow_kg_s'] * 3600.0:.5g} kg/h" in text


def test_water_in_liquid_meets_its_fugacity_balance():
    """The solubility of water in a hydrocarbon liquid solves x_w phi_w^L P = f of pure water."""
    gas = letdown.Fluid({"propane": 0.3, "n-butane": 0.3, "n-hexane": 0.4})
    T = np.array([250.0, 270.0, 300.0])
    P = np.array([30e5, 40e5, 70e5])
    xs = np.tile(gas.zs, (3, 1))
    x = water_in_liquid(gas, T, P, xs)
    wet = letdown.Fluid({**gas.composition(), "water": 0.0})
    iw = wet.components.index("water")
    full = np.zeros((3, wet.n_components))
    for j, c in enumerate(gas.components):
        full[:, wet.components.index(c)] = xs[:, j] * (1.0 - x)
    full[:, iw] = x
    eos = wet.engine.eos
    lnphi, _ = eos.lnphi(T, P, full, "liquid")
    pv = water_vapour_pressure(T)
    pure = np.zeros_like(full)
    pure[:, iw] = 1.0
    lnsat, _ = eos.lnphi(T, pv, pure, "vapour")
    f_water = pv * np.exp(lnsat[:, iw] + V_LIQUID * (P - pv) / (R * T))
    np.testing.assert_allclose(x * np.exp(lnphi[:, iw]) * P, f_water, rtol=1e-10)
    assert np.all((x > 0.0) & (x < 1e-2))


# -- water as a component: the adiabatic three-phase drum ------------------------------------------
#: The LTS gas with water listed in its composition (wetter than saturated at the drum).
WET = {"nitrogen": 0.012, "carbon-dioxide": 0.018, "methane": 0.799, "ethane": 0.085,
       "propane": 0.045, "isobutane": 0.010, "n-butane": 0.013, "isopentane": 0.005,
       "n-pentane": 0.004, "n-hexane": 0.005, "n-heptane": 0.003, "water": 0.001}
LTS3 = LTS.replace("""  composition: {nitrogen: 0.012, carbon-dioxide: 0.018, methane: 0.800, ethane: 0.085,
                propane: 0.045, isobutane: 0.010, n-butane: 0.013, isopentane: 0.005,
                n-pentane: 0.004, n-hexane: 0.005, n-heptane: 0.003}
  %s
""", "  composition: {%s}\n" % ", ".join(f"{k}: {v}" for k, v in WET.items()))
#: The drum temperature meets the enthalpy balance to 1e-4 J/mol (separator.H_TOL); checked here
#: through the public flashes, which agree with the drum's phase properties to rounding.
H_TOL = 1e-3
PORTS3 = "{vapour: gas, liquid: condensate, water: free-water}"


@pytest.fixture(scope="module")
def drum3():
    T = np.array([298.15, 288.15, 308.15])
    fs = parse_spec(LTS3 % PORTS3, source="lts3.yaml")
    return T, solve_cases(fs, {"feed.T": T}, margins=True)


def test_lts3_sheet_has_water_as_a_component():
    assert "water" in Sheet(parse_spec(LTS3 % PORTS3, source="lts3.yaml")).solve().streams["feed"].zs


def test_three_phase_drum_closes_mole_and_energy_balances(drum3):
    _, batch = drum3
    s = batch.streams
    inlet = np.asarray(s["cold"].flow)[:, None] * np.asarray(s["cold"].zs)
    out = sum(np.asarray(s[k].flow)[:, None] * np.asarray(s[k].zs)
              for k in ("gas", "condensate", "free-water"))
    np.testing.assert_allclose(out, inlet, rtol=0.0,
                               atol=BALANCE * float(np.max(s["cold"].flow)))
    e_in = np.asarray(s["cold"].flow) * np.asarray(s["cold"].h)
    e_out = sum(np.asarray(s[k].flow) * np.asarray(s[k].h) for k in ("gas", "condensate",
                                                                      "free-water"))
    np.testing.assert_allclose(e_out, e_in, rtol=0.0, atol=H_TOL * float(np.max(s["cold"].flow)))
    # all three phases are there, the aqueous one mostly water
    iw = batch.components.index("water")
    for k in ("gas", "condensate", "free-water"):
        assert np.all(np.asarray(s[k].flow) > 0.0)
    assert np.all(np.asarray(s["free-water"].zs)[:, iw] > 0.99)
    # the water balance seen by the freezing figures (water fraction times flow)
    fz = batch.freezing
    np.testing.assert_allclose(fz["gas"].water_flow + fz["condensate"].water_flow
                               + fz["free-water"].water_flow, fz["cold"].water_flow,
                               rtol=BALANCE)
    np.testing.assert_allclose(fz["cold"].water_flow, np.asarray(s["cold"].flow) * WET["water"],
                               rtol=1e-12)


def test_three_phase_drum_temperature_solves_the_enthalpy(drum3):
    _, batch = drum3
    s = batch.streams
    gas = letdown.Fluid(WET)
    T = np.asarray(s["gas"].T)
    P = np.asarray(s["gas"].P)
    F = np.asarray(s["cold"].flow)
    # the three-phase flash at the drum's T and P, by the public route
    res = gas.flash_three_phase(T, P, zs=np.asarray(s["cold"].zs))
    for k, beta, x in (("gas", res.beta_V, res.y), ("condensate", res.beta_L, res.x),
                       ("free-water", res.beta_W, res.w)):
        np.testing.assert_allclose(np.asarray(s[k].flow), beta * F, rtol=1e-9)
        np.testing.assert_allclose(np.asarray(s[k].zs), x, atol=1e-9)
    # each phase's enthalpy by the public P-T flash of its composition; their sum is the inlet's
    h = sum(beta * np.array([gas.flash(T=float(T[i]), P=float(P[i]), zs=x[i]).h
                             for i in range(T.size)])
            for beta, x in ((res.beta_V, res.y), (res.beta_L, res.x), (res.beta_W, res.w)))
    np.testing.assert_allclose(h, np.asarray(s["cold"].h), rtol=0.0, atol=H_TOL)
    # and the drum is the adiabatic one: its inlet's enthalpy at the same pressure
    np.testing.assert_allclose(P, np.asarray(s["cold"].P), rtol=0.0, atol=0.0)


def test_three_phase_drum_agrees_with_the_flash_of_its_inlet(drum3):
    """The blocks upstream flash gas with water in three phases too (issue 4 follow-up): the
    drum's temperature is the P-h flash of its inlet, and the flag that once caught a 12 K gap
    stays down."""
    _, batch = drum3
    gas = letdown.Fluid(WET)
    s = batch.streams["cold"]
    # the public P-h flash of the inlet, started as the separator starts it (inlet T) ...
    st = gas.flash(P=np.asarray(s.P), h=np.asarray(s.h), zs=np.asarray(s.zs),
                   T_guess=np.asarray(s.T))
    shift = np.asarray(batch.streams["gas"].T) - st.T
    eq = batch.equipment["lts"]
    np.testing.assert_allclose(eq.details["dT_vs_two_phase_K"], shift, rtol=1e-12, atol=1e-12)
    # ... is three-phase and meets the drum to the enthalpy tolerance over its heat capacity,
    # and so does the flash from its own start (what the throttle reported)
    assert np.all(st.n_phases == 3)
    assert np.all(np.abs(shift) <= H_TOL / st.cp)
    cold = gas.flash(P=np.asarray(s.P), h=np.asarray(s.h), zs=np.asarray(s.zs))
    assert np.all(np.abs(np.asarray(batch.streams["gas"].T) - cold.T) <= H_TOL / st.cp)
    assert not np.any(eq.flags["three_phase_T_shift"])
    assert not any(w.where == "lts" and "three-phase drum temperature" in w.what
                   for w in batch.warnings)


def test_three_phase_drum_without_water_port_sends_the_water_with_the_liquid(drum3):
    T, three = drum3
    fs = parse_spec(LTS3 % "{vapour: gas, liquid: condensate}", source="lts3.yaml")
    two = solve_cases(fs, {"feed.T": T}, margins=True)
    a, b = three.streams, two.streams
    np.testing.assert_allclose(np.asarray(b["gas"].T), np.asarray(a["gas"].T), rtol=1e-12)
    liquid = (np.asarray(a["condensate"].flow)[:, None] * np.asarray(a["condensate"].zs)
              + np.asarray(a["free-water"].flow)[:, None] * np.asarray(a["free-water"].zs))
    np.testing.assert_allclose(np.asarray(b["condensate"].flow)[:, None]
                               * np.asarray(b["condensate"].zs), liquid, rtol=1e-10, atol=1e-14)
    e = (np.asarray(a["condensate"].flow) * np.asarray(a["condensate"].h)
         + np.asarray(a["free-water"].flow) * np.asarray(a["free-water"].h))
    np.testing.assert_allclose(np.asarray(b["condensate"].flow) * np.asarray(b["condensate"].h),
                               e, rtol=1e-10)


def test_free_water_sent_into_another_block_is_noted_as_not_carried():
    text = (LTS % ("", "{vapour: gas, liquid: condensate, water: free-water}")
            + "  drain:   {kind: throttle, from: free-water, to: drained, P_out: 5 barg}\n")
    res = Sheet(parse_spec(text, source="drain.yaml")).solve()
    assert res.streams["free-water"].freezing["water_flow_mol_s"] > 0.0
    assert any(w["where"] == "drain" and "free water of stream 'free-water' is not carried" in
               w["what"] for w in res.warnings)


def test_three_phase_drum_sends_single_phases_by_their_names():
    from letdown.equipment import flash_stream, separator
    water = letdown.Fluid({"water": 1.0, "methane": 0.0})
    # steam at 400 K and 1 bar, liquid water at 300 K and 1 bar (saturation 373 K, IAPWS-95)
    inlet = flash_stream(water, np.array([1.0, 1.0]), np.array([[1.0, 0.0]] * 2),
                         T=np.array([400.0, 300.0]), P=np.array([1e5, 1e5]))
    out = separator.run(water, "drum", {"in": inlet}, {})
    np.testing.assert_array_equal(out.outlets["vapour"].flow, [1.0, 0.0])
    np.testing.assert_array_equal(out.outlets["water"].flow, [0.0, 1.0])
    np.testing.assert_array_equal(out.outlets["liquid"].flow, [0.0, 0.0])
    np.testing.assert_allclose(out.outlets["vapour"].T, inlet.T, atol=1e-6)
    assert np.all(out.energy_closure < 1e-8) and np.all(out.mole_closure < 1e-12)
    # gas with a little water: warm, one vapour phase; cold, vapour and free water
    gas = letdown.Fluid({"methane": 0.95, "ethane": 0.0495, "water": 0.0005})
    inlet = flash_stream(gas, np.array([10.0, 10.0]), np.tile(gas.zs, (2, 1)),
                         T=np.array([320.0, 270.0]), P=np.array([50e5, 50e5]))
    out = separator.run(gas, "drum", {"in": inlet}, {})
    assert out.outlets["vapour"].flow[0] == pytest.approx(10.0, rel=1e-14)
    assert out.outlets["water"].flow[0] == 0.0
    res = gas.flash_three_phase(out.outlets["vapour"].T[1:], 50e5)
    assert out.outlets["water"].flow[1] == pytest.approx(10.0 * res.beta_W[0], rel=1e-9)
    assert out.outlets["water"].flow[1] > 0.0
    assert np.all(out.energy_closure < 1e-8) and np.all(out.mole_closure < 1e-12)
