"""GERG-2008 (model="gerg-2008") against published check values and CoolProp's mixture model.

References:
* ISO 20765-2 printed values (EOS_DATA §6.2, NIST transcription) -- to the printed digits;
* AGA Report No. 8 (2017) appendix Z table, GERG-2008 column (EOS_DATA §6.4) -- to the printed
  digits;
* NIST GERG-2008 reference test point (GERG2008_test_01.cpp, EOS_DATA §6.1) -- to 1e-9 relative;
* CoolProp 8.0.0 multi-parameter mixture model, ``AbstractState("HEOS", ...)`` (test-only): the
  GERG-2008 mixing functions on CoolProp's pure-fluid reference equations (Setzmann-Wagner methane,
  Leachman hydrogen, ...), so it is a close but not identical model -- let-down outlet temperature
  within 0.2 K (issue 2). Seen when written: natural gases -0.002 ... -0.011 K, 20 % hydrogen
  blend +0.061 ... +0.067 K (CoolProp's Leachman hydrogen vs GERG's own hydrogen equation).

Which ISO 20765-2 rows are checked, and why others are left out: letdown's GERG engine computes one
phase with the gas-phase density solver of the NIST code and refuses any state a Peng-Robinson
stability test finds two-phase. Checked: the 27 rows the engine answers, all six properties (this
includes dense rows such as gas 1 at 180 K, 10 MPa and gas 3 at 150 K, where the gas-phase solver
finds the ISO root). Left out because the guard refuses them (ModelError, asserted below; if the
guard improves, move them to the checked rows): gas 5 at 250 K, 20 MPa (GERG-2008's own stability
test finds an H2S/CO2-rich liquid, see REFUSED_ROWS); gas 4 at 180 and 220 K, 25 MPa (20 % H2 + CO/O2:
Peng-Robinson with the table's kij finds a split); gas 5 at 150 and 200 K; gas 6 (heavy hydrocarbons
with 5 % water) at 180-400 K, where water forms a second liquid. Gas 2 at 180 K, 13 MPa is a dense
state whose ISO value is the liquid-like root (EOS_DATA §6.2 root notes); it is kept as a regression
test (the engine must give the printed values or refuse, never the gas root).
"""
import numpy as np
import pyaga8
import pytest

import CoolProp
from CoolProp import AbstractState
from scipy.optimize import brentq

import letdown
from letdown.errors import ModelError
from letdown.fluid.eos.gerg import GERG_NAMES
from tests.cases import (AGA8_GASES, AGA8_Z_ROWS, BAR, H2_BLEND_20, ISO_20765_2_ROWS, ISO_GASES,
                         LETDOWNS, NIST_AGA8_GERG, NIST_AGA8_TEST_GAS, NIST_AGA8_TEST_P,
                         NIST_AGA8_TEST_T, RICH_GAS_C7PLUS, agrees_to_printed_digits)

#: ISO rows the guard refuses (see module docstring): (gas, T, P_MPa) as printed.
REFUSED_ROWS = {("4", "180", "25"), ("4", "220", "25"), ("5", "150", "30"), ("5", "200", "25"),
                ("6", "180", "10"), ("6", "250", "10"), ("6", "300", "25"), ("6", "400", "5"),
                # GERG-2008's own stability test (issue 11) finds this state unstable: a liquid of
                # 61 % H2S and 30 % CO2 at 25 mol/dm3; splitting off 10 % of it lowers the Gibbs
                # energy by 22 J/mol (evaluated directly on the model when written). The ISO table
                # prints the single-root value, a metastable state here.
                ("5", "250", "20")}
#: The dense row where the gas-phase density solver finds a second, wrong root (232.49 kg/m3).
WRONG_ROOT_ROW = ("2", "180", "13")

PROPERTIES = ("rho", "Z", "cv", "cp", "w", "jt")
CHECKED_ROWS = [r for r in ISO_20765_2_ROWS if tuple(r[:3]) not in REFUSED_ROWS | {WRONG_ROOT_ROW}]

_state_cache = {}


def iso_state(row):
    key = tuple(row[:3])
    if key not in _state_cache:
        gas = ISO_GASES[int(row[0])]
        _state_cache[key] = gas.fluid("gerg-2008").flash(T=float(row[1]), P=float(row[2]) * 1e6)
    return _state_cache[key]


def iso_values(st):
    """letdown state -> the ISO 20765-2 columns (kg/m3, -, kJ/(kg K), kJ/(kg K), m/s, K/MPa)."""
    M = st.molar_mass
    return {"rho": st.density, "Z": st.Z, "cv": st.cv / M / 1e3, "cp": st.cp / M / 1e3,
            "w": st.w, "jt": st.jt * 1e6}


def gerg_molar_mass(composition):
    """Molar mass of GERG-2008 itself [kg/mol] (pyaga8 0.1.18 = NIST AGA8 code, test-only)."""
    g = pyaga8.Gerg2008()
    c = pyaga8.Composition()
    for name, x in composition.items():
        setattr(c, GERG_NAMES[name], x)
    g.set_composition(c)
    g.calc_molar_mass()
    return g.mm / 1e3


def _iso_params():
    out = []
    for row in CHECKED_ROWS:
        for i, prop in enumerate(PROPERTIES):
            # regression: with molar masses rounded to 4 decimals (methane 16.0425 instead of
            # 16.04246 g/mol) gas 2 at 220 K and gas 4 at 400 K missed the printed density digit
            out.append(pytest.param(row, prop, row[3 + i],
                                    id=f"gas{row[0]}-{row[1]}K-{row[2]}MPa-{prop}"))
    return out


@pytest.mark.parametrize("row, prop, printed", _iso_params())
def test_iso_20765_2_printed_values(row, prop, printed):
    value = iso_values(iso_state(row))[prop]
    assert agrees_to_printed_digits(value, printed), f"{prop}: {value!r} vs printed {printed}"


@pytest.mark.parametrize("row", CHECKED_ROWS, ids=lambda r: f"gas{r[0]}-{r[1]}K-{r[2]}MPa")
def test_iso_20765_2_molar_density_to_printed_digits(row):
    """The equation of state itself, free of molar-mass bookkeeping: letdown's molar density times
    GERG-2008's own molar mass reproduces the printed mass density."""
    st = iso_state(row)
    gas = ISO_GASES[int(row[0])]
    rho = st.density / st.molar_mass * gerg_molar_mass(gas.composition)
    assert agrees_to_printed_digits(rho, row[3]), (rho, row[3])


@pytest.mark.parametrize("row", sorted(REFUSED_ROWS), ids=lambda r: f"gas{r[0]}-{r[1]}K-{r[2]}MPa")
def test_iso_rows_left_out_are_refused_not_guessed(row):
    """The rows left out above are refused with a ModelError, never answered from a guessed root."""
    gas = ISO_GASES[int(row[0])]
    with pytest.raises(ModelError, match="two phases"):
        gas.fluid("gerg-2008").flash(T=float(row[1]), P=float(row[2]) * 1e6)


def test_iso_gas2_dense_state_is_right_or_refused():
    """Regression: the binding's fast gas solver returned a spurious root here (232.49 kg/m3,
    Z 1.003, cp 7e4 J/(mol K)) where the printed single-phase state is the dense root."""
    row = next(r for r in ISO_20765_2_ROWS if tuple(r[:3]) == WRONG_ROOT_ROW)
    gas = ISO_GASES[2]
    try:
        st = gas.fluid("gerg-2008").flash(T=180.0, P=13e6)
    except ModelError:
        return
    values = iso_values(st)
    for i, prop in enumerate(PROPERTIES):
        assert agrees_to_printed_digits(values[prop], row[3 + i]), (prop, values[prop], row[3 + i])


# --------------------------------------------------------------------------- AGA8 Z table
@pytest.mark.parametrize("T, P_MPa, gas, Z_detail, Z_gerg", AGA8_Z_ROWS,
                         ids=[f"{r[2]}-{r[0]}K-{r[1]}MPa" for r in AGA8_Z_ROWS])
def test_aga8_appendix_Z_table_gerg_column(T, P_MPa, gas, Z_detail, Z_gerg):
    st = AGA8_GASES[gas].fluid("gerg-2008").flash(T=float(T), P=float(P_MPa) * 1e6)
    assert agrees_to_printed_digits(st.Z, Z_gerg), (st.Z, Z_gerg)


def test_aga8_Z_table_batch_equals_scalar():
    """The batch form gives the same numbers as single flashes (one composition per case)."""
    fluid = AGA8_GASES["gulf-coast"].fluid("gerg-2008")
    rows = [r for r in AGA8_Z_ROWS if r[2] == "gulf-coast"]
    T = np.array([float(r[0]) for r in rows])
    P = np.array([float(r[1]) * 1e6 for r in rows])
    batch = fluid.flash(T=T, P=P)
    assert batch.converged.all()
    for k, r in enumerate(rows):
        assert agrees_to_printed_digits(batch.Z[k], r[4])


# --------------------------------------------------------------------------- NIST test point
@pytest.fixture(scope="module")
def nist_state():
    return NIST_AGA8_TEST_GAS.fluid("gerg-2008").flash(T=NIST_AGA8_TEST_T, P=NIST_AGA8_TEST_P)


@pytest.mark.parametrize("prop", ["Z", "h", "cv", "cp", "w", "jt", "D_mol_per_l"])
def test_nist_gerg_reference_point(nist_state, prop):
    """21 components, 400 K, 50 MPa; NIST's values to 1e-9 relative (pyaga8 reproduces them to
    1e-13, EOS_DATA §6.1). h checks the enthalpy reference: ideal gas at 298.15 K is zero."""
    st = nist_state
    value = st.density / st.molar_mass / 1e3 if prop == "D_mol_per_l" else getattr(st, prop)
    assert value == pytest.approx(NIST_AGA8_GERG[prop], rel=1e-9)


def test_nist_gerg_reference_point_entropy(nist_state):
    """Regression: a constant shift computed with letdown's R left s 1.2e-4 J/(mol K) off."""
    assert nist_state.s == pytest.approx(NIST_AGA8_GERG["s"], rel=1e-9)


# --------------------------------------------------------------------------- CoolProp HEOS
COOLPROP_NAMES = {
    "methane": "Methane", "ethane": "Ethane", "propane": "Propane", "isobutane": "IsoButane",
    "n-butane": "n-Butane", "isopentane": "Isopentane", "n-pentane": "n-Pentane",
    "n-hexane": "n-Hexane", "nitrogen": "Nitrogen", "carbon-dioxide": "CarbonDioxide",
    "hydrogen": "Hydrogen",
}
HEOS_GASES = tuple(AGA8_GASES.values()) + (H2_BLEND_20,)
T_OUT_TOL = 0.2   # [K] issue 2


def heos_outlet_T(composition, T_in, P_in, P_out):
    names = list(composition)
    AS = AbstractState("HEOS", "&".join(COOLPROP_NAMES[n] for n in names))
    AS.set_mole_fractions([composition[n] for n in names])
    AS.specify_phase(CoolProp.iphase_gas)

    def h(T, P):
        AS.update(CoolProp.PT_INPUTS, P, T)
        return AS.hmolar()

    h_in = h(T_in, P_in)
    return brentq(lambda T: h(T, P_out) - h_in, T_in - 80.0, T_in + 5.0, xtol=1e-9)


@pytest.mark.parametrize("gas", HEOS_GASES, ids=lambda g: g.name)
@pytest.mark.parametrize("throttle", LETDOWNS, ids=lambda c: f"{c[0]:.2f}K-{c[1] / BAR:.0f}bar")
def test_letdown_outlet_T_agrees_with_coolprop_heos(gas, throttle):
    T_in, P_in, P_out = throttle
    fluid = gas.fluid("gerg-2008")
    out = fluid.flash(P=P_out, h=fluid.flash(T=T_in, P=P_in).h)
    assert out.n_phases == 1 and out.Z > 0.9
    assert out.T == pytest.approx(heos_outlet_T(gas.composition, T_in, P_in, P_out), abs=T_OUT_TOL)


# --------------------------------------------------------------------------- refusals
@pytest.mark.parametrize("extra", ["neopentane", "methanol"])
def test_unsupported_component_is_model_error(extra):
    with pytest.raises(ModelError, match=f"GERG-2008 has no parameters for {extra}"):
        letdown.Fluid({"methane": 0.95, extra: 0.05}, model="gerg-2008")


def test_two_phase_state_is_model_error():
    # ISO gas 3 (rich, 4 % C6+) at 250 K, 30 bar: two phases (thermo FlashVL and letdown's
    # Peng-Robinson agree on vapour fraction 0.86, see test_flash_vs_thermo.py)
    fluid = RICH_GAS_C7PLUS.fluid("gerg-2008")
    with pytest.raises(ModelError, match="use a cubic model"):
        fluid.flash(T=250.0, P=30 * BAR)


def test_throttle_into_two_phases_is_model_error():
    fluid = RICH_GAS_C7PLUS.fluid("gerg-2008")
    # dense single phase (ISO 20765-2 prints gas 3 at 300 K, 20 MPa)
    inlet = fluid.flash(T=300.0, P=200 * BAR)
    with pytest.raises(ModelError, match="use a cubic model"):
        fluid.flash(P=30 * BAR, h=inlet.h)


def test_two_phase_cases_in_a_batch_are_marked_not_converged():
    fluid = RICH_GAS_C7PLUS.fluid("gerg-2008")
    st = fluid.flash(T=np.array([250.0, 400.0]), P=np.array([30 * BAR, 100 * BAR]))
    assert list(st.converged) == [False, True]
    assert np.isnan(st.h[0]) and np.isnan(st.Z[0]) and np.isfinite(st.Z[1])


def test_dew_point_is_model_error():
    with pytest.raises(ModelError, match="use a cubic model"):
        RICH_GAS_C7PLUS.fluid("gerg-2008").dew_temperature(P=30 * BAR)
