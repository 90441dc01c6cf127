"""Hydrate formation temperature: van der Waals-Platteeuw (Munck et al. 1988) and the gas-gravity
correlations.

Reference data (sources beside each):

* Pure methane and a natural gas: experimental points as transcribed in the open data files of a
  Colorado School of Mines hydrate project (``CH4.csv`` and ``Natural Gas.csv``; the experimental
  papers are not named in the files). Methane status V in REFERENCE_DATA.md section 1;
  the natural-gas file was read for this test (transcription read, experimental source unknown).
* Ethane, propane, CO2: the Carroll (2014) pure-gas correlation ln P[MPa] = A + B T + C / T
  (J. Carroll, *Natural Gas Hydrates*, 3rd ed., 2014; coefficients V in REFERENCE_DATA.md
  section 1). It is a fit to experimental data, not data; it is used only below each gas's upper
  quadruple point (ethane about 287.8 K, propane about 278.8 K, CO2 about 283.2 K -- quadruple
  points from memory, status M), where the hydrate line is liquid water - hydrate - vapour.
* Towler & Mokhatab (2005) and Motiee (1991) check values: REFERENCE_DATA.md section 2 (V).

Measured (this model, Peng-Robinson fugacities, dissolved gas on, with the Langmuir correction
near the ice point of hydrate.LANGMUIR_CORRECTION; before it in brackets): methane AAD 0.26 K
(0.36) over the five points 278.1-294.7 K, max 0.54 K (0.53); ice region +0.85 K at 262 K (-0.85)
and +3.8 K at 243 K (+1.9; below the fitted range, conservative). The natural gas: max 0.27 K
(0.23) up to 10.5 MPa, 0.39 K (0.54) up to 27.5 MPa. Quadruple points: tests/fluid/test_hydrate_ice.py.
"""
import numpy as np
import pytest

import letdown
from letdown.errors import InputError
from letdown.fluid.aqueous import hydrate as hy

MPA = 1e6

# Colorado School of Mines hydrate data, CH4.csv (REFERENCE_DATA.md section 1, V): the points inside 275-295 K
METHANE_T = np.array([278.1, 283.8, 289.4, 292.8, 294.7])
METHANE_P = np.array([4.249, 7.579, 14.414, 22.367, 28.866]) * MPA

# Colorado School of Mines hydrate data, "Natural Gas.csv": CH4 0.932, C2H6 0.0425, C3H8 0.0161, N2 0.0043, CO2 0.0051
NATGAS = {"methane": 0.932, "ethane": 0.0425, "propane": 0.0161, "nitrogen": 0.0043,
          "carbon-dioxide": 0.0051}
NATGAS_T = np.array([277.7, 279.1, 281.8, 283.9, 286.7, 289.2, 290.2, 291.2, 292.1, 293.3, 293.3,
                     294.0, 295.0, 295.6, 296.7])
NATGAS_P = np.array([1.6, 1.924, 2.648, 3.392, 4.82, 6.964, 8.136, 9.481, 10.501, 14.13, 13.78,
                     17.16, 20.264, 22.99, 27.5]) * MPA

# Carroll (2014) coefficients (A, B, C), D = 0 (REFERENCE_DATA.md section 1, V)
CARROLL = {"ethane": (-278.8474, 0.5626, 33996.53),
           "propane": (-259.5822, 0.5800, 27150.70),
           "carbon-dioxide": (-304.7103, 0.6138, 37486.96)}
# temperatures inside each gas's liquid water - hydrate - vapour range (below the quadruple point)
CARROLL_T = {"ethane": [275.0, 279.0, 283.0, 286.0],
             "propane": [274.0, 275.5, 277.0, 278.0],
             "carbon-dioxide": [274.0, 277.0, 280.0, 282.5]}


def carroll_P(gas, T):
    A, B, C = CARROLL[gas]
    return MPA * np.exp(A + B * np.asarray(T) + C / np.asarray(T))


def test_methane_aad_within_0_7_K_over_275_295_K():
    gas = letdown.Fluid({"methane": 1.0})
    curve = gas.hydrate_curve(METHANE_P)
    dev = curve.T - METHANE_T
    aad = np.mean(np.abs(dev))
    assert aad <= 0.7          # issue 4 tolerance; measured 0.26 K (0.36 before the correction)
    assert np.max(np.abs(dev)) <= 1.0   # measured 0.54 K (0.53)
    assert set(curve.structure) == {"sI"}   # methane forms structure I (Munck's parameters)


def test_dcp_sign_as_applied_fits_methane_better_than_the_opposite_sign(monkeypatch):
    """Records why DCP_SIGN = +1 (module docstring): the opposite sign doubles the methane AAD."""
    gas = letdown.Fluid({"methane": 1.0})
    aad_plus = np.mean(np.abs(gas.hydrate_curve(METHANE_P).T - METHANE_T))
    for name, s in (("SI", hy.SI), ("SII", hy.SII)):
        monkeypatch.setattr(hy, name, hy.Structure(s.name, s.nus, s.dmu0, s.dh0_ice, s.dV_ice,
                                                   s.dV_liq, -s.dcp_liq))
    aad_minus = np.mean(np.abs(gas.hydrate_curve(METHANE_P).T - METHANE_T))
    assert aad_plus < 0.7 < aad_minus     # measured 0.26 K and 0.99 K (0.36 and 1.19 before)


def test_dissolved_gas_is_what_brings_co2_within_1_K():
    """CO2 is soluble: without the Henry's-law water activity the model is 0.6-2.2 K above Carroll
    (measured; 0.8-3 K before the Langmuir correction); the hydrate module docstring states it."""
    T = np.array(CARROLL_T["carbon-dioxide"])
    fluid = letdown.Fluid({"carbon-dioxide": 1.0})
    P = carroll_P("carbon-dioxide", T)
    without = hy.hydrate_curve(fluid, P, dissolved_gas=False).T
    assert np.max(without - T) > 2.0
    with_gas = hy.hydrate_curve(fluid, P).T
    assert np.all(with_gas < without)


@pytest.mark.parametrize("gas", ["ethane", "propane", "carbon-dioxide"])
def test_pure_gas_within_1_K_of_carroll_correlation(gas):
    T = np.array(CARROLL_T[gas])
    fluid = letdown.Fluid({gas: 1.0})
    curve = fluid.hydrate_curve(carroll_P(gas, T))
    # measured max |dev|: ethane 0.24 K, propane 0.11 K, CO2 0.40 K (0.40, 0.26, 0.58 before the
    # Langmuir correction near the ice point)
    np.testing.assert_allclose(curve.T, T, atol=1.0)
    assert set(curve.structure) == {"sII" if gas == "propane" else "sI"}


def test_natural_gas_within_1_K_up_to_10_MPa():
    gas = letdown.Fluid(NATGAS)
    low = NATGAS_P <= 10.6 * MPA
    curve = gas.hydrate_curve(NATGAS_P)
    np.testing.assert_allclose(curve.T[low], NATGAS_T[low], atol=1.0)   # measured max 0.27 K
    # above 10 MPa (outside the range) still within 1 K here: measured max 0.39 K
    np.testing.assert_allclose(curve.T[~low], NATGAS_T[~low], atol=1.0)
    # propane makes it structure II, as for natural gases generally (common practice)
    assert set(curve.structure) == {"sII"}


def test_towler_mokhatab_check_value():
    # REFERENCE_DATA.md section 2: 1000 psia, SG 0.69 -> 291.0803 K
    assert hy.hydrate_T_correlation(1000 * hy.PSI, 0.69) == pytest.approx(291.0803, abs=5e-5)


def test_motiee_check_value():
    # REFERENCE_DATA.md section 2: 600 psia, SG 0.555 -> 280.2819 K
    T = hy.hydrate_T_correlation(600 * hy.PSI, 0.555, method="motiee")
    assert T == pytest.approx(280.2819, abs=5e-5)


def test_towler_second_opinion_agrees_with_vdwp_on_the_natural_gas_to_10_MPa():
    gas = letdown.Fluid(NATGAS)
    SG = gas.molar_mass / 0.02896546      # M_air of ISO 6976:2016 (REFERENCE_DATA.md section 4)
    P = np.array([2.0, 4.0, 7.0, 10.0]) * MPA
    T_model = gas.hydrate_T(P)
    T_corr = hy.hydrate_T_correlation(P, SG)
    np.testing.assert_allclose(T_corr, T_model, atol=1.0)   # measured within 0.66 K


def test_correlation_rejects_unknown_method_and_bad_input():
    with pytest.raises(InputError, match="unknown hydrate correlation 'katz'"):
        hy.hydrate_T_correlation(5e6, 0.6, method="katz")
    with pytest.raises(InputError, match="positive"):
        hy.hydrate_T_correlation(-1.0, 0.6)


def test_lower_water_activity_lowers_the_formation_temperature():
    gas = letdown.Fluid({"methane": 1.0})
    T = gas.hydrate_T(7e6, water_activity=np.array([1.0, 0.95, 0.9, 0.8]))
    assert np.all(np.diff(T) < 0)
    # dT / (-ln a_w) near a_w = 1: the Nielsen-Bucklin (1983) slope is 72 K (REFERENCE_DATA.md
    # section 3, M); the model's own slope is of that size
    slope = (T[0] - T[1]) / -np.log(0.95)
    assert 50.0 < slope < 90.0


def test_pure_water_below_the_ice_point_uses_the_ice_reference():
    # Colorado School of Mines hydrate data, CH4.csv: 262.4 K at 1.840 MPa (ice - hydrate - vapour);
    # measured +0.85 K (-0.85 K before the Langmuir correction)
    gas = letdown.Fluid({"methane": 1.0})
    assert gas.hydrate_T(1.840e6) == pytest.approx(262.4, abs=1.0)


def test_batch_equals_scalars_and_water_in_the_gas_is_ignored():
    wet = letdown.Fluid({"methane": 0.998, "water": 0.002})
    dry = letdown.Fluid({"methane": 1.0})
    P = np.array([3e6, 8e6])
    Tb = wet.hydrate_T(P)
    assert Tb == pytest.approx([dry.hydrate_T(3e6), dry.hydrate_T(8e6)], abs=1e-9)


def test_gerg_fluid_takes_peng_robinson_fugacities():
    pytest.importorskip("pyaga8")
    gerg = letdown.Fluid(NATGAS, model="gerg-2008")
    pr = letdown.Fluid(NATGAS)
    assert gerg.hydrate_T(5e6) == pytest.approx(pr.hydrate_T(5e6), abs=1e-9)


def test_non_former_gas_and_bad_input_are_refused():
    with pytest.raises(InputError, match="no hydrate former"):
        letdown.Fluid({"n-hexane": 0.5, "hydrogen": 0.5}).hydrate_T(5e6)
    gas = letdown.Fluid({"methane": 1.0})
    with pytest.raises(InputError, match="water activity"):
        gas.hydrate_T(5e6, water_activity=1.2)
    with pytest.raises(InputError, match="positive pressures"):
        gas.hydrate_T(0.0)


def test_solver_report_is_converged_to_round_off():
    curve = letdown.Fluid(NATGAS).hydrate_curve(NATGAS_P)
    assert curve.report.all_converged
    # |dmu_H - dmu_W| / RT at the answer; dg/dT is about 0.01 1/K, so 1e-9 is ~1e-7 K
    assert np.max(curve.report.residual) < 1e-9
    assert np.array_equal(curve.T, np.fmax(curve.T_sI, curve.T_sII))


def test_cavity_occupancies_are_fractions_and_methane_fills_the_large_cavities():
    gas = letdown.Fluid({"methane": 1.0})
    T = np.array([gas.hydrate_T(7e6)])
    fs = hy.eos_fugacities(gas, T, np.array([7e6]), gas.zs[None, :])
    theta = hy.cavity_occupancies(T, fs, list(gas.components), hy.SI)
    total = theta.sum(axis=2)[0]
    assert np.all((total > 0.0) & (total < 1.0))
    # at the formation point the large cavities are nearly full and fuller than the small ones
    # (measured 0.98 large, 0.92 small at 7 MPa)
    assert total[1] > 0.9 and total[1] > total[0]
