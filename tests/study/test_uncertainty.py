"""Uncertainty studies (letdown sweep --sample): sampling, statistics, sensitivity, executors.

The analytic references are textbook moments: normal, uniform and triangular means and variances
(Johnson, Kotz and Balakrishnan 1995, *Continuous Univariate Distributions* vol. 2, ch. 26 for the
uniform; Evans, Hastings and Peacock 2000, *Statistical Distributions*, 3rd ed., ch. 40 for the
triangular: mean (a + m + b)/3, variance (a^2 + m^2 + b^2 - am - ab - mb)/18), the Dirichlet's
mean z and variance z(1 - z)/(c + 1) (Kotz, Balakrishnan and Johnson 2000, *Continuous Multivariate
Distributions* vol. 1, ch. 49), the variance of a sum of independent variables, and the sampling
error of a mean (sigma / sqrt(n)) and of a sample variance (sqrt((mu4 - sigma^4) / n)).
"""
import json
import subprocess
import sys

import numpy as np
import pytest

from letdown.errors import InputError
from letdown.sheet.loader import read_spec, parse_spec
from letdown.study.executors import ProcessPool, Serial
from letdown.study.uncertainty import (first_order_index, parse_distribution, uncertainty,
                                       unit_samples)

GATE = "flowsheets/gate-station.yaml"

#: Two feeds joined by a mixer: the mixed flow is exactly the sum of the feed flows, an output
#: linear in the inputs (our test sheet; the gas is the gate-station demo gas).
MIXER = """\
title: linear test sheet
gas:
  model: peng-robinson
  composition: {methane: 0.9135, ethane: 0.048, propane: 0.012, nitrogen: 0.015, carbon-dioxide: 0.0115}
feeds:
  a: {T: 20 degC, P: 40 bar, flow: 100 mol/s}
  b: {T: 30 degC, P: 40 bar, flow: 50 mol/s}
equipment:
  join: {kind: mixer, from: [a, b], to: mixed}
"""


@pytest.fixture(scope="module")
def mixer():
    return parse_spec(MIXER, source="mixer.yaml")


@pytest.fixture(scope="module")
def gate():
    return read_spec(GATE)


def _within_sampling_error(y, mean, var, k=4.0):
    """The sample mean and variance of ``y`` against the analytic ``mean`` and ``var``, each within
    ``k`` standard errors of plain random sampling (LHS and Sobol only make the errors smaller)."""
    n = y.size
    se_mean = np.sqrt(var / n)
    mu4 = np.mean((y - y.mean()) ** 4)
    se_var = np.sqrt(max(mu4 - var ** 2, 0.0) / n)
    assert abs(y.mean() - mean) < k * se_mean, (y.mean(), mean, se_mean)
    assert abs(y.var(ddof=1) - var) < k * se_var, (y.var(ddof=1), var, se_var)


@pytest.mark.parametrize("sampler, n", [("random", 2000), ("lhs", 2000), ("sobol", 2048)])
def test_linear_sheet_mean_and_variance_match_the_analytic_ones(mixer, sampler, n):
    dists = [parse_distribution(mixer, "a.flow=normal(100mol/s,10mol/s)"),
             parse_distribution(mixer, "b.flow=triangular(20mol/s,50mol/s,60mol/s)"),
             parse_distribution(mixer, "a.T=uniform(10degC,30degC)")]
    res = uncertainty(mixer, dists, n, sampler=sampler, seed=11, outputs=["mixed.flow"])
    assert res.failed == 0
    y = res.table.column("mixed.flow [mol/s]")
    var_a, var_b = 10.0 ** 2, (20 ** 2 + 50 ** 2 + 60 ** 2 - 20 * 50 - 20 * 60 - 50 * 60) / 18.0
    _within_sampling_error(y, 100.0 + (20 + 50 + 60) / 3.0, var_a + var_b)
    # the statistics the study reports are those of the table
    st = next(s for s in res.stats if s.column == "mixed.flow [mol/s]")
    assert st.mean == pytest.approx(y.mean(), rel=1e-12)
    assert st.std == pytest.approx(y.std(ddof=1), rel=1e-12)
    assert st.p10 < st.p50 < st.p90
    # each input's own sampled moments too (its column)
    _within_sampling_error(res.table.column("a.T [K]"), 293.15, 20.0 ** 2 / 12.0)
    # first-order indices of a linear model: var_i / var (Saltelli et al. 2008, The Primer,
    # 1.2.5); the temperature does not move the flow. Tolerance: 4 standard errors of a squared
    # correlation, 2 rho (1 - rho^2) / sqrt(n) (Fisher's large-sample variance of r).
    s = dict(zip(res.inputs, res.sensitivity["mixed.flow [mol/s]"]))
    for name, s_true in (("a.flow", var_a / (var_a + var_b)), ("b.flow", var_b / (var_a + var_b))):
        rho = np.sqrt(s_true)
        assert abs(s[name] - s_true) < 4 * 2 * rho * (1 - s_true) / np.sqrt(n), (name, s[name])
    assert s["a.T"] < 16.0 / n           # R^2 of an unrelated input: about 1/n


def test_dirichlet_samples_have_the_stated_mean_and_variance(gate):
    d = parse_distribution(gate, "supply.composition=dirichlet(500)")
    z = np.array(d.mean_composition)
    for sampler, n in (("random", 4000), ("lhs", 4000), ("sobol", 4096)):
        x = d.values(unit_samples(d.dims, n, sampler, seed=3))
        np.testing.assert_allclose(x.sum(axis=1), 1.0, rtol=0, atol=1e-14)
        assert np.all(x > 0)
        for k in range(z.size):
            _within_sampling_error(x[:, k], z[k], z[k] * (1 - z[k]) / 501.0)


def test_dirichlet_through_the_sheet_keeps_zero_components_and_the_mean(gate):
    dists = [parse_distribution(gate, "supply.composition=dirichlet(2000)")]
    res = uncertainty(gate, dists, 256, sampler="lhs", seed=5, outputs=["network.gross_cv"])
    assert res.failed == 0
    x = res.table.column("supply.composition.methane [-]")
    _within_sampling_error(x, 0.9135, 0.9135 * 0.0865 / 2001.0)
    assert res.inputs == ("supply.composition",)


def test_first_order_index_is_the_linear_share_of_variance():
    rng = np.random.default_rng(0)
    a, b = rng.normal(size=20000), rng.uniform(-1, 1, size=20000)
    y = 2.0 * a + 3.0 * b                 # Var = 4 + 9/3 = 7
    assert first_order_index(a[:, None], y) == pytest.approx(4 / 7, abs=0.02)
    assert first_order_index(b[:, None], y) == pytest.approx(3 / 7, abs=0.02)
    assert np.isnan(first_order_index(a[:, None], np.ones_like(a)))


def _stats_rows(res):
    return [(s.column, s.n, s.mean, s.std, s.p10, s.p50, s.p90) for s in res.stats]


def _gate_study(gate, executor=None, seed=21):
    dists = [parse_distribution(gate, "supply.T=normal(5degC,2K)"),
             parse_distribution(gate, "supply.flow=uniform(60000Sm3/h,90000Sm3/h)"),
             parse_distribution(gate, "supply.composition=dirichlet(500)")]
    return uncertainty(gate, dists, 64, sampler="sobol", seed=seed, executor=executor)


def _same(a, b):
    assert a.table.columns == b.table.columns
    ra, rb = _stats_rows(a), _stats_rows(b)
    for x, y in zip(ra, rb):
        assert x[:2] == y[:2]
        np.testing.assert_allclose(x[2:], y[2:], rtol=1e-9, atol=1e-9)
    assert a.hydrate == b.hydrate
    for k in a.sensitivity:
        np.testing.assert_allclose(a.sensitivity[k], b.sensitivity[k], rtol=1e-6, atol=1e-9)


def test_same_seed_same_table_serially_and_on_two_workers(gate):
    serial = _gate_study(gate)
    again = _gate_study(gate, Serial())
    assert serial.table.rows == again.table.rows            # bit for bit in one process
    pool = ProcessPool(2)
    try:
        parallel = _gate_study(gate, pool)
    finally:
        pool.close()
    _same(serial, parallel)
    other = _gate_study(gate, seed=22)
    assert other.table.column("supply.T [K]")[0] != serial.table.column("supply.T [K]")[0]


def test_same_seed_same_table_on_a_local_dask_cluster(gate):
    distributed = pytest.importorskip("distributed")
    from letdown.study.executors import DaskCluster
    serial = _gate_study(gate)
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  host="127.0.0.1", dashboard_address=None) as cluster:
        ex = DaskCluster(cluster.scheduler_address)
        try:
            remote = _gate_study(gate, ex)
        finally:
            ex.close()
    _same(serial, remote)


@pytest.mark.parametrize("spec, message", [
    ("supply.T=gauss(5degC,2K)", "unknown distribution 'gauss'"),
    ("supply.T=normal(5degC,0K)", "sigma must be above zero"),
    ("supply.T=normal(5degC,-2K)", "sigma must be above zero"),
    ("supply.T=normal(5degC)", "takes 2 argument"),
    ("supply.T=uniform(10degC,5degC)", "a must be below the upper limit b"),
    ("supply.T=uniform(5degC,5degC)", "a must be below the upper limit b"),
    ("supply.T=triangular(0degC,20degC,10degC)", "mode m must lie in"),
    ("supply.T=triangular(10degC,5degC,0degC)", "a must be below"),
    ("supply.flow=uniform(-100Sm3/h,90000Sm3/h)", "must be positive"),
    ("supply.P=uniform(60barg,64degC)", "not a unit of pressure"),
    ("blend.hydrogen=uniform(0,1.5)", "blend fractions"),
    ("supply.composition=dirichlet(0)", "concentration must be above zero"),
    ("supply.composition=dirichlet(-5)", "concentration must be above zero"),
    ("supply.composition=dirichlet(lots)", "not a number"),
    ("supply.T=dirichlet(500)", "dirichlet applies only to a composition"),
    ("supply.composition=normal(1,2)", "dirichlet"),
    ("nowhere.T=normal(5degC,2K)", "cannot sweep 'nowhere.T'"),
    ("supply.T=normal(5degC,2K", "PATH=DIST"),
    ("regulator.P_out=uniform(-5barg,17barg)", "not above vacuum"),
])
def test_bad_distributions_are_located_input_errors(gate, spec, message):
    with pytest.raises(InputError, match=message) as err:
        parse_distribution(gate, spec)
    assert err.value.field == "--vary"


@pytest.mark.parametrize("spec", ["supply.P=normal(2bar,1bar)", "supply.T=normal(5degC,500K)"])
def test_a_normal_that_draws_refused_values_is_refused(gate, spec):
    d = parse_distribution(gate, spec)
    with pytest.raises(InputError, match="draws values the path refuses") as err:
        uncertainty(gate, [d], 256, seed=1)
    assert err.value.field == "--vary"


@pytest.mark.parametrize("c", [1e-3, 0.05, 1e9])
def test_dirichlet_of_any_concentration_gives_compositions(gate, c):
    """A tiny concentration puts nearly all of each sample in one component (the Gamma inverse
    underflows there and is taken from its lower tail); a huge one gives the file's composition."""
    d = parse_distribution(gate, f"supply.composition=dirichlet({c})")
    x = d.values(unit_samples(d.dims, 512, "lhs", seed=2))
    assert np.all(np.isfinite(x)) and np.all(x >= 0)
    np.testing.assert_allclose(x.sum(axis=1), 1.0, atol=1e-14)
    if c > 1e6:
        np.testing.assert_allclose(x.mean(axis=0), d.mean_composition, rtol=1e-3)
    else:
        # the share of samples where a component leads tends to its mean fraction as c -> 0
        lead = np.bincount(np.argmax(x, axis=1), minlength=x.shape[1]) / x.shape[0]
        assert lead[0] == pytest.approx(d.mean_composition[0], abs=0.1)


@pytest.mark.parametrize("n, sampler, seed, field", [
    (1000, "sobol", 0, "--sample"), (1, "lhs", 0, "--sample"), (100_001, "lhs", 0, "--sample"),
    (100, "halton", 0, "--sampler"), (100, "lhs", -1, "--seed"), (100, "lhs", 1.5, "--seed")])
def test_bad_sample_counts_samplers_and_seeds_are_refused(n, sampler, seed, field):
    with pytest.raises(InputError) as err:
        unit_samples(2, n, sampler, seed)
    assert err.value.field == field


def test_command_line_writes_the_seed_and_the_tables(tmp_path):
    out = tmp_path / "mc"
    cmd = [sys.executable, "-m", "letdown.cli", "sweep", GATE, "--sample", "32", "--seed", "4",
           "--vary", "supply.T=normal(5degC,2K)", "--vary", "supply.composition=dirichlet(500)",
           "--outputs", "preheat.duty,network.hydrate_margin", "--units", "display",
           "--out", str(out)]
    proc = subprocess.run(cmd, capture_output=True, text=True, timeout=120)
    assert proc.returncode == 0, proc.stderr
    run = json.loads((out / "run.json").read_text())
    assert run["seed"] == 4 and run["sampler"] == "lhs" and run["sample"] == 32
    assert run["vary"] == ["supply.T=normal(5degC,2K)", "supply.composition=dirichlet(500)"]
    assert "preheat.duty" in proc.stdout and "P(margin < 0)" in proc.stdout
    assert "kW" in (out / "summary.csv").read_text()
    samples = (out / "samples.csv").read_text().splitlines()
    assert len(samples) == 33
    # a distribution without --sample, and a bad one, are located refusals (exit 2)
    bad = subprocess.run([sys.executable, "-m", "letdown.cli", "sweep", GATE, "--vary",
                          "supply.T=normal(5degC,2K)"], capture_output=True, text=True, timeout=60)
    assert bad.returncode == 2 and "--sample" in bad.stderr
    bad = subprocess.run([sys.executable, "-m", "letdown.cli", "sweep", GATE, "--sample", "8",
                          "--vary", "supply.T=normal(5degC,0K)"], capture_output=True, text=True,
                         timeout=60)
    assert bad.returncode == 2 and "--vary" in bad.stderr and "sigma" in bad.stderr


def test_a_sampled_goal_target_is_held_in_every_sample_in_one_batch(gate):
    """The goal's target per sample goes to the batch solver: the network temperature meets each
    sampled target (the file's goal tolerance), and the inputs keep the order given."""
    dists = [parse_distribution(gate, "goal1.at=uniform(3degC,8degC)"),
             parse_distribution(gate, "supply.T=normal(5degC,2K)")]
    res = uncertainty(gate, dists, 128, seed=9, outputs=["network.T", "preheat.duty"])
    assert res.failed == 0
    assert res.table.columns[:2] == ("goal1.at [K]", "supply.T [K]")
    target = res.table.column("goal1.at [K]")
    assert target.min() >= 276.15 and target.max() <= 281.15
    np.testing.assert_allclose(res.table.column("network.T [K]"), target, rtol=1e-10,
                               atol=gate.solver.goal_tolerance)
    s = dict(zip(res.inputs, res.sensitivity["network.T [K]"]))
    assert s["goal1.at"] > 0.99
