"""Heater and cooler blocks: duty against an independent enthalpy difference, both specifications."""
import numpy as np
import pytest

from tests.blocks import assert_balanced, feed, fluid
from letdown.equipment import heater
from letdown.errors import InputError


def test_heater_T_out_duty_is_the_enthalpy_rise():
    gas = fluid("lean")
    inlet = feed(gas, [279.15, 285.0], [65e5, 60e5], [1000.0, 500.0])
    out = heater.run_heater(gas, "preheat", {"in": inlet}, {"T_out": 311.15, "dP": 0.3e5})
    assert_balanced({"in": inlet}, out)
    for i in range(2):
        h_out = gas.flash(T=311.15, P=float(inlet.P[i]) - 0.3e5).h
        assert out.duty[i] == pytest.approx(inlet.flow[i] * (h_out - inlet.h[i]), rel=1e-12)
    np.testing.assert_allclose(out.outlets["out"].T, 311.15)
    np.testing.assert_allclose(out.dP, 0.3e5)


def test_heater_duty_spec_inverts_T_out_spec():
    gas = fluid("lean")
    inlet = feed(gas, 279.15, 65e5, 1000.0)
    by_T = heater.run_heater(gas, "h", {"in": inlet}, {"T_out": 311.15})
    by_Q = heater.run_heater(gas, "h", {"in": inlet}, {"duty": float(by_T.duty[0])})
    assert_balanced({"in": inlet}, by_Q)
    assert by_Q.outlets["out"].T[0] == pytest.approx(311.15, abs=1e-6)


def test_cooler_duty_is_heat_removed():
    gas = fluid("lean")
    inlet = feed(gas, 350.0, 60e5, 200.0)
    out = heater.run_cooler(gas, "aftercooler", {"in": inlet}, {"T_out": 313.15})
    assert_balanced({"in": inlet}, out)
    assert out.duty[0] > 0 and out.energy_in[0] == pytest.approx(-out.duty[0])
    again = heater.run_cooler(gas, "aftercooler", {"in": inlet}, {"duty": float(out.duty[0])})
    assert again.outlets["out"].T[0] == pytest.approx(313.15, abs=1e-6)


def test_heater_needs_exactly_one_specification():
    gas = fluid("lean")
    inlet = feed(gas, 300.0, 60e5, 1.0)
    with pytest.raises(InputError, match="exactly one of T_out, duty") as err:
        heater.run_heater(gas, "preheat", {"in": inlet}, {"T_out": 320.0, "duty": 1e3})
    assert err.value.field.startswith("equipment.preheat.")
    with pytest.raises(InputError, match="not positive"):
        heater.run_heater(gas, "preheat", {"in": inlet}, {"T_out": 320.0, "dP": 70e5})
