"""Pieces the benchmarks share: the median of repeated timings and the demo bench gas.

The benchmarks run as scripts (``python3 bench/NAME.py``), so this module is found beside them.
"""
from __future__ import annotations

import statistics
import time

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
