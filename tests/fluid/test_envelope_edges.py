"""Phase envelopes at the edges (issue 11): components at exactly zero, nearly pure fluids, wet
gases, hydrogen blends, and a fixed-seed slice of random compositions.

Independent checks: every traced point against the equilibrium equations evaluated here from the
equation of state's fugacity coefficients (roots chosen here); the envelope with zero-fraction
components against the envelope of the same gas without them; the nearly pure fluid's first point
against the main component's saturation temperature (letdown's pure-fluid solver, a different
algorithm). Compositions are invented for the tests (lean, rich, hydrogen, CO2-rich, sour, wet,
nearly pure gases; fractions drawn from fixed ranges, seed below).
"""
import numpy as np
import pytest

import letdown
from letdown.errors import LetdownError
from letdown.fluid.flash import envelope as E
from letdown.fluid.flash import twophase as fl

FUGACITY_TOL = 1e-8
LEAN = {"methane": 0.92, "ethane": 0.045, "propane": 0.015, "n-butane": 0.005, "nitrogen": 0.01,
        "carbon-dioxide": 0.005}
RICH = {"methane": 0.72, "ethane": 0.12, "propane": 0.07, "n-butane": 0.03, "n-pentane": 0.01,
        "n-hexane": 0.004, "nitrogen": 0.016, "carbon-dioxide": 0.03}
EXTRA = ("hydrogen", "helium", "water", "hydrogen-sulfide", "n-heptane")


def _with_zeros(gas):
    names = list(gas) + list(EXTRA)
    fluid = letdown.Fluid({n: 1.0 / len(names) for n in names})
    z = np.array([gas.get(n, 0.0) for n in names])
    return fluid, z / z.sum()


def _residual(fluid, curve, zs):
    keep = ~np.all(curve.Ks == 1.0, axis=1)
    T, P, K = curve.T[keep], curve.P[keep], curve.Ks[keep]
    n = T.shape[0]
    x = zs / K
    eos = fluid.engine.eos
    ly, _ = eos.lnphi(T, P, np.broadcast_to(zs, (n, zs.size)).copy(), "stable")
    lx, _ = eos.lnphi(T, P, x / x.sum(axis=1, keepdims=True), "stable")
    present = zs > 0
    # present components: ln f(y) = ln f(x); absent ones: ln K = ln phi(x) - ln phi(y)
    r = np.log(K) + ly - lx
    return float(np.max(np.abs(r))), float(np.max(np.abs(x[:, present].sum(axis=1) - 1.0)))


@pytest.mark.parametrize("gas", [LEAN, RICH], ids=["lean", "rich"])
def test_components_at_zero_do_not_stop_the_envelope_or_its_lines(gas):
    """Failed before: the rich gas raised at its first point and the lean gas's line of vapour
    fraction 0.5 did not start (residual 8 at its first point)."""
    fluid, z = _with_zeros(gas)
    env = fluid.envelope(zs=z, betas=(0.5,))
    ref = letdown.Fluid(gas).envelope(betas=(0.5,))
    assert env.converged, {k: r.status for k, r in env.reports.items()}
    assert env.critical.T == pytest.approx(ref.critical.T, rel=1e-12)
    assert env.critical.P == pytest.approx(ref.critical.P, rel=1e-12)
    np.testing.assert_allclose(env.lines[0.5][0], ref.lines[0.5][0], rtol=1e-12)
    assert env.dew.Ks.shape == (len(env.dew), z.size)
    assert np.all(np.isfinite(env.dew.Ks)) and np.all(np.isfinite(env.bubble.Ks))
    for curve in (env.dew, env.bubble):
        res, closure = _residual(fluid, curve, z)
        assert res < FUGACITY_TOL and closure < FUGACITY_TOL


@pytest.mark.parametrize("comp", [{"ethane": 0.999688, "propane": 0.000312},
                                  {"carbon-dioxide": 0.99984, "ethane": 0.00016},
                                  {"methane": 0.9999, "nitrogen": 0.0001}],
                         ids=["ethane", "co2", "methane"])
def test_nearly_pure_fluid_starts_at_its_main_component_saturation_point(comp):
    """Failed before: 'no dew point found at 100000 Pa' (the dew and bubble points lie within
    the stability scan's grid step)."""
    fluid = letdown.Fluid(comp)
    env = fluid.envelope()
    assert len(env.dew) >= 10
    main = int(np.argmax(fluid.zs))
    T_sat = fl.pure_saturation_T(fluid.engine.eos, np.array([1e5]), np.array([main]))[0]
    assert env.dew.P[0] == pytest.approx(1e5, rel=1e-12)
    assert abs(env.dew.T[0] - T_sat) < 0.5            # measured: within 0.03 K
    res, closure = _residual(fluid, env.dew, fluid.zs)
    assert res < FUGACITY_TOL and closure < FUGACITY_TOL
    # every trace that did not end properly says where it stopped
    for r in env.reports.values():
        assert r.converged or r.status


def test_hydrogen_blend_says_its_bubble_branch_stays_open():
    """Failed before: the bubble branch ran to 1e9 Pa and the missing cricondenbar was reported as
    'no sign change of the tangent'."""
    fluid = letdown.Fluid({"methane": 0.7348, "ethane": 0.0176, "propane": 0.006,
                           "nitrogen": 0.0073, "hydrogen": 0.2343})
    env = fluid.envelope()
    assert env.critical is not None
    assert env.bubble.P.max() <= E.MAX_P * 1.2
    assert "still rises" in env.reports["envelope"].status
    assert env.cricondenbar is None and "still rises" in env.reports["cricondenbar"].status
    assert env.cricondentherm is not None and env.cricondentherm.T >= env.T.max() - 1e-9
    res, _ = _residual(fluid, env.dew, fluid.zs)
    assert res < FUGACITY_TOL


def test_wet_gas_traces_its_dew_line_and_says_why_there_is_no_critical_point():
    fluid = letdown.Fluid({"methane": 0.9418, "ethane": 0.0108, "propane": 0.0206,
                           "nitrogen": 0.0022, "water": 0.0246})
    env = fluid.envelope()
    assert len(env.dew) >= 10 and env.critical is None
    assert env.reports["critical"].status.startswith("none")
    res, _ = _residual(fluid, env.dew, fluid.zs)
    assert res < FUGACITY_TOL


NAMES = ("methane", "ethane", "propane", "isobutane", "n-butane", "isopentane", "n-pentane",
         "n-hexane", "n-heptane", "nitrogen", "carbon-dioxide", "hydrogen-sulfide", "hydrogen",
         "water", "helium")
SEED = 20261202


def random_compositions(n_per_family, seed=SEED):
    """Invented gases in seven families (fractions from fixed ranges); every composition holds
    zeros for the components of the table it does not use."""
    rng = np.random.default_rng(seed)
    out = []
    for fam in ("lean", "rich", "hydrogen", "co2", "sour", "wet", "nearly-pure"):
        for _ in range(n_per_family):
            z = dict.fromkeys(NAMES, 0.0)
            if fam == "lean":
                z.update(methane=rng.uniform(0.85, 0.97), ethane=rng.uniform(0.01, 0.06),
                         propane=rng.uniform(0.002, 0.02), nitrogen=rng.uniform(0, 0.03))
            elif fam == "rich":
                z.update(methane=rng.uniform(0.6, 0.8), ethane=rng.uniform(0.05, 0.15),
                         propane=rng.uniform(0.03, 0.08), **{"n-butane": rng.uniform(0.01, 0.03),
                                                             "n-hexane": rng.uniform(0.001, 0.005)})
            elif fam == "hydrogen":
                z.update(methane=rng.uniform(0.5, 0.9), hydrogen=rng.uniform(0.05, 0.3),
                         ethane=rng.uniform(0.01, 0.05))
            elif fam == "co2":
                z.update(**{"carbon-dioxide": rng.uniform(0.3, 0.9)},
                         methane=rng.uniform(0.05, 0.5), ethane=rng.uniform(0, 0.05))
            elif fam == "sour":
                z.update(methane=rng.uniform(0.6, 0.85),
                         **{"hydrogen-sulfide": rng.uniform(0.02, 0.2)},
                         ethane=rng.uniform(0.01, 0.05))
            elif fam == "wet":
                z.update(methane=rng.uniform(0.8, 0.95), ethane=rng.uniform(0.01, 0.06),
                         water=10 ** rng.uniform(-4, -1.5))
            else:
                main, other = rng.choice(["methane", "ethane", "propane", "carbon-dioxide"], 2,
                                         replace=False)
                z[main], z[other] = 1.0, 10 ** rng.uniform(-4, -1.5)
            v = np.array([z[n] for n in NAMES])
            out.append((fam, v / v.sum()))
    return out


def test_random_compositions_trace_or_say_why():
    """A fixed-seed slice (2 per family). Only letdown errors may leave the fluid layer; here no
    composition raises at all, every curve returned satisfies its equations, and every trace that
    did not end properly has a status saying where and why. (bench-style sweep of 231 compositions:
    see the branch report.)"""
    fluid = letdown.Fluid({n: 1.0 / len(NAMES) for n in NAMES})
    for fam, z in random_compositions(2):
        try:
            env = fluid.envelope(zs=z, betas=(0.5,))
        except LetdownError as exc:            # a letdown error would be allowed, but none occurs
            pytest.fail(f"{fam}: {exc}")
        assert len(env.dew) >= 3, fam
        for curve in (env.dew, env.bubble):
            if len(curve):
                res, closure = _residual(fluid, curve, z)
                assert res < FUGACITY_TOL and closure < FUGACITY_TOL, fam
        for name, r in env.reports.items():
            assert r.converged or r.status, (fam, name)


def test_line_of_a_co2_rich_gas_starts_where_it_has_a_two_phase_range():
    """Failed before: 'no two-phase range found at 100000 Pa' and no line at all. The line of
    vapour fraction 0.5 starts at the lowest pressure of a ladder up to the critical pressure where
    the gas splits; every point of it is checked against the PT flash (a different solver)."""
    fluid = letdown.Fluid({"carbon-dioxide": 0.6, "methane": 0.37, "ethane": 0.03})
    env = fluid.envelope(betas=(0.5,))
    rep = env.reports["line 0.5"]
    assert rep.converged and "started at" in rep.message
    T, P = env.lines[0.5]
    st = fluid.flash(T=T, P=P)
    keep = st.n_phases == 2
    assert keep.mean() > 0.9
    np.testing.assert_allclose(st.vapour_fraction[keep], 0.5, atol=1e-6)
