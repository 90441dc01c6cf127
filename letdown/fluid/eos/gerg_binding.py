"""The GERG-2008 binding (``pyaga8``, an optional extra): its import, the component names it
knows, the model's stated range and gas constant, and one density root's properties copied out
(see :mod:`letdown.fluid.eos.gerg` for what the engine does with them).

Units of the binding: pressure kPa, density mol/dm3, enthalpy J/mol, entropy J/(mol K),
Joule-Thomson K/kPa.
"""
from __future__ import annotations

import numpy as np

from ...errors import ModelError

#: letdown component -> attribute of pyaga8.Composition (the 21 GERG-2008 components).
GERG_NAMES = {
    "methane": "methane", "nitrogen": "nitrogen", "carbon-dioxide": "carbon_dioxide",
    "ethane": "ethane", "propane": "propane", "isobutane": "isobutane", "n-butane": "n_butane",
    "isopentane": "isopentane", "n-pentane": "n_pentane", "n-hexane": "hexane",
    "n-heptane": "heptane", "n-octane": "octane", "n-nonane": "nonane", "n-decane": "decane",
    "hydrogen": "hydrogen", "oxygen": "oxygen", "carbon-monoxide": "carbon_monoxide",
    "water": "water", "hydrogen-sulfide": "hydrogen_sulfide", "helium": "helium", "argon": "argon",
}

#: Stated range of GERG-2008 for its "normal range" (Kunz & Wagner 2012): 90-450 K, up to 35 MPa.
T_RANGE = (90.0, 450.0)
P_MAX = 35e6
#: Gas constant of GERG-2008 [J/(mol K)] (Kunz & Wagner 2012): the binding's Gibbs energies use it.
R_GERG = 8.314472
#: Phase identification parameter above which a single phase is named liquid
#: (Venkatarathnam & Oellrich 2011).
PIP_LIQUID = 1.0


def _import():
    try:
        import pyaga8
    except ImportError:  # pragma: no cover - depends on the environment
        raise ModelError("the gerg-2008 model needs the optional package pyaga8: "
                         "pip install 'letdown[gerg]'") from None
    return pyaga8


class _Root:
    """One density root at (T, P): the binding's properties copied out (SI, per mole)."""

    __slots__ = ("d", "g", "h", "s", "z", "cp", "cv", "jt", "w", "pip")

    def __init__(self, g):
        self.d = g.d                      # [mol/dm3]
        self.g = g.g
        self.h = g.h
        self.s = g.s
        self.z = g.z
        self.cp = g.cp
        self.cv = g.cv
        self.jt = g.jt / 1000.0           # K/kPa -> K/Pa
        self.w = g.w
        # phase identification parameter from (dP/drho, d2P/drho2, d2P/dT drho, dP/dT)
        with np.errstate(all="ignore"):
            self.pip = 2.0 - g.d * (g.d2p_dtd / g.dp_dt - g.d2p_dd2 / g.dp_dd)

    @property
    def is_liquid(self) -> bool:
        return bool(self.pip > PIP_LIQUID)
