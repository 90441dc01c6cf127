"""GERG-2008 benchmark: letdown's GERG engine against raw pyaga8 calls, on common let-down states.

Run:  python bench/gerg.py [--n N] [--repeats R]

Prints, from one run on this machine, the median cost per state [ms] of
* P-T and P-h flashes of the demo lean gas (bench/_shared.py) at random states 250-330 K,
  5-100 bar (a batch of N, and a single state), through ``Fluid(..., model="gerg-2008")``;
* the same flashes with the GERG-2008 tangent-plane test switched off (the cost before that test
  existed; the Peng-Robinson stability test still runs);
* raw pyaga8 calls (composition set once, one density solve and one property call per state): the
  floor any engine built on the binding pays.

Target (issue 11): common let-down states within about 3x of the cost without the GERG-2008
tangent-plane test.
"""
from __future__ import annotations

import argparse
import os
import sys
import time

import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))

import letdown  # noqa: E402
from _shared import BENCH_GAS, median_time  # noqa: E402
from letdown.fluid.eos import gerg  # noqa: E402


def _raw(fluid, T, P):
    import pyaga8
    g = pyaga8.Gerg2008()
    c = pyaga8.Composition()
    for n, x in zip(fluid.engine.comps.names, fluid.zs):
        setattr(c, gerg.GERG_NAMES[n], float(x))
    g.set_composition(c)
    for t, p in zip(T, P):
        g.temperature = float(t)
        g.pressure = float(p) / 1000.0
        g.d = 0.0
        g.calc_density(1)
        g.calc_properties()


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--n", type=int, default=200)
    ap.add_argument("--repeats", type=int, default=3)
    args = ap.parse_args(argv)
    rng = np.random.default_rng(11)
    n = args.n
    T = rng.uniform(250.0, 330.0, n)
    P = rng.uniform(5e5, 100e5, n)
    gas = letdown.Fluid(BENCH_GAS, model="gerg-2008")
    pt = gas.flash(T=T, P=P)
    h = pt.h
    print(f"{n} states of the demo lean gas, 250-330 K, 5-100 bar; "
          f"{int(pt.converged.sum())} answered by GERG-2008 (the rest refused as two-phase)")

    def run():
        t = {}
        t["PT batch"] = median_time(lambda: gas.flash(T=T, P=P), args.repeats) / n
        t["PH batch"] = median_time(lambda: gas.flash(P=P, h=h, T_guess=T + 5.0),
                                    args.repeats) / n
        k = int(np.argmax(pt.converged))
        t["PT single"] = median_time(lambda: gas.flash(T=T[k], P=P[k]), 5 * args.repeats)
        t["PH single"] = median_time(lambda: gas.flash(P=P[k], h=h[k]), 5 * args.repeats)
        return t

    now = run()
    keep = gerg.GergEngine._unstable_gerg
    gerg.GergEngine._unstable_gerg = lambda self, T, P, z: False
    try:
        before = run()
    finally:
        gerg.GergEngine._unstable_gerg = keep
    raw = median_time(lambda: _raw(gas, T, P), args.repeats) / n
    print(f"\n{'[ms/state]':14s}{'letdown':>10s}{'no GERG TPD':>13s}{'ratio':>8s}"
          f"{'raw pyaga8':>12s}{'x raw':>8s}")
    for key in now:
        print(f"{key:14s}{now[key] * 1e3:10.3f}{before[key] * 1e3:13.3f}"
              f"{now[key] / before[key]:8.2f}{raw * 1e3:12.4f}{now[key] / raw:8.0f}")
    print("target: ratio to 'no GERG TPD' <= ~3 on these common states")


if __name__ == "__main__":
    main()
