"""Named gases (the file's ``gases`` section), blends of them in a sweep on both bases, feeds given
by their energy, and the study's own axes spelled with '@' (issue 14 item 3; issue 12 "Names").

The stations and gases here are fictional (invented compositions, our own names)."""
import numpy as np
import pytest

from letdown.cli import main
from letdown.errors import InputError
from letdown.fluid.quality import quality
from letdown.sheet.loader import parse_spec
from letdown.sheet.solve import solve_cases
from letdown.study.sweep import parse_variable, spelling_note, study_axis, sweep
from letdown.study.uncertainty import parse_distribution, uncertainty

#: A fictional station taking a biomethane and a hydrogen-rich gas of its own (invented).
STATION = """\
title: Fenmarsh blending station (fictional)
gas:
  model: peng-robinson
  composition: {methane: 0.9135, ethane: 0.048, propane: 0.012, nitrogen: 0.015, CO2: 0.0115}
  water: 50 mg/Sm3
gases:
  biomethane:
    composition: {methane: 0.965, CO2: 0.025, N2: 0.009, O2: 0.001}
    note: upgraded biogas (invented)
  h2-rich:
    composition: {hydrogen: 0.8, methane: 0.2}
feeds:
  supply: {T: 6 degC, P: 64 barg, FLOW}
equipment:
  preheat:   {kind: heater,   from: supply, to: warm,    T_out: 38 degC, dP: 0.3 bar}
  regulator: {kind: throttle, from: warm,   to: network, P_out: 17 barg}
goals:
  - {hold: network.T, at: 5 degC, by: preheat.T_out, within: [0 degC, 90 degC]}
"""

#: Ideal gross molar calorific values at 15 degC [J/mol], ISO 6976:2016 Table A.4, 15 degC column
#: (inert components 0), typed in here from the same transcription letdown/fluid/quality.py holds
#: (tests/fluid/test_quality.py checks that against the standard's Annex D examples): a check of the
#: flow-from-energy arithmetic, not of the data.
HS_15C = {"methane": 891.51e3, "ethane": 1562.14e3, "propane": 2221.10e3, "nitrogen": 0.0,
          "carbon-dioxide": 0.0, "oxygen": 0.0, "hydrogen": 286.15e3}


def station(flow="flow: 85000 Sm3/h", text=STATION):
    return parse_spec(text.replace("FLOW", flow), "fenmarsh.yaml")


def _hs(comp: dict) -> float:
    """Gross molar calorific value from :data:`HS_15C` [J/mol]."""
    return sum(x * HS_15C[c] for c, x in comp.items())


def _blend(fs, gas: dict, x):
    """Compositions (n, nc) in the sweep's component order: (1 - x) z_supply + x z_gas."""
    names = list(fs.gas.composition) + [c for c in gas if c not in fs.gas.composition]
    z = np.array([fs.gas.composition.get(c, 0.0) for c in names])
    g = np.array([gas.get(c, 0.0) for c in names])
    return names, (1 - x)[:, None] * z[None, :] + x[:, None] * g[None, :]


# --- the gases section ------------------------------------------------------------------------

def test_named_gases_are_read_with_canonical_components():
    fs = station()
    assert list(fs.gases) == ["biomethane", "h2-rich"]
    bio = fs.gases["biomethane"]
    assert bio.composition == pytest.approx({"methane": 0.965, "carbon-dioxide": 0.025,
                                             "nitrogen": 0.009, "oxygen": 0.001}, abs=1e-15)
    assert bio.where.file == "fenmarsh.yaml" and bio.where.line == 7
    assert "oxygen" not in fs.gas.composition          # a named gas is no stream
    assert parse_spec(STATION.replace("FLOW", "flow: 1 kmol/h").split("gases:")[0]
                 + "feeds:" + STATION.split("feeds:")[1].replace("FLOW", "flow: 1 kmol/h"),
                 "x.yaml").gases == {}


@pytest.mark.parametrize("old, new, line, field, message", [
    ("O2: 0.001}", "O2: 0.001, unobtainium: 0.0}", 8, "gases.biomethane.composition.unobtainium",
     "unknown component 'unobtainium'"),
    ("N2: 0.009", "N2: 0.019", 8, "gases.biomethane.composition", "sum to 1.01"),
    ("N2: 0.009", "N2: -0.009", 8, "gases.biomethane.composition.N2", "less than the minimum of 0"),
    ("  h2-rich:", "  hydrogen:", 10, "gases.hydrogen", "has the name of a component"),
    ("  h2-rich:", "  H2:", 10, "gases.H2", "name of a component (hydrogen)"),
    ("    note: upgraded", "    flow: 3 MW\n    note: upgraded", 9, "gases.biomethane.flow",
     "flow"),
])
def test_bad_named_gases_are_located(old, new, line, field, message):
    with pytest.raises(InputError) as e:
        parse_spec(STATION.replace("FLOW", "flow: 85000 Sm3/h").replace(old, new), "fenmarsh.yaml")
    assert message in e.value.message
    assert (e.value.file, e.value.line) == ("fenmarsh.yaml", line)
    assert e.value.field == field


# --- blends of a named gas ----------------------------------------------------------------------

def test_blend_of_a_named_gas_is_the_mixture_solved_alone():
    """The sweep's blend is z = (1 - x) z_supply + x z_biomethane: each case equals the file with
    that composition written out, solved on its own."""
    fs = station()
    t = sweep(fs, [parse_variable(fs, "@blend.biomethane=0:0.3:4")],
              outputs=["preheat.duty", "network.hydrate_margin", "@goal1"])
    x = t.column("@blend.biomethane [-]")
    names, zs = _blend(fs, fs.gases["biomethane"].composition, x)
    for i in (1, 3):
        comp = ", ".join(f"{c}: {float(v)!r}" for c, v in zip(names, zs[i]))
        alone = solve_cases(station(text=STATION.replace(
            "composition: {methane: 0.9135, ethane: 0.048, propane: 0.012, nitrogen: 0.015, "
            "CO2: 0.0115}", "composition: {" + comp + "}")), margins=True)
        # the goal's tolerance (1e-6 K) bounds how far two searches may land apart
        assert t.column("preheat.duty [W]")[i] == pytest.approx(
            float(alone.equipment["preheat"].duty[0]), rel=1e-6)
        assert t.column("preheat.T_out (goal1 holds network.T) [K]")[i] == pytest.approx(
            float(np.ravel(alone.goals[0].value)[0]), abs=1e-5)


def test_energy_basis_keeps_the_energy_of_a_named_gas_blend():
    """Issue 14: the delivered energy of every case equals the base case's to 1e-9 relative."""
    fs = station()
    var = [parse_variable(fs, "@blend.h2-rich=0:0.3:4")]
    vol = sweep(fs, var, outputs=["supply.flow", "preheat.duty"])
    en = sweep(fs, var, basis="energy", outputs=["supply.flow", "preheat.duty"])
    x = en.column("@blend.h2-rich [-]")
    names, zs = _blend(fs, fs.gases["h2-rich"].composition, x)
    flow = en.column("supply.flow [mol/s]")
    energy = np.asarray(quality(names, zs).gross_molar) * flow
    np.testing.assert_allclose(energy, energy[0], rtol=1e-9)
    np.testing.assert_allclose(en.column("supply.energy [W]"), energy[0], rtol=1e-9)
    assert np.all(np.diff(flow) > 0)                  # a leaner gas: more flow for the energy
    np.testing.assert_array_equal(vol.column("supply.flow [mol/s]"), flow[0])
    # ISO 6976 by hand (Table A.4 values typed above): the blend's molar value is linear in x
    hand = np.array([_hs(dict(zip(names, z))) for z in zs])
    np.testing.assert_allclose(np.asarray(quality(names, zs).gross_molar), hand, rtol=1e-12)


def test_blend_of_a_component_still_works_and_old_spelling_is_noted():
    fs = station()
    new, old = parse_variable(fs, "@blend.H2=0,0.1"), parse_variable(fs, "blend.hydrogen=0,0.1")
    assert new.note == "" and "deprecated" in old.note and "'@blend.hydrogen'" in old.note
    a = sweep(fs, [new], outputs=["preheat.duty"]).column("preheat.duty [W]")
    b = sweep(fs, [old], outputs=["preheat.duty"]).column("preheat.duty [W]")
    np.testing.assert_array_equal(a, b)


@pytest.mark.parametrize("spec, message", [
    ("@blend.biogas=0,0.1", "cannot blend 'biogas'"),
    ("@blend.biomethane=0,1", "blend fractions must lie in [0, 1)"),
    ("@mix.hydrogen=0,0.1", "is no study axis"),
    ("@goal2.at=5degC", "the file has 1 goal(s)"),
])
def test_bad_axes_are_refused(spec, message):
    fs = station()
    with pytest.raises(InputError, match=message.replace("(", r"\(").replace(")", r"\)")
                       .replace("[", r"\[")):
        parse_variable(fs, spec)


def test_unknown_blend_names_the_files_gases():
    with pytest.raises(InputError, match="the file's named gases: biomethane, h2-rich"):
        parse_variable(station(), "@blend.biomethan=0,0.1")


# --- feeds given by their energy --------------------------------------------------------------

def test_feed_energy_gives_the_flow_from_the_gross_calorific_value():
    fs = station("energy: 250 MW")
    feed = fs.feeds["supply"]
    assert feed.energy == 250e6
    # flow x GCV == energy (ISO 6976:2016 Table A.4 values, typed above)
    assert feed.flow * _hs(fs.gas.composition) == pytest.approx(250e6, rel=1e-9)
    # and with the code's own ISO 6976 (its metering Z cancels: real volume x real volumetric value)
    names = list(fs.gas.composition)
    q = quality(names, np.array([fs.gas.composition[c] for c in names]))
    hs, hv = float(np.ravel(q.gross_molar)[0]), float(np.ravel(q.gross_volumetric)[0])
    assert hs / hv == pytest.approx(8.3144621 * 288.15 / 101325, rel=5e-3)  # Z R T / p, m3/mol
    assert (feed.flow * hs / hv) * hv == pytest.approx(250e6, rel=1e-12)


def test_sweep_of_a_blend_keeps_an_energy_feed_on_its_energy_on_either_basis():
    fs = station("energy: 250 MW")
    var = [parse_variable(fs, "@blend.biomethane=0:0.3:4")]
    for basis in ("volume", "energy"):
        t = sweep(fs, var, basis=basis, outputs=["preheat.duty"])
        names, zs = _blend(fs, fs.gases["biomethane"].composition,
                           t.column("@blend.biomethane [-]"))
        energy = np.asarray(quality(names, zs).gross_molar) * t.column("supply.flow [mol/s]")
        np.testing.assert_allclose(energy, 250e6, rtol=1e-9)
        np.testing.assert_allclose(t.column("supply.energy [W]"), 250e6, rtol=0)
        assert t.column("supply.flow [mol/s]")[0] == pytest.approx(fs.feeds["supply"].flow,
                                                                   rel=1e-12)


def test_sweep_of_a_feeds_energy_sets_its_flow():
    fs = station("energy: 250 MW")
    t = sweep(fs, [parse_variable(fs, "supply.energy=200MW,300MW")], outputs=["supply.flow"])
    hs = _hs(fs.gas.composition)
    np.testing.assert_allclose(t.column("supply.flow [mol/s]") * hs, [200e6, 300e6], rtol=1e-9)
    with pytest.raises(InputError, match="feed 'supply' is given by its energy"):
        parse_variable(fs, "supply.flow=1000kmol/h")
    with pytest.raises(InputError, match="energy must be positive"):
        parse_variable(fs, "supply.energy=0MW,100MW")


@pytest.mark.parametrize("flow, line, field, message", [
    ("flow: 85000 Sm3/h, energy: 250 MW", 13, "feeds.supply.energy", "not both"),
    ("energy: -5 MW", 13, "feeds.supply.energy", "must be positive"),
    ("energy: 25 degC", 13, "feeds.supply.energy", ""),
    ("note: no flow", 13, "feeds.supply", "needs its flow"),
])
def test_bad_feed_energy_is_located(flow, line, field, message):
    with pytest.raises(InputError) as e:
        station(flow)
    assert message in e.value.message
    assert (e.value.file, e.value.line, e.value.field) == ("fenmarsh.yaml", line, field)


def test_feed_energy_with_a_component_without_calorific_data_is_refused():
    text = STATION.replace("propane: 0.012", "propane: 0.011, ethylene-glycol: 0.001")
    with pytest.raises(InputError, match="calorific value") as e:
        station("energy: 250 MW", text=text)
    assert e.value.field == "feeds.supply.energy"


# --- the namespace: blocks named blend and goal1 ------------------------------------------------

CLASH = STATION.replace("preheat", "blend").replace("regulator", "goal1")


def test_blocks_named_blend_and_goal1_can_be_swept():
    """Before the '@' axes, 'blend.T_out' was read as a blend of a component 'T_out' and
    refused, and 'goal1.*' as a goal: blocks of those names could not be swept."""
    fs = station(text=CLASH.replace("goals:\n  - {hold: network.T, at: 5 degC, by: blend.T_out, "
                                    "within: [0 degC, 90 degC]}\n", ""))
    t = sweep(fs, [parse_variable(fs, "blend.T_out=30degC,40degC"),
                   parse_variable(fs, "goal1.P_out=15barg,17barg")], outputs=["network.T"])
    assert t.columns[:2] == ("blend.T_out [K]", "goal1.P_out [Pa]")
    assert study_axis(fs, "blend.T_out") is None and spelling_note(fs, "blend.T_out") == ""
    T = t.column("network.T [K]")
    assert T[0] < T[2] and T[0] < T[1]     # hotter preheat, warmer; lower pressure, colder
    # the study's axes beside them, spelled with '@'; the old spelling says why it fails
    t2 = sweep(fs, [parse_variable(fs, "@blend.biomethane=0,0.2")], outputs=["network.T"])
    assert t2.columns[0] == "@blend.biomethane [-]"
    with pytest.raises(InputError, match=r"study's own axes are @blend.<gas>"):
        parse_variable(fs, "blend.biomethane=0,0.2")


def test_goal_target_of_a_file_with_a_block_named_goal1():
    fs = station(text=CLASH)
    t = sweep(fs, [parse_variable(fs, "@goal1.at=3degC,7degC")],
              outputs=["network.T", "@goal1"])
    np.testing.assert_allclose(t.column("network.T [K]"), [276.15, 280.15], atol=1e-5)
    assert "blend.T_out (goal1 holds network.T) [K]" in t.columns
    # the solver takes the '@' key too, whatever the file's names
    res = solve_cases(fs, {"@goal1.at": [276.15, 280.15]})
    np.testing.assert_allclose(res.streams["network"].T, [276.15, 280.15], atol=1e-5)


def test_goal_column_is_named_by_what_it_varies_and_holds():
    fs = station()
    t = sweep(fs, [parse_variable(fs, "supply.T=0degC,5degC")])
    assert "preheat.T_out (goal1 holds network.T) [K]" in t.columns
    assert not any("[SI]" in c for c in t.columns)
    # the old output path and the parameter's own path give the same column
    for path in ("goal1", "@goal1", "preheat.T_out"):
        t1 = sweep(fs, [parse_variable(fs, "supply.T=0degC")], outputs=[path])
        assert t1.columns[1] == "preheat.T_out (goal1 holds network.T) [K]"


def test_uncertain_blend_of_a_named_gas_and_goal_target():
    fs = station()
    dists = [parse_distribution(fs, "@blend.biomethane=uniform(0,0.3)"),
             parse_distribution(fs, "@goal1.at=uniform(3degC,7degC)")]
    res = uncertainty(fs, dists, 8, seed=3, outputs=["network.T", "preheat.duty"])
    x = res.table.column("@blend.biomethane [-]")
    assert np.all((x >= 0) & (x < 0.3)) and res.failed == 0
    np.testing.assert_allclose(res.table.column("network.T [K]"),
                               res.table.column("@goal1.at [K]"), atol=1e-5)


def test_command_line_prints_the_deprecation_note(tmp_path, capsys):
    path = tmp_path / "fenmarsh.yaml"
    path.write_text(STATION.replace("FLOW", "flow: 85000 Sm3/h"))
    rc = main(["sweep", str(path), "--vary", "blend.biomethane=0,0.1", "--outputs",
               "preheat.duty"])
    out = capsys.readouterr()
    assert rc == 0
    assert "note: 'blend.biomethane' is the old spelling of '@blend.biomethane'" in out.err
    assert out.out.splitlines()[0] == "blend.biomethane [-],preheat.duty [W],converged,reason"


def test_goal_column_converts_for_display_and_plots_by_its_parameter():
    from letdown.report.sweep import column_unit, plot_series
    fs = station()
    t = sweep(fs, [parse_variable(fs, "supply.T=0degC,5degC")], outputs=["@goal1"])
    label, fn = column_unit("preheat.T_out (goal1 holds network.T) [K]", "display")
    assert label == "preheat.T_out (goal1 holds network.T) [degC]" and fn(273.15) == 0.0
    x_label, panels = plot_series(t, "supply.T:preheat.T_out", "si", n_inputs=1)
    ((name, x, y),) = panels["K"]
    assert name == "preheat.T_out" and list(x) == [273.15, 278.15]
    np.testing.assert_array_equal(y, t.column("preheat.T_out (goal1 holds network.T) [K]"))


def test_energy_basis_of_a_feed_without_calorific_value_is_refused():
    """An inert feed delivers no energy: keeping it would give a zero or NaN flow, quietly."""
    text = STATION.replace("CO2: 0.0115}", "CO2: 0.0115, helium: 0.0}").replace(
        "feeds:\n  supply: {T: 6 degC, P: 64 barg, FLOW}",
        "feeds:\n  supply: {T: 6 degC, P: 64 barg, FLOW}\n"
        "  inert: {T: 6 degC, P: 64 barg, flow: 10 kmol/h, composition: {helium: 1.0}}").replace(
        "  preheat:   {kind: heater,   from: supply,",
        "  join:      {kind: mixer, from: [supply, inert], to: mixed}\n"
        "  preheat:   {kind: heater,   from: mixed,")
    fs = station(text=text)
    var = [parse_variable(fs, "@blend.biomethane=0,0.1")]
    assert sweep(fs, var, outputs=["preheat.duty"]).column("converged").all()
    with pytest.raises(InputError, match="feed 'inert' has a gas without calorific value"):
        sweep(fs, var, basis="energy", outputs=["preheat.duty"])


def test_sampled_composition_of_an_energy_feed_keeps_its_energy():
    fs = station("energy: 250 MW")
    res = uncertainty(fs, [parse_distribution(fs, "supply.composition=dirichlet(200)")], 8,
                      seed=11, outputs=["supply.flow"])
    names = list(fs.gas.composition)
    zs = np.column_stack([res.table.column(f"supply.composition.{c} [-]") for c in names])
    assert np.ptp(zs[:, 0]) > 1e-3                               # the gas does vary
    energy = np.asarray(quality(names, zs).gross_molar) * res.table.column("supply.flow [mol/s]")
    np.testing.assert_allclose(energy, 250e6, rtol=1e-9)


def test_energy_on_a_loop_guess_is_refused():
    text = STATION.replace("goals:", "guesses:\n  warm: {T: 30 degC, P: 60 barg, energy: 5 MW}\n"
                                     "goals:")
    with pytest.raises(InputError, match="a guess gives its flow") as e:
        station(text=text)
    assert e.value.field == "guesses.warm.energy"
