"""Compressor and expander blocks against an independent isentropic calculation with the same fluid."""
import numpy as np
import pytest

from tests.blocks import assert_balanced, feed, fluid
from letdown.equipment import compressor, expander
from letdown.errors import InputError


def test_compressor_isentropic_matches_hand_calculation():
    gas = fluid("lean")
    inlet = feed(gas, [288.15, 300.0], [18e5, 20e5], [500.0, 100.0])
    out = compressor.run(gas, "booster", {"in": inlet}, {"P_out": 40e5, "efficiency": 0.78})
    assert_balanced({"in": inlet}, out)
    for i in range(2):
        # hand calculation: W = F (h(P2, s1) - h1) / eta_s, then T2 from h2 (same fluid, scalar)
        s1 = gas.flash(T=float(inlet.T[i]), P=float(inlet.P[i]))
        h2s = gas.flash(P=40e5, s=s1.s).h
        h2 = s1.h + (h2s - s1.h) / 0.78
        assert out.power[i] == pytest.approx(inlet.flow[i] * (h2 - s1.h), rel=1e-6)
        assert out.details["discharge_T_K"][i] == pytest.approx(gas.flash(P=40e5, h=h2).T, abs=1e-4)
        assert out.details["isentropic_power_W"][i] == pytest.approx(
            inlet.flow[i] * (h2s - s1.h), rel=1e-6)
    assert np.all(out.energy_in == out.power)


def test_polytropic_with_unit_efficiency_is_isentropic():
    gas = fluid("lean")
    inlet = feed(gas, 290.0, 20e5, 100.0)
    poly = compressor.run(gas, "c", {"in": inlet},
                          {"P_out": 60e5, "efficiency": 1.0, "efficiency_kind": "polytropic"})
    isen = compressor.run(gas, "c", {"in": inlet}, {"P_out": 60e5, "efficiency": 1.0})
    assert_balanced({"in": inlet}, poly)
    # the integrated path is good to about 4e-6 at ratio 10 (compressor.POLYTROPIC_STEPS); ratio 3
    assert poly.power[0] == pytest.approx(isen.power[0], rel=1e-5)


def test_polytropic_steps_are_fine_enough(monkeypatch):
    """POLYTROPIC_STEPS against four times as many steps at pressure ratio 10 (its comment's claim)."""
    gas = fluid("lean")
    inlet = feed(gas, 290.0, 6e5, 100.0)
    params = {"P_out": 60e5, "efficiency": 0.8, "efficiency_kind": "polytropic"}
    coarse = compressor.run(gas, "c", {"in": inlet}, params)
    monkeypatch.setattr(compressor, "POLYTROPIC_STEPS", 4 * compressor.POLYTROPIC_STEPS)
    fine = compressor.run(gas, "c", {"in": inlet}, params)
    assert coarse.power[0] == pytest.approx(fine.power[0], rel=1e-5)
    # a machine of polytropic efficiency eta has a lower isentropic efficiency, so it absorbs more
    # power than one of isentropic efficiency eta (the reheat effect; common practice)
    isen = compressor.run(gas, "c", {"in": inlet}, {"P_out": 60e5, "efficiency": 0.8})
    assert fine.power[0] > isen.power[0]


def test_compressor_refuses_a_pressure_fall_and_bad_efficiency():
    gas = fluid("lean")
    inlet = feed(gas, 290.0, 20e5, 100.0)
    with pytest.raises(InputError, match="below the inlet pressure") as err:
        compressor.run(gas, "booster", {"in": inlet}, {"P_out": 10e5, "efficiency": 0.8})
    assert err.value.field == "equipment.booster.P_out"
    with pytest.raises(InputError, match="outside"):
        compressor.run(gas, "booster", {"in": inlet}, {"P_out": 30e5, "efficiency": 1.2})


def test_expander_matches_hand_calculation():
    gas = fluid("lean")
    inlet = feed(gas, [330.0, 320.0], [65e5, 60e5], [1000.0, 10.0])
    out = expander.run(gas, "turbine", {"in": inlet}, {"P_out": 18e5, "efficiency": 0.85})
    assert_balanced({"in": inlet}, out)
    for i in range(2):
        s1 = gas.flash(T=float(inlet.T[i]), P=float(inlet.P[i]))
        h2s = gas.flash(P=18e5, s=s1.s).h
        recovered = inlet.flow[i] * 0.85 * (s1.h - h2s)
        assert out.power[i] == pytest.approx(recovered, rel=1e-6)
        assert out.details["outlet_T_K"][i] == pytest.approx(
            gas.flash(P=18e5, h=s1.h - 0.85 * (s1.h - h2s)).T, abs=1e-4)
    assert np.all(out.power > 0) and np.all(out.energy_in == -out.power)


def test_expander_refuses_a_pressure_rise():
    gas = fluid("lean")
    inlet = feed(gas, 300.0, 20e5, 1.0)
    with pytest.raises(InputError, match="above the inlet pressure"):
        expander.run(gas, "turbine", {"in": inlet}, {"P_out": 30e5, "efficiency": 0.8})
