"""Throttle block: isenthalpic, balanced, refuses to raise pressure, flags a two-phase outlet."""
import numpy as np
import pytest

from tests.blocks import assert_balanced, feed, fluid
from letdown.equipment import throttle
from letdown.errors import InputError


def test_throttle_is_isenthalpic_and_balanced_over_a_batch():
    gas = fluid("lean")
    inlet = feed(gas, [300.0, 310.0, 290.0], [65e5, 70e5, 60e5], [1000.0, 10.0, 0.0])
    out = throttle.run(gas, "regulator", {"in": inlet}, {"P_out": 18e5})
    assert_balanced({"in": inlet}, out)
    s = out.outlets["out"]
    np.testing.assert_allclose(s.h, inlet.h, rtol=1e-9, atol=1e-6)
    np.testing.assert_allclose(s.P, 18e5)
    np.testing.assert_allclose(out.dP, inlet.P - 18e5)
    # independent: the same P-h flash one case at a time
    for i in range(3):
        ref = gas.flash(P=18e5, h=float(inlet.h[i]))
        assert s.T[i] == pytest.approx(ref.T, abs=1e-6)
    # natural gas cools on expansion (Joule-Thomson coefficient positive; common practice)
    assert np.all(s.T < inlet.T)


def test_throttle_dP_equals_P_out():
    gas = fluid("lean")
    inlet = feed(gas, 300.0, 65e5, 100.0)
    by_dP = throttle.run(gas, "r", {"in": inlet}, {"dP": 47e5}).outlets["out"]
    by_P = throttle.run(gas, "r", {"in": inlet}, {"P_out": 18e5}).outlets["out"]
    assert by_dP.T[0] == pytest.approx(by_P.T[0], abs=1e-9)


def test_throttle_asked_to_raise_pressure_names_the_field():
    gas = fluid("lean")
    inlet = feed(gas, 300.0, 18e5, 100.0)
    with pytest.raises(InputError, match="above the inlet pressure") as err:
        throttle.run(gas, "regulator", {"in": inlet}, {"P_out": 20e5})
    assert err.value.field == "equipment.regulator.P_out"


def test_throttle_two_phase_outlet_is_flagged():
    gas = fluid("rich")
    inlet = feed(gas, [285.0, 330.0], 70e5, 100.0)
    out = throttle.run(gas, "jt", {"in": inlet}, {"P_out": 45e5})
    assert_balanced({"in": inlet}, out)
    vf = out.outlets["out"].vapour_fraction
    np.testing.assert_array_equal(out.flags["two_phase_outlet"], (vf > 1e-9) & (vf < 1 - 1e-9))
    assert out.flags["two_phase_outlet"][0]          # the cold rich gas condenses more at 45 bar
    assert not out.flags["two_phase_outlet"][1]      # the warm one stays single phase
