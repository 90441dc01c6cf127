"""Unit parsing at the boundary (letdown.quantities), each conversion with its source."""
import math

import pytest
from hypothesis import given, strategies as st

from letdown.errors import InputError
from letdown.quantities import (PSI, STANDARD_ATMOSPHERE, STANDARD_CONDITIONS, MassFlow,
                                format_number, parse_quantity, unit_system)

# CODATA 2018 (Tiesinga et al., Rev. Mod. Phys. 93 (2021) 025010): molar volume of an ideal gas at
# 273.15 K and 101.325 kPa = 22.413 969 54e-3 m3/mol.
CODATA_VM_NORMAL = 22.41396954e-3


def test_gauge_pressure_adds_the_stated_atmosphere():
    # 1 bar = 1e5 Pa exactly (NIST SP 811, 2008, table 8); standard atmosphere 101325 Pa (ISO 2533)
    assert parse_quantity("64 barg", "pressure") == 64e5 + 101325.0
    assert parse_quantity("0 barg", "pressure") == STANDARD_ATMOSPHERE
    assert parse_quantity("64 barg", "pressure", atmosphere=95000.0) == 64e5 + 95000.0
    assert parse_quantity("65 bar", "pressure") == 65e5
    assert parse_quantity("65 bara", "pressure") == 65e5
    assert parse_quantity("6.5 MPa", "pressure") == 6.5e6


def test_psi_is_nist_value():
    # NIST SP 811 (2008), appendix B.8: 1 psi = 6.894 757 E+03 Pa
    assert parse_quantity("1 psi", "pressure_difference") == pytest.approx(6894.757, abs=1e-3)
    assert PSI == pytest.approx(6894.757, abs=1e-3)
    assert parse_quantity("100 psia", "pressure") == pytest.approx(689475.7, abs=0.1)
    assert parse_quantity("900 psig", "pressure") == pytest.approx(900 * PSI + 101325.0, rel=1e-15)


def test_sm3_uses_iso_13443_reference_conditions():
    # ISO 13443:1996: standard reference conditions 288.15 K and 101.325 kPa; ideal gas
    sm3 = STANDARD_CONDITIONS["sm3"]
    assert (sm3.T, sm3.P) == (288.15, 101325.0)
    # ideal-gas molar volume scales with T at fixed P: Vm(15 degC) = Vm(0 degC) * 288.15 / 273.15
    vm = CODATA_VM_NORMAL * 288.15 / 273.15
    assert parse_quantity("3600 Sm3/h", "flow") == pytest.approx(1.0 / vm, rel=1e-9)
    assert parse_quantity("85000 Sm3/h", "flow") == pytest.approx(85000 / 3600 / vm, rel=1e-9)
    assert parse_quantity("86400 Sm3/d", "flow") == pytest.approx(1.0 / vm, rel=1e-9)


def test_nm3_matches_codata_molar_volume():
    assert parse_quantity("1 Nm3/s", "flow") == pytest.approx(1.0 / CODATA_VM_NORMAL, rel=1e-9)


def test_mmscfd_at_60F_14_696_psia():
    # 379.49 scf/lbmol at 60 degF and 14.696 psia (value from memory, the figure quoted with
    # GPA 2145 tables); 1 lbmol = 453.59237 mol (NIST SP 811)
    mol_s = parse_quantity("1 MMscfd", "flow")
    assert mol_s == pytest.approx(1e6 / 379.49 * 453.59237 / 86400, rel=5e-5)
    assert parse_quantity("2.5 MMscfd", "flow") == pytest.approx(2.5 * mol_s, rel=1e-15)
    assert parse_quantity("1 MMSCFD", "flow") == mol_s
    assert parse_quantity("1000 Mscfd", "flow") == pytest.approx(mol_s, rel=1e-12)


def test_molar_and_mass_flows():
    assert parse_quantity("1200 kmol/h", "flow") == pytest.approx(1200 * 1000 / 3600, rel=1e-15)
    # 1 lb = 0.45359237 kg exactly (NIST SP 811, appendix B.8)
    assert parse_quantity("1 lbmol/h", "flow") == pytest.approx(453.59237 / 3600, rel=1e-12)
    m = parse_quantity("30 t/h", "flow")
    assert isinstance(m, MassFlow) and m.kg_s == pytest.approx(30000 / 3600, rel=1e-15)
    assert m.to_molar(0.016) == pytest.approx(30000 / 3600 / 0.016)
    assert parse_quantity("3600 lb/h", "flow").kg_s == pytest.approx(0.45359237, rel=1e-12)


def test_temperatures_and_differences():
    # degC offset 273.15 K; degF: T/K = (t/degF + 459.67) / 1.8 (NIST SP 811, 4.2.1.1 and B.9)
    assert parse_quantity("6 degC", "temperature") == pytest.approx(279.15, abs=1e-12)
    assert parse_quantity("6degC", "temperature") == pytest.approx(279.15, abs=1e-12)
    assert parse_quantity("43 degF", "temperature") == pytest.approx((43 + 459.67) / 1.8, abs=1e-12)
    assert parse_quantity("281.15 K", "temperature") == 281.15
    assert parse_quantity("3 K", "temperature_difference") == 3.0
    assert parse_quantity("3 delta_degC", "temperature_difference") == pytest.approx(3.0)
    assert parse_quantity("9 delta_degF", "temperature_difference") == pytest.approx(5.0)


def test_power_fraction_ua():
    assert parse_quantity("500 kW", "power") == 500e3
    # 1 hp (mechanical) = 745.6999 W (NIST SP 811, appendix B.8)
    assert parse_quantity("1 hp", "power") == pytest.approx(745.6999, abs=1e-4)
    assert parse_quantity("78 %", "fraction") == pytest.approx(0.78)
    assert parse_quantity(0.78, "fraction") == 0.78
    assert parse_quantity("25 kW/K", "ua") == 25e3


@pytest.mark.parametrize("text, kind, needle", [
    ("5 zorks", "pressure", "unknown unit 'zorks'"),
    ("5 furlongs", "pressure", "not a unit of pressure"),
    ("17 barr", "pressure", "unknown unit 'barr'"),
    ("85000 Sm3/fortnite", "flow", "unknown unit"),
    ("3 degC", "temperature_difference", "names a temperature, not a difference"),
    ("3 delta_degC", "temperature", "is a temperature difference"),
    ("0.3 barg", "pressure_difference", "absolute unit"),
    ("100 m3/h", "flow", "actual volume flow"),
    ("20", "temperature", "needs a unit"),
    ("6 bar", "temperature", "not a unit of temperature"),
    ("-2 bar", "pressure", "not above vacuum"),
    ("-300 degC", "temperature", "absolute zero"),
    ("fast", "flow", "cannot read 'fast'"),
    ("5 kg", "flow", "not a unit of flow"),
])
def test_bad_quantities_raise_located_input_errors(text, kind, needle):
    with pytest.raises(InputError) as err:
        parse_quantity(text, kind, field="feeds.supply.P", file="station.yaml", line=7)
    assert needle in str(err.value)
    assert str(err.value).startswith("station.yaml:7: feeds.supply.P: ")


def test_bare_number_only_where_the_field_says_so():
    assert parse_quantity(-1200, "molar_enthalpy", bare="J/mol") == -1200.0
    with pytest.raises(InputError, match="needs a unit"):
        parse_quantity(-1200, "molar_enthalpy")


def test_display_units():
    si = unit_system("si")
    assert si["P"](64e5 + 101325.0) == pytest.approx(64.0, abs=1e-12)
    assert si["T"](279.15) == pytest.approx(6.0, abs=1e-12)
    assert si["std_flow"](parse_quantity("85000 Sm3/h", "flow")) == pytest.approx(85000.0)
    field = unit_system("field")
    assert field["T"](273.15) == pytest.approx(32.0, abs=1e-12)
    assert field["P"](101325.0 + 100 * PSI) == pytest.approx(100.0, abs=1e-9)
    assert field["std_flow"](parse_quantity("2.5 MMscfd", "flow")) == pytest.approx(2.5)
    assert field["mass_flow"](0.45359237 / 3600) == pytest.approx(1.0)
    with pytest.raises(InputError, match="unknown unit system"):
        unit_system("imperial")


def test_format_number():
    assert format_number(float("nan")) == "-"
    assert format_number(None) == "-"
    assert format_number(0.0) == "0"
    assert format_number(1234.5678) == "1234.6"
    assert format_number(-2.5e-7) == "-2.5000e-07"


@given(st.floats(min_value=-0.9, max_value=300.0, allow_nan=False))
def test_barg_round_trip(p_barg):
    P = parse_quantity(f"{p_barg!r} barg", "pressure")
    assert unit_system("si")["P"](P) == pytest.approx(p_barg, abs=1e-9)


@given(st.floats(min_value=-200.0, max_value=500.0, allow_nan=False))
def test_degC_round_trip(t):
    T = parse_quantity(f"{t!r} degC", "temperature")
    assert unit_system("si")["T"](T) == pytest.approx(t, abs=1e-9)
    assert math.isclose(T, t + 273.15, abs_tol=1e-9)


def test_fast_units_agree_with_pint():
    # the units converted without pint must give pint's numbers (pint follows NIST SP 811)
    from letdown.quantities import FAST_UNITS, registry
    ureg = registry()
    si = {"temperature": "K", "pressure": "Pa", "temperature_difference": "K", "power": "W",
          "molar_flow": "mol/s", "mass_flow": "kg/s", "ua": "W/K", "molar_enthalpy": "J/mol",
          "molar_entropy": "J/(mol*K)", "fraction": "dimensionless", "length": "m",
          "velocity": "m/s"}
    for unit, (kind, scale, offset) in FAST_UNITS.items():
        for value in (-40.0, 1.0, 123.456):
            expected = ureg.Quantity(value, ureg.parse_units(unit.replace(" K", "*K"))).to(si[kind])
            assert value * scale + offset == pytest.approx(expected.magnitude, rel=1e-12, abs=1e-12), unit
