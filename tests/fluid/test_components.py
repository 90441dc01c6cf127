"""Component data against its cited sources: names and aliases, critical constants, ideal-gas cp.

References (test-only): chemicals 1.5.2 (C. Bell et al.) for the default critical constants and for
its transcription of Poling et al. (2001) Appendix A; the recomputed Perry Table 2-156 values of
EOS_DATA §2.4.
"""
import chemicals
import numpy as np
import pytest
from chemicals.heat_capacity import Cp_data_Poling, Poling

import letdown
from letdown.errors import InputError
from letdown.fluid.components import COMPONENTS, R, T_REF, ComponentSet, canonical_name

ALL = tuple(COMPONENTS)


# --------------------------------------------------------------------------- names and aliases
@pytest.mark.parametrize("alias, canonical", [
    ("C1", "methane"), ("nC4", "n-butane"), ("iC5", "isopentane"), ("N2", "nitrogen"),
    ("CO2", "carbon-dioxide"), ("H2S", "hydrogen-sulfide"), ("H2O", "water"),
    ("MeOH", "methanol"), ("MEG", "ethylene-glycol"),
    # case, spaces and underscores are folded
    ("c1", "methane"), ("co2", "carbon-dioxide"), ("Carbon Dioxide", "carbon-dioxide"),
    ("hydrogen_sulfide", "hydrogen-sulfide"), ("meg", "ethylene-glycol"),
])
def test_alias_maps_to_canonical_name(alias, canonical):
    assert canonical_name(alias) == canonical


def test_fluid_accepts_aliases_and_reports_canonical_names():
    gas = letdown.Fluid({"C1": 0.9, "CO2": 0.05, "N2": 0.03, "nC4": 0.02})
    assert gas.components == ("methane", "carbon-dioxide", "nitrogen", "n-butane")
    np.testing.assert_allclose(gas.zs, [0.9, 0.05, 0.03, 0.02], rtol=0, atol=1e-15)


def test_alias_and_name_of_same_component_is_an_error():
    with pytest.raises(InputError, match="listed twice"):
        letdown.Fluid({"C1": 0.5, "methane": 0.5})


@pytest.mark.parametrize("typo, suggestion", [
    ("methan", "methane"),
    ("propan", "propane"),
    ("nitrogn", "nitrogen"),
])
def test_unknown_name_is_input_error_suggesting_nearest(typo, suggestion):
    with pytest.raises(InputError, match=rf"unknown component '{typo}'; did you mean [^?]*"
                                         rf"\b{suggestion}\b"):
        canonical_name(typo)


def test_unknown_name_in_fluid_is_input_error():
    with pytest.raises(InputError, match="unknown component 'unobtainium'"):
        letdown.Fluid({"methane": 0.9, "unobtainium": 0.1})


# --------------------------------------------------------------------------- critical constants
# Primary source named in components.py: the chemicals 1.5.2 defaults (NIST reference-equation
# fluid-file constants, Huber et al. 2022). The table in components.py is a transcription; the tolerances are
# the rounding of that transcription (Tc to 1 mK, Pc to 5 significant digits in bar, i.e. <= 2e-5
# relative, omega to 4 decimals).
@pytest.mark.parametrize("name", [n for n in ALL if n != "ethylene-glycol"])
def test_critical_constants_match_cited_source(name):
    c = COMPONENTS[name]
    assert c.Tc == pytest.approx(chemicals.Tc(c.cas), abs=1e-3)
    assert c.Pc == pytest.approx(chemicals.Pc(c.cas), rel=2e-5)  # n-heptane 27.357 vs 27.3573 bar
    assert c.omega == pytest.approx(chemicals.omega(c.cas), abs=5e-5)
    # molar masses: chemicals' values to full precision (a 4-decimal rounding once made GERG mass
    # densities miss ISO 20765-2 printed digits, see test_gerg.py)
    assert c.M * 1000 == pytest.approx(chemicals.MW(c.cas), rel=1e-12)


def test_ethylene_glycol_constants_are_perry_not_library_default():
    """MEG: Perry's Handbook 8th ed. Table 2-141 (720.0 K, 82.0 bar, omega 0.5068; EOS_DATA §1),
    NOT the chemicals default (reference fluid file for ethylene glycol: Pc 105.09 bar, omega 0.619), which is 28 % and
    0.11 away from every experimental compilation (EOS_DATA §1.1)."""
    meg = COMPONENTS[canonical_name("MEG")]
    assert meg.Tc == pytest.approx(720.0, abs=1e-9)
    assert meg.Pc == pytest.approx(82.0e5, rel=1e-12)
    assert meg.omega == pytest.approx(0.5068, abs=1e-12)
    # and it is not the library default
    assert abs(meg.Pc / chemicals.Pc(meg.cas) - 1) > 0.2
    assert abs(meg.omega - chemicals.omega(meg.cas)) > 0.1


# --------------------------------------------------------------------------- ideal-gas cp
#: Cp0 at 298.15 K [J/(mol K)], DIPPR eq. 107 with Perry 8th ed. Table 2-156 coefficients, as
#: recomputed in EOS_DATA §2.4 ("Perry DIPPR-107" column, printed to 3 decimals).
PERRY_CP0_298 = {
    "methane": "35.679", "ethane": "52.390", "propane": "73.466", "isobutane": "96.505",
    "n-butane": "98.345", "isopentane": "118.650", "n-pentane": "119.796", "n-hexane": "141.844",
    "n-heptane": "164.405", "n-octane": "187.010", "n-nonane": "209.435", "n-decane": "232.142",
    "nitrogen": "29.126", "carbon-dioxide": "37.243", "hydrogen-sulfide": "34.189",
    "oxygen": "29.347", "water": "33.578", "carbon-monoxide": "29.138", "methanol": "44.007",
    "ethylene-glycol": "77.702",
}


def _cp0(name, T):
    return float(ComponentSet([name]).cp0(np.array(T))[0])


@pytest.mark.parametrize("name", sorted(PERRY_CP0_298))
def test_cp0_at_298K_matches_perry_table_2_156(name):
    printed = PERRY_CP0_298[name]
    assert abs(_cp0(name, T_REF) - float(printed)) <= 0.0005 + 1e-12


@pytest.mark.parametrize("name", ["hydrogen", "neopentane"])
@pytest.mark.parametrize("T", [200.0, 298.15, 500.0, 1000.0])
def test_cp0_poling_polynomial(name, T):
    """Hydrogen and neopentane use the Poling et al. (2001) App. A polynomial. Reference: the same
    polynomial evaluated by chemicals 1.5.2 (``heat_capacity.Poling``) with the coefficients of its
    own transcription of Poling's table (PolingDatabank.tsv; identical for these two species to the
    independent transcription in EOS_DATA §2.2)."""
    row = Cp_data_Poling.loc[COMPONENTS[name].cas]
    ref = Poling(T, *(float(row[k]) for k in ("a0", "a1", "a2", "a3", "a4")))
    # 1e-9: chemicals multiplies by scipy's R = 8.31446261815324, letdown by 8.314462618 (2e-11)
    assert _cp0(name, T) == pytest.approx(ref, rel=1e-9)


def test_cp0_hydrogen_at_298K_matches_eos_data():
    # EOS_DATA §2.4, "Poling polynomial" column for hydrogen: 28.775 J/(mol K)
    assert abs(_cp0("hydrogen", T_REF) - 28.775) <= 0.0005


@pytest.mark.parametrize("name", ["helium", "argon"])
def test_cp0_monatomic_is_five_halves_R(name):
    # Perry Table 2-155: 20786 J/(kmol K) = 5/2 R
    for T in (150.0, 298.15, 1000.0):
        assert _cp0(name, T) == pytest.approx(2.5 * R, rel=1e-12)
    assert _cp0(name, T_REF) == pytest.approx(20.786, abs=5e-4)


def test_cp0_finite_and_positive_150_to_1000K():
    T = np.linspace(150.0, 1000.0, 400)
    cp = ComponentSet(ALL).cp0(T)
    assert np.all(np.isfinite(cp))
    assert np.all(cp >= 2.5 * R * (1 - 1e-12))


# --------------------------------------------------------------------------- h0, s0 integrals
@pytest.mark.parametrize("T", [150.0, 200.0, 298.15, 500.0, 800.0, 1000.0])
def test_h0_and_s0_are_integrals_of_cp0(T):
    """d h0/dT = cp0 and T d s0/dT = cp0 (central differences, step 1e-3 K: truncation error
    ~1e-9 relative, rounding ~1e-9 relative at these magnitudes)."""
    comps = ComponentSet(ALL)
    d = 1e-3
    cp = comps.cp0(np.array(T))
    dh = (comps.h0(np.array(T + d)) - comps.h0(np.array(T - d))) / (2 * d)
    ds = (comps.s0(np.array(T + d)) - comps.s0(np.array(T - d))) / (2 * d)
    np.testing.assert_allclose(dh, cp, rtol=1e-7)
    np.testing.assert_allclose(T * ds, cp, rtol=1e-7)


def test_h0_s0_vanish_at_reference_temperature():
    comps = ComponentSet(ALL)
    np.testing.assert_allclose(comps.h0(np.array(T_REF)), 0.0, atol=1e-9)
    np.testing.assert_allclose(comps.s0(np.array(T_REF)), 0.0, atol=1e-12)


def test_h0_matches_quadrature_of_cp0_over_let_down_range():
    """h0(T2) - h0(T1) equals the integral of cp0 by Gauss-Legendre quadrature (scipy-independent;
    40 points integrate these smooth curves to ~1e-12 relative)."""
    comps = ComponentSet(ALL)
    T1, T2 = 200.0, 600.0
    x, w = np.polynomial.legendre.leggauss(40)
    Tq = 0.5 * (T2 - T1) * x + 0.5 * (T2 + T1)
    integral = 0.5 * (T2 - T1) * (w[:, None] * comps.cp0(Tq)).sum(axis=0)
    np.testing.assert_allclose(comps.h0(np.array(T2)) - comps.h0(np.array(T1)), integral,
                               rtol=1e-10)
    integral_s = 0.5 * (T2 - T1) * (w[:, None] * comps.cp0(Tq) / Tq[:, None]).sum(axis=0)
    np.testing.assert_allclose(comps.s0(np.array(T2)) - comps.s0(np.array(T1)), integral_s,
                               rtol=1e-10)
