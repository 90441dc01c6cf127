"""The aqueous phase beside the gas (letdown.fluid.aqueous.solution): freezing point and density against
measured data."""
import numpy as np
import pytest

from letdown.fluid.aqueous.solution import T_MELT, density, freezing_point, water_density
from letdown.fluid.aqueous.inhibitor import water_mole_fraction

CP = pytest.importorskip("CoolProp.CoolProp")


def test_pure_water_and_the_cryoscopic_constant():
    assert freezing_point(1.0) == T_MELT
    # dilute limit: dT = K_f m, K_f = 1.86 K kg/mol for water (textbook value, from memory)
    m = 0.01                                    # mol solute per kg water
    x_w = 1.0 / (1.0 + m * 0.018015)
    assert T_MELT - freezing_point(x_w) == pytest.approx(1.86 * m, rel=5e-3)
    assert np.isnan(freezing_point(0.0)) and np.isnan(freezing_point(1.2))


@pytest.mark.parametrize("name, fluid", [("methanol", "MMA"), ("MEG", "MEG")])
@pytest.mark.parametrize("W", [5.0, 10.0, 20.0, 30.0, 40.0])
def test_ideal_solution_is_on_the_safe_side_of_measured_freezing_points(name, fluid, W):
    # measured: Melinder (2010), Properties of secondary working fluids for indirect systems,
    # as tabulated in CoolProp's incompressible solutions (MMA methanol, MEG ethylene glycol)
    measured = CP.PropsSI("T_freeze", "T", 280.0, "P", 1e5, f"INCOMP::{fluid}[{W / 100}]")
    ours = float(freezing_point(water_mole_fraction(W, name)))
    # never colder than measured (the ice check must not pass a freezing stream) ...
    assert ours >= measured - 0.05
    # ... and within 1 K up to 10 wt %, 10 K up to 40 wt % (the ideal solution's limit)
    assert ours - measured < (1.0 if W <= 10.0 else 10.0)


@pytest.mark.parametrize("T", [274.15, 283.15, 303.15, 323.15])
def test_water_density_is_kell(T):
    # CoolProp's water (IAPWS-95) at 1 atm; Kell (1975) fits the same data to 1e-5
    assert water_density(T) == pytest.approx(CP.PropsSI("D", "T", T, "P", 101325.0, "Water"),
                                              rel=1e-4)


@pytest.mark.parametrize("name, fluid, tol", [("methanol", "MMA", 0.04),
                                              ("ethylene-glycol", "MEG", 0.015)])
@pytest.mark.parametrize("W", [10.0, 20.0, 30.0, 40.0])
def test_solution_density_ideal_mixing(name, fluid, tol, W):
    # Melinder (2010) via CoolProp INCOMP, 10 degC; ideal volumes: methanol-water shrinks on mixing
    # (measured: 2.1 % low at 20 wt %, 3.8 % at 40 wt %), MEG-water 1.3 % at 40 wt %
    T = 283.15
    measured = CP.PropsSI("D", "T", T, "P", 1e5, f"INCOMP::{fluid}[{W / 100}]")
    ours = float(density(np.array([T]), np.array([100.0 - W]), {name: np.array([W])})[0])
    assert ours == pytest.approx(measured, rel=tol)
    assert ours <= measured          # ideal volumes put it low, never high
