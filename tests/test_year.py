"""A year of operation, executors (process pool, Dask) and profiles."""
import numpy as np
import pytest

import letdown
from letdown.errors import InputError
from letdown.sheet.loader import load
from letdown.study.executors import ProcessPool, Serial
from letdown.study.sweep import parse_variable, sweep
from letdown.study.year import read_profile, year

GATE = "flowsheets/gate-station.yaml"
PROFILE = "flowsheets/profiles/harrowfield-2026.csv"


def short_profile(tmp_path, hours=48):
    lines = open(PROFILE).read().splitlines()[: hours + 1]
    path = tmp_path / "profile.csv"
    path.write_text("\n".join(lines) + "\n")
    return str(path)


def test_year_totals_are_the_hourly_solves(tmp_path):
    fs = load(GATE)
    prof = read_profile(short_profile(tmp_path, 24))
    res = year(fs, prof, efficiency=0.7)
    assert res.converged.all()
    # each hour is the file solved with that hour's feed and set point
    sheet = letdown.load(GATE)
    for i in (0, 7, 19):
        one = sheet.solve_cases({"supply.T": prof.values["T_in"][i], "supply.P": prof.values["P_in"][i],
                                 "supply.flow": prof.values["flow"][i],
                                 "regulator.P_out": prof.values["P_out"][i]})
        assert res.heater_duty["preheat"][i] == pytest.approx(one.equipment["preheat"].duty[0],
                                                               rel=1e-9)
    heat_J = res.heater_duty["preheat"].sum() * 3600.0
    assert res.energy_MWh["preheat"] == pytest.approx(heat_J / 3.6e9, rel=1e-12)
    cv = letdown.Fluid(dict(fs.gas.composition)).quality().gross_volumetric
    assert res.fuel_Sm3 == pytest.approx(heat_J / 0.7 / cv, rel=1e-12)
    np.testing.assert_allclose(res.stream_T["network"], 278.15, atol=1e-5)   # the goal held


def test_process_pool_gives_the_serial_answer(tmp_path):
    fs = load(GATE)
    prof = read_profile(short_profile(tmp_path, 40))
    serial = year(fs, prof, executor=Serial())
    pool = ProcessPool(2)
    try:
        parallel = year(fs, prof, executor=pool)
    finally:
        pool.close()
    np.testing.assert_allclose(parallel.heater_duty["preheat"], serial.heater_duty["preheat"],
                               rtol=1e-12)


@pytest.mark.slow
def test_sweep_on_a_local_dask_cluster_matches_serial():
    distributed = pytest.importorskip("distributed")
    from letdown.study.executors import DaskCluster
    fs = load(GATE)
    variables = [parse_variable(fs, "supply.T=0degC:12degC:4"),
                 parse_variable(fs, "blend.hydrogen=0,0.1")]
    serial = sweep(fs, variables)
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  host="127.0.0.1", dashboard_address=None) as cluster:
        ex = DaskCluster(cluster.scheduler_address)
        try:
            remote = sweep(fs, variables, executor=ex)
        finally:
            ex.close()
    assert remote.columns == serial.columns
    for a, b in zip(remote.rows, serial.rows):
        assert a[-2:] == b[-2:]
        np.testing.assert_allclose(np.array(a[:-2], dtype=float), np.array(b[:-2], dtype=float),
                                   rtol=1e-12)


@pytest.mark.parametrize("header, row, message", [
    ("time,flow [Sm3/h],T_in [degC],P_in [barg],wind [m/s]", "t0,1000,5,60,3", "unknown profile column 'wind'"),
    ("time,flow,T_in [degC],P_in [barg]", "t0,1000,5,60", "needs a unit"),
    ("time,flow [Sm3/h],T_in [degC],P_in [barg]", "t0,lots,5,60", "lots"),
    ("time,flow [Sm3/h],P_in [barg]", "t0,1000,60", "T_in"),
])
def test_bad_profiles_are_located_input_errors(tmp_path, header, row, message):
    path = tmp_path / "p.csv"
    path.write_text(f"{header}\n{row}\n")
    with pytest.raises(InputError, match=message) as err:
        read_profile(str(path))
    assert err.value.file == str(path)


def test_command_line_year(tmp_path):
    import subprocess
    import sys
    out = tmp_path / "yr"
    proc = subprocess.run([sys.executable, "-m", "letdown.cli", "year", GATE, "--profile",
                           short_profile(tmp_path, 12), "--out", str(out)],
                          capture_output=True, text=True)
    assert proc.returncode == 0, proc.stderr
    assert "MWh of heat" in proc.stdout and "licensed staff" in proc.stdout
    assert (out / "hourly.csv").read_text().count("\n") == 13
    assert {"summary.json", "run.json"} <= {p.name for p in out.iterdir()}


def test_progress_bar_shows_and_changes_nothing(tmp_path, capsys):
    pytest.importorskip("tqdm")
    fs = load(GATE)
    variables = [parse_variable(fs, "supply.T=0degC:10degC:3")]
    quiet = sweep(fs, variables)
    shown = sweep(fs, variables, show_progress=True)
    assert "solving" in capsys.readouterr().err
    assert shown.rows == quiet.rows


def test_hours_below_the_hydrate_limit(tmp_path):
    fs = load(GATE)
    prof = read_profile(short_profile(tmp_path, 24))
    res = year(fs, prof)
    gas = letdown.Fluid(dict(fs.gas.composition))
    # independently: the hydrate temperature at each hour's set point (free water), plus the margin
    hyd = np.array([gas.hydrate_T(round(p, -2)) for p in prof.values["P_out"]])
    margin = fs.limits["hydrate_margin"]
    expected = int(np.sum(res.stream_T["network"] < hyd + margin))
    assert res.hours_below_hydrate == expected
    assert res.summary()["hours_below_hydrate_T_plus_margin"] == expected
