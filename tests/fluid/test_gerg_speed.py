"""The GERG-2008 stability test made cheap without making it wrong (issue 11).

* Where the test is skipped (above the Peng-Robinson envelope plus a margin, letdown/fluid/gerg.py
  SKIP_MARGIN_K), no GERG-2008 split may exist. Reference: CoolProp's multi-fluid Helmholtz model
  with the GERG-2008 mixture parameters (Kunz & Wagner, J. Chem. Eng. Data 57 (2012) 3032;
  CoolProp, Bell et al., Ind. Eng. Chem. Res. 53 (2014) 2498), its own phase envelope. Every
  point of that envelope must lie at least half the margin below the skip temperature at its
  pressure (the margin is claimed to be more than twice the largest difference measured).
* The skip changes no answer: the engine with and without it gives the same verdicts on random
  states of the fuzz families near and away from the envelope.
* The chemical potentials of the test (now by differences at constant T and V) obey the
  Gibbs-Duhem sum: sum x_i mu_i = g, the binding's own molar Gibbs energy.
The gases are invented test gases (tests/study/test_dew_bias.py and bench/_shared.py).
"""
from __future__ import annotations

import numpy as np
import pytest

import letdown
from letdown.fluid.eos import gerg

pytest.importorskip("pyaga8")

BENCH = {"methane": 0.885, "ethane": 0.05, "propane": 0.02, "isobutane": 0.004,
         "n-butane": 0.005, "isopentane": 0.002, "n-pentane": 0.001, "n-hexane": 0.001,
         "nitrogen": 0.012, "carbon-dioxide": 0.02}
LEAN = {"methane": 0.9135, "ethane": 0.048, "propane": 0.012, "nitrogen": 0.015,
        "carbon-dioxide": 0.0115}
RICH = {"methane": 0.82, "ethane": 0.08, "propane": 0.05, "n-butane": 0.025, "n-pentane": 0.01,
        "nitrogen": 0.01, "carbon-dioxide": 0.005}
HEXANE = {"methane": 0.90, "ethane": 0.05, "propane": 0.02, "n-butane": 0.006, "isobutane": 0.004,
          "n-pentane": 0.002, "n-hexane": 0.001, "nitrogen": 0.01, "carbon-dioxide": 0.007}
CO2RICH = {"methane": 0.80, "carbon-dioxide": 0.15, "ethane": 0.03, "propane": 0.02}
N2RICH = {"methane": 0.80, "nitrogen": 0.15, "ethane": 0.03, "propane": 0.015, "n-butane": 0.005}
GASES = {"bench": BENCH, "lean": LEAN, "rich": RICH, "hexane": HEXANE, "co2-rich": CO2RICH,
         "n2-rich": N2RICH}
CP_NAMES = {"methane": "Methane", "ethane": "Ethane", "propane": "Propane", "n-butane": "n-Butane",
            "isobutane": "IsoButane", "n-pentane": "n-Pentane", "isopentane": "Isopentane",
            "n-hexane": "n-Hexane", "nitrogen": "Nitrogen", "carbon-dioxide": "CarbonDioxide"}


def _summary(fluid):
    env = fluid.engine._envelope_bound(fluid.zs)
    assert env is not None
    return env


@pytest.mark.slow
@pytest.mark.parametrize("name", list(GASES))
def test_no_gerg_envelope_point_lies_where_the_test_is_skipped(name):
    CP = pytest.importorskip("CoolProp.CoolProp")
    zs = GASES[name]
    gas = letdown.Fluid(zs, model="gerg-2008")
    state = CP.AbstractState("HEOS", "&".join(CP_NAMES[c] for c in gas.engine.comps.names))
    state.set_mole_fractions(list(gas.zs))
    state.build_phase_envelope("")
    data = state.get_phase_envelope_data()
    Tg, Pg = np.array(data.T), np.array(data.p)
    bound = gas.engine._bound(_summary(gas), Pg)
    skipped = np.isfinite(bound)
    assert skipped.sum() > 20                 # the check covers most of the envelope
    # the skip temperature at each GERG-2008 envelope point's pressure lies above it by at least
    # half the margin (measured: at least 5.8 K on these six gases)
    assert np.all(bound[skipped] - Tg[skipped] >= 0.5 * gerg.SKIP_MARGIN_K)


@pytest.mark.parametrize("name", ["bench", "rich", "co2-rich"])
def test_skipping_changes_no_verdict(name, monkeypatch):
    gas = letdown.Fluid(GASES[name], model="gerg-2008")
    env = _summary(gas)
    ct = env[0]
    rng = np.random.default_rng(7)
    n = 120
    # half the states in the band the skip decides (the cricondentherm to 25 K above it), half
    # anywhere at let-down conditions
    T = np.concatenate([rng.uniform(ct - 5.0, ct + 25.0, n // 2),
                        rng.uniform(220.0, 330.0, n // 2)])
    P = rng.uniform(5e5, 120e5, n)
    zs = np.tile(gas.zs, (n, 1))
    eng = gas.engine
    skip_T = eng._skip_T(T, P, zs)
    assert np.isfinite(skip_T).all()          # the envelope was traced (n >= SKIP_AFTER)
    fast = eng._unstable(T, P, zs)
    monkeypatch.setattr(gerg.GergEngine, "_skip_T",
                        lambda self, T, P, zs: np.full(T.shape[0], np.inf))
    full = eng._unstable(T, P, zs)
    assert np.array_equal(fast, full)
    assert np.sum(T >= skip_T) >= n // 4        # the skip did fire on many states


def test_water_and_few_states_never_skip():
    wet = letdown.Fluid({"methane": 0.95, "ethane": 0.04, "water": 0.01}, model="gerg-2008")
    T = np.full(20, 330.0)
    P = np.full(20, 50e5)
    assert np.all(np.isinf(wet.engine._skip_T(T, P, np.tile(wet.zs, (20, 1)))))
    dry = letdown.Fluid(LEAN, model="gerg-2008")
    few = gerg.SKIP_AFTER - 1
    assert np.all(np.isinf(dry.engine._skip_T(T[:few], P[:few], np.tile(dry.zs, (few, 1)))))


@pytest.mark.parametrize("T, P, x", [
    (260.0, 60e5, "bench"), (300.0, 20e5, "rich"), (220.0, 80e5, "co2-rich"),
    (150.0, 30e5, "lean"),
])
def test_chemical_potentials_sum_to_the_gibbs_energy(T, P, x):
    gas = letdown.Fluid(GASES[x], model="gerg-2008")
    eng = gas.engine
    z = gas.zs
    mu = (eng._mu_rest(z, T, P) + np.log(z)) * gerg.R_GERG * T
    eng._set(z)
    r = eng._stable(T, P)
    assert float(z @ mu) == pytest.approx(r.g, abs=1e-6 * gerg.R_GERG * T)
