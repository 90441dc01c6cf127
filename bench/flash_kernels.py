"""Compiled flash kernels against the numpy flash, in one run (letdown.fluid.kernels.native).

Times, for the compiled path and for numpy (``native.AVAILABLE`` switched off in the same process):

* a scalar P-T flash of the 10-component bench gas at 283.15 K, 70 bar;
* a scalar P-h flash of the same gas to 7 bar at the enthalpy of that state (ends with a trace of
  liquid);
* a batch of 8,760 P-h flashes (T uniform 275-300 K, P uniform 50-80 bar, each to 7 bar);

and, as separate processes, ``letdown solve`` on a flowsheet with and without ``LETDOWN_PURE_NUMPY``.
Medians of repeated runs. The composition is the lean gas of the flash benchmark (invented for
benchmarking).

Usage::

    python bench/flash_kernels.py [--repeats 51] [--batch-repeats 5] [--solve-runs 3]

This is a benchmark, not a test: nothing here is run by pytest.
"""
from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import time
from pathlib import Path

import numpy as np

import letdown
from letdown.fluid.kernels import native
from _shared import BENCH_GAS, median_time

ROOT = Path(__file__).resolve().parent.parent


def flash_times(fluid, repeats, batch_repeats):
    s1 = fluid.flash(T=283.15, P=70e5)
    h = float(s1.h)
    rng = np.random.default_rng(2026)
    n = 8760
    T = rng.uniform(275.0, 300.0, n)
    P = rng.uniform(50e5, 80e5, n)
    hb = fluid.flash(T=T, P=P).h
    P7 = np.full(n, 7e5)
    out = {}
    out["P-T scalar"] = median_time(lambda: fluid.flash(T=283.15, P=70e5), repeats)
    out["P-h scalar"] = median_time(lambda: fluid.flash(P=7e5, h=h), repeats)
    out["P-h batch 8760"] = median_time(lambda: fluid.flash(P=P7, h=hb), batch_repeats)
    end = fluid.flash(P=7e5, h=h)
    return out, (float(end.T), float(end.vapour_fraction))


def solve_time(path, pure, runs):
    env = dict(os.environ)
    env.pop("LETDOWN_PURE_NUMPY", None)
    if pure:
        env["LETDOWN_PURE_NUMPY"] = "1"
    times = []
    for _ in range(runs):
        t0 = time.perf_counter()
        r = subprocess.run([sys.executable, "-m", "letdown.cli", "solve", str(path)], env=env,
                           capture_output=True, cwd=ROOT)
        times.append(time.perf_counter() - t0)
        if r.returncode != 0:
            raise SystemExit(f"letdown solve {path} failed:\n{r.stderr.decode()[-2000:]}")
    return statistics.median(times)


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=51)
    ap.add_argument("--batch-repeats", type=int, default=5)
    ap.add_argument("--solve-runs", type=int, default=3)
    ap.add_argument("--flowsheet", default="flowsheets/cold-separation.yaml")
    args = ap.parse_args()
    if not native.AVAILABLE:
        raise SystemExit("compiled kernels not available (not built, or LETDOWN_PURE_NUMPY=1)")
    fluid = letdown.Fluid(BENCH_GAS, model="peng-robinson")
    res = {}
    for label, on in (("compiled", True), ("numpy", False)):
        native.AVAILABLE = on
        fluid.flash(T=283.15, P=70e5)   # warm up
        res[label] = flash_times(fluid, args.repeats, args.batch_repeats)
    native.AVAILABLE = True
    print(f"compiled batches of >= {native.THREAD_MIN_CASES} cases on {native._n_threads()} "
          f"thread(s) (LETDOWN_FLASH_THREADS caps it), {os.cpu_count()} cpus")
    print(f"{'':18s} {'compiled':>12s} {'numpy':>12s} {'ratio':>7s}")
    for key in res["compiled"][0]:
        a, b = res["compiled"][0][key], res["numpy"][0][key]
        print(f"{key:18s} {a * 1e3:10.3f} ms {b * 1e3:10.3f} ms {b / a:6.1f}x")
    for label in res:
        T, vf = res[label][1]
        print(f"P-h end state ({label}): T = {T:.9f} K, vapour fraction = {vf:.12f}")
    fs = ROOT / args.flowsheet
    a = solve_time(fs, False, args.solve_runs)
    b = solve_time(fs, True, args.solve_runs)
    print(f"{'solve ' + fs.name:18s} {a:10.3f} s  {b:10.3f} s  {b / a:6.1f}x  (whole process)")


if __name__ == "__main__":
    main()
