"""Separator block: phases apart by the flash's compositions, balances closed, water port empty."""
import numpy as np
import pytest

from tests.blocks import MOLE_LIMIT, assert_balanced, feed, fluid
from letdown.equipment import separator


def test_two_phase_feed_splits_by_phase():
    gas = fluid("rich")
    inlet = feed(gas, [270.0, 260.0, 330.0], [45e5, 40e5, 70e5], [100.0, 50.0, 80.0])
    out = separator.run(gas, "cold-separator", {"in": inlet}, {})
    assert_balanced({"in": inlet}, out)
    vap, liq, water = (out.outlets[k] for k in ("vapour", "liquid", "water"))
    for i in range(2):   # the two cold cases are two-phase
        ref = gas.flash(T=float(inlet.T[i]), P=float(inlet.P[i]))
        assert 0 < ref.vapour_fraction < 1
        assert vap.flow[i] == pytest.approx(ref.vapour_fraction * inlet.flow[i], rel=1e-9)
        np.testing.assert_allclose(vap.zs[i], ref.ys, atol=1e-9)
        np.testing.assert_allclose(liq.zs[i], ref.xs, atol=1e-8)
        assert vap.vapour_fraction[i] == 1.0 and liq.vapour_fraction[i] == 0.0
        # the liquid is richer in pentane than the vapour
        k = gas.components.index("n-pentane")
        assert liq.zs[i, k] > vap.zs[i, k]
    # the warm case is all vapour: the liquid outlet is empty
    assert liq.flow[2] == 0.0 and vap.flow[2] == pytest.approx(80.0, rel=MOLE_LIMIT)
    np.testing.assert_array_equal(water.flow, 0.0)


def test_separator_with_pressure_drop_is_adiabatic():
    gas = fluid("rich")
    inlet = feed(gas, 275.0, 50e5, 100.0)
    out = separator.run(gas, "drum", {"in": inlet}, {"dP": 1e5})
    assert_balanced({"in": inlet}, out)
    np.testing.assert_allclose(out.outlets["vapour"].P, 49e5)
