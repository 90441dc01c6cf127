"""Hydrate-temperature benchmark (issue 14 part 1): the gate-station gas at 8,760 pressures.

Run:  python bench/hydrate.py [--repeats N] [--sample K]

Prints, in one run: the median time per state of ``Fluid.hydrate_T`` on a batch of 8,760 pressures
(one vectorised pass), of the same call case by case (a sample of K pressures), and of the solve with a
flash at every temperature (``letdown.fluid.aqueous.hydrate.formation_T`` with ``eos_fugacities``, the method
before the one-phase fast path; sampled on 876 pressures), with the ratios. Target: at most 20 us per
state in the batch.
"""
from __future__ import annotations

import numpy as np

from _shared import bench_parser, machine_line, median_time
from letdown.fluid import Fluid
from letdown.fluid.aqueous import hydrate as hy

#: The gate-station gas (flowsheets/gate-station.yaml; invented for the demo).
GAS = {"methane": 0.9135, "ethane": 0.048, "propane": 0.012, "nitrogen": 0.015,
       "carbon-dioxide": 0.0115}


def main(argv=None):
    args = bench_parser(__doc__, 5, 200, "pressures solved one by one").parse_args(argv)
    print(machine_line())
    fluid = Fluid(GAS)
    rng = np.random.default_rng(14)
    P = rng.uniform(10e5, 80e5, 8760)                 # 10-80 bar, the let-down range
    fluid.hydrate_T(P[:10])                           # warm-up (imports, thread pool)
    t_batch = median_time(lambda: fluid.hydrate_T(P), args.repeats) / P.size
    print(f"batch of {P.size}: median {t_batch * 1e6:.1f} us/state; target <= 20 us")

    sample = P[: args.sample]
    t_scalar = median_time(lambda: [fluid.hydrate_T(float(p)) for p in sample],
                           max(1, args.repeats // 2)) / sample.size
    print(f"case by case ({sample.size} pressures): median {t_scalar * 1e6:.0f} us/state; "
          f"batch is {t_scalar / t_batch:.0f}x faster")

    names = list(fluid.components)
    P_old = P[:876]
    dry = np.tile(fluid.zs, (P_old.size, 1))

    def flash_every_T():
        def fug(T, Pc, idx):
            return hy.eos_fugacities(fluid, T, Pc, dry[idx])
        hy.formation_T(fug, P_old, names, hy.SI)
        hy.formation_T(fug, P_old, names, hy.SII)

    t_old = median_time(flash_every_T, max(1, args.repeats // 2)) / P_old.size
    print(f"flash at every temperature (batch of {P_old.size}): median {t_old * 1e6:.0f} us/state; "
          f"the fast path is {t_old / t_batch:.0f}x faster")


if __name__ == "__main__":
    main()
