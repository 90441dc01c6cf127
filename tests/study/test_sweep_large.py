"""Large sweeps: chunks of bounded size, and a goal search that reuses its feeds' flashes.

Both are changes of how the work is done, not of the numbers: the checks compare against the
plain way (one batch; every pass flashing its feeds anew), bit for bit where the arithmetic is the
same case by case. The speed itself is measured in bench/sweep_large.py, never here.
"""
import numpy as np
import pytest

from letdown.sheet import solve as solve_module
from letdown.sheet.loader import read_spec
from letdown.sheet.solve import solve_cases
from letdown.study import sweep as sweep_module
from letdown.study.executors import Serial
from letdown.study.sweep import Variable, sweep

GATE = "flowsheets/gate-station.yaml"


def _without_memo(monkeypatch):
    original = solve_module._Engine._feed_streams

    def fresh(self, *args):
        self._feed_memo = None
        out = original(self, *args)
        self._feed_memo = None
        return out
    monkeypatch.setattr(solve_module._Engine, "_feed_streams", fresh)


def _arrays(res):
    out = {}
    for name, st in res.streams.items():
        for attr in ("T", "P", "flow", "h", "vapour_fraction"):
            out[f"{name}.{attr}"] = np.asarray(getattr(st, attr), float)
    for name, eq in res.equipment.items():
        if eq.duty is not None:
            out[f"{name}.duty"] = np.asarray(eq.duty, float)
    for name, fz in (res.freezing or {}).items():
        out[f"{name}.hydrate_T"] = np.asarray(fz.hydrate_T, float)
    return out


@pytest.mark.parametrize("path", [GATE, "flowsheets/two-stage-letdown.yaml",
                                  "flowsheets/district-station.yaml"])
def test_a_goal_search_reusing_its_feeds_gives_the_same_numbers(monkeypatch, path):
    """Shipped examples with goals over random feed temperatures and flows, one case refused:
    the same numbers and failures either way."""
    fs = read_spec(path)
    feed = next(iter(fs.feeds))
    rng = np.random.default_rng(4)
    n = 200
    f0 = fs.feeds[feed]
    cases = {f"{feed}.T": f0.T + 10.0 * (rng.random(n) - 0.5),
             f"{feed}.flow": f0.flow * (0.8 + 0.4 * rng.random(n))}
    cases[f"{feed}.T"][7] = -5.0                            # a refused case stays refused
    reused = solve_cases(fs, cases, strict=False, margins=True)
    _without_memo(monkeypatch)
    fresh = solve_cases(fs, cases, strict=False, margins=True)
    np.testing.assert_array_equal(reused.converged, fresh.converged)
    a, b = _arrays(reused), _arrays(fresh)
    assert a.keys() == b.keys()
    for k in a:
        np.testing.assert_array_equal(a[k], b[k], err_msg=k)
    assert not reused.converged[7] and reused.converged.sum() >= n - 20


def test_a_large_sweep_runs_in_bounded_chunks_with_the_numbers_of_one_batch(monkeypatch):
    fs = read_spec(GATE)
    monkeypatch.setattr(sweep_module, "MAX_CHUNK", 250)
    sizes = []

    class Recording(Serial):
        def map(self, fn, items, show_progress=False):
            items = list(items)
            sizes.extend(t[-1] for t in items)
            return super().map(fn, items, show_progress)
    n = 1100
    T = np.linspace(273.15, 288.15, n)
    table = sweep(fs, [Variable("supply.T", "temperature", T)], mode="zip",
                  outputs=["preheat.duty", "network.hydrate_margin"], executor=Recording())
    assert max(sizes) <= 250 and sum(sizes) == n
    one = solve_cases(fs, {"supply.T": T}, strict=False, margins=True)
    np.testing.assert_allclose(table.column("preheat.duty [W]"), one.equipment["preheat"].duty,
                               rtol=1e-12)
    np.testing.assert_allclose(table.column("network.hydrate_margin [K]"),
                               np.asarray(one.streams["network"].T)
                               - one.freezing["network"].hydrate_T, rtol=1e-12, atol=1e-12)
