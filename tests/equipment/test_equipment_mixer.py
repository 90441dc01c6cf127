"""Mixer block: lowest inlet pressure, flow-weighted enthalpy and composition, balanced."""
import numpy as np
import pytest

from tests.blocks import assert_balanced, feed, fluid
from letdown.equipment import mixer
from letdown.errors import InputError


def test_mixer_takes_lowest_pressure_and_balances():
    gas = fluid("lean")
    a = feed(gas, [300.0, 280.0], [50e5, 40e5], [100.0, 0.0])
    b = feed(gas, [260.0, 320.0], [45e5, 42e5], [300.0, 20.0])
    out = mixer.run(gas, "mix", {"in0": a, "in1": b}, {})
    assert_balanced({"in0": a, "in1": b}, out)
    s = out.outlets["out"]
    # case 1: the empty inlet at 40 bar has no say in the pressure (issue 10: it used to drag the
    # outlet down to 40 bar)
    np.testing.assert_allclose(s.P, [45e5, 42e5])
    h_mix = (a.flow * a.h + b.flow * b.h) / (a.flow + b.flow)
    np.testing.assert_allclose(s.h, h_mix, rtol=1e-9)
    # an empty inlet leaves the other unchanged
    assert s.T[1] == pytest.approx(b.T[1], abs=1e-6)


def test_mixer_of_two_gases_mixes_composition():
    gas = fluid("lean")
    zs2 = np.zeros(gas.n_components)
    zs2[gas.components.index("nitrogen")] = 1.0
    from letdown.equipment import flash_stream
    a = flash_stream(gas, [10.0], gas.zs[None, :], T=[300.0], P=[50e5])
    b = flash_stream(gas, [5.0], zs2[None, :], T=[300.0], P=[50e5])
    out = mixer.run(gas, "mix", {"in0": a, "in1": b}, {})
    assert_balanced({"in0": a, "in1": b}, out)
    np.testing.assert_allclose(out.outlets["out"].zs[0], (10 * gas.zs + 5 * zs2) / 15, atol=1e-15)


def test_mixer_refuses_to_raise_pressure():
    gas = fluid("lean")
    a = feed(gas, 300.0, 50e5, 1.0)
    b = feed(gas, 300.0, 40e5, 1.0)
    with pytest.raises(InputError, match="above the lowest inlet") as err:
        mixer.run(gas, "mix", {"in0": a, "in1": b}, {"P_out": 45e5})
    assert err.value.field == "equipment.mix.P_out"
