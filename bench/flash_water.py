"""Benchmark of the flash of gas with water among its components (three-phase where it applies).

Run:  python bench/flash_water.py [--cases N] [--repeats R]

Prints, from one run on this machine (median of R runs):
* the LTS sheet of tests/equipment/test_separator_water.py with water as a component (LTS3: 0.1 % water,
  cooled, throttled 70 -> 40 barg, three-phase drum) solved for N cases at once, the chiller
  outlet swept from 0 to 20 degC;
* a batch P-T flash and a batch P-h flash (70 -> 40 barg) of N cases of that wet gas, and the
  same of the dry gas (water taken out), which takes the two-phase path only;
* how the time of the wet batches splits between the three-phase steps.

The gas is the invented LTS gas of the tests.
"""
from __future__ import annotations

import argparse
import cProfile
import os
import pstats
import sys

import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))

import letdown  # noqa: E402
from letdown.sheet.loader import parse_spec  # noqa: E402
from letdown.sheet.solve import solve_cases  # noqa: E402
from tests.equipment.test_separator_water import LTS3, PORTS3, WET  # noqa: E402
from _shared import median_time  # noqa: E402


def main(argv=None):
    ap = argparse.ArgumentParser()
    ap.add_argument("--cases", type=int, default=1000)
    ap.add_argument("--repeats", type=int, default=3)
    ap.add_argument("--profile", action="store_true", help="profile one sheet solve")
    args = ap.parse_args(argv)
    n = args.cases
    fs = parse_spec(LTS3 % PORTS3, source="lts3.yaml")
    T_out = np.linspace(273.15, 293.15, n)

    def sheet():
        return solve_cases(fs, {"chiller.T_out": T_out})

    sheet()                                    # warm up (imports, caches)
    t_sheet = median_time(sheet, args.repeats)
    b = sheet()
    cold, drum = np.asarray(b.streams["cold"].T), np.asarray(b.streams["gas"].T)
    print(f"LTS3 sheet, {n} cases: {t_sheet:.3f} s ({1e3 * t_sheet / n:.3f} ms/case); "
          f"throttle outlet {cold.min() - 273.15:.2f}..{cold.max() - 273.15:.2f} degC; "
          f"max |drum T - throttle T| {np.max(np.abs(drum - cold)):.2e} K")
    wet = letdown.Fluid(WET)
    dry_comp = {k: v for k, v in WET.items() if k != "water"}
    dry = letdown.Fluid(dry_comp, normalise=True)
    T = np.linspace(268.15, 298.15, n)
    P = np.full(n, 71.01325e5)
    for name, gas in (("wet", wet), ("dry", dry)):
        st = gas.flash(T=T, P=P)
        t_pt = median_time(lambda: gas.flash(T=T, P=P), args.repeats)
        t_ph = median_time(lambda: gas.flash(P=np.full(n, 41.01325e5), h=st.h), args.repeats)
        three = int(np.sum(st.n_phases == 3))
        print(f"{name} gas, {n} cases: P-T {t_pt:.3f} s, P-h {t_ph:.3f} s "
              f"({three} three-phase states)")
    if args.profile:
        pr = cProfile.Profile()
        pr.enable()
        sheet()
        pr.disable()
        pstats.Stats(pr).sort_stats("cumulative").print_stats(25)


if __name__ == "__main__":
    main()
