"""GERG-2008 (ISO 20765-2; Kunz & Wagner, J. Chem. Eng. Data 57 (2012) 3032) through ``pyaga8``.

``pyaga8`` binds the NIST reference code of AGA Report No. 8 Part 2 (Lemmon & Bell). It is an
optional extra (``pip install letdown[gerg]``).

What letdown does with it:

* **Density root.** At a given (T, P) the equation may have a gas-like and a liquid-like density
  root (and, inside the two-phase region, both are mechanically stable). The reference code's
  gas search (flag 1, which also skips spurious roots; flag 0 where it refuses) and its liquid
  search (flag 2) are both run, roots with dP/drho <= 0 are dropped, and the root of lowest Gibbs
  energy is the state. (The gas search alone gave pure propane at 40 degC and 18 bar as a vapour of
  47 kg/m3; the stable root is the liquid of 469 kg/m3.)
* **Pure fluids: two phases.** The saturation temperature at P comes from the model itself (equal
  Gibbs energies of the two roots, Newton on T). A P-h or P-s flash whose target lies between the
  saturated liquid and vapour values returns the saturated state with its vapour fraction
  (cp infinite, Joule-Thomson coefficient from Clausius-Clapeyron, as for the cubic models).
* **Mixtures: single phase only.** Each mixture state is tested for stability twice: a
  tangent-plane test on GERG-2008 itself (chemical potentials from composition derivatives of the
  Gibbs energy, trial phases from Wilson K-values and, with water, a water-rich trial) and the
  Peng-Robinson test with the fluid's interaction parameters. The GERG-2008 test is skipped well
  above the composition's Peng-Robinson envelope, where no GERG-2008 split was found (the evidence
  at SKIP_MARGIN_K). A state either test finds unstable is refused (ModelError for a single state;
  a batch marks it unconverged) with a message to use a cubic model. A P-h/P-s answer must meet
  its target (to the enthalpy of 1e-6 K); one that cannot (the stable root jumps across the
  target) is refused the same way, never answered.
* **Phase label.** A single phase is named vapour at or above its estimated critical temperature
  (:func:`letdown.fluid.components.critical_temperature_estimate`, the rule of the cubic flash) and,
  below it, by the phase identification parameter of Venkatarathnam & Oellrich (Fluid Phase
  Equilib. 301 (2011) 225) computed on GERG-2008's own derivatives (liquid above 1). The name
  decides which separator outlet it leaves by.

Units of the binding: pressure kPa, density mol/dm3, enthalpy J/mol, entropy J/(mol K), Joule-Thomson
K/kPa. Its reference state is letdown's: the ideal gas at 298.15 K and 101.325 kPa has h = 0 and
s = 0 (the binding uses GERG-2008's own gas constant, 8.314472 J/(mol K)).

The binding computes one state per call, so this engine loops over the cases of a batch around
those calls; every case is computed by the same code whether alone or in a batch (except that the
GERG-2008 stability test is skipped only once a composition has had SKIP_AFTER states, which
changes the cost, not the answer, where the skip is right).

The code is in three rooms: :mod:`letdown.fluid.eos.gerg_binding` (the optional binding, the
component names, a density root's properties), :mod:`letdown.fluid.eos.gerg_stability` (the
tangent-plane test of mixtures on GERG-2008 and where it is skipped) and this module (the roots
at a state, pure-fluid saturation, the flashes); the names of the first two that callers use are
importable from here.
"""
from __future__ import annotations

import numpy as np

from ...errors import ModelError
from ..flash import twophase as fl
from ..components import ComponentSet, critical_temperature_estimate
from .cubic import PR, CubicEOS
from ..state import StateBatch
from .gerg_binding import (  # noqa: F401  (the binding's names, importable from here as before)
    GERG_NAMES, P_MAX, PIP_LIQUID, R_GERG, T_RANGE, _import, _Root)
from .gerg_stability import (  # noqa: F401  (the stability test's constants, as before)
    SKIP_AFTER, SKIP_CACHE_SIZE, SKIP_MARGIN_K, SKIP_T_MIN, SKIP_WINDOW_LNP, TPD_EPS,
    TPD_MAX_ITER, TPD_TOL, TPD_TRIVIAL, TPD_UNSTABLE, TPD_W_MIN, TPD_WATER_TRIAL, GergStability)

#: Temperatures a P-h/P-s solve may visit [K]: below ~50 K the density solvers of the reference
#: code fail for the light components; 1000 K is far beyond the model's extended range.
T_SOLVE = (50.0, 1000.0)
PH_MAX_ITER = 100
#: A P-h (P-s) answer must meet its target to the enthalpy (entropy) of this temperature error [K]
#: at the local slope (the cubic engine's criterion).
PH_RESIDUAL_K = 1e-6
#: Density search modes of the reference code: 1 = gas search with checks for spurious roots
#: (0 = plain gas search where 1 refuses). The liquid root is letdown's own search
#: (:meth:`GergEngine._liquid_root`); LIQUID_FLAG only names it.
GAS_FLAGS = (1, 0)
LIQUID_FLAG = 2
#: Liquid-root search: start-density raises, Newton iterations, convergence on rho [-].
LIQ_START_STEPS = 12
LIQ_START_GROW = 1.15
LIQ_MAX_ITER = 80
LIQ_TOL_REL = 1e-13
#: Spurious-root filter: the dilute-gas density (fraction of the ideal-gas density) the Gibbs
#: energy is compared with, and the largest |ln phi| of the mixture accepted [-] (physical states
#: of these gases stay far inside: ln phi of a heavy liquid at 150 K and 35 MPa is about -20).
DILUTE = 1e-7
LN_PHI_MAX = 60.0
#: Two roots are the same root when their densities agree to this relative amount [-].
SAME_ROOT_REL = 1e-7
#: Pure-fluid saturation: Newton iterations, and convergence on the temperature step [K].
SAT_MAX_ITER = 80
SAT_TOL_T = 1e-10
#: Saturation solves kept per engine (pressures visited again in a loop or a batch).
SAT_CACHE_SIZE = 4096
_TWO_PHASE_MSG = ("this state splits into two phases; GERG-2008 is used here for the phase "
                  "equilibrium of pure fluids and single-phase states of mixtures only -- use a "
                  "cubic model (peng-robinson, soave-redlich-kwong) for phase equilibrium")


class GergEngine(GergStability):
    """States on GERG-2008 for one component set (see the module docstring for what it answers)."""

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
        self._sat_cache = {}
        self._iw = comps.names.index("water") if "water" in comps.names else None
        # Peng-Robinson, with the fluid's interaction parameters: Wilson-type trial phases and a
        # second stability test for mixtures
        kijs = np.zeros((comps.n, comps.n)) if kijs is None else kijs
        self._guard = CubicEOS(comps, PR, kijs)
        self._ct_cache = {}       # composition bytes -> PR envelope summary, or None (no skip)
        self._ct_count = {}       # composition bytes -> states given the full test

    # ----------------------------------------------------------------- single calls
    def _set(self, z):
        key = tuple(z)
        if key != self._last:
            c = self._aga.Composition()
            for a, x in zip(self._attrs, z):
                setattr(c, a, float(x))
            self._g.set_composition(c)
            self._last = key
            self._z = np.asarray(z, dtype=float)

    def _eval(self, T, P, flag):
        """The root the reference code's density search ``flag`` finds at (T, P), or None
        (refused, or not mechanically stable)."""
        g = self._g
        g.temperature = float(T)
        g.pressure = float(P) / 1000.0
        g.d = 0.0          # no carry-over from the previous call (batch and scalar alike)
        try:
            g.calc_density(flag)
        except RuntimeError:
            return None
        g.calc_properties()
        if not (g.dp_dd > 0.0 and np.isfinite(g.g) and g.d > 0.0):
            return None
        return _Root(g)

    def _liquid_root(self, T, P, z, check=True):
        """The densest mechanically stable root at (T, P): Newton on P(rho) from above.

        The reference code's liquid search (flag 2) fails on cold liquids (pure propane at 250 K,
        10 bar; methane at 120 K, 10 bar). Where P(rho) is convex and increasing -- the liquid
        branch -- Newton from a density above the root descends monotonically onto it. The start
        is the Peng-Robinson co-volume density 1/b (a liquid lies below it), raised until the
        pressure there exceeds P. A descent that meets dP/drho <= 0 has no liquid root: None.
        """
        g = self._g
        g.temperature = float(T)
        Pk = float(P) / 1000.0
        RT = R_GERG * float(T)
        d = 1.0 / (float(z @ self._guard.bs) * 1000.0)           # [mol/dm3]
        for _ in range(LIQ_START_STEPS):
            g.d = d
            g.calc_properties()
            if g.dp_dd > 0.0 and g.d2p_dd2 > 0.0 and g.z * d * RT > Pk:
                break
            d *= LIQ_START_GROW
        else:
            return None
        for _ in range(LIQ_MAX_ITER):
            F = g.z * d * RT - Pk
            if not (g.dp_dd > 0.0) or not np.isfinite(F):
                return None
            dn = d - F / g.dp_dd
            if not dn > 0.0:
                return None
            done = abs(dn - d) <= LIQ_TOL_REL * d
            d = dn
            g.d = d
            g.calc_properties()
            if done:
                break
        else:
            return None
        if not (g.dp_dd > 0.0 and abs(g.z * d * RT - Pk) <= 1e-9 * Pk and np.isfinite(g.g)):
            return None
        return self._physical(_Root(g), T, P) if check else _Root(g)

    def _physical(self, r, T, P):
        """False for a spurious root: at low temperatures the equation's P(rho) oscillates wildly
        between the gas and liquid branches (ISO 20765-2 gas 1 made heavy, 220 K: pressures of
        -6e9 Pa at 4.5 mol/dm3) and has mechanically stable roots there, with absurd Gibbs energies
        (ln phi of -300). A root is kept when cv > 0, cp >= cv, the speed of sound is finite and
        the mixture's ln phi (from the Gibbs energy against the dilute gas) is within
        +-LN_PHI_MAX."""
        if r is None:
            return None
        if not (r.cv > 0.0 and r.cp >= r.cv and np.isfinite(r.w) and r.w > 0.0):
            return None
        g = self._g
        RT = R_GERG * float(T)
        g.d = float(P) / 1000.0 / RT * DILUTE
        g.calc_properties()
        g_dilute = g.g
        g.d = r.d
        ln_phi = (r.g - g_dilute) / RT + np.log(DILUTE)
        if not abs(ln_phi) < LN_PHI_MAX:
            return None
        return r

    def _gas_root(self, T, P, check=True):
        for flag in GAS_FLAGS:
            r = self._eval(T, P, flag)
            if check:
                r = self._physical(r, T, P)
            if r is not None:
                return r
        return None

    def _roots(self, T, P):
        """(gas-search root, liquid-search root); either may be None; the same root twice where
        the equation has one root only."""
        return self._gas_root(T, P), self._liquid_root(T, P, self._z)

    def _stable(self, T, P):
        """The density root of lowest Gibbs energy at (T, P), or None where there is none."""
        a, b = self._roots(T, P)
        if a is None or b is None:
            return a if b is None else b
        return b if b.g < a.g else a

    # ----------------------------------------------------------------- pure-fluid saturation
    def _saturation(self, P, ip):
        """Saturation of the pure component ``ip`` (composition already set) at P from the model
        itself: (T, gas root, liquid root), or None above the critical pressure or where the two
        roots merge (near the critical point)."""
        key = (ip, float(P))
        if key in self._sat_cache:
            return self._sat_cache[key]
        res = self._saturation_solve(P, ip)
        if len(self._sat_cache) >= SAT_CACHE_SIZE:
            self._sat_cache.clear()
        self._sat_cache[key] = res
        return res

    def _saturation_solve(self, P, ip):
        Tc = self.comps.Tcs[ip]
        if P >= 1.05 * self.comps.Pcs[ip]:
            return None
        T0 = fl.pure_saturation_T(self._guard, np.array([min(P, 0.999 * self.comps.Pcs[ip])]),
                                  np.array([ip]))[0]
        if not np.isfinite(T0):
            T0 = 0.99 * Tc
        lo, hi = 0.3 * Tc, 1.1 * Tc
        T = T0
        for _ in range(SAT_MAX_ITER):
            gv, gl = self._roots(T, P)
            two = (gv is not None and gl is not None and gl.d > gv.d * (1.0 + SAME_ROOT_REL))
            if not two:
                one = gv if gl is None else gl
                if one is None:
                    return None
                # one root only: a liquid lies below the saturation temperature, a gas above
                if one.is_liquid:
                    lo = T
                else:
                    hi = T
                Tn = 0.5 * (lo + hi)
            else:
                F = gv.g - gl.g                   # > 0: the liquid is stable, T is below Tsat
                if F > 0:
                    lo = T
                else:
                    hi = T
                dF = -(gv.s - gl.s)
                Tn = T - F / dF if dF < 0 else 0.5 * (lo + hi)
                if not (lo < Tn < hi):
                    Tn = 0.5 * (lo + hi)
                if abs(Tn - T) < SAT_TOL_T and abs(F) < 1e-9 * R_GERG * T:
                    return (T, gv, gl)
            if hi - lo < SAT_TOL_T:
                break
            T = Tn
        return None

    # ----------------------------------------------------------------- assembling states
    def _states(self, T, P, zs, roots, ok, sat=None):
        """States from one root per case (``roots[k]``), ``ok`` the cases answered; ``sat`` maps a
        case to (vapour fraction, gas root, liquid root) where a pure fluid is in two phases."""
        n = T.shape[0]
        sat = sat or {}
        keys = ("h", "s", "Z", "cp", "cv", "jt", "w", "density")
        out = {k: np.full(n, np.nan) for k in keys}
        Ms = zs @ self.comps.Ms
        beta = np.full(n, np.nan)
        # a single phase at or above its estimated critical temperature is a gas, whatever its
        # phase identification parameter (as letdown.fluid.flash.twophase.is_vapour_like)
        gas_by_T = T >= critical_temperature_estimate(self.comps, zs)
        nph = np.ones(n, dtype=int)
        nan = np.full(n, np.nan)
        vap = {k: nan.copy() for k in ("Z", "density", "h", "s", "molar_mass")}
        liq = {k: nan.copy() for k in ("Z", "density", "h", "s", "molar_mass")}
        for k in range(n):
            if not ok[k]:
                continue
            if k in sat:
                b, gv, gl = sat[k]
                vv, vl = 1.0 / gv.d, 1.0 / gl.d               # [dm3/mol]
                v = b * vv + (1.0 - b) * vl
                out["h"][k] = b * gv.h + (1.0 - b) * gl.h
                out["s"][k] = b * gv.s + (1.0 - b) * gl.s
                out["Z"][k] = P[k] * v / 1000.0 / (R_GERG * T[k])
                out["density"][k] = Ms[k] / v * 1000.0
                out["cp"][k] = np.inf     # a pure fluid boils at constant T
                # Clausius-Clapeyron: along an isenthalp in the dome T follows saturation
                out["jt"][k] = T[k] * (vv - vl) / 1000.0 / (gv.h - gl.h)
                beta[k] = b
                nph[k] = 2
                for ph, r in ((vap, gv), (liq, gl)):
                    ph["Z"][k] = r.z
                    ph["density"][k] = r.d * 1000.0 * Ms[k]
                    ph["h"][k] = r.h
                    ph["s"][k] = r.s
                    ph["molar_mass"][k] = Ms[k]
                continue
            r = roots[k]
            out["h"][k] = r.h
            out["s"][k] = r.s
            out["Z"][k] = r.z
            out["cp"][k] = r.cp
            out["cv"][k] = r.cv
            out["jt"][k] = r.jt
            out["w"][k] = r.w
            out["density"][k] = r.d * 1000.0 * Ms[k]
            liquid = r.is_liquid and not gas_by_T[k]
            beta[k] = 0.0 if liquid else 1.0
            ph = liq if liquid else vap
            ph["Z"][k] = r.z
            ph["density"][k] = out["density"][k]
            ph["h"][k] = r.h
            ph["s"][k] = r.s
            ph["molar_mass"][k] = Ms[k]
        conv = ok & np.isfinite(out["h"])
        return StateBatch(T=T.copy(), P=P.copy(), h=out["h"], s=out["s"], Z=out["Z"], cp=out["cp"],
                      cv=out["cv"], jt=out["jt"], w=out["w"], density=out["density"],
                      molar_mass=Ms, vapour_fraction=np.where(conv, beta, np.nan),
                      zs=zs.copy(), ys=zs.copy(), xs=zs.copy(), n_phases=nph,
                      converged=conv, vapour=vap, liquid=liq, components=self.comps.names,
                      model=self.model)

    @staticmethod
    def _refuse(two):
        if two.size == 1 and two.all():
            raise ModelError(_TWO_PHASE_MSG)

    # ----------------------------------------------------------------- batch API
    def flash_TP(self, T, P, zs) -> StateBatch:
        n = T.shape[0]
        pure, _ = fl._pure_index(zs)
        roots = [None] * n
        ok = np.zeros(n, dtype=bool)
        for k in range(n):
            self._set(zs[k])
            roots[k] = self._stable(T[k], P[k])
            ok[k] = roots[k] is not None
        two = np.zeros(n, dtype=bool)
        m = ok & ~pure
        two[m] = self._unstable(T[m], P[m], zs[m])
        self._refuse(two)
        return self._states(T, P, zs, roots, ok & ~two)

    def flash_PH(self, P, h, zs, T_guess=None) -> StateBatch:
        return self._flash_P_X(P, h, zs, "h", T_guess)

    def flash_PS(self, P, s, zs, T_guess=None) -> StateBatch:
        return self._flash_P_X(P, s, zs, "s", T_guess)

    def _solve_T(self, P, target, which, t, lo, hi):
        """Temperature at P where the stable root meets ``target`` inside (lo, hi): (T, root,
        met) -- met is False where the bracket closed on a jump of the stable root (two phases)
        or the solver failed."""
        r = None
        t_ok = None                               # the last temperature with a root
        for _ in range(PH_MAX_ITER):
            r = self._stable(t, P)
            if r is None:
                # no root here (the density searches fail on very cold states): step back
                # towards the last temperature that had one
                if t_ok is None or t > t_ok:
                    hi = t
                    t = 0.5 * (lo + t) if t_ok is None else 0.5 * (t_ok + t)
                else:
                    lo = t
                    t = 0.5 * (t + t_ok)
                continue
            t_ok = t
            f = (r.h if which == "h" else r.s) - target
            slope = r.cp if which == "h" else r.cp / t
            if not (np.isfinite(slope) and slope > 0):
                slope = np.nan
            if f < 0:
                lo = t
            else:
                hi = t
            if np.isfinite(slope) and abs(f) <= slope * PH_RESIDUAL_K:
                return t, r, True
            tn = t - f / slope if np.isfinite(slope) else np.nan
            if not (lo < tn < hi) or not np.isfinite(tn):
                if hi >= T_SOLVE[1]:
                    tn = min(1.2 * t, 0.5 * (t + hi))
                elif lo <= T_SOLVE[0]:
                    tn = max(0.8 * t, 0.5 * (t + lo))
                else:
                    tn = 0.5 * (lo + hi)
            if hi - lo < fl.PH_TOL_T * max(t, 1.0):
                break
            t = tn
        return t, r, False

    def _flash_P_X(self, P, target, zs, which, T_guess):
        n = P.shape[0]
        T = np.full(n, 300.0) if T_guess is None else T_guess.astype(float).copy()
        T = np.clip(np.where(np.isfinite(T), T, 300.0), T_SOLVE[0] + 1.0, T_SOLVE[1] - 1.0)
        pure, ip = fl._pure_index(zs)
        roots = [None] * n
        ok = np.zeros(n, dtype=bool)
        sat = {}
        for k in range(n):
            self._set(zs[k])
            lo, hi = T_SOLVE
            t0 = T[k]
            if pure[k]:
                sv = self._saturation(P[k], ip[k])
                if sv is not None:
                    Ts, gv, gl = sv
                    xv = gv.h if which == "h" else gv.s
                    xl = gl.h if which == "h" else gl.s
                    if xl <= target[k] <= xv:
                        T[k] = Ts
                        sat[k] = ((target[k] - xl) / (xv - xl), gv, gl)
                        ok[k] = True
                        continue
                    if target[k] < xl:
                        hi = Ts
                    else:
                        lo = Ts
                    if not (lo < t0 < hi):
                        t0 = Ts - 1.0 if target[k] < xl else Ts + 1.0
            T[k], roots[k], ok[k] = self._solve_T(P[k], target[k], which, t0, lo, hi)
        # mixtures: a state the stable root cannot meet lies in two phases; refuse those
        # that a stability test finds unstable, and every answered state as well
        two = np.zeros(n, dtype=bool)
        m = ~pure & np.array([r is not None for r in roots])
        two[m] = self._unstable(T[m], P[m], zs[m])
        self._refuse(two)
        return self._states(T, P, zs, roots, ok & ~two, sat)

    # ----------------------------------------------------------------- saturation points
    def saturation_T(self, P, zs, kind):
        """Saturation temperature of a pure fluid from the model itself (the dew and bubble
        points coincide); mixtures are refused (no phase equilibrium of mixtures here)."""
        pure, ip = fl._pure_index(zs)
        if not pure.all():
            raise ModelError("GERG-2008 is used here for single-phase states of mixtures only; "
                             "use a cubic model (peng-robinson, soave-redlich-kwong) for dew and "
                             "bubble points")
        out = np.full(P.shape[0], np.nan)
        for k in range(P.shape[0]):
            self._set(zs[k])
            sv = self._saturation(P[k], ip[k])
            if sv is not None:
                out[k] = sv[0]
        return out

    def saturation_P(self, T, zs, kind):
        """Saturation pressure of a pure fluid at T from the model itself (equal Gibbs energies of
        the two roots; Newton on ln P with d(g_V - g_L)/d ln P = P (v_V - v_L)); NaN at or above
        the critical temperature. Mixtures are refused."""
        pure, ip = fl._pure_index(zs)
        if not pure.all():
            raise ModelError("GERG-2008 is used here for single-phase states of mixtures only; "
                             "use a cubic model (peng-robinson, soave-redlich-kwong) for dew and "
                             "bubble points")
        out = np.full(T.shape[0], np.nan)
        for k in range(T.shape[0]):
            self._set(zs[k])
            out[k] = self._saturation_P_solve(T[k], ip[k])
        return out

    def _saturation_P_solve(self, T, ip):
        if T >= 1.05 * self.comps.Tcs[ip]:
            return np.nan
        P0 = fl.pure_saturation_P(self._guard, np.array([min(T, 0.999 * self.comps.Tcs[ip])]),
                                  np.array([ip]))[0][0]
        if not np.isfinite(P0):
            P0 = 0.9 * self.comps.Pcs[ip]
        lo, hi = np.log(1e-3), np.log(1.2 * self.comps.Pcs[ip])
        x = np.log(P0)
        for _ in range(SAT_MAX_ITER):
            P = np.exp(x)
            gv, gl = self._roots(T, P)
            two = (gv is not None and gl is not None and gl.d > gv.d * (1.0 + SAME_ROOT_REL))
            if not two:
                one = gv if gl is None else gl
                if one is None:
                    return np.nan
                # one root only: a liquid lies above the saturation pressure, a gas below
                if one.is_liquid:
                    hi = x
                else:
                    lo = x
                xn = 0.5 * (lo + hi)
            else:
                F = gv.g - gl.g                   # > 0: the liquid is stable, P is above Psat
                if F > 0:
                    hi = x
                else:
                    lo = x
                dF = P * (1.0 / gv.d - 1.0 / gl.d) / 1000.0       # [J/mol] per unit ln P
                xn = x - F / dF if dF > 0 else 0.5 * (lo + hi)
                if not (lo < xn < hi):
                    xn = 0.5 * (lo + hi)
                if abs(xn - x) < 1e-12 and abs(F) < 1e-9 * R_GERG * T:
                    return P
            if hi - lo < 1e-13:
                break
            x = xn
        return np.nan
