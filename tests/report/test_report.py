"""Report tables and text: pure functions of a result (a stand-in result here, a real solve at the end)."""
import csv
import io
from pathlib import Path
from types import SimpleNamespace as NS

import numpy as np
import pytest

from letdown.quantities import PSI
from letdown.report.tables import csv_text, equipment_table, pick, render, stream_table
from letdown.caution import CAUTION
from letdown.report.text import report_text

ROOT = Path(__file__).resolve().parents[2]


def stream(T, P, flow, **kw):
    base = dict(T=T, P=P, flow=flow, mass_flow=flow * 0.0176, vapour_fraction=1.0,
                zs={"methane": 0.9, "ethane": 0.1}, h=-1200.0, s=-30.0, Z=0.87, density=52.1,
                molar_mass=0.0176)
    base.update(kw)
    return NS(**base)


@pytest.fixture
def result():
    return NS(
        title="Stand-in station", model="peng-robinson", converged=True,
        streams={"supply": stream(279.15, 64e5 + 101325.0, 1000.0),
                 "network": stream(np.array([278.15]), np.array([17e5 + 101325.0]),
                                   np.array([1000.0]),
                                   zs={"methane": np.array([0.9]), "ethane": np.array([0.1])})},
        equipment={"preheat": {"kind": "heater", "duty_W": 1.2e6, "dP_Pa": 3e4,
                               "mole_balance_closure": 0.0, "energy_balance_closure": 1e-16,
                               "inlets": {"in": "supply"}},
                   "regulator": {"kind": "throttle", "dP_Pa": 47e5, "two_phase_outlet": False,
                                 "mole_balance_closure": 0.0, "energy_balance_closure": 2e-15},
                   "ex": {"kind": "exchanger", "duty_W": 5e5, "min_approach_K": 5.0,
                          "UA_W_K": 5e4, "temperature_cross": True}},
        goals=[{"hold": "network.T", "target": 278.15, "achieved": 280.0, "by": "preheat.T_out",
                "value": 363.15, "met": False, "message": "bracket too narrow"}],
        loops=[{"tears": ["back"], "iterations": 7, "residual": 3e-10, "converged": True}],
        warnings=[{"where": "network", "what": "below limits.min_T"}])


def rows(table):
    return {r[0]: r[1:] for r in table.rows}


def test_stream_table_si(result):
    t = stream_table(result)
    assert t.header == ("", "supply", "network")
    r = rows(t)
    assert r["Temperature [degC]"] == (pytest.approx(6.0), pytest.approx(5.0))
    assert r["Pressure [barg]"] == (pytest.approx(64.0), pytest.approx(17.0))
    assert r["Molar flow [kmol/h]"][0] == pytest.approx(3600.0)
    assert r["Mass flow [kg/h]"][0] == pytest.approx(17.6 * 3600)
    # 1000 mol/s of ideal gas at 15 degC, 101.325 kPa (ISO 13443) in Sm3/h
    assert r["Standard gas flow [Sm3/h]"][0] == pytest.approx(
        1000.0 * 8.314462618 * 288.15 / 101325.0 * 3600, rel=1e-12)
    assert r["Molar mass [kg/kmol]"][0] == pytest.approx(17.6)
    assert r["  methane"] == (0.9, 0.9) and "Mole fractions" in r


def test_stream_table_field(result):
    r = rows(stream_table(result, "field"))
    assert r["Temperature [degF]"][0] == pytest.approx(42.8)
    assert r["Pressure [psig]"][0] == pytest.approx(64e5 / PSI)
    assert r["Mass flow [lb/h]"][0] == pytest.approx(17.6 * 3600 / 0.45359237)
    # 379.49 scf/lbmol at 60 degF, 14.696 psia (value from memory, GPA 2145 figure)
    assert r["Standard gas flow [MMscfd]"][0] == pytest.approx(
        1000.0 / 453.59237 * 379.49 * 86400 / 1e6, rel=5e-5)


def test_equipment_table(result):
    t = equipment_table(result)
    assert t.header[:5] == ("Block", "Kind", "Duty [kW]", "Power [kW]", "Pressure drop [bar]")
    r = rows(t)
    assert r["preheat"][:4] == ("heater", pytest.approx(1200.0), None, pytest.approx(0.3))
    assert "two" not in r["regulator"][-1]          # unset flags are left out
    assert "min_approach=5.0000 K" in r["ex"][-1] and "temperature cross" in r["ex"][-1]
    assert "UA=50.000 kW/K" in r["ex"][-1]


def test_render_splits_wide_tables_and_keeps_first_column(result):
    many = NS(**{**vars(result), "streams": {f"stream{i:02d}": stream(300.0, 2e6, 1.0)
                                             for i in range(20)}})
    text = render(stream_table(many), width=80)
    assert max(len(line) for line in text.splitlines()) <= 80
    assert text.count("Temperature [degC]") > 1
    assert "stream19" in text


def test_csv_round_trip(result):
    text = csv_text(stream_table(result))
    table = list(csv.reader(io.StringIO(text)))
    assert table[0] == ["", "supply", "network"]
    by = {r[0]: r[1:] for r in table[1:]}
    assert float(by["Temperature [degC]"][0]) == pytest.approx(6.0, abs=1e-9)
    eq = list(csv.reader(io.StringIO(csv_text(equipment_table(result)))))
    assert eq[1][0] == "preheat" and float(eq[1][2]) == pytest.approx(1200.0)
    assert eq[1][3] == ""                            # no power: empty cell


def test_report_text_sections(result):
    text = report_text(result)
    assert text.startswith("Stand-in station\nmodel: peng-robinson; converged")
    assert "Loops\n  tear back: 7 iterations, residual 3.00e-10" in text
    assert ("network.T = 6.8500 degC (target 5.0000 degC) by preheat.T_out = 90.000 degC: NOT MET"
            " -- bracket too narrow") in text
    assert "Warnings\n  Checks (verify before use)\n    network: below limits.min_T" in text
    assert "ISO 13443" in text and "101.325 kPa" in text
    assert text.rstrip().endswith(CAUTION)
    field = report_text(result, "field", atmosphere=95000.0)
    assert "psig" in field and "60 degF and 14.696 psia" in field and "95 kPa" in field


def test_pick():
    assert pick(np.array([[1.0, 2.0]]), 1) == 2.0
    assert pick(None) is None and pick("x") == "x" and pick(np.float64(2.5)) == 2.5


def test_real_gate_station_report():
    from letdown.sheet.loader import read_spec
    from letdown.sheet.solve import solve
    res = solve(read_spec(ROOT / "flowsheets" / "gate-station.yaml"))
    text = report_text(res)
    r = rows(stream_table(res))
    assert r["Temperature [degC]"][2] == pytest.approx(5.0, abs=1e-4)   # the goal holds 5 degC
    assert r["Pressure [barg]"] == (pytest.approx(64.0), pytest.approx(63.7), pytest.approx(17.0))
    assert r["Standard gas flow [Sm3/h]"][0] == pytest.approx(85000.0, rel=1e-12)
    assert "preheat" in text and ": met" in text


def test_warnings_are_rendered_in_the_display_units():
    # issue 10: a warning is rendered in the display units of the report; the numbers are checked
    # against the unit definitions (degF = degC * 1.8 + 32; 1 K = 1.8 delta_degF; 1 psi =
    # 6894.757 Pa, NIST SP 811)
    from letdown.report.text import display_text, warnings_text
    text = "hydrate margin -18.11 K: -2.84 degC against 15.27 degC at 41.01 bar (17.00 barg)"
    assert display_text(text, "si") == text
    field = display_text(text, "field")
    assert "-32.60 delta_degF" in field and "26.89 degF" in field and "59.49 degF" in field
    assert "594.8 psia" in field and "246.6 psig" in field
    assert "degC" not in field and " bar" not in field
    # absolute temperatures in K stay in K; numbers inside names are left alone
    assert display_text("T_out 283.15 K on stream-2 K1", "field") == "T_out 283.15 K on stream-2 K1"
    result = {"warnings": [{"where": "network", "what": text, "severity": "hazard"}]}
    assert "26.89 degF" in warnings_text(result, "field")
