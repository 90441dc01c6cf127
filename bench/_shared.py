"""Pieces the benchmarks share: the median of repeated timings, the demo bench gas, and the
studies' set-up (the gate station, its profile, the machine line, the shared options).

The benchmarks run as scripts (``python3 bench/NAME.py``), so this module is found beside them.
"""
from __future__ import annotations

import argparse
import os
import statistics
import time
from pathlib import Path

#: Demo lean gas (invented): 10 components, dew point near -30 degC at 7 bar.
BENCH_GAS = {"methane": 0.885, "ethane": 0.05, "propane": 0.02, "isobutane": 0.004,
             "n-butane": 0.005, "isopentane": 0.002, "n-pentane": 0.001, "n-hexane": 0.001,
             "nitrogen": 0.012, "carbon-dioxide": 0.02}


def median_time(fn, repeats):
    """Median wall time of ``repeats`` calls of ``fn()`` [s]."""
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


# --- the studies' benches (hydrate.py, year.py, sample_dask.py) ---------------------------------

#: The repository root (the benches run from it; their paths below are relative to it).
ROOT = Path(__file__).resolve().parent.parent
#: The gate-station example and its hourly profile (fictional station, flowsheets/).
GATE = "flowsheets/gate-station.yaml"
PROFILE = "flowsheets/profiles/harrowfield-2026.csv"
#: The worked uncertainty study of docs/guides/studies.md (supply temperature, flow, gas quality).
STUDY_VARY = ("supply.T=normal(5degC,2K)", "supply.flow=uniform(60000Sm3/h,90000Sm3/h)",
              "supply.composition=dirichlet(500)")


def kernels_status() -> str:
    """Whether the compiled flash kernels run: ``on``, ``off`` or ``not built``."""
    try:
        from letdown.fluid.kernels import native
    except ImportError:
        return "not built"
    return "on" if native.AVAILABLE else "off"


def machine_line() -> str:
    """The first line every bench prints: CPUs, kernels, load average."""
    return (f"{os.cpu_count()} cpus, compiled flash kernels {kernels_status()}, "
            f"load average {os.getloadavg()[0]:.2f}")


def bench_parser(doc: str, repeats: int, sample: int, sample_help: str) -> argparse.ArgumentParser:
    """The options the study benches share: ``--repeats N`` and ``--sample K`` (cases solved one
    by one for the ratio)."""
    ap = argparse.ArgumentParser(description=doc.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=repeats)
    ap.add_argument("--sample", type=int, default=sample, help=sample_help)
    return ap


def child_env() -> dict:
    """The environment of a child process that must import this tree's letdown (the benches run
    from the repository root, but an editable install elsewhere would win without this)."""
    env = dict(os.environ)
    env["PYTHONPATH"] = os.pathsep.join([str(ROOT)] + [p for p in
                                                       env.get("PYTHONPATH", "").split(os.pathsep)
                                                       if p])
    return env
