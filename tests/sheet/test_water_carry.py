"""The water carried beside the gas inside the solve (issue 12, item 1).

The stream batches carry the water per dry gas and the free water
(:class:`letdown.equipment.stream.Carry`); each block passes it on in its own ``run`` (the default
of :func:`letdown.equipment.common.finish`: a one-inlet block keeps it, a mixer blends; an
exchanger keeps each side's own; a separator splits it, :mod:`letdown.equipment.watersplit`), and a
loop settles it in the same tear iteration as its gas.

References: a material balance (water in = water out, exact at steady state), the saturated water
content of the drum's vapour recomputed here by the Bukacek (1955) correlation of
:mod:`letdown.fluid.aqueous.water` (the route the file names, ``gas.water_method``), and the blend of two
streams worked by hand. The compositions are invented for tests.
"""
import numpy as np
import pytest

from letdown.equipment import Carry, KINDS, flash_stream
from letdown.equipment.common import DOSE_RATE, WATER_METHOD, finish
from letdown.equipment.stream import blend
from letdown.fluid.aqueous.water import M_WATER, MOL_PER_SM3, water_content
from letdown.sheet.loader import parse_spec
from letdown.sheet.solve import solve_cases
from tests.blocks import fluid

#: A recycle through a separator (fictional): gas cooled and separated, 30 % of the drum's vapour
#: warmed and sent back to the inlet mixer. The composition is invented for tests.
RECYCLE = """\
title: water recycle test (fictional)
gas:
  model: peng-robinson
  composition: %s
  %s
feeds:
  feed: {T: 30 degC, P: 70 barg, flow: 1000 kmol/h}
equipment:
  mix:   {kind: mixer, from: [feed, back], to: mixed}
  chill: {kind: cooler, from: mixed, to: cold, T_out: 5 degC}
  drum:  {kind: separator, from: cold, to: {vapour: gas, liquid: condensate, water: free-water}}
  split: {kind: splitter, from: gas, to: {product: 0.7, recycle: rest}}
  warm:  {kind: heater, from: recycle, to: back, T_out: 30 degC}
"""
RICH = ("{methane: 0.82, ethane: 0.08, propane: 0.05, n-butane: 0.025, n-pentane: 0.01, "
        "nitrogen: 0.01, carbon-dioxide: 0.005}")
LEAN = "{methane: 0.9135, ethane: 0.048, propane: 0.012, nitrogen: 0.015, carbon-dioxide: 0.0115}"
#: The loop's water settles to 1e-12 relative (letdown.sheet.solve.CARRY_TOLERANCE); a balance over
#: the loop closes to this [-] (a few such steps of round-off).
BALANCE = 1e-10


def recycle(water="water: {saturated: {T: 30 degC, P: 70 barg}}", comp=RICH):
    return parse_spec(RECYCLE % (comp, water), source="recycle.yaml")


def water_out(res, names):
    return sum(res.streams[s].carry.water_ratio * res.streams[s].flow
               + res.streams[s].carry.free_water for s in names)


def test_recycle_through_a_separator_settles_its_water_in_the_tear_iteration():
    fs = recycle()
    res = solve_cases(fs, margins=True)
    loop, = res.loops
    assert loop.converged.all()
    tear, = loop.tears
    # the tear stream carries its water out of the solve (the loop's own iteration settled it)
    assert res.streams[tear].carry is not None
    # the feed's water: saturated at 30 degC, 70 barg by Bukacek (1955), recomputed here
    y = float(np.asarray(water_content(None, 303.15, 70e5 + 101325.0)).reshape(-1)[0])
    feed = res.streams["feed"]
    w_in = y / (1.0 - y) * feed.flow
    assert feed.carry.water_ratio == pytest.approx(y / (1.0 - y), rel=1e-14)
    # steady state: the water in leaves by the product, the condensate and the free water
    w_out = water_out(res, ["product", "condensate", "free-water"])
    assert abs(w_out - w_in) <= BALANCE * w_in
    # the drum's vapour leaves saturated at its T and P (Bukacek), and the recycle keeps it
    gas = res.streams["gas"]
    yv = float(np.asarray(water_content(None, gas.T, gas.P)).reshape(-1)[0])
    assert gas.carry.water_ratio == pytest.approx(yv / (1.0 - yv), rel=1e-12)
    assert res.streams["back"].carry.water_ratio == pytest.approx(gas.carry.water_ratio,
                                                                  rel=1e-14)
    # the mixer blends by flow: mixed = (F_feed r_feed + F_back r_back) / (F_feed + F_back)
    back = res.streams["back"]
    by_hand = ((feed.flow * feed.carry.water_ratio + back.flow * back.carry.water_ratio)
               / (feed.flow + back.flow))
    assert res.streams["mixed"].carry.water_ratio == pytest.approx(by_hand, rel=1e-14)
    # the freezing figures read the carried water
    assert res.freezing["free-water"].water_flow == pytest.approx(
        res.streams["free-water"].carry.free_water, rel=1e-15)
    assert float(res.equipment["drum"].details["free_water_mol_s"][0]) > 0.0


def test_carrying_the_water_changes_neither_the_gas_nor_the_loop_iterations():
    fs = recycle()
    wet = solve_cases(fs, margins=True)
    dry = solve_cases(fs, margins=False)          # no inject block: no water carried
    assert dry.streams["back"].carry is None
    assert wet.loops[0].iterations.tolist() == dry.loops[0].iterations.tolist()
    for name, s in dry.streams.items():
        for attr in ("flow", "T", "P", "h"):
            assert np.array_equal(getattr(s, attr), getattr(wet.streams[name], attr)), (name, attr)


def test_a_dry_gas_recycled_reaches_the_feed_water_at_steady_state():
    # a lean gas, drier than saturated at the drum and with no hydrocarbon liquid: the product
    # is the only way out, so at steady state it carries exactly the feed's water per dry gas,
    # while the loop holds more gas than the feed (the tear started with no water)
    fs = recycle("water: 40 mg/Sm3", comp=LEAN)
    res = solve_cases(fs, margins=True)
    r_feed = 40e-6 / M_WATER / MOL_PER_SM3
    assert res.streams["condensate"].flow == 0.0
    assert res.streams["free-water"].carry.free_water == 0.0
    for name in ("mixed", "gas", "product", "back"):
        assert res.streams[name].carry.water_ratio == pytest.approx(r_feed, rel=1e-11), name


def test_every_case_of_a_batch_closes_its_water_balance():
    # a little fuzz: random feed temperatures, pressures and flows, each case on its own
    rng = np.random.default_rng(12)
    n = 6
    cases = {"feed.T": rng.uniform(288.15, 318.15, n), "feed.P": rng.uniform(40e5, 90e5, n),
             "feed.flow": rng.uniform(50.0, 500.0, n), "chill.T_out": rng.uniform(268.15, 283.15, n)}
    res = solve_cases(recycle(""), cases, margins=True, strict=False)
    ok = res.converged
    assert ok.sum() >= n - 1
    feed = res.streams["feed"]
    # no gas.water: each feed saturated at its own T and P (Bukacek), recomputed here
    y = np.asarray(water_content(None, feed.T[ok], feed.P[ok]), float)
    w_in = y / (1.0 - y) * feed.flow[ok]
    w_out = water_out(res, ["product", "condensate", "free-water"])[ok]
    assert np.all(np.abs(w_out - w_in) <= BALANCE * w_in)


# -- the blocks' own carry ---------------------------------------------------------------------
def _carrying(stream, r, free=0.0):
    n = stream.n_cases
    return stream.with_carry(Carry(np.full(n, r), np.full(n, free)))


def test_the_default_rule_keeps_one_inlet_and_blends_several():
    gas = fluid("lean")
    n = 2
    a = _carrying(flash_stream(gas, np.array([10.0, 0.0]), np.tile(gas.zs, (n, 1)),
                               T=np.full(n, 300.0), P=np.full(n, 50e5)), 1e-3, free=0.5)
    b = _carrying(flash_stream(gas, np.array([30.0, 5.0]), np.tile(gas.zs, (n, 1)),
                               T=np.full(n, 290.0), P=np.full(n, 50e5)), 2e-3)
    # any block kind that does not split water itself (a new kind: a pipe) keeps the inlet's
    # water per dry gas through finish, and does not carry free water on
    out = flash_stream(gas, a.flow, a.zs, T=a.T - 5.0, P=a.P - 1e5)
    kept = finish({"in": a}, {"out": out}, 0.0).outlets["out"].carry
    assert np.array_equal(kept.water_ratio, a.carry.water_ratio)
    assert np.array_equal(kept.free_water, np.zeros(n))
    # a mixer: (10 * 1e-3 + 30 * 2e-3) / 40 = 1.75e-3; the second case 0 * 1e-3 + 5 * 2e-3 over 5
    mixed = KINDS["mixer"](gas, "m", {"in0": a, "in1": b}, {}).outlets["out"].carry
    assert mixed.water_ratio == pytest.approx([1.75e-3, 2e-3], rel=1e-15)
    # a splitter and a throttle keep it
    split = KINDS["splitter"](gas, "s", {"in": b}, {"fractions": {"x": 0.25, "y": "rest"}})
    for port in ("x", "y"):
        assert split.outlets[port].carry.water_ratio == pytest.approx(2e-3, rel=1e-15)
    thr = KINDS["throttle"](gas, "t", {"in": b}, {"P_out": 20e5})
    assert thr.outlets["out"].carry.water_ratio == pytest.approx(2e-3, rel=1e-15)
    # where no inlet flows, the first inlet's ratio (any will do for no flow)
    assert blend([np.zeros(1), np.zeros(1)], [Carry(np.full(1, 3.0), np.zeros(1)),
                                              Carry(np.full(1, 4.0), np.zeros(1))]
                 ).water_ratio.tolist() == [3.0]


def test_an_exchanger_keeps_each_sides_own_water():
    gas = fluid("lean")
    hot = _carrying(flash_stream(gas, np.array([10.0]), gas.zs[None, :], T=np.array([330.0]),
                                 P=np.array([50e5])), 1e-3)
    cold = _carrying(flash_stream(gas, np.array([10.0]), gas.zs[None, :], T=np.array([280.0]),
                                  P=np.array([50e5])), 4e-4)
    o = KINDS["exchanger"](gas, "x", {"hot": hot, "cold": cold}, {"duty": 1e4}).outlets
    assert o["hot"].carry.water_ratio.tolist() == [1e-3]
    assert o["cold"].carry.water_ratio.tolist() == [4e-4]


def test_a_separator_splits_its_inlet_water_and_balances_it():
    gas = fluid("rich")
    n = 3
    inlet = flash_stream(gas, np.full(n, 100.0), np.tile(gas.zs, (n, 1)),
                         T=np.array([275.0, 280.0, 290.0]), P=np.full(n, 60e5))
    # wetter than saturation, about saturated, and dry
    inlet = inlet.with_carry(Carry(np.array([5e-3, 3e-4, 1e-6]), np.zeros(n)))
    out = KINDS["separator"](gas, "d", {"in": inlet}, {WATER_METHOD: "bukacek"})
    w_in = inlet.carry.water_ratio * inlet.flow
    w = {p: out.outlets[p].carry.water_ratio * out.outlets[p].flow + out.outlets[p].carry.free_water
         for p in ("vapour", "liquid", "water")}
    assert np.all(np.abs(sum(w.values()) - w_in) <= 1e-12 * w_in)
    # the vapour holds at most its saturated content at the drum (Bukacek, recomputed here)
    V = out.outlets["vapour"]
    y = np.asarray(water_content(None, V.T, V.P), float)
    assert np.all(V.carry.water_ratio <= y / (1.0 - y) * (1.0 + 1e-14))
    assert V.carry.water_ratio[0] == pytest.approx(y[0] / (1.0 - y[0]), rel=1e-14)
    assert w["water"][0] > 0.0 and w["water"][2] == 0.0
    assert out.details["free_water_mol_s"] == pytest.approx(w["water"], rel=1e-15)


# -- the inhibitor ---------------------------------------------------------------------------
#: Molar mass of methanol [kg/mol]: CH3OH from the IUPAC 2013 conventional atomic weights
#: (H 1.008, C 12.011, O 15.999; values from memory), 32.042 g/mol; the component table carries
#: 32.04186 (4e-6 relative apart, the tolerance below).
M_METHANOL = 32.042e-3


def test_the_inject_blocks_run_alone_adds_its_dose():
    gas = fluid("lean")
    n = 2
    inlet = flash_stream(gas, np.array([100.0, 0.0]), np.tile(gas.zs, (n, 1)),
                         T=np.full(n, 280.0), P=np.full(n, 50e5))
    inlet = inlet.with_carry(Carry(np.full(n, 2e-4), np.zeros(n)))
    run = KINDS["inject"]
    out = run(gas, "dose", {"in": inlet}, {"inhibitor": "methanol", "rate": 0.036})
    c = out.outlets["out"].carry
    # 0.036 kg/s of methanol into 100 mol/s of dry gas: 0.036 / 0.032042 / 100 mol/mol; an empty
    # stream takes none
    assert c.inhibitor_ratio[0, 0] == pytest.approx(0.036 / M_METHANOL / 100.0, rel=1e-5)
    assert c.inhibitor_ratio[1, 0] == 0.0 and np.all(c.inhibitor_ratio[:, 1] == 0.0)
    assert np.array_equal(c.water_ratio, inlet.carry.water_ratio)
    # the gas passes unchanged
    assert np.array_equal(out.outlets["out"].T, inlet.T) and np.all(out.mole_closure == 0.0)
    # a depression before the solver has sized it adds nothing; the rate the solver found is
    # added (and replaces a given rate), a refused one (NaN) adds nothing
    dep = {"inhibitor": "MEG", "depression": 8.0}
    assert np.all(run(gas, "dose", {"in": inlet}, dep).outlets["out"].carry.inhibitor_ratio == 0)
    sized = run(gas, "dose", {"in": inlet}, {**dep, DOSE_RATE: np.array([0.062, np.nan])})
    meg = sized.outlets["out"].carry.inhibitor_ratio[:, 1]
    assert meg[0] == pytest.approx(0.062 / 62.068e-3 / 100.0, rel=1e-5) and meg[1] == 0.0
    # what is already carried is kept and added to
    again = run(gas, "dose", {"in": out.outlets["out"]}, {"inhibitor": "methanol", "rate": 0.036})
    assert again.outlets["out"].carry.inhibitor_ratio[0, 0] == pytest.approx(
        2 * c.inhibitor_ratio[0, 0], rel=1e-14)


def test_a_dose_sized_for_a_point_inside_a_recycle_settles_in_the_tear_iteration():
    # methanol sized (8 K, Hammerschmidt, no losses) for the coldest point downstream, which is
    # inside the recycle: the solve finds the point, runs the blocks with the rate, and the
    # loop settles the inhibitor with its water
    text = RECYCLE.replace(
        "  mix:   {kind: mixer, from: [feed, back], to: mixed}\n",
        "  dose:  {kind: inject, from: feed, to: fed, inhibitor: methanol, depression: 8 K,\n"
        "          losses: none}\n"
        "  mix:   {kind: mixer, from: [fed, back], to: mixed}\n")
    res = solve_cases(parse_spec(text % (RICH, ""), source="dosed-recycle.yaml"), margins=True)
    assert res.converged.all()
    d = res.equipment["dose"].details
    assert d["protected_stream"][0] in ("cold", "gas")
    rate = float(d["inhibitor_rate_kg_s"][0])
    assert rate > 0.0
    # the methanol the block adds, per mole of dry gas at its outlet (recomputed here)
    fed = res.streams["fed"]
    assert fed.carry.inhibitor_ratio[0, 0] == pytest.approx(rate / M_METHANOL / fed.flow[0],
                                                            rel=1e-5)
    # steady state: all of it leaves, with the free water (no losses: the drum drops free water)
    out = sum(res.streams[s].carry.inhibitor_ratio[:, 0] * res.streams[s].flow
              + res.streams[s].carry.free_inhibitor[:, 0]
              for s in ("product", "condensate", "free-water"))
    injected = fed.carry.inhibitor_ratio[:, 0] * fed.flow
    assert abs(out[0] - injected[0]) <= BALANCE * injected[0]
    assert res.streams["free-water"].carry.free_inhibitor[0, 0] == pytest.approx(injected[0],
                                                                                rel=BALANCE)
    # the freezing figures read what the solve carried
    assert res.freezing["free-water"].inhibitor_flow[0, 0] == pytest.approx(injected[0],
                                                                            rel=BALANCE)


def test_a_mixer_conserves_the_inhibitor_of_gases_holding_different_water():
    # water a component of the gas: the inhibitor per mole of DRY gas must be blended by the
    # inlets' dry flows. Weighted by their wet flows (as before), 50 kg/h of methanol into gas
    # with 2 % water mixed with as much dry gas left the mixer as 50.5 kg/h (1.02 % made from
    # nothing). A material balance: in = out, to round-off.
    text = """\
title: mixer with water as a component (fictional)
gas:
  model: peng-robinson
  composition: {methane: 0.88, ethane: 0.05, propane: 0.02, nitrogen: 0.03, water: 0.02}
feeds:
  wet: {T: 40 degC, P: 70 barg, flow: 1000 kmol/h}
  dry: {T: 40 degC, P: 70 barg, flow: 1000 kmol/h,
        composition: {methane: 0.898, ethane: 0.051, propane: 0.0204, nitrogen: 0.0306}}
equipment:
  dose: {kind: inject, from: wet, to: dosed, inhibitor: methanol, rate: 50 kg/h, losses: none}
  mix:  {kind: mixer, from: [dosed, dry], to: mixed}
"""
    res = solve_cases(parse_spec(text, source="mix-water.yaml"), margins=True)
    dosed = res.freezing["dosed"].inhibitor_flow[0, 0]
    assert dosed == pytest.approx(50.0 / 3600.0 / 32.04186e-3, rel=1e-12)   # the table's M
    assert res.freezing["mixed"].inhibitor_flow[0, 0] == pytest.approx(dosed, rel=1e-12)


def test_meg_dosed_inside_a_recycle_with_equilibrium_losses_settles_and_balances():
    # MEG dosed on the recycle itself, split by the three-phase equilibrium at the drum: the
    # carry walked after the solve (plain substitution, 500 passes) reported this loop's inhibitor
    # as not settled (a water_loop check); Wegstein in the tear iteration settles it. At steady
    # state the MEG injected leaves by the product, the condensate and the free water.
    text = RECYCLE.replace(
        "  warm:  {kind: heater, from: recycle, to: back, T_out: 30 degC}\n",
        "  warm:  {kind: heater, from: recycle, to: warmed, T_out: 30 degC}\n"
        "  dose:  {kind: inject, from: warmed, to: back, inhibitor: MEG, depression: 10 K}\n")
    res = solve_cases(parse_spec(text % (RICH, ""), source="meg-recycle.yaml"),
                      {"feed.T": [295.0, 310.0]}, margins=True)
    assert res.converged.all()
    assert not [w for w in res.warnings if w.kind == "water_loop"]
    warmed, back = res.streams["warmed"], res.streams["back"]
    injected = (back.carry.inhibitor_ratio[:, 1] - warmed.carry.inhibitor_ratio[:, 1]) * back.flow
    rate = res.equipment["dose"].details["inhibitor_rate_kg_s"]
    assert injected == pytest.approx(rate / 62.068e-3, rel=1e-5)   # C2H6O2 62.068 g/mol, IUPAC 2013
    # atomic weights (values from memory, as M_METHANOL above)
    out = sum(res.freezing[s].inhibitor_flow[:, 1] for s in ("product", "condensate",
                                                              "free-water"))
    assert np.all(np.abs(out - injected) <= 1e-9 * injected)


@pytest.mark.parametrize("kind", ["throttle", "heater", "mixer", "splitter", "exchanger",
                                  "separator", "inject"])
def test_each_kinds_carry_rule_alone_gives_what_its_run_gives(kind):
    # a loop whose gas has settled carries its water and inhibitor through the solved outlets
    # by the kinds' carry rules alone (letdown.equipment.carry_rule): they must be the run's
    from letdown.equipment import carry_rule
    gas = fluid("rich")
    n = 3

    def stream(T, F, r, inh):
        s = flash_stream(gas, np.full(n, F), np.tile(gas.zs, (n, 1)), T=np.asarray(T, float),
                         P=np.full(n, 60e5))
        return s.with_carry(Carry(np.asarray(r, float), np.zeros(n),
                                  np.column_stack([np.asarray(inh, float), np.zeros(n)])))
    a = stream([275.0, 285.0, 300.0], 100.0, [5e-3, 3e-4, 1e-6], [1e-3, 0.0, 2e-4])
    b = stream([340.0, 340.0, 340.0], 50.0, [1e-4] * 3, [0.0] * 3)
    inlets, params = {"in": a}, {WATER_METHOD: "bukacek"}
    if kind == "throttle":
        params["P_out"] = 40e5
    elif kind == "heater":
        params["T_out"] = 310.0
    elif kind == "mixer":
        inlets = {"in0": a, "in1": b}
    elif kind == "splitter":
        params["fractions"] = {"x": 0.3, "y": "rest"}
    elif kind == "exchanger":
        inlets, params = {"hot": b, "cold": a}, {**params, "duty": 5e3}
    elif kind == "inject":
        params.update({"inhibitor": "methanol", "rate": 0.05})
    out = KINDS[kind](gas, "b", inlets, params)
    bare = {p: s.with_carry(None) for p, s in out.outlets.items()}
    again, _ = carry_rule(kind)(gas, "b", inlets, bare, params)
    for port, s in out.outlets.items():
        for f in ("water_ratio", "free_water", "inhibitor_ratio", "free_inhibitor"):
            assert np.array_equal(getattr(again[port].carry, f), getattr(s.carry, f)), (port, f)


def test_water_still_moving_after_the_carry_passes_is_reported_not_failed(monkeypatch):
    # the lean recycle's water settles two passes after its gas (it starts from none); with no
    # carry passes allowed, the streams stand (the gas settled) and a check says the water did not
    import letdown.sheet.loops as loops_module
    monkeypatch.setattr(loops_module, "CARRY_MAX_PASSES", 0)
    res = solve_cases(recycle("water: 40 mg/Sm3", comp=LEAN), margins=True)
    assert res.converged.all()
    notes = [w for w in res.warnings if w.kind == "water_loop"]
    assert len(notes) == 1 and notes[0].severity == "check"
    assert "did not settle" in notes[0].what
