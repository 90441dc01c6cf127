"""Checking a flowsheet against plant measurements (letdown compare): residuals per model, the
one-parameter fit, the heater's efficiency and fuel, and located errors for bad entries."""
import json
import math
import subprocess
import sys

import numpy as np
import pytest

import letdown
from letdown.errors import InputError
from letdown.fluid.components import R
from letdown.sheet.loader import read_spec, parse_spec
from letdown.sheet.measurements import read_csv, with_measurements
from letdown.sheet.solve import solve_cases
from letdown.study.compare import COVERAGE_95, compare, fit_parameter
from tests.stations import gate_station

GATE = "flowsheets/gate-station.yaml"

#: The gate-station example with a fired preheater given its fuel (an invented demo station).
FIRED = gate_station("fired preheat, fictional test station", goal=False, limits=False,
                     edits={"T_out: 38 degC, dP: 0.3 bar}": "fuel: 1300 kW, efficiency: 0.75, "
                                                           "dP: 0.3 bar}"})

#: Standard volume of one mole at 15 degC and 101.325 kPa (ISO 13443), ideal gas [m3/mol].
SM3_PER_MOL = R * 288.15 / 101325.0


def _with_measurements(text, entries):
    return text + "measurements:\n" + "".join(f"  - {e}\n" for e in entries)


# ------------------------------------------------------------------------------------------------
# heater efficiency and fuel
# ------------------------------------------------------------------------------------------------
def test_heater_fuel_is_duty_over_efficiency():
    base = letdown.load(GATE).spec
    res = solve_cases(base, {"preheat.efficiency": [0.85]}).case(0)
    eq = res.equipment["preheat"]
    assert eq["fuel_W"] == pytest.approx(eq["duty_W"] / 0.85, rel=1e-14)
    # a heater given its fuel adds efficiency * fuel to the gas
    fired = parse_spec(FIRED, "fired.yaml")
    out = solve_cases(fired, None).case(0).equipment["preheat"]
    assert out["duty_W"] == pytest.approx(0.75 * 1300e3, rel=1e-14)
    assert out["fuel_W"] == pytest.approx(1300e3, rel=1e-14)


def test_heater_efficiency_outside_zero_to_one_is_refused():
    fired = parse_spec(FIRED, "fired.yaml")
    with pytest.raises(InputError, match=r"efficiency must lie in \(0, 1\], got 1.2") as err:
        solve_cases(fired, {"preheat.efficiency": [0.8, 1.2]})
    assert err.value.file == "fired.yaml" and err.value.line == 8
    with pytest.raises(InputError, match="efficiency must lie in"):
        parse_spec(FIRED.replace("efficiency: 0.75", "efficiency: 120 %"), "fired.yaml")


def test_heater_fuel_without_efficiency_is_a_located_error():
    text = FIRED.replace(", efficiency: 0.75", "")
    with pytest.raises(InputError, match="needs its efficiency") as err:
        parse_spec(text, "fired.yaml")
    assert err.value.line == 8 and err.value.field == "equipment.preheat.fuel"


# ------------------------------------------------------------------------------------------------
# residuals against plain solves, per model
# ------------------------------------------------------------------------------------------------
GATE_MEASUREMENTS = [
    "{at: warm.T, value: 29.0 degC, uncertainty: 0.5 K}",
    "{at: network.T, value: 4.2 degC, uncertainty: 0.5 K}",
    "{at: preheat.duty, value: 1050 kW, uncertainty: 3 %}",
    "{at: preheat.fuel, value: 1290 kW, uncertainty: 2 %}",
    "{at: network.P, value: 17.1 barg, uncertainty: 0.05 bar}",
    "{at: supply.flow, value: 85400 Sm3/h, uncertainty: 1 %}",
]


@pytest.fixture(scope="module")
def gate_compared(tmp_path_factory):
    text = open(GATE).read().replace("T_out: 38 degC, dP: 0.3 bar",
                                     "T_out: 38 degC, dP: 0.3 bar, efficiency: 0.85")
    assert "efficiency: 0.85" in text
    path = tmp_path_factory.mktemp("gate") / "gate-measured.yaml"
    path.write_text(_with_measurements(text, GATE_MEASUREMENTS))
    return path, compare(read_spec(str(path)))


def test_residuals_per_model_match_plain_solves(gate_compared):
    path, cmp = gate_compared
    assert cmp.models == ("peng-robinson", "soave-redlich-kwong", "gerg-2008")
    assert set(cmp.results) == set(cmp.models) and not cmp.failures
    for model in cmp.models:
        res = letdown.load(str(path)).solve(model=model)
        duty = res.equipment["preheat"]["duty_W"]
        expected = [
            (res.streams["warm"].T - 302.15) / 0.5,
            (res.streams["network"].T - 277.35) / 0.5,
            (duty - 1050e3) / (0.03 * 1050e3),
            (duty / 0.85 - 1290e3) / (0.02 * 1290e3),
            # the regulator sets 17 barg exactly: 0.1 bar below the reading, 2 uncertainties
            -2.0,
            # 85000 against 85400 Sm3/h read to 1 %: -400 / 854
            -400.0 / 854.0,
        ]
        got = cmp.results[model].residuals
        for r, z in zip(got, expected):
            assert r.normalised == pytest.approx(z, rel=1e-9, abs=1e-9), (model, r.at)
            assert r.residual == pytest.approx(r.model - r.measured, rel=1e-15)
        # the flow residual in SI: -400 Sm3/h as mol/s
        assert got[5].residual == pytest.approx(-400.0 / 3600.0 / SM3_PER_MOL, rel=1e-9)
        score = cmp.results[model].score
        zs = np.array(expected)
        assert score.dof == 6
        assert score.chi2 == pytest.approx(np.sum(zs ** 2), rel=1e-9)
        assert score.chi2_per_dof == pytest.approx(np.sum(zs ** 2) / 6, rel=1e-9)
        assert score.rms == pytest.approx(np.sqrt(np.mean(zs ** 2)), rel=1e-9)
    # the goal holds network.T at 5 degC with every model: the same -> residual 0.8 K / 0.5 K
    for model in cmp.models:
        assert cmp.results[model].residuals[1].normalised == pytest.approx(1.6, abs=1e-5)
    # and the models differ on the preheat, which the measurements see
    warm = [cmp.results[m].residuals[0].model for m in cmp.models]
    assert max(warm) - min(warm) > 1.0


def test_csv_measurements_equal_the_file_section(gate_compared, tmp_path):
    path, cmp = gate_compared
    csv_path = tmp_path / "readings.csv"
    rows = ["at,value,uncertainty,note", "warm.T,29.0 degC,0.5 K,TT-101", "network.T,4.2 degC,0.5 K,",
            "preheat.duty,1050 kW,3 %,heat meter", "preheat.fuel,1290 kW,2 %,FQ-7",
            "network.P,17.1 barg,0.05 bar,PT-2", "supply.flow,85400 Sm3/h,1 %,FT-1"]
    csv_path.write_text("\n".join(rows) + "\n")
    fs = read_spec(str(path))
    from_csv = read_csv(str(csv_path), fs)
    assert [(m.at, m.value, m.uncertainty) for m in from_csv] == \
        [(m.at, m.value, m.uncertainty) for m in fs.measurements]
    assert from_csv[2].where.line == 4 and from_csv[2].field == "data[2]"
    both = with_measurements(fs, from_csv)
    assert len(both.measurements) == 12 and len(fs.measurements) == 6


# ------------------------------------------------------------------------------------------------
# recovering a known efficiency from noisy synthetic measurements
# ------------------------------------------------------------------------------------------------
TRUE_EFFICIENCY = 0.84
SEED = 20261201
#: (measured quantity, standard uncertainty in SI or as a fraction of the value, relative?)
SYNTHETIC = (("warm.T", 0.3, False), ("network.T", 0.3, False), ("preheat.duty", 0.02, True))
SI_UNIT = {"T": "K", "duty": "W"}


@pytest.fixture(scope="module")
def recovery():
    base = parse_spec(FIRED, "fired.yaml")
    truth = solve_cases(base, {"preheat.efficiency": [TRUE_EFFICIENCY]}, model="peng-robinson")
    rng = np.random.default_rng(SEED)
    entries, sigmas, clean = [], [], []
    for at, sigma, relative in SYNTHETIC:
        name, _, attr = at.partition(".")
        if name in truth.equipment:
            value = float(getattr(truth.equipment[name], attr)[0])
        else:
            value = float(getattr(truth.streams[name], attr)[0])
        s = sigma * value if relative else sigma
        noisy = value + s * rng.standard_normal()
        entries.append(f"{{at: {at}, value: {noisy!r} {SI_UNIT[attr]}, uncertainty: {s!r} "
                       f"{SI_UNIT[attr]}}}")
        sigmas.append(s)
        clean.append(value)
    fs = parse_spec(_with_measurements(FIRED, entries), "synthetic.yaml")
    fit = fit_parameter(fs, fs.measurements, "peng-robinson", "preheat.efficiency", (0.5, 1.0))
    return fs, fit, np.array(sigmas), np.array(clean)


def test_fit_recovers_the_efficiency_within_its_interval(recovery):
    fs, fit, sigmas, clean = recovery
    lo, hi = fit.interval
    print(f"fitted efficiency {fit.value:.5f} +- {fit.standard_uncertainty:.5f} (95 %: "
          f"{lo:.5f} to {hi:.5f}), true {TRUE_EFFICIENCY}; chi2 {fit.score.chi2:.3f} "
          f"({fit.score.dof} dof), {fit.evaluations} batched solves")
    assert fit.converged and not fit.at_bound
    assert lo < TRUE_EFFICIENCY < hi
    assert fit.start == 0.75                       # the file's value
    assert hi - lo == pytest.approx(2 * COVERAGE_95 * fit.standard_uncertainty, rel=1e-12)
    # the measurements pin the efficiency to about 1 %, not to the whole bracket
    assert fit.standard_uncertainty < 0.015
    assert fit.score.dof == 2


def test_fit_is_the_minimum_of_chi_square_and_its_uncertainty_the_curvature(recovery):
    # independent of the least-squares solver: chi2 on a grid of efficiencies from plain batched
    # solves, a parabola through the three lowest points
    fs, fit, sigmas, _ = recovery
    y = np.array([m.value for m in fs.measurements])
    etas = np.linspace(fit.value - 0.03, fit.value + 0.03, 13)
    batch = solve_cases(fs, {"preheat.efficiency": etas}, model="peng-robinson")
    model = np.column_stack([batch.streams["warm"].T, batch.streams["network"].T,
                             batch.equipment["preheat"].duty])
    chi2 = np.sum(((model - y) / sigmas) ** 2, axis=1)
    a, b, c = np.polyfit(etas, chi2, 2)
    assert -b / (2 * a) == pytest.approx(fit.value, abs=2e-4)
    # for a linear model chi2 = chi2_min + ((eta - eta_hat) / u)^2: the curvature gives u
    assert 1.0 / math.sqrt(a) == pytest.approx(fit.standard_uncertainty, rel=0.02)
    # the duty is efficiency * fuel: its sensitivity is fuel / sigma, by hand
    assert fit.sensitivities[2] == pytest.approx(1300e3 / sigmas[2], rel=1e-6)


# ------------------------------------------------------------------------------------------------
# bad entries: located errors
# ------------------------------------------------------------------------------------------------
BAD = [
    ("{at: nowhere.T, value: 4 degC, uncertainty: 0.5 K}", "measurements[0].at",
     "'nowhere' is neither a stream nor a block"),
    ("{at: netwrk.T, value: 4 degC, uncertainty: 0.5 K}", "measurements[0].at", "did you mean 'network'"),
    ("{at: network.duty, value: 4 kW, uncertainty: 1 kW}", "measurements[0].at",
     "cannot measure 'duty' of stream 'network'"),
    ("{at: regulator.duty, value: 4 kW, uncertainty: 1 kW}", "measurements[0].at",
     "a throttle reports no duty"),
    ("{at: preheat.fuel, value: 1200 kW, uncertainty: 2 %}", "measurements[0].at",
     "has no efficiency"),
    ("{at: networkT, value: 4 degC, uncertainty: 0.5 K}", "measurements[0].at",
     "should read name.attribute"),
    ("{at: network.T, value: 4 barg, uncertainty: 0.5 K}", "measurements[0].value",
     "unknown unit 'barg'"),
    ("{at: network.T, value: 4 degC, uncertainty: 0.5 degC}", "measurements[0].uncertainty", "degC"),
    ("{at: network.T, value: 4 degC, uncertainty: -0.5 K}", "measurements[0].uncertainty",
     "must be positive"),
    ("{at: network.T, value: 4 degC, uncertainty: 0 %}", "measurements[0].uncertainty",
     "must be positive"),
    ("{at: network.P, value: 17 barg, uncertainty: 0.1 barg}", "measurements[0].uncertainty",
     "absolute unit, not 'barg'"),
    ("{at: supply.flow, value: 60 t/h, uncertainty: 100 Sm3/h}", "measurements[0].uncertainty",
     "same kind of unit"),
    ("{at: network.T, value: 4 degC}", "measurements[0]", "missing field 'uncertainty'"),
    ("{at: network.T, value: 4 degC, uncertainty: 0.5 K, sigma: 1}", "measurements[0].sigma",
     "unknown field 'sigma'"),
]


@pytest.mark.parametrize("entry, field, message", BAD)
def test_bad_measurement_entries_give_located_errors(entry, field, message):
    text = open(GATE).read()
    line = len(text.splitlines()) + 2            # the entry's line after "measurements:"
    with pytest.raises(InputError, match=message) as err:
        parse_spec(_with_measurements(text, [entry]), "bad.yaml")
    assert err.value.file == "bad.yaml"
    assert err.value.line == line, str(err.value)
    assert err.value.field == field, str(err.value)


@pytest.mark.parametrize("rows, line, message", [
    (["at,value,sigma", "network.T,4 degC,0.5 K"], 1, "unknown column 'sigma'"),
    (["at,value", "network.T,4 degC"], 1, "missing column 'uncertainty'"),
    (["at,value,uncertainty", "network.T,4 degC,0.5 K", "network.X,4 degC,0.5 K"], 3,
     "cannot measure 'X'"),
    (["at,value,uncertainty", "", "network.T,4 degC,"], 3, "missing field 'uncertainty'"),
    (["at,value,uncertainty"], 1, "no measurements"),
])
def test_bad_csv_rows_give_located_errors(tmp_path, rows, line, message):
    path = tmp_path / "readings.csv"
    path.write_text("\n".join(rows) + "\n")
    with pytest.raises(InputError, match=message) as err:
        read_csv(str(path), read_spec(GATE))
    assert err.value.file == str(path) and err.value.line == line


def test_fit_parameters_that_cannot_be_fitted():
    fs = parse_spec(_with_measurements(open(GATE).read(), GATE_MEASUREMENTS[:2]), "gate.yaml")
    with pytest.raises(InputError, match="varied by goal 1") as err:
        compare(fs, models=["peng-robinson"], fit="preheat.T_out", within=(280.0, 320.0))
    assert err.value.field == "--fit"
    with pytest.raises(InputError, match="specified by T_out, not duty"):
        compare(fs, models=["peng-robinson"], fit="preheat.duty", within=(5e5, 2e6))
    with pytest.raises(InputError, match="needs a bracket"):
        compare(fs, models=["peng-robinson"], fit="regulator.P_out")
    # nothing measured depends on the efficiency of a heater given its outlet temperature
    with pytest.raises(InputError, match="no measurement depends on preheat.efficiency"):
        compare(fs, models=["peng-robinson"], fit="preheat.efficiency", within=(0.5, 1.0))
    with pytest.raises(InputError, match="an efficiency lies in"):
        compare(fs, models=["peng-robinson"], fit="preheat.efficiency", within=(0.5, 1.1))
    # a bracket that makes the regulator raise the pressure fails the fit of that model, located
    raised = compare(fs, models=["peng-robinson"], fit="regulator.P_out", within=(65e5, 80e5))
    failure = raised.results["peng-robinson"].fit_failure
    assert raised.results["peng-robinson"].fit is None and "above the inlet pressure" in failure
    with pytest.raises(InputError, match="no measurements to compare"):
        compare(read_spec(GATE))


# ------------------------------------------------------------------------------------------------
# command line
# ------------------------------------------------------------------------------------------------
def _run(*args):
    return subprocess.run([sys.executable, "-m", "letdown.cli", *args], capture_output=True,
                          text=True)


def test_command_line_fit_json_and_text(recovery, tmp_path):
    fs, fit, _, _ = recovery
    path = tmp_path / "fired.yaml"
    path.write_text(FIRED)
    csv_path = tmp_path / "readings.csv"
    csv_path.write_text("at,value,uncertainty\n" + "".join(
        f"{m.at},{m.value!r} {'W' if m.attribute == 'duty' else 'K'},"
        f"{m.uncertainty!r} {'W' if m.attribute == 'duty' else 'K'}\n" for m in fs.measurements))
    out = _run("compare", str(path), "--data", str(csv_path), "--fit", "preheat.efficiency",
               "--within", "0.5", "1", "--models", "pr", "--json")
    assert out.returncode == 0, out.stderr
    data = json.loads(out.stdout)
    got = data["results"]["peng-robinson"]["fit"]
    assert got["value"] == pytest.approx(fit.value, abs=1e-9)
    assert got["interval_95"][0] < TRUE_EFFICIENCY < got["interval_95"][1]
    text = _run("compare", str(path), "--data", str(csv_path), "--fit", "preheat.efficiency",
                "--within", "50 %", "100 %", "--models", "pr")
    assert text.returncode == 0, text.stderr
    assert "preheat.efficiency = " in text.stdout and "95 % interval" in text.stdout
    assert text.stdout.rstrip().endswith("checked by qualified, licensed staff.")


def test_command_line_bad_input_is_one_located_line(tmp_path):
    path = tmp_path / "bad.yaml"
    path.write_text(_with_measurements(FIRED, ["{at: warm.T, value: 30 degC, uncertainty: 0.5}"]))
    out = _run("compare", str(path))
    assert out.returncode == 2
    assert out.stderr.strip().count("\n") == 0
    assert f"{path}:11: measurements[0].uncertainty:" in out.stderr and "needs a unit" in out.stderr
    out = _run("compare", str(path).replace("bad", "missing"))
    assert out.returncode == 2
    out = _run("compare", GATE, "--fit", "preheat.efficiency")
    assert out.returncode == 2 and "--within" in out.stderr
