"""GERG-2008 (ISO 20765-2; Kunz & Wagner, J. Chem. Eng. Data 57 (2012) 3032) through ``pyaga8``.

``pyaga8`` binds the NIST reference code of AGA Report No. 8 Part 2 (Lemmon & Bell). It is an
optional extra (``pip install letdown[gerg]``). letdown uses GERG-2008 for **single-phase** states
only: each state is checked with a Peng-Robinson tangent-plane stability test, and a state that would
split into two phases is refused (a batch marks it unconverged) with a message to use a cubic model.

Units of the binding: pressure kPa, density mol/dm3, enthalpy J/mol, entropy J/(mol K), Joule-Thomson
K/kPa. Its reference state is letdown's: the ideal gas at 298.15 K and 101.325 kPa has h = 0 and
s = 0 (the binding uses GERG-2008's own gas constant, 8.314472 J/(mol K)).
"""
from __future__ import annotations

import numpy as np

from ..errors import ModelError
from . import flash as fl
from .components import ComponentSet
from .cubic import PR, CubicEOS
from .state import States

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
PH_MAX_ITER = 60
#: Density solver modes of the AGA8 reference code tried in turn: 1 = safe mode (checks for
#: two-phase and spurious roots), 2 = liquid-root search.
DENSITY_FLAGS = (1, 2)


def _import():
    try:
        import pyaga8
    except ImportError:  # pragma: no cover - depends on the environment
        raise ModelError("the gerg-2008 model needs the optional package pyaga8: "
                         "pip install 'letdown[gerg]'") from None
    return pyaga8


class GergEngine:
    """Single-phase states on GERG-2008 for one component set (loops over cases in C++ calls)."""

    model = "gerg-2008"

    def __init__(self, comps: ComponentSet, kijs=None):
        missing = [n for n in comps.names if n not in GERG_NAMES]
        if missing:
            raise ModelError(f"GERG-2008 has no parameters for {', '.join(missing)}; use a cubic "
                             f"model (peng-robinson, soave-redlich-kwong)")
        self.comps = comps
        self._aga = _import()
        self._g = self._aga.Gerg2008()
        self._attrs = [GERG_NAMES[n] for n in comps.names]
        self._last = None
        # Peng-Robinson, with the fluid's interaction parameters, only as a two-phase guard
        kijs = np.zeros((comps.n, comps.n)) if kijs is None else kijs
        self._guard = CubicEOS(comps, PR, kijs)

    # ----------------------------------------------------------------- single calls
    def _set(self, z):
        key = tuple(z)
        if key != self._last:
            c = self._aga.Composition()
            for a, x in zip(self._attrs, z):
                setattr(c, a, float(x))
            self._g.set_composition(c)
            self._last = key

    def _tp(self, T, P):
        """Properties at (T, P), or None where no trustworthy density root is found.

        The binding's fast gas-phase solver (flag 0) can land on a spurious root: ISO 20765-2 gas 2
        at 180 K, 13 MPa gives 232 kg/m3 with cp = 7e4 J/(mol K), where the printed state is the
        dense root at 548.61 kg/m3. The reference code's safe mode (flag 1, which checks for
        two-phase and spurious roots) is used instead; where it refuses, its liquid search (flag 2)
        is tried; where both refuse, the state is not answered.
        """
        g = self._g
        g.temperature = float(T)
        g.pressure = float(P) / 1000.0
        for flag in DENSITY_FLAGS:
            try:
                g.calc_density(flag)
            except RuntimeError:
                continue
            g.calc_properties()
            return g
        return None

    # ----------------------------------------------------------------- batch API
    def _guard_two_phase(self, T, P, zs):
        """True where a Peng-Robinson stability test finds two phases."""
        pure, _ = fl._pure_index(zs)
        out = np.zeros(T.shape, dtype=bool)
        i = np.nonzero(~pure)[0]
        if i.size:
            out[i] = fl.stability(self._guard, T[i], P[i], zs[i], early_exit=True).unstable
        return out

    def _collect(self, T, P, zs, ok):
        n = T.shape[0]
        keys = ("h", "s", "Z", "cp", "cv", "jt", "w", "density")
        out = {k: np.full(n, np.nan) for k in keys}
        Ms = zs @ self.comps.Ms
        for k in range(n):
            if not ok[k]:
                continue
            self._set(zs[k])
            g = self._tp(T[k], P[k])
            if g is None:
                continue
            out["h"][k] = g.h
            out["s"][k] = g.s
            out["Z"][k] = g.z
            out["cp"][k] = g.cp
            out["cv"][k] = g.cv
            out["jt"][k] = g.jt / 1000.0
            out["w"][k] = g.w
            out["density"][k] = g.d * 1000.0 * Ms[k]
        return out

    def _states(self, T, P, zs, ok):
        out = self._collect(T, P, zs, ok)
        n = T.shape[0]
        beta = np.where(fl.is_vapour_like(self._guard, T, P, zs), 1.0, 0.0)
        nan = np.full(n, np.nan)
        ph = {"Z": out["Z"], "density": out["density"], "h": out["h"], "s": out["s"],
              "molar_mass": zs @ self.comps.Ms}
        vap = {k: np.where(beta > 0, v, nan) for k, v in ph.items()}
        liq = {k: np.where(beta < 1, v, nan) for k, v in ph.items()}
        conv = ok & np.isfinite(out["h"])
        return States(T=T.copy(), P=P.copy(), h=out["h"], s=out["s"], Z=out["Z"], cp=out["cp"],
                      cv=out["cv"], jt=out["jt"], w=out["w"], density=out["density"],
                      molar_mass=zs @ self.comps.Ms, vapour_fraction=np.where(conv, beta, np.nan),
                      zs=zs.copy(), ys=zs.copy(), xs=zs.copy(), n_phases=np.ones(n, dtype=int),
                      converged=conv, vapour=vap, liquid=liq, components=self.comps.names,
                      model=self.model)

    def _refuse(self, two):
        if two.all() and two.size == 1:
            raise ModelError("this state splits into two phases; GERG-2008 is used for single-phase "
                             "states only here -- use a cubic model (peng-robinson, "
                             "soave-redlich-kwong) for phase equilibrium")

    def flash_TP(self, T, P, zs) -> States:
        two = self._guard_two_phase(T, P, zs)
        self._refuse(two)
        return self._states(T, P, zs, ~two)

    def flash_PH(self, P, h, zs, T_guess=None) -> States:
        return self._flash_P_X(P, h, zs, "h", T_guess)

    def flash_PS(self, P, s, zs, T_guess=None) -> States:
        return self._flash_P_X(P, s, zs, "s", T_guess)

    def _flash_P_X(self, P, target, zs, which, T_guess):
        n = P.shape[0]
        T = np.full(n, 300.0) if T_guess is None else T_guess.astype(float).copy()
        ok = np.zeros(n, dtype=bool)
        for k in range(n):
            self._set(zs[k])
            t = T[k]
            lo, hi = fl.T_LOW, fl.T_HIGH
            for _ in range(PH_MAX_ITER):
                g = self._tp(t, P[k])
                if g is None:
                    break
                val = g.h if which == "h" else g.s
                f = val - target[k]
                slope = g.cp if which == "h" else g.cp / t
                if f < 0:
                    lo = t
                else:
                    hi = t
                tn = t - f / slope if slope > 0 else 0.5 * (lo + hi)
                if not (lo < tn < hi) or not np.isfinite(tn):
                    tn = 0.5 * (lo + hi) if hi < fl.T_HIGH else min(1.2 * t, 0.5 * (t + hi))
                if abs(tn - t) < fl.PH_TOL_T:
                    ok[k] = True
                    break
                t = tn
            T[k] = t
        two = np.zeros(n, dtype=bool)
        two[ok] = self._guard_two_phase(T[ok], P[ok], zs[ok])
        self._refuse(two)
        return self._states(T, P, zs, ok & ~two)

    def saturation_T(self, P, zs, kind):  # pragma: no cover - guarded in Fluid
        raise ModelError("GERG-2008 is used for single-phase states only here")

    saturation_P = saturation_T
