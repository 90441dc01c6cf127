"""A fixed-seed slice of ``bench/fuzz_envelope.py`` (the full run is a benchmark, not a test), and
the fault it found.

The checks are letdown's envelope tracer (Newton on the envelope equations, Michelsen 1980)
against letdown's dew-point solver (stability bisection and a boundary solve checked by flashes
either side, Michelsen 1982), two different algorithms: at the cricondentherm's pressure the upper
dew temperature is the cricondentherm, a dew point exists below the cricondenbar and none above.
Compositions are invented (fixed ranges, fixed seed).
"""
import importlib.util
from pathlib import Path

import numpy as np
import pytest

import letdown

ROOT = Path(__file__).resolve().parents[2]


@pytest.fixture(scope="module")
def fuzz():
    spec = importlib.util.spec_from_file_location("fuzz_envelope", ROOT / "bench" /
                                                  "fuzz_envelope.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def test_fixed_seed_slice_has_no_findings(fuzz):
    """One composition per family on Peng-Robinson (8 envelopes): nothing but letdown errors
    raised, every open envelope says why, extrema and dew solver agree."""
    tally, findings = fuzz.run(per_family=1, seed=fuzz.SEED + 1, models=("peng-robinson",),
                               verbose=False)
    bad = [f[4:] for f in findings if f[4].startswith(fuzz.BAD)]
    assert bad == []
    assert sum(v for k, v in tally.items() if k in ("ok", "not converged")) + sum(
        v for k, v in tally.items() if isinstance(k, str) and k.startswith("letdown")) == 8


# Invented sour gas (from the fuzz run, seed 20261202): methane with 5.6 % CO2 and 5.5 % H2S.
SOUR = {"methane": 0.8689, "ethane": 0.01489, "propane": 0.00503, "carbon-dioxide": 0.05611,
        "hydrogen-sulfide": 0.05503}


@pytest.mark.parametrize("model", ["peng-robinson", "soave-redlich-kwong"])
def test_no_dew_point_above_the_cricondenbar_of_a_sour_gas(model):
    """Failed before: dew_temperature at 1.01 x the cricondenbar returned 145.9 K (PR) and
    149.9 K (SRK), the model's liquid-liquid split of a methane-rich liquid (about 514 kg/m3) and
    an H2S/CO2-rich one (about 1126 kg/m3) far below the envelope, and well below the triple
    points of H2S (187.7 K) and CO2 (216.6 K; both common practice)."""
    gas = letdown.Fluid(SOUR, model=model, normalise=True)
    env = gas.envelope()
    assert env.converged
    cb = env.cricondenbar
    above = gas.dew_temperature(np.array([1.01, 1.2, 1.5]) * cb.P)
    assert np.all(np.isnan(above))
    # below the cricondenbar the upper dew point is on the traced envelope
    below = gas.dew_temperature(0.99 * cb.P)
    assert cb.T - 5.0 < below < env.cricondentherm.T + 1e-6
    # the split itself is still there for the flash (a state, not a dew point)
    st = gas.flash(T=140.0, P=1.2 * cb.P)
    assert st.n_phases == 2 and min(p.density for p in st.phases) > 400.0


def test_dew_pressure_above_the_cricondentherm_is_nan():
    gas = letdown.Fluid(SOUR, normalise=True)
    env = gas.envelope()
    assert np.isnan(gas.dew_pressure(env.cricondentherm.T + 0.5))
    assert np.isfinite(gas.dew_pressure(env.cricondentherm.T - 2.0))


@pytest.mark.parametrize("comp", [
    # invented wet gas (fuzz run, seed 20261202): the dew trace is the water dew line, rising to
    # 326 K at the pressure limit; the hydrocarbon branch turns at 195 K, 49 bar
    {"methane": 0.9661, "ethane": 0.01255, "propane": 0.002986, "nitrogen": 0.01765,
     "water": 0.0007059},
    # nearly pure CO2 with a trace of propane: the dew branch runs to the pressure limit
    {"propane": 0.0001287, "carbon-dioxide": 0.9999},
], ids=["wet", "nearly-pure-co2"])
def test_a_local_turning_point_is_not_reported_as_the_cricondentherm_or_cricondenbar(comp):
    """Failed before: the cricondentherm was reported at 194.6 K while the same envelope's dew
    branch reached 325.5 K (and the cricondenbar at 49.6 bar below traced points at 1,091 bar);
    the extrema must be the largest values of the boundary or None with the reason."""
    env = letdown.Fluid(comp, normalise=True).envelope()
    for name, value, top in (("cricondentherm", env.cricondentherm, env.T.max()),
                             ("cricondenbar", env.cricondenbar, env.P.max())):
        if value is None:
            assert env.reports[name].status          # says why there is none
        else:
            got = value.T if name == "cricondentherm" else value.P
            assert got >= top * (1 - 1e-9), name
    assert env.cricondenbar is None and "not the largest" in env.reports["cricondenbar"].status


def test_nearly_pure_propane_whose_first_newton_fails_starts_from_propane():
    """Failed before (fuzz run, seed 20261202, SRK, given over a table with other components at
    zero): 'phase envelope: the first point at 100000 Pa did not converge (residual 0.0177)'.
    Propane with 166 ppm nitrogen (invented) now starts from
    propane's saturation point (letdown's pure-fluid solver, a different algorithm) and its traced
    points satisfy the equilibrium equations (evaluated in tests/fluid/test_envelope_edges.py)."""
    from letdown.fluid.flash import twophase as fl
    from tests.fluid.test_envelope_edges import FUGACITY_TOL, _residual
    names = ("methane", "propane", "nitrogen", "water", "hydrogen")   # the others at zero
    gas = letdown.Fluid(dict.fromkeys(names, 0.2), model="soave-redlich-kwong")
    z = np.array([0.0, 0.9998344178905765, 0.00016558210942365997, 0.0, 0.0])
    env = gas.envelope(zs=z)
    T_sat = fl.pure_saturation_T(gas.engine.eos, np.array([1e5]), np.array([1]))[0]
    assert env.dew.P[0] == pytest.approx(1e5, rel=1e-12)
    assert abs(env.dew.T[0] - T_sat) < 0.5                 # measured: 0.004 K
    res, closure = _residual(gas, env.dew, z)
    assert res < FUGACITY_TOL and closure < FUGACITY_TOL
    for r in env.reports.values():
        assert r.converged or r.status


@pytest.mark.parametrize("comp", [{"methane": 0.9997, "propane": 0.0003155},
                                  {"propane": 0.9991, "nitrogen": 0.0009029}],
                         ids=["methane", "propane"])
def test_a_dew_point_too_close_to_the_critical_point_is_refused_not_nan(comp):
    """Failed before (fuzz run, seed 7): at the cricondentherm's pressure of these nearly pure
    invented gases dew_temperature returned NaN ("no liquid on this isobar") although the traced
    envelope reaches that pressure; the two-phase range there (next to the critical point) is too
    narrow for the stability test, so the solve now says so rather than answer NaN."""
    from letdown.errors import ConvergenceError
    gas = letdown.Fluid(comp, normalise=True)
    env = gas.envelope()
    assert env.converged
    with pytest.raises(ConvergenceError, match="too narrow"):
        gas.dew_temperature(env.cricondentherm.P)
    # far from the critical point the dew point is answered and agrees with the trace
    P = 0.3 * env.cricondenbar.P
    assert np.isfinite(gas.dew_temperature(P))
