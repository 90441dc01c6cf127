"""Fixtures shared by the test modules: the gate station as text, as a file and as a loaded sheet
(:mod:`tests.stations`)."""
import pytest

from tests.stations import gate_station


@pytest.fixture
def gate_station_text() -> str:
    """The gate station's text (:func:`tests.stations.gate_station`, no water)."""
    return gate_station()


@pytest.fixture
def gate_station_path(tmp_path, gate_station_text):
    """The gate station written to ``gate.yaml`` in the test's own directory."""
    path = tmp_path / "gate.yaml"
    path.write_text(gate_station_text)
    return path


@pytest.fixture
def gate_sheet(gate_station_path):
    """The gate station loaded, ready to solve (:func:`letdown.load`)."""
    import letdown
    return letdown.load(gate_station_path)
