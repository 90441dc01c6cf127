"""Dew and bubble points named by what they return (issue 12, "Names").

``dew_temperature(P)``, ``dew_pressure(T)``, ``bubble_temperature(P)``, ``bubble_pressure(T)``;
the old ``dew_point``/``bubble_point`` stay as aliases that warn and give the very same numbers.
The gas is an invented rich gas (the python-api page's example); the reference for the numbers
themselves is in tests/fluid/test_saturation.py (thermo) and tests/fluid/test_dew_boundary.py.
"""
import warnings

import numpy as np
import pytest

import letdown
from letdown.errors import InputError

RICH = {"methane": 0.82, "ethane": 0.08, "propane": 0.05, "n-butane": 0.025, "n-pentane": 0.01,
        "nitrogen": 0.01, "carbon-dioxide": 0.005}


@pytest.fixture(scope="module")
def rich():
    return letdown.Fluid(RICH)


@pytest.mark.parametrize("old, new, key, value", [
    ("dew_point", "dew_temperature", "P", 50e5),
    ("dew_point", "dew_pressure", "T", 273.15),
    ("bubble_point", "bubble_temperature", "P", 50e5),
    ("bubble_point", "bubble_pressure", "T", 273.15),
])
def test_old_names_warn_naming_the_new_method_and_agree(rich, old, new, key, value):
    with pytest.warns(DeprecationWarning, match=f"use Fluid.{new}"):
        got = getattr(rich, old)(**{key: value})
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        want = getattr(rich, new)(value)
    assert np.isfinite(want) and got == want


def test_dew_temperature_is_a_temperature_and_dew_pressure_a_pressure(rich):
    T = rich.dew_temperature(50e5)
    assert 250.0 < T < 320.0
    # the dew pressure at that temperature is a point of the same dew curve: one of the two
    # pressures at which the isotherm meets it, and the lower one is at most 50 bar
    P = rich.dew_pressure(T)
    assert 1e5 < P <= 50e5 * (1 + 1e-6)
    assert rich.bubble_temperature(50e5) < T
    assert rich.bubble_pressure(T - 40.0) > rich.dew_pressure(T - 40.0)


def test_both_branches_and_batches(rich):
    upper, lower = rich.dew_temperature(np.array([30e5, 50e5]), branch="both")
    assert upper.shape == (2,) and lower.shape == (2,)
    assert np.all(upper == rich.dew_temperature(np.array([30e5, 50e5])))


@pytest.mark.parametrize("call", [
    lambda g: g.dew_temperature(-1.0),
    lambda g: g.dew_pressure(float("nan")),
    lambda g: g.dew_temperature(50e5, branch="middle"),
    lambda g: g.dew_point(),
    lambda g: g.dew_point(T=250.0, branch="lower"),
])
def test_bad_input_is_refused(rich, call):
    with pytest.raises(InputError), warnings.catch_warnings():
        warnings.simplefilter("ignore", DeprecationWarning)
        call(rich)
