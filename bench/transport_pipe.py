"""Transport properties and the pipe block: batch timings, with CoolProp in the same run.

Run ``python3 bench/transport_pipe.py``. Prints the median of a few repeats:

* Chung viscosity and conductivity of 1000 gas states in one batch (``letdown.fluid.transport``)
  against CoolProp's reference viscosity and conductivity of methane state by state (PropsSI);
  the ratio is the time of ours over the reference's, for the same 1000 states;
* one ``pipe`` block, 100 km in 20 steps, for 1 and for 100 cases (the batch's cost per case).
"""
from __future__ import annotations

import numpy as np

from _shared import BENCH_GAS, median_time

import letdown
from letdown.equipment import pipe
from letdown.equipment.stream import flash_stream
from letdown.fluid.transport import transport

N_STATES = 1000
REPEATS = 3


def main():
    rng = np.random.default_rng(1)
    T = rng.uniform(250.0, 350.0, N_STATES)
    P = rng.uniform(1e5, 100e5, N_STATES)
    rho = P / (8.314462618 * T)            # ideal-gas molar density: the timing does not care
    ours = median_time(lambda: transport(T, rho, np.ones((N_STATES, 1)), ["methane"]), REPEATS)
    try:
        import CoolProp.CoolProp as CP

        def ref():
            for t, p in zip(T, P):
                CP.PropsSI("V", "T", t, "P", p, "Methane")
                CP.PropsSI("L", "T", t, "P", p, "Methane")
        theirs = median_time(ref, REPEATS)
        print(f"transport, {N_STATES} methane states: ours {ours * 1e3:.2f} ms, CoolProp "
              f"{theirs * 1e3:.1f} ms, ratio {ours / theirs:.3f}")
    except ImportError:
        print(f"transport, {N_STATES} methane states: ours {ours * 1e3:.2f} ms (no CoolProp)")
    gas = letdown.Fluid(BENCH_GAS)
    params = {"length": 100e3, "diameter": 0.5,
              "surroundings": {"kind": "buried", "depth": 1.5, "soil_conductivity": 1.2,
                               "ground_T": 281.15}}
    for n in (1, 100):
        inlet = flash_stream(gas, np.full(n, 3000.0), np.tile(gas.zs, (n, 1)),
                             T=np.full(n, 288.15), P=np.full(n, 70e5))
        t = median_time(lambda: pipe.run(gas, "line", {"in": inlet}, params), REPEATS)
        print(f"pipe, 100 km in {pipe.STEPS} steps, {n} case(s): {t * 1e3:.1f} ms "
              f"({t / n * 1e3:.2f} ms a case)")


if __name__ == "__main__":
    main()
