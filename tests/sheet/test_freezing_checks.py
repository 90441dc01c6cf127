"""Freezing checks that must never be quietly wrong (issue 10): the inhibitor dose, checks always
on with a stated default margin, ice from free water, warnings people act on, zero-flow streams.

Hand checks use Hammerschmidt (1934), Ind. Eng. Chem. 26, 851, in the form of REFERENCE_DATA.md
section 3: dT = K W / (M (100 - W)) with K = 2335 degF g/mol for methanol (field units). With all
of the water m_w free and neat inhibitor, m_inh / m_w = W / (100 - W).
"""
import numpy as np
import pytest

from letdown.errors import ConvergenceError
from letdown.sheet.loader import parse_spec
from letdown.sheet.solve import Sheet

M_METHANOL = 32.042        # g/mol, from the IUPAC atomic weights (as tests/sheet/test_inject.py)
M_WATER = 18.015           # g/mol, IUPAC atomic weights (from memory)
#: Water mole fraction of the wet gas in both routes below (below saturation at the feed: about
#: 4.8e-4 at 20 degC, 71 bar by Bukacek 1955, the water content the solver itself computes)
Y_WATER = 4.0e-4

DRY = {"methane": 0.90, "ethane": 0.05, "propane": 0.02, "nitrogen": 0.03}


def _comp(with_water):
    if not with_water:
        return "{" + ", ".join(f"{k}: {v}" for k, v in DRY.items()) + "}"
    return "{" + ", ".join(f"{k}: {v * (1 - Y_WATER):.10g}" for k, v in DRY.items()) \
        + f", water: {Y_WATER}" + "}"


def dosed_text(route, losses="none", depression="10 K"):
    """Methanol sized by a depression, a throttle, a drum with a water port: the water either a
    component of the gas (``component``) or carried beside it (``beside``), the same amount."""
    water = "" if route == "component" else f"  water: {Y_WATER}\n"
    return (
        "title: dosed let-down (fictional)\n"
        "gas:\n  model: peng-robinson\n"
        f"  composition: {_comp(route == 'component')}\n{water}"
        "feeds:\n  supply: {T: 20 degC, P: 70 barg, flow: 50000 Sm3/h}\n"
        "equipment:\n"
        f"  dose: {{kind: inject, from: supply, to: dosed, inhibitor: methanol, "
        f"depression: {depression}, losses: {losses}}}\n"
        "  regulator: {kind: throttle, from: dosed, to: cold, P_out: 20 barg}\n"
        "  sep: {kind: separator, from: cold, to: {vapour: gas-out, liquid: hc-out, "
        "water: water-out}}\n")


def dosed_sheet(route, losses="none", depression="10 K"):
    """The sheet of :func:`dosed_text`, loaded."""
    return Sheet(parse_spec(dosed_text(route, losses, depression), source=f"{route}.yaml"))


def _water_kg_s(res, stream="supply"):
    return res.streams[stream].freezing["water_flow_kg_s"]


@pytest.mark.parametrize("route", ["component", "beside"])
def test_dose_with_water_as_component_or_beside_is_hammerschmidt_by_hand(route):
    # regression (issue 10, Why 1): with water as a component the dose came out at 1e8-1e12 kg/h,
    # sized at the drum's water-only outlet
    res = dosed_sheet(route, "none").solve()
    dose = res.equipment["dose"]
    W = 100.0 * 10.0 * 1.8 * M_METHANOL / (2335.0 + 10.0 * 1.8 * M_METHANOL)
    by_hand = _water_kg_s(res) * W / (100.0 - W)
    # all the water free (losses: none): the identity of the rule; 1e-5 covers the hand molar
    # mass against the component table's 32.04186 (4e-6)
    assert dose["inhibitor_rate_kg_s"] == pytest.approx(by_hand, rel=1e-5)
    # what the streams carry is what was injected
    assert res.streams["dosed"].freezing["inhibitor_flow_kg_s"] == pytest.approx(
        dose["inhibitor_rate_kg_s"], rel=1e-12)
    assert dose["protected_stream"] not in ("water-out", "hc-out")


def test_both_water_routes_give_the_same_dose_with_losses():
    a = dosed_sheet("component", "equilibrium").solve()
    b = dosed_sheet("beside", "equilibrium").solve()
    ra, rb = (r.equipment["dose"]["inhibitor_rate_kg_s"] for r in (a, b))
    # the same water per dry gas, the same rule; with water a component the throttle's flash
    # condenses it (its heat leaves the cold point 0.23 K warmer), so the methanol the vapour
    # takes there differs: 1.3 % measured, 2 % allowed
    assert ra == pytest.approx(rb, rel=2e-2)
    assert a.equipment["dose"]["protected_stream"] == "cold"
    # the aqueous part is Hammerschmidt's on the free water that condenses at the cold point
    for r in (a, b):
        d = r.equipment["dose"]
        W = d["inhibitor_wt_pct"]
        assert W == pytest.approx(100.0 * 18.0 * M_METHANOL / (2335.0 + 18.0 * M_METHANOL),
                                  rel=1e-3)
        # the rate is tens of kg/h for 37 t/h of gas, never more than the gas itself
        assert 1.0 / 3600 < d["inhibitor_rate_kg_s"] < 100.0 / 3600

    # the drum sends the aqueous inhibitor with its free water in both routes
    for r in (a, b):
        d = r.equipment["dose"]
        assert r.streams["water-out"].freezing["inhibitor_flow_kg_s"] == pytest.approx(
            d["inhibitor_aqueous_kg_s"], rel=5e-2)


def test_an_absurd_dose_is_refused_and_the_case_marked_failed(monkeypatch):
    # the guard itself: with the bound set below the (sound) dose, the dose must be refused, not
    # printed: rate NaN (null in JSON), a hazard record, the case not converged
    import letdown.sheet.dosing as dosing
    monkeypatch.setattr(dosing, "MAX_DOSE_TO_GAS", 1e-9)
    res = dosed_sheet("beside", "none").solve()
    assert res.converged is False
    assert res.equipment["dose"]["inhibitor_rate_kg_s"] is None
    refused = [w for w in res.warnings if w["kind"] == "inhibitor_dose"]
    assert len(refused) == 1 and refused[0]["severity"] == "hazard"
    assert refused[0]["numbers"]["gas_mass_flow_kg_s"] == pytest.approx(
        res.streams["supply"].mass_flow, rel=1e-12)


UNGUARDED = """\
title: regulator without preheat, no limits and no water given (fictional)
gas:
  model: peng-robinson
  composition: {methane: 0.9135, ethane: 0.048, propane: 0.012, nitrogen: 0.015, carbon-dioxide: 0.0115}
feeds:
  supply: {T: 6 degC, P: 70 barg, flow: 85000 Sm3/h}
equipment:
  regulator: {kind: throttle, from: supply, to: network, P_out: 10 barg}
"""


def test_checks_are_on_without_limits_or_gas_water():
    # regression (issue 10, Why 2): no limits and no gas.water gave no hydrate or ice warning
    res = Sheet(parse_spec(UNGUARDED, source="unguarded.yaml")).solve()
    fz = res.streams["network"].freezing
    assert fz["hydrate_margin_K"] < -15.0              # deep inside the hydrate region
    assert fz["water_dew_margin_K"] < 0.0              # below its water dew point: free water
    hydrate = [w for w in res.warnings if w["where"] == "network" and w["kind"] == "hydrate"]
    assert len(hydrate) == 1 and hydrate[0]["severity"] == "hazard"
    assert hydrate[0]["numbers"]["wanted_margin_K"] == 3.0
    # the default margin and the water assumption are stated in the JSON
    basis = res.freezing_basis
    assert basis["hydrate_margin_K"] == 3.0
    assert "common practice" in basis["hydrate_margin_source"]
    assert "saturated" in basis["water"]


# -- limits.min_T is the material's limit; ice from free water --------------------------------
DISTRICT = """\
title: district main off a small regulator, cold-rated steel (fictional)
gas:
  model: peng-robinson
  composition: {methane: 0.9135, ethane: 0.048, propane: 0.012, nitrogen: 0.015, carbon-dioxide: 0.0115}
%s
feeds:
  supply: {T: 2 degC, P: 30 barg, flow: 5000 Sm3/h}
equipment:
  regulator: {kind: throttle, from: supply, to: main, P_out: 4 barg}
limits:
  min_T: -20 degC
%s
"""


def _district(water="", extra=""):
    return Sheet(parse_spec(DISTRICT % (water, extra), source="district.yaml")).solve()


def _kinds(res, where):
    return {w["kind"]: w for w in res.warnings if w["where"] == where}


def test_min_T_below_zero_does_not_switch_the_ice_check_off():
    # regression (issue 10, Why 3): min_T -20 degC silenced the ice check of a main below 0 degC
    # wet gas (saturated at 20 degC upstream) reaching the station at 2 degC: free water
    res = _district("  water: {saturated: {T: 20 degC, P: 30 barg}}")
    main = res.streams["main"]
    assert main.T < 273.15 and main.freezing["water_dew_margin_K"] < 0.0
    ice = _kinds(res, "main")["ice"]
    assert ice["severity"] == "hazard"
    assert main.freezing["ice_T_K"] == 273.15          # no inhibitor: pure water's ice point
    assert main.freezing["ice_margin_K"] == pytest.approx(main.T - 273.15, abs=1e-12)
    assert "min_T" not in _kinds(res, "main")         # the steel is fine


def test_no_ice_where_no_free_water_can_form():
    res = _district("  water: 20 mg/Sm3")             # dry gas: water dew point far below
    main = res.streams["main"]
    assert main.T < 273.15 and main.freezing["water_dew_margin_K"] > 0.0
    assert "ice" not in _kinds(res, "main")
    assert main.freezing["ice_margin_K"] is None and main.freezing["ice_T_K"] is None


def test_the_inhibitor_lowers_the_freezing_point():
    res = dosed_sheet("beside", "equilibrium").solve()
    cold = res.streams["cold"].freezing
    # about 20 wt % methanol in the free water at -7.5 degC: it freezes near -13 degC (the ideal
    # solution; Melinder 2010 measures -15 degC), so no ice
    assert res.streams["cold"].T < 273.15
    assert cold["ice_T_K"] < res.streams["cold"].T - 3.0
    assert all(w["kind"] != "ice" for w in res.warnings)


def test_outlet_rule_for_the_pipe_downstream():
    rule = "  outlet_min_T: 0 degC"
    res = _district("  water: 20 mg/Sm3", rule)
    w = _kinds(res, "main")["outlet_min_T"]
    assert w["severity"] == "hazard" and w["numbers"]["outlet_min_T_K"] == 273.15
    assert res.streams["main"].freezing["outlet_min_T_margin_K"] == pytest.approx(
        res.streams["main"].T - 273.15, abs=1e-12)
    # the feed is not an outlet
    assert res.streams["supply"].freezing["outlet_min_T_margin_K"] is None
    named = _district("  water: 20 mg/Sm3", "  outlet_min_T: {T: 0 degC, streams: [supply]}")
    assert "outlet_min_T" not in _kinds(named, "main")


def test_outlet_rule_names_unknown_streams_as_bad_input():
    from letdown.errors import InputError
    with pytest.raises(InputError, match="no stream named 'mian'") as err:
        parse_spec(DISTRICT % ("", "  outlet_min_T: {T: 0 degC, streams: [mian]}"), source="d.yaml")
    assert err.value.line == 12 and err.value.field == "limits.outlet_min_T.streams[0]"


# -- warnings people act on ---------------------------------------------------------------------
def test_no_hydrate_warnings_on_a_refrigerant_loop():
    # pure propane in a closed loop carries no water: no hydrate warning, whatever its temperature
    from pathlib import Path
    text = (Path(__file__).parents[2] / "flowsheets" / "propane-chiller.yaml").read_text()
    res = Sheet(parse_spec(text + "limits:\n  hydrate_margin: 3 K\n", source="chiller.yaml")).solve()
    assert not [w for w in res.warnings if w["kind"].startswith("hydrate") or w["kind"] == "ice"]


def test_no_hydrate_warnings_on_hydrocarbon_liquid_and_one_per_stream_and_cause():
    from pathlib import Path
    res = letdown_load(Path(__file__).parents[2] / "flowsheets" / "cold-separation.yaml")
    hc_liquid = {"inlet-liquid", "cold-liquid"}
    assert not [w for w in res.warnings if w["where"] in hc_liquid
                and w["kind"].startswith("hydrate")]
    keys = [(w["where"], w["kind"]) for w in res.warnings]
    assert len(keys) == len(set(keys))
    for w in res.warnings:
        assert w["severity"] in ("hazard", "check", "note") and isinstance(w["numbers"], dict)


def letdown_load(path):
    import letdown
    return letdown.load(path).solve()


# -- zero-flow streams and water outlets ----------------------------------------------------------
def test_a_zero_flow_stream_reports_no_properties():
    res = dosed_sheet("beside", "none").solve()
    hc = res.streams["hc-out"]                         # no hydrocarbon liquid at the drum
    assert hc.flow == 0.0
    d = hc.to_dict()
    for key in ("vapour_fraction", "Z", "density_kg_m3", "h_J_mol", "s_J_molK",
                "molar_mass_kg_mol", "gross_cv_J_m3", "wobbe_gross_J_m3"):
        assert d[key] is None, key
    assert set(d["composition"].values()) == {None}
    assert d["T_K"] == pytest.approx(res.streams["cold"].T, abs=1e-9)   # the drum's state stays


@pytest.mark.parametrize("route", ["beside", "component"])
def test_a_water_outlet_reports_the_aqueous_liquid_it_carries(route):
    # regression (issue 10, Why 5): the water outlet showed the inlet's vapour (vapour fraction
    # 0.96, Z 0.80 for a stream of water and MEG)
    res = dosed_sheet(route, "equilibrium").solve()
    w = res.streams["water-out"]
    assert w.freezing["water_flow_kg_s"] > 0.0
    assert w.vapour_fraction == 0.0
    # water with about 20 wt % methanol at -7 degC: 950-990 kg/m3 (Melinder 2010 via CoolProp:
    # 970 kg/m3 at 20 wt %, 10 degC); the cubic's own aqueous density with water a component is
    # lower (Peng-Robinson with a volume shift)
    lo = 800.0 if route == "component" else 940.0
    assert lo < w.density < 1000.0
    if route == "beside":
        d = w.to_dict()
        assert d["Z"] is None and d["h_J_mol"] is None


def test_water_outlet_of_the_meg_example():
    from pathlib import Path
    res = letdown_load(Path(__file__).parents[2] / "flowsheets" / "cold-separation.yaml")
    w = res.streams["cold-water"]
    assert w.vapour_fraction == 0.0 and w.Z is None
    wt = w.freezing["inhibitor_wt_pct"]
    assert 30.0 < wt < 80.0
    # ideal volumes against Melinder (2010): within 1.5 % up to 40 wt % (tests/fluid/test_aqueous.py);
    # here only checked to lie between water and neat MEG (CRC, from memory)
    assert 999.0 < w.density < 1113.5


# -- fuzzing the new parts with inputs a practitioner could write ---------------------------------
def test_a_batch_with_one_refused_dose_keeps_the_other_cases(monkeypatch):
    # studies take the path without margins (inject_doses): one case refused, the other kept
    import letdown.sheet.dosing as dosing
    sheet = dosed_sheet("beside", "none")
    good = sheet.solve_cases({"dose.depression": np.array([10.0])})
    rate = float(good.equipment["dose"].details["inhibitor_rate_kg_s"][0])
    gas = float(good.streams["supply"].mass_flow[0])
    # the bound between the two cases' doses (the dose grows with the depression)
    monkeypatch.setattr(dosing, "MAX_DOSE_TO_GAS", 0.5 * rate / gas)
    batch = sheet.solve_cases({"dose.depression": np.array([2.0, 10.0])}, strict=False)
    assert batch.converged.tolist() == [True, False]
    rates = batch.equipment["dose"].details["inhibitor_rate_kg_s"]
    assert np.isfinite(rates[0]) and np.isnan(rates[1])
    refused = [w for w in batch.warnings if w.kind == "inhibitor_dose"]
    assert len(refused) == 1 and refused[0].cases == (1,)


@pytest.mark.parametrize("rule, words", [
    ("{streams: [main]}", "missing field 'T'"),
    ("{T: 0 degC, streams: main}", "streams"),
    ("{T: 0 degC, streams: [main], margin: 2 K}", "margin"),
    ("0 bar", "temperature"),
])
def test_mutated_outlet_rules_are_bad_input(rule, words):
    from letdown.errors import InputError
    with pytest.raises(InputError, match=words) as err:
        parse_spec(DISTRICT % ("", f"  outlet_min_T: {rule}"), source="d.yaml")
    assert err.value.file == "d.yaml" and err.value.line == 12


def test_cli_exit_code_of_a_refused_dose(tmp_path, monkeypatch):
    # a refused dose is a failed solve (exit 1) with the report and its hazard, never exit 0
    import letdown.sheet.dosing as dosing
    from letdown import cli
    monkeypatch.setattr(dosing, "MAX_DOSE_TO_GAS", 1e-9)
    path = tmp_path / "dosed.yaml"
    path.write_text(dosed_text("beside", "none"))
    assert cli.main(["solve", str(path), "--json"]) == 1


def test_a_given_rate_is_injected_even_with_no_gas_downstream():
    # inject on a drum's (empty) hydrocarbon-liquid line: a depression has nothing to be sized
    # for and is refused; a rate the file gives is an input and is kept
    def on_liquid(spec):
        return dosed_text("beside", "equilibrium").replace(
            "  dose: {kind: inject, from: supply, to: dosed,",
            "  dose: {kind: inject, from: hc-out, to: hc-dosed,").replace(
            "from: dosed, to: cold", "from: supply, to: cold").replace("depression: 10 K", spec)
    sized = Sheet(parse_spec(on_liquid("depression: 10 K"), source="a.yaml")).solve()
    assert sized.converged is False
    assert any(w["kind"] == "inhibitor_dose" and "no stream downstream carries gas" in w["what"]
               for w in sized.warnings)
    given = Sheet(parse_spec(on_liquid("rate: 5 kg/h"), source="b.yaml")).solve()
    assert given.converged is True
    assert given.equipment["dose"]["inhibitor_rate_kg_s"] == pytest.approx(5.0 / 3600.0)
