"""Year benchmark: the gate-station example over 8,760 hourly cases with the preheat goal held.

Run:  python bench/year.py [--repeats N] [--sample K]

Prints the median wall time of the batch year (every hour in one vectorised pass, goals held, the
freezing margins of every stream in every hour), the same on a local pool of 2 processes, and
the per-hour cost of solving hours one by one through the same solver as single cases, measured on a
sample of K hours in the same run (solving all 8,760 one by one takes far too long to repeat), with
the ratio. Targets (issue "Studies at scale"): the year in under 2 s on the 2-core machine, and at
least 20x faster than one by one; issue 14: with margins on every stream in at most 1 s on 2 cores.
"""
from __future__ import annotations

import argparse
import os
import statistics
import time

import numpy as np

from letdown.sheet.loader import read_spec
from letdown.sheet.solve import solve_cases
from letdown.study.year import read_profile, year

GATE = "flowsheets/gate-station.yaml"
PROFILE = "flowsheets/profiles/harrowfield-2026.csv"


def _timed(fn):
    t0 = time.perf_counter()
    fn()
    return time.perf_counter() - t0


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=3)
    ap.add_argument("--sample", type=int, default=40, help="hours solved one by one")
    args = ap.parse_args(argv)
    try:
        from letdown.fluid.kernels import native
        kernels = "on" if native.AVAILABLE else "off"
    except ImportError:
        kernels = "not built"
    print(f"{os.cpu_count()} cpus, compiled flash kernels {kernels}")
    fs = read_spec(GATE)
    prof = read_profile(PROFILE)
    times = []
    for _ in range(args.repeats):
        t0 = time.perf_counter()
        res = year(fs, prof)
        times.append(time.perf_counter() - t0)
    t_year = statistics.median(times)
    print(f"year, {prof.n} hours in batches, margins on every stream: median {t_year:.2f} s "
          f"({int((~res.converged).sum())} failed hours); target < 2 s (issue 14: 1 s)")
    hh = res.hydrate_hours()
    print("  hours below hydrate T (free water assumed): "
          + ", ".join(f"{n} {h['below_hydrate_T_free_water_assumed']}" for n, h in hh.items()))
    from letdown.study.executors import ProcessPool
    pool = ProcessPool(2)
    try:
        year(fs, prof, executor=pool)                 # start the workers
        t_pool = statistics.median([_timed(lambda: year(fs, prof, executor=pool))
                                    for _ in range(args.repeats)])
    finally:
        pool.close()
    print(f"year on a pool of 2 processes: median {t_pool:.2f} s")

    rng = np.random.default_rng(1)
    hours = rng.choice(prof.n, size=args.sample, replace=False)
    v = prof.values
    t0 = time.perf_counter()
    for i in hours:
        solve_cases(fs, {"supply.T": v["T_in"][i], "supply.P": v["P_in"][i],
                         "supply.flow": v["flow"][i], "regulator.P_out": v["P_out"][i]})
    per_hour = (time.perf_counter() - t0) / args.sample
    one_by_one = per_hour * prof.n
    print(f"one by one: {per_hour * 1e3:.1f} ms per hour on {args.sample} sampled hours, "
          f"{one_by_one:.0f} s for the year (extrapolated)")
    print(f"ratio: {one_by_one / t_year:.1f}x faster in batches; target >= 20x")


if __name__ == "__main__":
    main()
