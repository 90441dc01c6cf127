"""Large-sweep benchmark: 100,000 cases of the gate-station example (goal held, default outputs with
the hydrate margin of every stream), serially and on a pool of 2 processes.

Run:  python bench/sweep_large.py [--cases N] [--repeats R] [--workers W,...] [--profile]

Each configuration runs R times, each in a fresh process so that its peak resident memory
(``resource.getrusage``: the process itself, and for a pool the largest worker, asked through the
pool) is its own. The cases are a zip sweep of the supply temperature (0-15 degC) and flow
(60,000-90,000 Sm3/h) in a fixed shuffled order, solved through ``letdown.study.sweep.sweep``
(chunks of at most ``MAX_CHUNK`` cases, with the progress bar's chunking) and written as CSV text,
as ``letdown sweep --out`` does. Prints the median wall time of the sweep and of the CSV, the CPU
time it used (user + system, every thread and worker: what the run costs whatever else the machine
is doing), the peak RSS, the CPU count and the load average; ``--profile`` adds a cProfile of one
serial run (top functions by own time). Target (issue 14): 100,000 cases in at most 10 s on 2
cores, memory bounded.
"""
from __future__ import annotations

import argparse
import json
import os
import statistics
import subprocess
import sys
import time

GATE = "flowsheets/gate-station.yaml"


def _peak_rss_mb(_):
    """Peak resident memory of the worker process that runs this [MB]."""
    import resource
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0


def _pid_cpu(_):
    """(process id, CPU seconds so far, user + system, every thread) of the worker running it."""
    import resource
    r = resource.getrusage(resource.RUSAGE_SELF)
    time.sleep(0.05)            # let the other worker take a task too
    return os.getpid(), r.ru_utime + r.ru_stime


def _cpu_s(ex, workers: int) -> float:
    """CPU seconds used so far by this process and, for a pool, by its workers."""
    import resource
    r = resource.getrusage(resource.RUSAGE_SELF)
    total = r.ru_utime + r.ru_stime
    if workers > 1:
        per = {}
        for pid, cpu in ex.map(_pid_cpu, range(4 * workers)):
            per[pid] = max(cpu, per.get(pid, 0.0))
        total += sum(per.values())
    return total


def one(cases: int, workers: int, profile: bool) -> dict:
    import resource

    import numpy as np

    from letdown.sheet.loader import read_spec
    from letdown.study.executors import make_executor
    from letdown.study.sweep import Variable, sweep

    fs = read_spec(GATE)
    rng = np.random.default_rng(1)
    T = 273.15 + 15.0 * rng.random(cases)
    flow = (60000.0 + 30000.0 * rng.random(cases)) / 3600.0 * 101325.0 / (8.314462618 * 288.15)
    variables = [Variable("supply.T", "temperature", T), Variable("supply.flow", "flow", flow)]
    ex = make_executor(workers)
    try:
        if workers > 1:   # start the pool's processes before the clock (as a long run would)
            sweep(fs, [Variable("supply.T", "temperature", T[:4])], executor=ex)
        if profile:
            import cProfile
            import pstats
            pr = cProfile.Profile()
            pr.enable()
        c0 = _cpu_s(ex, workers)
        t0 = time.perf_counter()
        table = sweep(fs, variables, mode="zip", executor=ex, show_progress=True)
        t_sweep = time.perf_counter() - t0
        cpu = _cpu_s(ex, workers) - c0
        if profile:
            pr.disable()
            pstats.Stats(pr, stream=sys.stderr).sort_stats("tottime").print_stats(15)
        t0 = time.perf_counter()
        text = table.csv_text()
        t_csv = time.perf_counter() - t0
        kids = max(ex.map(_peak_rss_mb, range(4 * workers))) if workers > 1 else 0.0
    finally:
        ex.close()
    me = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    return {"sweep_s": t_sweep, "cpu_s": cpu, "csv_s": t_csv, "rss_mb": me, "worker_rss_mb": kids,
            "failed": sum(1 for r in table.rows if not r[-2]), "csv_mb": len(text) / 1e6,
            "columns": len(table.columns)}


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--cases", type=int, default=100_000)
    ap.add_argument("--repeats", type=int, default=3)
    ap.add_argument("--workers", default="1,2", help="comma-separated pool sizes (1: serial)")
    ap.add_argument("--profile", action="store_true")
    ap.add_argument("--one", type=int, help=argparse.SUPPRESS)
    args = ap.parse_args(argv)
    if args.one is not None:
        print(json.dumps(one(args.cases, args.one, args.profile)))
        return
    from letdown.study import sweep as sweep_module
    chunk = getattr(sweep_module, "MAX_CHUNK", None)     # None: a letdown without chunking
    try:
        try:
            from letdown.fluid.kernels import native
        except ImportError:                 # a letdown before fluid/ had its rooms
            from letdown.fluid import native
        kernels = "on" if native.AVAILABLE else "off"
    except ImportError:
        kernels = "not built"
    print(f"{os.cpu_count()} cpus, compiled flash kernels {kernels}, "
          f"load average {os.getloadavg()[0]:.2f}, chunks of at most {chunk} cases")
    for w in [int(x) for x in args.workers.split(",")]:
        runs = []
        for r in range(args.repeats):
            cmd = [sys.executable, __file__, "--cases", str(args.cases), "--one", str(w)]
            if args.profile and w == 1 and r == 0:
                cmd.append("--profile")
            out = subprocess.run(cmd, capture_output=True, text=True, check=True)
            if "--profile" in cmd:
                print(out.stderr[-6000:])
            runs.append(json.loads(out.stdout.strip().splitlines()[-1]))
        med = statistics.median(r["sweep_s"] for r in runs)
        each = ", ".join(f"{r['sweep_s']:.2f}" for r in runs)
        print(f"{'serial' if w == 1 else f'pool of {w}'}: {args.cases:,} cases, median "
              f"{med:.2f} s (runs {each}), CPU "
              f"{statistics.median(r['cpu_s'] for r in runs):.1f} s, CSV "
              f"{statistics.median(r['csv_s'] for r in runs):.2f} s "
              f"({runs[0]['csv_mb']:.1f} MB, {runs[0]['columns']} columns), peak RSS "
              f"{max(r['rss_mb'] for r in runs):.0f} MB"
              + (f" (largest worker {max(r['worker_rss_mb'] for r in runs):.0f} MB)" if w > 1
                 else "")
              + f", {runs[0]['failed']} failed; target 10 s on 2 cores")
        sys.stdout.flush()


if __name__ == "__main__":
    main()
