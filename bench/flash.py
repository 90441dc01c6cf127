"""Flash benchmark: letdown against thermo's FlashVL with the same model, constants and kij.

Run:  python bench/flash.py [--repeats N]

Prints, from one run on this machine:
* the median time of a P-T flash and of a P-h flash (the throttle: 70 -> 7 bar from 10 degC) of a
  10-component lean gas, for letdown and for thermo (test-only reference library), and the ratios;
* the time of 8,760 varied P-h flashes through letdown's batch form, and the per-case cost.

Targets (issue "Fluid core"): scalar P-h at least 200x faster than thermo in the same run; 8,760
batched P-h flashes in under 0.2 s. The gas is a lean pipeline gas of our own (demo composition).
"""
from __future__ import annotations

import argparse
import os
import statistics
import sys
import time

import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))

import letdown  # noqa: E402
from _shared import BENCH_GAS, median_time  # noqa: E402
from tests.fluid.test_flash_vs_thermo import thermo_flasher  # noqa: E402

T_IN, P_IN, P_OUT = 283.15, 70e5, 7e5
N_YEAR = 8760


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=15)
    args = ap.parse_args(argv)
    print(f"python {sys.version.split()[0]}, numpy {np.__version__}, {os.cpu_count()} cpus")
    try:
        from letdown.fluid.kernels import native
        print(f"letdown compiled kernels: {'on' if native.AVAILABLE else 'off'}")
    except ImportError:
        print("letdown compiled kernels: not built")

    gas = letdown.Fluid(BENCH_GAS, model="peng-robinson")
    inlet = gas.flash(T=T_IN, P=P_IN)
    out = gas.flash(P=P_OUT, h=inlet.h)
    print(f"bench gas through the throttle: {T_IN - 273.15:.1f} degC, {P_IN / 1e5:.0f} bar -> "
          f"{out.T - 273.15:.3f} degC at {P_OUT / 1e5:.0f} bar, vapour fraction "
          f"{out.vapour_fraction:.6f}")

    t_pt = median_time(lambda: gas.flash(T=T_IN, P=P_IN), args.repeats)
    t_ph = median_time(lambda: gas.flash(P=P_OUT, h=inlet.h), args.repeats)

    flasher = thermo_flasher(gas, cp_fit_range=(150.0, 600.0))
    zs = gas.zs.tolist()
    ref_in = flasher.flash(T=T_IN, P=P_IN, zs=zs)
    ref_out = flasher.flash(P=P_OUT, H=ref_in.H(), zs=zs)
    reps = max(3, args.repeats // 3)
    r_pt = median_time(lambda: flasher.flash(T=T_IN, P=P_IN, zs=zs), reps)
    r_ph = median_time(lambda: flasher.flash(P=P_OUT, H=ref_in.H(), zs=zs), reps)
    print(f"thermo FlashVL outlet: {ref_out.T - 273.15:.3f} degC, vapour fraction {ref_out.VF:.6f}")

    print(f"\n{'':26s}{'letdown':>12s}{'thermo':>12s}{'ratio':>10s}")
    print(f"{'P-T flash, median [ms]':26s}{t_pt * 1e3:12.3f}{r_pt * 1e3:12.3f}{r_pt / t_pt:10.1f}")
    print(f"{'P-h flash, median [ms]':26s}{t_ph * 1e3:12.3f}{r_ph * 1e3:12.3f}{r_ph / t_ph:10.1f}")
    print("target: P-h ratio >= 200")

    rng = np.random.default_rng(8760)
    T = rng.uniform(275.0, 300.0, N_YEAR)
    P = rng.uniform(50e5, 80e5, N_YEAR)
    inlets = gas.flash(T=T, P=P)
    P7 = np.full(N_YEAR, P_OUT)
    times = []
    for _ in range(3):
        t0 = time.perf_counter()
        res = gas.flash(P=P7, h=inlets.h)
        times.append(time.perf_counter() - t0)
    t_batch = statistics.median(times)
    two = int((res.n_phases == 2).sum())
    print(f"\nbatch: {N_YEAR} P-h flashes ({two} end in two phases): median {t_batch:.3f} s, "
          f"{t_batch / N_YEAR * 1e6:.1f} us per case, all converged: {bool(res.converged.all())}")
    print("target: < 0.2 s")


if __name__ == "__main__":
    main()
