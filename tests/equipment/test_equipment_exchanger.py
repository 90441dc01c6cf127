"""Exchanger block: every specification, balances, the slice-wise profile and a cross inside."""
import numpy as np
import pytest

from tests.blocks import assert_balanced, feed, fluid
from letdown.equipment import exchanger, flash_stream
from letdown.equipment.common import BY_GOAL
from letdown.errors import InputError

N = exchanger.SLICES


def _streams():
    gas = fluid("rich")
    hot = feed(gas, [303.15, 300.0], [70e5, 65e5], [100.0, 80.0])
    cold = feed(gas, [250.0, 255.0], [45e5, 40e5], [95.0, 90.0])
    return gas, {"hot": hot, "cold": cold}


def _independent_profile(gas, inlets, Q, i):
    """Hot and cold temperatures at the slice boundaries (no pressure drop), written out here
    apart from the block's own code: one batch P-h flash per stream."""
    hot, cold = inlets["hot"], inlets["cold"]
    f = np.linspace(0.0, 1.0, N + 1)
    T_hot = gas.flash(P=np.full(N + 1, hot.P[i]), h=hot.h[i] - f * Q / hot.flow[i]).T
    T_cold = gas.flash(P=np.full(N + 1, cold.P[i]), h=cold.h[i] + (1 - f) * Q / cold.flow[i]).T
    return np.asarray(T_hot), np.asarray(T_cold)


def test_duty_spec_balances_and_shifts_enthalpies():
    gas, inlets = _streams()
    out = exchanger.run(gas, "gas-gas", inlets, {"duty": 1.5e5})
    assert_balanced(inlets, out)
    hot, cold = out.outlets["hot"], out.outlets["cold"]
    np.testing.assert_allclose(inlets["hot"].flow * (inlets["hot"].h - hot.h), 1.5e5, rtol=1e-10)
    np.testing.assert_allclose(inlets["cold"].flow * (cold.h - inlets["cold"].h), 1.5e5, rtol=1e-10)


def test_outlet_temperature_specs():
    gas, inlets = _streams()
    by_hot = exchanger.run(gas, "x", inlets, {"hot_T_out": 280.0})
    assert_balanced(inlets, by_hot)
    np.testing.assert_allclose(by_hot.outlets["hot"].T, 280.0, atol=1e-6)
    for i in range(2):
        h_out = gas.flash(T=280.0, P=float(inlets["hot"].P[i])).h
        assert by_hot.duty[i] == pytest.approx(inlets["hot"].flow[i] * (inlets["hot"].h[i] - h_out),
                                               rel=1e-10)
    by_cold = exchanger.run(gas, "x", inlets, {"cold_T_out": 290.0, "cold_dP": 0.5e5})
    assert_balanced(inlets, by_cold)
    np.testing.assert_allclose(by_cold.outlets["cold"].T, 290.0, atol=1e-6)
    np.testing.assert_allclose(by_cold.outlets["cold"].P, inlets["cold"].P - 0.5e5)


def test_min_approach_against_an_independent_profile():
    gas, inlets = _streams()
    out = exchanger.run(gas, "x", inlets, {"min_approach": 5.0})
    assert_balanced(inlets, out)
    np.testing.assert_allclose(out.details["min_approach_K"], 5.0, atol=1e-5)
    for i in range(2):
        T_hot, T_cold = _independent_profile(gas, inlets, out.duty[i], i)
        assert np.min(T_hot - T_cold) == pytest.approx(5.0, abs=1e-5)
        np.testing.assert_allclose(out.outlets["hot"].T[i], T_hot[-1], atol=1e-6)
        np.testing.assert_allclose(out.outlets["cold"].T[i], T_cold[0], atol=1e-6)


def test_UA_spec_against_slice_wise_LMTD():
    gas, inlets = _streams()
    out = exchanger.run(gas, "x", inlets, {"UA": 8000.0})
    assert_balanced(inlets, out)
    for i in range(2):
        T_hot, T_cold = _independent_profile(gas, inlets, out.duty[i], i)
        dT = T_hot - T_cold
        lmtd = (dT[:-1] - dT[1:]) / np.log(dT[:-1] / dT[1:])
        UA = np.sum(out.duty[i] / N / lmtd)
        assert UA == pytest.approx(8000.0, rel=1e-6)
    # and the duty spec at that duty reports the same UA
    again = exchanger.run(gas, "x", inlets, {"duty": out.duty})
    np.testing.assert_allclose(again.details["UA_W_K"], 8000.0, rtol=1e-8)


def test_cross_inside_with_both_ends_fine_is_refused_or_flagged_under_a_goal():
    """A condensing rich gas against a lean gas: the hot curve bends at its dew point and crosses
    the cold line inside the exchanger although both end differences are positive. Given in the
    file the specification is refused (issue 10); where a goal varies it, the cross is flagged."""
    gas = fluid("rich")
    lean = np.array([0.95, 0.03, 0.005, 0.0, 0.0, 0.01, 0.005])
    lean = lean / lean.sum()
    assert gas.components == ("methane", "ethane", "propane", "n-butane", "n-pentane", "nitrogen",
                              "carbon-dioxide")
    hot = feed(gas, 300.0, 70e5, 100.0)
    cold = flash_stream(gas, [170.0], lean[None, :], T=[230.0], P=[60e5])
    with pytest.raises(InputError, match="cannot be met without a temperature cross") as info:
        exchanger.run(gas, "x", {"hot": hot, "cold": cold}, {"cold_T_out": 298.0})
    assert info.value.field == "equipment.x.cold_T_out" and list(info.value.cases) == [True]
    out = exchanger.run(gas, "x", {"hot": hot, "cold": cold},
                        {"cold_T_out": 298.0, BY_GOAL: ("cold_T_out",)})
    assert_balanced({"hot": hot, "cold": cold}, out)
    assert 300.0 - 298.0 > 0 and out.outlets["hot"].T[0] - 230.0 > 0      # both ends fine
    assert out.flags["temperature_cross"][0]
    assert out.details["min_approach_K"][0] < 0
    assert 0 < out.details["min_approach_at"][0] < 1                      # inside, not at an end


def test_min_approach_larger_than_inlet_difference_is_refused_or_unmet_under_a_goal():
    gas, inlets = _streams()
    with pytest.raises(InputError, match="min_approach 80 K is wider"):
        exchanger.run(gas, "x", inlets, {"min_approach": 80.0})
    out = exchanger.run(gas, "x", inlets, {"min_approach": 80.0, BY_GOAL: ("min_approach",)})
    assert np.all(out.flags["spec_unmet"])
    np.testing.assert_array_equal(out.duty, 0.0)


def test_exchanger_needs_one_specification():
    gas, inlets = _streams()
    with pytest.raises(InputError, match="exactly one of"):
        exchanger.run(gas, "x", inlets, {"duty": 1e5, "UA": 1e4})


def test_large_UA_met_only_at_the_pinch_gives_the_largest_duty_not_zero():
    """Regression (found by fuzzing the guards): UA grows only with the log of the vanishing end
    approach, so this UA is met about 1e-13 K from the pinch, below the flash's rounding. The search
    used to stop at a duty of 2e-10 W and flag the UA as unmeetable; the answer is the largest duty
    (hot outlet at the cold inlet temperature), computed here with the same fluid's T-P flashes."""
    gas = fluid()
    hot = feed(gas, 261.17860354663475, 1061533.0861956836, 8.786272233835515)
    cold = feed(gas, 249.79440901187775, 12716348.43719752, 154.96613743392868)
    out = exchanger.run(gas, "x", {"hot": hot, "cold": cold}, {"UA": 34792.4})
    h_hot_end = gas.flash(T=float(cold.T[0]), P=float(hot.P[0])).h
    h_cold_end = gas.flash(T=float(hot.T[0]), P=float(cold.P[0])).h
    Q_max = min(hot.flow[0] * (hot.h[0] - h_hot_end), cold.flow[0] * (h_cold_end - cold.h[0]))
    assert out.duty[0] == pytest.approx(Q_max, rel=1e-6)
    assert not out.flags["spec_unmet"][0]
    assert_balanced({"hot": hot, "cold": cold}, out)
