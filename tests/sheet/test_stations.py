"""The shared gate station of the tests (tests/stations.py, fixtures in tests/conftest.py): it is
the shipped example without its comments, valve rating and water, and its edit helper refuses an
edit that does not apply."""
import pytest

import letdown
from letdown.sheet.loader import read_spec
from tests.stations import gate_station

SHIPPED = "flowsheets/gate-station.yaml"


def test_the_shared_station_solves_as_the_shipped_example(gate_sheet):
    # the shipped file adds a valve rating (which changes no stream: docs/guides/hydraulics.md)
    # and water beside the gas (the hydrocarbon flash stays water-free): the same gas numbers
    ours, shipped = gate_sheet.solve(), letdown.load(SHIPPED).solve()
    assert ours.converged and shipped.converged
    for name in ("supply", "warm", "network"):
        for attr in ("T", "P", "h", "flow"):
            assert getattr(ours.streams[name], attr) == pytest.approx(
                getattr(shipped.streams[name], attr), rel=1e-12), (name, attr)
    assert ours.equipment["preheat"]["duty_W"] == pytest.approx(
        shipped.equipment["preheat"]["duty_W"], rel=1e-12)
    assert ours.goals[0]["value"] == pytest.approx(shipped.goals[0]["value"], rel=1e-12)


def test_the_path_fixture_writes_the_text(gate_station_path, gate_station_text):
    assert gate_station_path.read_text() == gate_station_text == gate_station()
    spec = read_spec(gate_station_path)
    assert spec.source == str(gate_station_path)
    assert spec.feeds["supply"].where.line == 6 and spec.blocks["regulator"].where.line == 9
    assert spec.gas.water is None and spec.limits["hydrate_margin"] == 3.0


def test_the_edit_helper_refuses_an_edit_that_does_not_apply():
    with pytest.raises(ValueError, match="occurs 0 times"):
        gate_station(edits={"P_out: 18 barg": "P_out: 20 barg"})
    with pytest.raises(ValueError, match="occurs 2 times"):
        gate_station(edits={"from: ": "from:  "})   # the preheater's and the regulator's
