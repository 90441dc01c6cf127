"""Shared helpers for the equipment and solver tests: test fluids, feed batches, balance checks.

The compositions here are invented for tests (demo data, no reference values hang on them); every
reference check in the test modules computes its expectation independently with the same fluid or
names an outside source beside it.
"""
from __future__ import annotations

import numpy as np

import letdown
from letdown.equipment import closures, flash_stream

#: Lean pipeline gas, single phase at station conditions (invented for tests).
LEAN = {"methane": 0.9135, "ethane": 0.048, "propane": 0.012, "nitrogen": 0.015,
        "carbon-dioxide": 0.0115}
#: Rich associated gas with a hydrocarbon dew point near ambient at 70 bar (invented for tests).
RICH = {"methane": 0.82, "ethane": 0.08, "propane": 0.05, "n-butane": 0.025, "n-pentane": 0.01,
        "nitrogen": 0.01, "carbon-dioxide": 0.005}

#: The balance closures every block must reach (DESIGN.md: mole 1e-9, energy 1e-6 relative).
MOLE_LIMIT = 1e-9
ENERGY_LIMIT = 1e-6

_FLUIDS: dict = {}


def fluid(name: str = "lean", model: str = "peng-robinson") -> letdown.Fluid:
    """A cached test fluid (``lean`` or ``rich``)."""
    key = (name, model)
    if key not in _FLUIDS:
        _FLUIDS[key] = letdown.Fluid(LEAN if name == "lean" else RICH, model=model)
    return _FLUIDS[key]


def feed(gas: letdown.Fluid, T, P, flow):
    """A stream batch at T [K], P [Pa], flow [mol/s] (scalars or arrays) of the gas's composition."""
    T, P, flow = np.broadcast_arrays(np.atleast_1d(T), np.atleast_1d(P), np.atleast_1d(flow))
    zs = np.tile(gas.zs, (T.shape[0], 1))
    return flash_stream(gas, flow.astype(float), zs, T=T.astype(float), P=P.astype(float))


def assert_balanced(inlets, outcome):
    """The block's own closures and an independent recomputation both meet the limits."""
    assert np.all(outcome.mole_closure <= MOLE_LIMIT), outcome.mole_closure
    assert np.all(outcome.energy_closure <= ENERGY_LIMIT), outcome.energy_closure
    mole, energy = closures(inlets.values(), outcome.outlets.values(), outcome.energy_in)
    assert np.all(mole <= MOLE_LIMIT) and np.all(energy <= ENERGY_LIMIT)
    # and by hand: component flows and enthalpy flows in and out
    comp_in = sum(s.flow[:, None] * s.zs for s in inlets.values())
    comp_out = sum(s.flow[:, None] * s.zs for s in outcome.outlets.values())
    np.testing.assert_allclose(comp_out, comp_in, rtol=0, atol=MOLE_LIMIT * comp_in.sum(axis=1).max())
    e_in = sum(s.flow * s.h for s in inlets.values()) + outcome.energy_in
    e_out = sum(s.flow * s.h for s in outcome.outlets.values())
    scale = sum(s.flow * (np.abs(s.h) + 8.314462618 * s.T) for s in inlets.values())
    assert np.all(np.abs(e_out - e_in) <= ENERGY_LIMIT * (scale + np.abs(outcome.energy_in)))
