"""Splitter block: fractions and rest, exact mole balance, bad fractions refused."""
import numpy as np
import pytest

from tests.blocks import assert_balanced, feed, fluid
from letdown.equipment import splitter
from letdown.errors import InputError


def test_split_with_rest_keeps_state_and_balances():
    gas = fluid("lean")
    inlet = feed(gas, [300.0, 290.0], 50e5, [100.0, 40.0])
    out = splitter.run(gas, "tee", {"in": inlet}, {"fractions": {"a": 0.3, "b": "rest"}})
    assert_balanced({"in": inlet}, out)
    np.testing.assert_allclose(out.outlets["a"].flow, [30.0, 12.0])
    np.testing.assert_allclose(out.outlets["b"].flow, [70.0, 28.0])
    np.testing.assert_array_equal(out.outlets["b"].T, inlet.T)
    np.testing.assert_array_equal(out.outlets["a"].h, inlet.h)


def test_fractions_per_case():
    gas = fluid("lean")
    inlet = feed(gas, 300.0, 50e5, [100.0, 100.0])
    out = splitter.run(gas, "tee", {"in": inlet},
                       {"fractions": {"a": np.array([0.1, 0.9]), "b": "rest"}})
    np.testing.assert_allclose(out.outlets["b"].flow, [90.0, 10.0])


@pytest.mark.parametrize("fractions, message", [
    ({"a": 0.3, "b": 0.3}, "sum to 0.6"),
    ({"a": 0.8, "b": 0.7, "c": "rest"}, "nothing left"),
    ({"a": "rest", "b": "rest"}, "only one outlet"),
    ({"a": 1.5, "b": "rest"}, "outside"),
])
def test_bad_fractions_are_refused(fractions, message):
    gas = fluid("lean")
    inlet = feed(gas, 300.0, 50e5, 1.0)
    with pytest.raises(InputError, match=message):
        splitter.run(gas, "tee", {"in": inlet}, {"fractions": fractions})
