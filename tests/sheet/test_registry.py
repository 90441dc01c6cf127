"""The block-kind registry: one declaration per kind, read by the loader, the measurements, the
sweep, the comparison, the solver and the JSON Schema (issue 12, item 2)."""
import json

import numpy as np
import pytest

import letdown
from letdown import quantities
from letdown.equipment import KINDS, REGISTRY
from letdown.equipment.registry import PORT_LAYOUTS
from letdown.errors import InputError
from letdown.sheet import kinds as sheet_kinds
from letdown.sheet.loader import KINDS as LOADER_KINDS, parse_spec
from letdown.sheet.measurements import BLOCK_ATTRIBUTES
from letdown.sheet.schemagen import SCHEMA_PATH, generated, text
from letdown.sheet.solve import solve
from tests.stations import gate_station


def test_the_shipped_schema_is_the_generated_one():
    """Byte for byte: a kind declared or changed without `python -m letdown.sheet.schemagen` fails."""
    shipped_text = SCHEMA_PATH.read_text(encoding="utf-8")
    shipped = json.loads(shipped_text)
    assert text(generated(shipped)) == shipped_text


def test_every_layer_sees_the_same_kinds():
    schema = json.loads(SCHEMA_PATH.read_text(encoding="utf-8"))
    names = list(REGISTRY)
    assert list(KINDS) == names
    assert list(LOADER_KINDS) == names
    assert schema["$defs"]["block"]["properties"]["kind"]["enum"] == names
    assert list(sheet_kinds.PARAMETERS) == names


@pytest.mark.parametrize("name", list(REGISTRY))
def test_each_declaration_is_consistent(name):
    kind = REGISTRY[name]
    assert callable(kind.run) and kind.ports in PORT_LAYOUTS
    known = set(quantities.KINDS) | {sheet_kinds.MASS_RATE}
    assert all(p.quantity in known for p in kind.parameters.values())
    assert all(p.description.strip() for p in kind.parameters.values())
    for group in kind.alternatives:
        assert set(group) <= set(kind.parameters)
    assert set(kind.required) <= set(kind.parameters) | set(kind.options)
    assert not set(kind.options) & set(kind.parameters)
    for attr, q in kind.measurable.items():
        assert name in BLOCK_ATTRIBUTES[attr][1] and BLOCK_ATTRIBUTES[attr][0] == q
    assert set(kind.numbers) <= {"duty", "power", "dP"}


# -- kind: filter, added through the registry alone ---------------------------------------------
FILTERED = gate_station("filter check (fictional)", water="50 mg/Sm3", goal=False, limits=False,
                        edits={"  preheat:   {kind: heater,   from: supply, to: warm,    T_out: 38 degC, "
                               "dP: 0.3 bar}\n": "  strainer:  {kind: filter,   from: supply, to: filtered, "
                                                 "dP: DP}\n",
                               "from: warm,   to: network": "from: filtered, to: network"})


def test_a_filter_is_an_isenthalpic_pressure_drop():
    res = solve(parse_spec(FILTERED.replace("DP", "0.8 bar"), source="filter.yaml"))
    sup, out = res.streams["supply"], res.streams["filtered"]
    assert out.P == pytest.approx(sup.P - 0.8e5, rel=1e-12)
    gas = letdown.Fluid({"methane": 0.9135, "ethane": 0.048, "propane": 0.012, "nitrogen": 0.015,
                         "carbon-dioxide": 0.0115}, model="peng-robinson")
    # independently: the P-h flash of the supply's enthalpy at the outlet pressure
    ref = gas.flash(P=sup.P - 0.8e5, h=gas.flash(T=sup.T, P=sup.P).h)
    assert out.T == pytest.approx(ref.T, abs=1e-6)
    # about half a kelvin per bar for lean gas (common practice): 0.8 bar cools it 0.3-0.5 K
    assert 0.3 < sup.T - out.T < 0.5
    eq = res.to_dict()["equipment"]["strainer"]
    assert eq["kind"] == "filter" and eq["dP_Pa"] == pytest.approx(0.8e5)
    assert eq["inlet_liquid_fraction"] == 0.0


@pytest.mark.parametrize("dp, message", [("-0.2 bar", "dP"), ("70 bar", "dP")])
def test_a_bad_filter_is_a_located_input_error(dp, message):
    with pytest.raises(InputError) as err:
        solve(parse_spec(FILTERED.replace("DP", dp), source="filter.yaml"))
    assert err.value.field == "equipment.strainer.dP"


def test_a_filter_without_its_pressure_drop_is_refused_at_its_line():
    with pytest.raises(InputError) as err:
        parse_spec(FILTERED.replace(", dP: DP", ""), source="filter.yaml")
    assert err.value.line == 9 and "dP" in str(err.value)


def test_a_filter_pressure_drop_can_be_swept():
    from letdown.study.sweep import parse_variable, sweep
    fs = parse_spec(FILTERED.replace("DP", "0.5 bar"), source="filter.yaml")
    table = sweep(fs, [parse_variable(fs, "strainer.dP=0.5bar,2bar")])
    T = table.column("filtered.T [K]")
    assert np.all(np.diff(T) < 0)        # a dirtier filter cools the gas more
