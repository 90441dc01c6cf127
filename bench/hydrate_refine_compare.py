"""Before/after check of a change to the hydrate root refinement (issue 12): 200 pressures per gas.

Run:  PYTHONPATH=. python bench/hydrate_refine_compare.py save FILE     (record the results)
      PYTHONPATH=. python bench/hydrate_refine_compare.py compare FILE  (largest |dT| against FILE)

(``PYTHONPATH=.`` from the tree under test: a script's own folder comes first on ``sys.path``, so
without it ``letdown`` is imported from wherever it is installed.)

Four gases (pure methane, pure propane, the gate-station gas of flowsheets/gate-station.yaml, a
sour CO2-rich gas; the last two invented for the demo), 200 pressures each from 0.5 to 300 bar
(log-spaced), pure water and a water activity of 0.85, through both paths of the refinement: the
batch fast path (``hydrate_curve``, both structures) and the scan path (``formation_T`` with a flash
at every temperature, sI and sII). Prints the largest |dT| [K] and the NaN patterns; exit status 1
above 1e-9 K.

Measured 2026-12-02 (issue 12): ``hydrate._refine`` rewritten on
``letdown.numerics.rootfind.bracketed_root`` with the same stopping rule moved the answers by up to
4.6e-9 K (2,530 finite temperatures), so it was not adopted (``_refine``'s docstring).
"""
from __future__ import annotations

import sys

import numpy as np

from letdown.fluid import Fluid
from letdown.fluid.aqueous import hydrate as hy

GASES = {
    "methane": {"methane": 1.0},
    "propane": {"propane": 1.0},
    "gate": {"methane": 0.9135, "ethane": 0.048, "propane": 0.012, "nitrogen": 0.015,
             "carbon-dioxide": 0.0115},
    "sour": {"methane": 0.70, "carbon-dioxide": 0.20, "hydrogen-sulfide": 0.05, "ethane": 0.05},
}
P = np.geomspace(0.5e5, 300e5, 200)


def results():
    out = {}
    for name, comp in GASES.items():
        f = Fluid(comp)
        for aw in (1.0, 0.85):
            c = f.hydrate_curve(P, water_activity=aw)
            out[f"{name}/{aw}/curve_sI"] = c.T_sI
            out[f"{name}/{aw}/curve_sII"] = c.T_sII
            names = list(f.components)
            dry = hy.dry_gas(names, f.zs)
            for s in (hy.SI, hy.SII):
                T, _ = hy.formation_T(lambda Tq, Pq, idx: hy.eos_fugacities(f, Tq, Pq, dry), P[::10],
                                      names, s, ln_aw=np.log(aw))
                out[f"{name}/{aw}/scan_{s.name}"] = T
    return out


def main(argv):
    mode, path = argv[1], argv[2]
    res = results()
    if mode == "save":
        np.savez(path, **res)
        print(f"saved {len(res)} arrays to {path}")
        return 0
    ref = np.load(path)
    worst = 0.0
    for key, T in res.items():
        R = ref[key]
        if not np.array_equal(np.isnan(T), np.isnan(R)):
            print(f"{key}: NaN pattern differs")
            worst = np.inf
            continue
        d = np.nanmax(np.abs(T - R)) if np.isfinite(T).any() else 0.0
        worst = max(worst, d)
        print(f"{key:28s} finite {int(np.isfinite(T).sum()):3d}  max |dT| = {d:.3e} K")
    print(f"largest |dT| over all: {worst:.3e} K")
    return 0 if worst <= 1e-9 else 1


if __name__ == "__main__":
    sys.exit(main(sys.argv))
