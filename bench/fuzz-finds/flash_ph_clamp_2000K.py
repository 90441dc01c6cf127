"""Fuzz find (fluid core): a P-h flash beyond the temperature bracket returns T = 2000 K, converged.
Found through a compressor at efficiency 0.00075 (exit 0, discharge 2000.0 K; now refused by the
loader). Run from a letdown checkout: python bench/fuzz-finds/flash_ph_clamp_2000K.py -> was
[1555.47 2000.] [ True  True]; fixed: [1555.47 2000.] [ True False] (the pure-fluid P-h answer must meet
its target; tests/fluid/test_flash_bounds.py)."""
import numpy as np
from letdown.fluid import Fluid
g = Fluid({"propane": 1.0}, model="peng-robinson")
s = g.flash(P=np.array([16e5, 16e5]), h=np.array([2e5, 1e6]))
print(s.T, s.converged)
