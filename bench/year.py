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

import time

import numpy as np

from _shared import GATE, PROFILE, bench_parser, machine_line, median_time
from letdown.sheet.loader import read_spec
from letdown.sheet.solve import solve_cases
from letdown.study.year import read_profile, year


def main(argv=None):
    args = bench_parser(__doc__, 3, 40, "hours solved one by one").parse_args(argv)
    print(machine_line())
    fs = read_spec(GATE)
    prof = read_profile(PROFILE)
    res = year(fs, prof)
    t_year = median_time(lambda: year(fs, prof), args.repeats)
    print(f"year, {prof.n} hours in batches, margins on every stream: median {t_year:.2f} s "
          f"({int((~res.converged).sum())} failed hours); target < 2 s (issue 14: 1 s)")
    hh = res.hydrate_hours()
    print("  hours below hydrate T (free water assumed): "
          + ", ".join(f"{n} {h['below_hydrate_T_free_water_assumed']}" for n, h in hh.items()))
    from letdown.study.executors import ProcessPool
    pool = ProcessPool(2)
    try:
        year(fs, prof, executor=pool)                 # start the workers
        t_pool = median_time(lambda: year(fs, prof, executor=pool), args.repeats)
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
