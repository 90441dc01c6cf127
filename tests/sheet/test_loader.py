"""The flowsheet loader: YAML with line numbers, schema, and the meaning checks."""
import json
import textwrap
from pathlib import Path

import jsonschema
import pytest

from letdown.errors import InputError, TopologyError
from letdown.quantities import PSI
from letdown.sheet.loader import parse_spec, read_spec, schema, schema_path
from tests.stations import gate_station

ROOT = Path(__file__).resolve().parents[2]
EXAMPLES = sorted((ROOT / "flowsheets").glob("*.yaml"))

GATE = gate_station("test gate")


def bad(text, source="bad.yaml"):
    with pytest.raises(InputError) as err:
        parse_spec(textwrap.dedent(text), source=source)
    return err.value


def test_gate_station_values_in_si():
    fs = parse_spec(GATE, "gate.yaml")
    feed = fs.feeds["supply"]
    assert feed.T == pytest.approx(279.15)
    assert feed.P == 64e5 + 101325.0
    # 85000 Sm3/h at 15 degC, 101.325 kPa (ISO 13443), ideal gas
    assert feed.flow == pytest.approx(85000 / 3600 * 101325.0 / (8.314462618 * 288.15), rel=1e-12)
    assert feed.where.line == 6
    pre = fs.blocks["preheat"]
    assert pre.kind == "heater" and pre.inlets == {"in": "supply"} and pre.outlets == {"out": "warm"}
    assert pre.params == {"T_out": pytest.approx(311.15), "dP": pytest.approx(30000.0)}
    assert pre.where.line == 8 and pre.field_where["T_out"].line == 8
    (goal,) = fs.goals
    assert (goal.hold, goal.by) == ("network.T", "preheat.T_out")
    assert goal.target == pytest.approx(278.15)
    assert goal.within == (pytest.approx(273.15), pytest.approx(363.15))
    assert goal.where.line == 11
    assert fs.limits == {"min_T": pytest.approx(273.15), "hydrate_margin": 3.0}
    assert fs.extra["atmosphere"] == 101325.0
    assert fs.title == "test gate"


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_examples_load_and_match_the_schema(path):
    fs = read_spec(path)
    assert fs.blocks
    import yaml
    jsonschema.validate(yaml.safe_load(path.read_text()), schema())


def test_schema_is_valid_and_published():
    jsonschema.Draft202012Validator.check_schema(json.loads(schema_path().read_text()))
    kinds = schema()["$defs"]["block"]["properties"]["kind"]["enum"]
    from letdown.equipment import REGISTRY
    assert kinds == list(REGISTRY)
    assert {"throttle", "heater", "cooler", "separator", "compressor", "expander", "mixer",
            "splitter", "exchanger", "inject", "pipe", "filter"} <= set(kinds)


def test_unknown_component_suggests_the_nearest():
    e = bad("""\
        gas:
          composition: {methane: 0.9, ethan: 0.1}
        feeds: {a: {T: 6 degC, P: 64 barg, flow: 1 kmol/h}}
        equipment: {v: {kind: throttle, from: a, to: b, P_out: 10 barg}}
        """)
    assert (e.file, e.line, e.field) == ("bad.yaml", 2, "gas.composition.ethan")
    assert "unknown component 'ethan'" in e.message and "did you mean ethane" in e.message


def test_fractions_must_sum_to_one_unless_normalised():
    text = """\
        gas:
          composition: {methane: 0.9, ethane: 0.09}
        feeds: {a: {T: 6 degC, P: 64 barg, flow: 1 kmol/h}}
        equipment: {v: {kind: throttle, from: a, to: b, P_out: 10 barg}}
        """
    e = bad(text)
    assert e.line == 2 and e.field == "gas.composition"
    assert "sum to 0.99, not 1" in e.message and "normalise: true" in e.message
    fs = parse_spec(textwrap.dedent(text).replace("gas:\n", "gas:\n  normalise: true\n"))
    assert fs.gas.composition == {"methane": pytest.approx(0.9 / 0.99),
                                  "ethane": pytest.approx(0.09 / 0.99)}


def test_fraction_sum_within_tolerance_accepted():
    fs = parse_spec(GATE.replace("0.0115}", "0.0115000004}"))
    assert sum(fs.gas.composition.values()) == pytest.approx(1.0, abs=1e-15)


def test_aliases_and_duplicates():
    fs = parse_spec(GATE.replace("methane:", "C1:").replace("carbon-dioxide:", "CO2:"))
    assert "methane" in fs.gas.composition and "carbon-dioxide" in fs.gas.composition
    e = bad(GATE.replace("ethane: 0.048", "C1: 0.048"))
    assert "same component as 'methane'" in e.message and e.line == 4


def test_negative_flow():
    e = bad(GATE.replace("85000 Sm3/h", "-85000 Sm3/h"))
    assert (e.line, e.field) == (6, "feeds.supply.flow")
    assert "negative flow" in e.message


def test_unknown_unit():
    e = bad(GATE.replace("17 barg", "17 barq"))
    assert (e.line, e.field) == (9, "equipment.regulator.P_out")
    assert "unknown unit 'barq'" in e.message


def test_unknown_block_kind_suggests():
    e = bad(GATE.replace("kind: throttle", "kind: throttel"))
    assert (e.line, e.field) == (9, "equipment.regulator.kind")
    assert "unknown block kind 'throttel'" in e.message and "did you mean 'throttle'" in e.message


def test_broken_yaml_reports_the_parser_line():
    e = bad("title: x\ngas:\n  composition: {methane: 1.0\nfeeds: {}\n")
    assert e.file == "bad.yaml" and e.line == 4          # where PyYAML notices the problem
    assert "broken YAML" in e.message and "began on line 3" in e.message
    e = bad("title: x\ngas:\n  composition:\n    methane: 1.0\n   ethane: 0.1\n")
    assert e.line == 5 and "broken YAML" in e.message


def test_key_written_twice():
    e = bad(GATE.replace("  regulator:", "  preheat:"))
    assert e.line == 9 and "written twice (first on line 8)" in e.message


def test_missing_port_and_unknown_field():
    e = bad(GATE.replace("from: warm,   to: network,", "from: warm,"))
    assert (e.line, e.field) == (9, "equipment.regulator") and "missing port 'to'" in e.message
    e = bad(GATE.replace("P_out: 17 barg", "Pout: 17 barg"))
    assert e.line == 9 and "unknown field 'Pout'" in e.message and "did you mean 'P_out'" in e.message
    e = bad(GATE.replace("limits:", "limit:"))
    assert e.line == 12 and "unknown field 'limit'" in e.message


def test_exactly_one_specification():
    e = bad(GATE.replace("P_out: 17 barg", "P_out: 17 barg, dP: 40 bar"))
    assert e.line == 9 and "exactly one of P_out, dP" in e.message
    e = bad(GATE.replace(", P_out: 17 barg", ""))
    assert e.line == 9 and "needs one of P_out, dP" in e.message
    # the goal varies T_out while the file gives duty: two specifications
    e = bad(GATE.replace("T_out: 38 degC", "duty: 1 MW"))
    assert e.line == 8 and "'duty' and 'T_out' (varied by a goal)" in e.message
    # the goal may supply the only specification: it starts mid-bracket
    fs = parse_spec(GATE.replace("T_out: 38 degC, ", ""))
    assert fs.blocks["preheat"].params["T_out"] == pytest.approx(0.5 * (273.15 + 363.15))


def test_outlet_pressure_must_be_positive():
    e = bad(GATE.replace("P_out: 17 barg", "P_out: -2 barg"))
    assert e.line == 9 and "not above vacuum" in e.message


def test_negative_duty_and_bad_efficiency():
    e = bad(GATE.replace("T_out: 38 degC", "duty: -1 MW").replace("goals:", "xgoals:")
            .replace("  - {hold", "#"))
    assert "unknown field 'xgoals'" in e.message  # schema first
    text = """\
        gas: {composition: {methane: 1.0}}
        feeds: {a: {T: 6 degC, P: 64 barg, flow: 1 kmol/h}}
        equipment:
          h: {kind: heater, from: a, to: b, duty: -1 MW}
        """
    e = bad(text)
    assert e.line == 4 and "duty must not be negative" in e.message and "use a cooler" in e.message
    e = bad(text.replace("heater, from: a, to: b, duty: -1 MW",
                         "compressor, from: a, to: b, P_out: 90 barg, efficiency: 1.2"))
    assert e.line == 4 and "efficiency must lie in (0, 1]" in e.message


def test_mass_flow_uses_the_feed_molar_mass():
    fs = parse_spec(GATE.replace("85000 Sm3/h", "30 t/h"))
    from letdown.fluid.components import COMPONENTS
    M = sum(x * COMPONENTS[c].M for c, x in fs.gas.composition.items())
    assert fs.feeds["supply"].flow == pytest.approx(30000 / 3600 / M, rel=1e-12)


def test_feed_composition_must_use_gas_components():
    text = GATE.replace("flow: 85000 Sm3/h}", "flow: 85000 Sm3/h, composition: {methane: 1.0}}")
    fs = parse_spec(text)
    assert fs.feeds["supply"].composition["methane"] == 1.0
    assert fs.feeds["supply"].composition["ethane"] == 0.0
    e = bad(GATE.replace("flow: 85000 Sm3/h}", "flow: 85000 Sm3/h, composition: {hydrogen: 1.0}}"))
    assert e.line == 6 and "not listed under gas.composition" in e.message


def test_atmosphere_override_moves_gauge_pressures():
    fs = parse_spec("atmosphere: 95 kPa\n" + GATE)
    assert fs.feeds["supply"].P == 64e5 + 95000.0
    e = bad("atmosphere: 1 barg\n" + GATE)
    assert e.line == 1 and "absolute" in e.message


def test_psig_feed():
    fs = parse_spec(GATE.replace("64 barg", "930 psig"))
    assert fs.feeds["supply"].P == pytest.approx(930 * PSI + 101325.0)


def test_multiport_blocks():
    fs = parse_spec(textwrap.dedent("""\
        gas: {composition: {methane: 0.8, propane: 0.2}, kij: {methane: {propane: 0.01}}}
        feeds:
          a: {T: 20 degC, P: 60 barg, flow: 100 kmol/h}
          b: {T: 30 degC, P: 55 barg, flow: 50 kmol/h}
        equipment:
          mix: {kind: mixer, from: [a, b], to: m}
          sep: {kind: separator, from: m, to: {vapour: v, liquid: l}}
          tee: {kind: splitter, from: v, to: {v1: 0.25, v2: rest}}
          ex:
            kind: exchanger
            hot: {from: v1, to: v1c}
            cold: {from: l, to: lw}
            min_approach: 5 K
            cold_dP: 0.2 bar
        """))
    mix, sep, tee, ex = (fs.blocks[k] for k in ("mix", "sep", "tee", "ex"))
    assert mix.inlets == {"in0": "a", "in1": "b"}
    assert sep.outlets == {"vapour": "v", "liquid": "l"}
    assert tee.outlets == {"v1": "v1", "v2": "v2"} and tee.params["fractions"] == {"v1": 0.25, "v2": "rest"}
    assert ex.inlets == {"hot": "v1", "cold": "l"} and ex.outlets == {"hot": "v1c", "cold": "lw"}
    assert ex.params == {"min_approach": 5.0, "cold_dP": pytest.approx(2e4)}
    assert ex.field_where["in:cold"].line == 12 and ex.field_where["min_approach"].line == 13
    assert fs.gas.kij == {("methane", "propane"): 0.01}


def test_splitter_fractions_checked():
    text = """\
        gas: {composition: {methane: 1.0}}
        feeds: {a: {T: 20 degC, P: 60 barg, flow: 100 kmol/h}}
        equipment:
          tee: {kind: splitter, from: a, to: {x: 0.3, y: 0.6}}
        """
    e = bad(text)
    assert e.line == 4 and "sum to 0.9" in e.message
    e = bad(text.replace("0.6", "rest").replace("0.3", "1.3"))
    assert "lies in [0, 1]" in e.message


def test_goal_references_checked():
    e = bad(GATE.replace("hold: network.T", "hold: netwrok.T"))
    assert e.line == 11 and "'netwrok' is neither a stream nor a block" in e.message
    e = bad(GATE.replace("hold: network.T", "hold: network.colour"))
    assert "cannot hold 'colour'" in e.message
    e = bad(GATE.replace("by: preheat.T_out", "by: preheat.UA"))
    assert "a heater has no parameter 'UA'" in e.message
    e = bad(GATE.replace("within: [0 degC, 90 degC]", "within: [90 degC, 0 degC]"))
    assert "from low to high" in e.message
    e = bad(GATE.replace("at: 5 degC", "at: 5 bar"))
    assert e.field == "goals[0].at" and "not a unit of temperature" in e.message


def test_topology_errors_come_with_lines():
    with pytest.raises(TopologyError) as err:
        parse_spec(GATE.replace("from: warm,   to: network", "from: wram,   to: network"), "g.yaml")
    assert err.value.line == 9 and "'wram' has no producer" in err.value.message


def test_missing_file():
    with pytest.raises(InputError, match="no such file"):
        read_spec("/nonexistent/station.yaml")


# -- one name per thing (issue 12) ----------------------------------------------------------------
def test_the_parsed_file_and_the_ready_sheet_have_names_of_their_own():
    # the loader's functions give the parsed file (SheetSpec); the only public load gives the Sheet
    import warnings

    import letdown
    import letdown.sheet.loader as loader
    from letdown.sheet.solve import Sheet
    from letdown.sheet.spec import SheetSpec
    spec = loader.read_spec(ROOT / "flowsheets" / "gate-station.yaml")
    assert isinstance(spec, SheetSpec)
    assert isinstance(loader.parse_spec((ROOT / "flowsheets" / "gate-station.yaml").read_text()), SheetSpec)
    sheet = letdown.load(ROOT / "flowsheets" / "gate-station.yaml")
    assert isinstance(sheet, Sheet) and isinstance(sheet.spec, SheetSpec)
    assert sheet.spec == spec
    assert not hasattr(loader, "load") and not hasattr(loader, "loads")
    import letdown.sheet.spec as spec_module
    assert not hasattr(spec_module, "Flowsheet")
    # the old attribute a guide showed still answers, with a DeprecationWarning
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        assert sheet.flowsheet is sheet.spec
    assert [w.category for w in caught] == [DeprecationWarning]
