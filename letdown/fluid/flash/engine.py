"""Batch state calculations on a cubic equation of state: PT, PH, PS flashes and saturation points.

This is the engine behind :class:`letdown.Fluid` for the cubic models. Everything is vectorised over
cases: T, P, h, s of shape (n,) and compositions of shape (n, nc).

Some answers take one more step (:mod:`letdown.fluid.flash.threestates`): every answer of a
case with water, and the cold (or acid-gas-rich) two-phase answers of water-free mixtures, are
tested for a third phase, and where one is found the state is the three-phase equilibrium
(:mod:`letdown.fluid.flash.threephase`; P-h and P-s solve T again on it,
:mod:`letdown.fluid.flash.threephase_px`). Other states are exactly the two-phase flash's. The
boundary scans (``saturation_T``, ``saturation_P``) are in :mod:`letdown.fluid.flash.boundaryscan`.
"""
from __future__ import annotations

import numpy as np

from . import twophase as fl
from ..kernels import native
from ..components import P_REF, R, ComponentSet
from ..eos.cubic import CubicEOS
from ..state import StateBatch
from .steps import (TWO_PHASE_DERIV_TOL, TWO_PHASE_DP_REL, TWO_PHASE_DT,  # noqa: F401
                    blank_unconverged as _blank_unconverged, take_split as _take)
from .boundaryscan import BoundaryScan
from .threestates import ThreePhaseStates

#: P-h/P-s iterations allowed on a trusted single phase before every iterate is stability-tested
#: (Newton from the ideal-gas guess needs 3-5 in one phase).
TRUST_ITERATIONS = 8
#: Split tolerance on ln K for P-h/P-s iterates while the temperature steps exceed
#: LOOSE_UNTIL_STEP [K]: the outer Newton needs no more; the last iterates use the full tolerance.
LOOSE_TOL = 1e-7
LOOSE_UNTIL_STEP = 0.05
#: A P-h (P-s) answer must meet its target to the enthalpy (entropy) of this temperature error [K]
#: at the local slope; a bracket that closes with a larger residual marks the case unconverged.
PH_RESIDUAL_K = 1e-6
#: A pure fluid's single-phase P-h (P-s) answer must meet its target to the enthalpy (entropy) of
#: this temperature error [K]; looser than PH_RESIDUAL_K, since its Newton loop stops on the step
#: (PH_TOL_T), but far below anything a report shows.
PURE_RESIDUAL_K = 1e-5
#: Temperature step of the forward difference that gives the slope on a first two-phase P-h
#: iterate [K].
PH_FD_STEP = 1e-3
#: A P-h (P-s) residual below this fraction of the slope scale ends the iteration at once.
PH_F_TINY_REL = 1e-11
#: Slope scale where there is no single-phase cp (two phases) [J/(mol K)].
PH_SLOPE_FALLBACK = 100.0
#: Retry of a P-h (P-s) case the Newton loop leaves unsolved: a bracketed root (Illinois) on
#: P-T flashes that each start afresh (stability test, no warm start), over [fl.T_LOW, fl.T_HIGH].
#: Warm-started splits can follow a metastable branch (a CO2-rich liquid-liquid split carried
#: from 41 K up to 144 K across the vapour-liquid region of a cold gas) and close the bracket on
#: its jump; fresh flashes follow the lowest Gibbs energy found. The residual must fall to
#: RETRY_F_REL of the target's size (or 1e-9 of the slope scale), else the case stays unsolved.
RETRY_F_REL = 1e-11
#: A cold two-phase P-h (P-s) answer is confirmed when a fresh P-T flash at its temperature gives
#: the same split: vapour fraction and phase compositions within this [-] (both converged to
#: fl.LN_TOL on ln K: they then agree to ~1e-10; another split differs by far more).
VERIFY_SPLIT_TOL = 1e-7
RETRY_MAX_ITER = 200
#: Bracket still open on one side: step the temperature by these factors (at most half-way).
BRACKET_GROW = 1.2
BRACKET_SHRINK = 0.8
#: Ideal-gas starting temperature: Newton steps from IDEAL_T_START [K], kept IDEAL_T_MARGIN [K]
#: inside the P-h bracket.
IDEAL_T_START = 300.0
IDEAL_T_STEPS = 8
IDEAL_T_MARGIN = 1.0


def native_solve_constants():
    """The constants of the P-h / P-s iteration, for the compiled version (one source of truth)."""
    return dict(max_iter=fl.PH_MAX_ITER, trust_iterations=TRUST_ITERATIONS, loose_tol=LOOSE_TOL,
                loose_until_step=LOOSE_UNTIL_STEP, residual_K=PH_RESIDUAL_K, tol_T=fl.PH_TOL_T,
                T_low=fl.T_LOW, T_high=fl.T_HIGH, fd_step_T=PH_FD_STEP, f_tiny_rel=PH_F_TINY_REL,
                slope_fallback=PH_SLOPE_FALLBACK, bracket_grow=BRACKET_GROW,
                bracket_shrink=BRACKET_SHRINK, ideal_T_start=IDEAL_T_START,
                ideal_T_steps=IDEAL_T_STEPS, ideal_T_margin=IDEAL_T_MARGIN)


class CubicEngine(ThreePhaseStates, BoundaryScan):
    """Flash calculations for one component set on one cubic EOS.

    Parameters
    ----------
    comps : ComponentSet
    eos : CubicEOS
    volume_shift : bool
        Report volumes and densities with the Peneloux translation.
    """

    def __init__(self, comps: ComponentSet, eos: CubicEOS, volume_shift: bool = False):
        self.comps = comps
        self.eos = eos
        self.volume_shift = volume_shift
        self.model = eos.kind.name
        #: index of water among the components, or None: only fluids with water take the
        #: three-phase path (the others' states are exactly the two-phase flash's)
        self._iw = comps.names.index("water") if "water" in comps.names else None

    # ----------------------------------------------------------------- phase properties
    def _phase(self, T, P, xs, code):
        """All properties of phases with compositions xs, root code (+1 V, -1 L, 0 stable)."""
        if native.AVAILABLE:
            return native.phase(self.eos, T, P, xs, code, self.volume_shift)
        c = self.comps
        p = self.eos.properties(T, P, xs, code)
        h0 = np.einsum("ij,ij->i", xs, c.h0(T))
        with np.errstate(divide="ignore", invalid="ignore"):
            mix = np.sum(np.where(xs > 0, xs * np.log(xs), 0.0), axis=1)
        s0 = np.einsum("ij,ij->i", xs, c.s0(T)) - R * np.log(P / P_REF) - R * mix
        cp0 = np.einsum("ij,ij->i", xs, c.cp0(T))
        h = h0 + p["h_res"]
        s = s0 + p["s_res"]
        cv = cp0 - R + p["cv_res"]
        dvdT = -p["dPdT"] / p["dPdv"]
        cp = cv + T * p["dPdT"] * dvdT
        v = p["v"]
        M = xs @ c.Ms
        jt = (T * dvdT - v) / cp
        with np.errstate(invalid="ignore"):
            w = np.sqrt(-v * v * (cp / cv) * p["dPdv"] / M)
        v_rep = v - p["c_shift"] if self.volume_shift else v
        return {"h": h, "s": s, "cp": cp, "cv": cv, "jt": jt, "w": w, "v": v_rep,
                "Z": P * v_rep / (R * T), "density": M / v_rep, "molar_mass": M}

    def _assemble(self, T, P, zs, split: fl.PTSplit, extra_conv=None, K=None):
        if native.AVAILABLE:
            # the same numbers from one compiled call (letdown/fluid/_flashkernels.c)
            out, vap, liq = native.assemble(self.eos, T, P, zs, split.n_phases, split.beta,
                                            split.xs, split.ys, self.volume_shift, TWO_PHASE_DT,
                                            TWO_PHASE_DP_REL, TWO_PHASE_DERIV_TOL,
                                            fl.native_flash_constants)
        else:
            out, vap, liq = self._assemble_numbers(T, P, zs, split)
        beta = split.beta
        conv = split.report.converged.copy()
        if extra_conv is not None:
            conv &= extra_conv
        M = zs @ self.comps.Ms
        res = StateBatch(T=T.copy(), P=P.copy(), h=out["h"], s=out["s"], Z=out["Z"], cp=out["cp"],
                     cv=out["cv"], jt=out["jt"], w=out["w"], density=out["density"],
                     molar_mass=M, vapour_fraction=beta.copy(), zs=zs.copy(), ys=split.ys.copy(),
                     xs=split.xs.copy(), n_phases=split.n_phases.copy(), converged=conv,
                     vapour=vap, liquid=liq, components=self.comps.names, model=self.model, K=K)
        return _blank_unconverged(res)

    def _assemble_numbers(self, T, P, zs, split: fl.PTSplit):
        """Properties of the whole and per phase (vapour, liquid) of the states of a split."""
        n = T.shape[0]
        two = split.n_phases == 2
        beta = split.beta
        A = self._phase(T, P, np.where(two[:, None], split.ys, zs), 0)
        out = {k: A[k].copy() for k in ("h", "s", "cp", "cv", "jt", "w", "Z", "density")}
        nan = np.full(n, np.nan)
        vap = {k: np.where(beta > 0, A[k], nan) for k in ("Z", "density", "h", "s", "molar_mass")}
        liq = {k: np.where(beta < 1, A[k], nan) for k in ("Z", "density", "h", "s", "molar_mass")}
        if two.any():
            i = np.nonzero(two)[0]
            L = self._phase(T[i], P[i], split.xs[i], 0)
            b = beta[i]
            out["h"][i] = b * A["h"][i] + (1 - b) * L["h"]
            out["s"][i] = b * A["s"][i] + (1 - b) * L["s"]
            v = b * A["v"][i] + (1 - b) * L["v"]
            Mz = zs[i] @ self.comps.Ms
            out["Z"][i] = P[i] * v / (R * T[i])
            out["density"][i] = Mz / v
            for k in ("Z", "density", "h", "s", "molar_mass"):
                liq[k][i] = L[k]
                vap[k][i] = A[k][i]
            cp, jt = self._two_phase_derivatives(T[i], P[i], zs[i], split, i, out["h"][i])
            out["cp"][i] = cp
            out["jt"][i] = jt
            out["cv"][i] = np.nan
            out["w"][i] = np.nan
        return out, vap, liq

    def _two_phase_derivatives(self, T, P, zs, split, i, h):
        """Effective cp = (dh/dT)_P and jt = -(dh/dP)_T / cp across a two-phase state, by central
        differences of warm-started flashes."""
        K = _k_values(split.ys[i], split.xs[i])
        m = T.shape[0]
        # both neighbours in one batch: (T + dT, P) and (T, P (1 + dP))
        T2 = np.concatenate([T + TWO_PHASE_DT, T])
        P2 = np.concatenate([P, P * (1.0 + TWO_PHASE_DP_REL)])
        z2 = np.concatenate([zs, zs])
        sp = fl.flash_TP(self.eos, T2, P2, z2, K_init=np.concatenate([K, K]),
                         assume=np.full(2 * m, 2), tol=TWO_PHASE_DERIV_TOL)
        h2 = self._h_of_split(T2, P2, z2, sp)
        cp = (h2[:m] - h) / TWO_PHASE_DT
        dhdP = (h2[m:] - h) / (TWO_PHASE_DP_REL * P)
        return cp, -dhdP / cp

    def _h_of_split(self, T, P, zs, sp):
        """Enthalpy of a split [J/mol], no other properties."""
        return self._hs_of_split(T, P, zs, sp)[0]

    def _hs_of_split(self, T, P, zs, sp):
        """Enthalpy [J/mol], entropy [J/(mol K)] and single-phase cp (NaN for two phases)."""
        if native.AVAILABLE:
            return native.hs_of_split(self.eos, T, P, zs, sp.n_phases, sp.beta, sp.xs, sp.ys)
        c = self.comps
        two = sp.n_phases == 2
        xa = np.where(two[:, None], sp.ys, zs)
        pA = self.eos.properties(T, P, xa, 0)
        h0 = c.h0(T)
        s0 = c.s0(T)
        cp0 = c.cp0(T)

        def hs(x, p):
            with np.errstate(divide="ignore", invalid="ignore"):
                mix = np.sum(np.where(x > 0, x * np.log(x), 0.0), axis=1)
            hh = np.einsum("ij,ij->i", x, h0) + p["h_res"]
            ss = (np.einsum("ij,ij->i", x, s0) - R * np.log(P / P_REF) - R * mix + p["s_res"])
            return hh, ss

        hA, sA = hs(xa, pA)
        cpA = np.einsum("ij,ij->i", xa, cp0) - R + pA["cv_res"]
        dvdT = -pA["dPdT"] / pA["dPdv"]
        cpA = cpA + T * pA["dPdT"] * dvdT
        h, s, cp = hA, sA, cpA
        if two.any():
            pL = self.eos.properties(T, P, sp.xs, 0)
            hL, sL = hs(sp.xs, pL)
            b = sp.beta
            h = np.where(two, b * hA + (1 - b) * hL, hA)
            s = np.where(two, b * sA + (1 - b) * sL, sA)
            cp = np.where(two, np.nan, cpA)
        return h, s, cp

    # ----------------------------------------------------------------- flashes
    def flash_TP(self, T, P, zs, cold=True) -> StateBatch:
        """Isothermal flash of a batch (three-phase where it applies: :mod:`.threestates`);
        ``cold=False`` leaves out the stability test's cold trial phases (fl.stability)."""
        _check_TP(T, P)
        split = fl.flash_TP(self.eos, T, P, zs, cold=cold)
        st = self._assemble(T, P, zs, split)
        if not self._three_phase_needed(st):
            return st
        return self._three_phase_TP(st, split)

    def flash_PH(self, P, h, zs, T_guess=None) -> StateBatch:
        """Isenthalpic flash of a batch (h in J/mol)."""
        return self._flash_P_X(P, h, zs, "h", T_guess)

    def flash_PS(self, P, s, zs, T_guess=None) -> StateBatch:
        """Isentropic flash of a batch (s in J/(mol K))."""
        return self._flash_P_X(P, s, zs, "s", T_guess)

    def _flash_P_X(self, P, target, zs, which, T_guess):
        st = self._flash_P_X_two(P, target, zs, which, T_guess)
        if not self._three_phase_needed(st):
            return st
        return self._three_phase_PX(st, target, which, T_guess)

    def _flash_P_X_two(self, P, target, zs, which, T_guess):
        """The P-h / P-s flash on the two-phase equilibrium (all a fluid without water needs)."""
        n = P.shape[0]
        _check_TP(np.full(n, 300.0), P)
        pure, ip = fl._pure_index(zs)
        if not pure.any():
            # mixtures only (the usual batch): no scatter into a larger batch
            T, conv, sp = self._solve_T_mixture(P, target, zs, which, T_guess)
            split = fl.PTSplit(sp.beta, sp.xs, sp.ys, sp.n_phases, sp.beta >= 1,
                               fl.SolveReport(conv, np.zeros(n, int), np.zeros(n),
                                              f"P{which} flash"))
            return self._assemble(T, P, zs, split)
        T = np.empty(n)
        conv = np.zeros(n, dtype=bool)
        out_split = None
        if (~pure).any():
            idx = np.nonzero(~pure)[0]
            Tg = None if T_guess is None else T_guess[idx]
            Ti, ok, sp = self._solve_T_mixture(P[idx], target[idx], zs[idx], which, Tg)
            T[idx] = Ti
            conv[idx] = ok
            out_split = (idx, sp)
        beta = np.empty(n)
        xs = zs.copy()
        ys = zs.copy()
        nph = np.ones(n, dtype=int)
        if out_split is not None:
            idx, sp = out_split
            beta[idx] = sp.beta
            xs[idx] = sp.xs
            ys[idx] = sp.ys
            nph[idx] = sp.n_phases
        if pure.any():
            idx = np.nonzero(pure)[0]
            Ti, bi, ok = self._solve_T_pure(P[idx], target[idx], zs[idx], ip[idx], which, T_guess)
            T[idx] = Ti
            beta[idx] = bi
            conv[idx] = ok
            nph[idx] = np.where((bi > 0) & (bi < 1), 2, 1)
        split = fl.PTSplit(beta, xs, ys, nph, beta >= 1,
                           fl.SolveReport(conv, np.zeros(n, int), np.zeros(n), f"P{which} flash"))
        st = self._assemble(T, P, zs, split)
        if pure.any():
            st = self._fix_pure_two_phase(st, pure)
        return st

    def _fix_pure_two_phase(self, st: StateBatch, pure):
        """For a pure fluid in its dome, phases share the composition; recompute both phases."""
        i = np.nonzero(pure & (st.n_phases == 2))[0]
        if i.size == 0:
            return st
        T, P, zs = st.T[i], st.P[i], st.zs[i]
        V = self._phase(T, P, zs, 1)
        L = self._phase(T, P, zs, -1)
        b = st.vapour_fraction[i]
        h = st.h.copy(); s = st.s.copy(); Z = st.Z.copy(); rho = st.density.copy()
        cp = st.cp.copy(); cv = st.cv.copy(); jt = st.jt.copy(); w = st.w.copy()
        h[i] = b * V["h"] + (1 - b) * L["h"]
        s[i] = b * V["s"] + (1 - b) * L["s"]
        v = b * V["v"] + (1 - b) * L["v"]
        Z[i] = P * v / (R * T)
        rho[i] = V["molar_mass"] / v
        cp[i] = np.inf   # a pure fluid boils at constant T: (dh/dT)_P is unbounded
        cv[i] = np.nan
        w[i] = np.nan
        # Clausius-Clapeyron: (dT/dP)_sat = T dv / dh, and along an isenthalp inside the dome T
        # follows the saturation line
        jt[i] = T * (V["v"] - L["v"]) / (V["h"] - L["h"])
        vap = {k: a.copy() for k, a in st.vapour.items()}
        liq = {k: a.copy() for k, a in st.liquid.items()}
        for k in ("Z", "density", "h", "s", "molar_mass"):
            vap[k][i] = V[k]
            liq[k][i] = L[k]
        from dataclasses import replace
        return replace(st, h=h, s=s, Z=Z, density=rho, cp=cp, cv=cv, jt=jt, w=w, vapour=vap,
                       liquid=liq)

    def _solve_T_mixture(self, P, target, zs, which, T_guess):
        """Safeguarded Newton on T for h(T, P) = target or s(T, P) = target.

        The first iterate is flashed with a stability test. While a case stays single-phase, its
        next iterates trust that phase count (no stability test) and the converged temperature is
        verified by a stability test; if that finds a second phase the case restarts its bracket
        and from then on every iterate is a true equilibrium state: single-phase iterates tested
        for stability, two-phase iterates from a warm-started split (a split that collapses is
        re-tested next pass). h(T) at fixed P is then continuous and increasing, so the bracket
        [lo, hi] built from the signs of the residual holds the answer. Slopes: the analytic cp in
        one phase; a secant (or, on a first two-phase step, a forward difference) in two.
        """
        n = P.shape[0]
        eos = self.eos
        if native.AVAILABLE:
            # the same iteration, case by case, in compiled code (letdown/fluid/_flashkernels.c)
            Tg = None if T_guess is None else T_guess.astype(float)
            T, ok, beta, xs, ys, nph = native.solve_T(eos, P, target, zs, which == "s", Tg,
                                                      fl.native_flash_constants,
                                                      native_solve_constants)
            split = fl.PTSplit(beta, xs, ys, nph, beta >= 1,
                               fl.SolveReport(ok, np.zeros(n, int), np.zeros(n), ""))
            return self._retry_fresh(P, target, zs, which, T, ok, split)
        T = self._initial_T(P, target, zs, which) if T_guess is None else T_guess.astype(float).copy()
        lo = np.full(n, fl.T_LOW)
        hi = np.full(n, fl.T_HIGH)
        assume = np.zeros(n, dtype=int)
        trust = np.ones(n, dtype=bool)          # skip stability tests on single-phase iterates
        loose = np.ones(n, dtype=bool)          # two-phase iterates converged loosely while far
        verified = np.zeros(n, dtype=bool)
        K = np.ones(zs.shape)
        conv = np.zeros(n, dtype=bool)
        failed = np.zeros(n, dtype=bool)
        prev_T = np.full(n, np.nan)
        prev_f = np.full(n, np.nan)
        beta = np.ones(n)
        xs = zs.copy()
        ys = zs.copy()
        nph = np.ones(n, dtype=int)
        for it in range(fl.PH_MAX_ITER):
            if verified.all():
                break
            i = np.nonzero(~verified)[0]
            Ti, Pi, zi = T[i], P[i], zs[i]
            check = conv[i]                      # converged on trust: this pass verifies
            a = np.where(check, 0, assume[i])
            sp = _flash_TP_mixed_tol(eos, Ti, Pi, zi, K[i], a, loose[i])
            two = sp.n_phases == 2
            beta[i], xs[i], ys[i], nph[i] = sp.beta, sp.xs, sp.ys, sp.n_phases
            K[i] = np.where(two[:, None], _k_values(sp.ys, sp.xs), K[i])
            flipped = check & two & (assume[i] != 2)
            verified[i] = check & ~flipped
            if flipped.any():
                # the trusted single phase was metastable: its residuals said nothing about the
                # true h(T); restart the bracket and test every iterate from now on
                fi = i[flipped]
                lo[fi], hi[fi] = fl.T_LOW, fl.T_HIGH
                prev_T[fi], prev_f[fi] = np.nan, np.nan
                trust[fi] = False
                conv[fi] = False
            restart = np.zeros(i.size, dtype=bool)
            if it == TRUST_ITERATIONS:
                # still going after a few trusted steps: the single phase may be metastable (its
                # h(T) can jump between roots); restart those cases on true equilibrium states,
                # re-evaluating the current temperature with a stability test
                restart = trust[i] & ~conv[i] & (a == 1)
                slow = i[restart]
                lo[slow], hi[slow] = fl.T_LOW, fl.T_HIGH
                prev_T[slow], prev_f[slow] = np.nan, np.nan
                trust[slow] = False
            assume[i] = np.where(two, 2, np.where(trust[i], 1, 0))
            keep = ~verified[i]
            if not keep.any():
                break
            i, Ti, Pi, zi, sp, two = i[keep], Ti[keep], Pi[keep], zi[keep], _take(sp, keep), two[keep]
            restart = restart[keep]
            h, s, cp = self._hs_of_split(Ti, Pi, zi, sp)
            f = (h if which == "h" else s) - target[i]
            # an iterate that may be metastable says nothing about the bracket
            lo[i] = np.where((f < 0) & ~restart, Ti, lo[i])
            hi[i] = np.where((f > 0) & ~restart, Ti, hi[i])
            slope = cp if which == "h" else cp / Ti
            with np.errstate(divide="ignore", invalid="ignore"):
                secant = (f - prev_f[i]) / (Ti - prev_T[i])
            need_fd = two & ~(np.isfinite(secant) & (secant > 0))
            if need_fd.any():
                j = np.nonzero(need_fd)[0]
                dT = PH_FD_STEP
                sp2 = fl.flash_TP(eos, Ti[j] + dT, Pi[j], zi[j], K_init=K[i[j]],
                                  assume=np.full(j.size, 2), tol=LOOSE_TOL)
                h2, s2, _ = self._hs_of_split(Ti[j] + dT, Pi[j], zi[j], sp2)
                secant[j] = ((h2 if which == "h" else s2) - target[i[j]] - f[j]) / dT
            slope = np.where(two, secant, slope)
            with np.errstate(invalid="ignore", divide="ignore"):
                Tn = Ti - f / slope
            bad = ~np.isfinite(Tn) | (Tn <= lo[i]) | (Tn >= hi[i])
            Tn = np.where(bad, _bisect(lo[i], hi[i], Ti, f), Tn)
            scale = np.where(np.isfinite(cp) & (cp > 0), cp, PH_SLOPE_FALLBACK)
            if which == "s":
                scale = scale / Ti
            # the residual must vanish too: a bracket can also close on a jump of h(T) (a
            # vapour-liquid split is not the equilibrium inside a three-phase region), and that is
            # a failure, not an answer
            slope_abs = np.where(np.isfinite(slope) & (slope > 0), slope, scale)
            small_f = np.abs(f) <= PH_RESIDUAL_K * slope_abs
            stuck = (np.abs(Tn - Ti) < fl.PH_TOL_T) & ~small_f & ~restart
            if stuck.any():
                failed[i[stuck]] = True
            done = (((np.abs(Tn - Ti) < fl.PH_TOL_T) & small_f) | (np.abs(f) < PH_F_TINY_REL * scale)) \
                & ~restart
            # a split converged only loosely cannot end the iteration: near the answer, switch to
            # the full tolerance and take the step
            near = (np.abs(Tn - Ti) < LOOSE_UNTIL_STEP) & loose[i] & two
            loose[i[near]] = False
            done &= ~(near | (loose[i] & two))
            Tn = np.where(restart, Ti, Tn)
            prev_T[i] = np.where(restart, np.nan, Ti)
            prev_f[i] = np.where(restart, np.nan, f)
            T[i] = np.where(done, Ti, Tn)
            conv[i] = done
            # two-phase iterates and untrusting cases are true states: converged means done
            verified[i] = done & ((assume[i] == 2) | ~trust[i])
            verified |= failed          # stop iterating those; reported unconverged below
        ok = verified & ~failed
        split = fl.PTSplit(beta, xs, ys, nph, beta >= 1,
                           fl.SolveReport(ok, np.zeros(n, int), np.zeros(n), ""))
        return self._retry_fresh(P, target, zs, which, T, ok, split)

    def _verify_cold_splits(self, P, zs, T, ok, split):
        """Two-phase answers below fl.COLD_TRIAL_T checked against a fresh P-T flash at their
        temperature (stability test, the split of lowest Gibbs energy among the trials): the
        Newton loop's warm-started splits can settle on another, metastable split there (a fuzz
        find: a CO2-rich gas's P-s answer 6.9 K off, its entropy 3.8 J/(mol K) from the fresh
        flash's). Where the two differ (VERIFY_SPLIT_TOL), the case is left to _retry_fresh, which
        works on fresh flashes only. Above COLD_TRIAL_T nothing is done (the common path)."""
        c = np.nonzero(ok & (split.n_phases == 2) & (T < fl.COLD_TRIAL_T))[0]
        if c.size == 0:
            return ok
        sp = fl.flash_TP(self.eos, T[c], P[c], zs[c])
        same = (sp.report.converged & (sp.n_phases == 2)
                & (np.abs(sp.beta - split.beta[c]) < VERIFY_SPLIT_TOL)
                & (np.max(np.abs(sp.xs - split.xs[c]), axis=1) < VERIFY_SPLIT_TOL)
                & (np.max(np.abs(sp.ys - split.ys[c]), axis=1) < VERIFY_SPLIT_TOL))
        if same.all():
            return ok
        ok = ok.copy()
        ok[c[~same]] = False
        return ok

    def _retry_fresh(self, P, target, zs, which, T, ok, split):
        """Cases the Newton loop left unsolved (or whose cold split a fresh flash does not
        confirm, _verify_cold_splits), solved again by a bracketed root on fresh P-T flashes (see
        RETRY_F_REL); the same Python code on either path."""
        ok = self._verify_cold_splits(P, zs, T, ok, split)
        bad = np.nonzero(~ok)[0]
        if bad.size == 0:
            return T, ok, split
        from ...numerics.rootfind import bracketed_root
        eos = self.eos

        def f(Tx, idx):
            i = bad[idx]
            sp = fl.flash_TP(eos, Tx, P[i], zs[i])
            h, s, _ = self._hs_of_split(Tx, P[i], zs[i], sp)
            return np.where(sp.report.converged, (h if which == "h" else s) - target[i], np.nan)

        every = np.arange(bad.size)
        lo = np.full(bad.size, fl.T_LOW)
        hi = np.full(bad.size, fl.T_HIGH)
        with np.errstate(all="ignore"):
            f_lo, f_hi = f(lo, every), f(hi, every)
        can = np.isfinite(f_lo) & np.isfinite(f_hi) & (f_lo < 0) & (f_hi > 0)
        if not can.any():
            return T, ok, split
        j = np.nonzero(can)[0]
        scale = PH_SLOPE_FALLBACK if which == "h" else PH_SLOPE_FALLBACK / fl.T_HIGH
        ftol = np.maximum(RETRY_F_REL * np.abs(target[bad[j]]), 1e-9 * scale)
        with np.errstate(all="ignore"):
            rep = bracketed_root(lambda x, idx: f(x, j[idx]), lo[j], hi[j], f_lo[j], f_hi[j],
                                 ftol=ftol, max_iterations=RETRY_MAX_ITER)
        good = rep.converged & np.isfinite(rep.x)
        if not good.any():
            return T, ok, split
        i = bad[j[good]]
        Tn = rep.x[good]
        sp = fl.flash_TP(eos, Tn, P[i], zs[i])
        T = T.copy()
        T[i] = Tn
        ok = ok.copy()
        ok[i] = sp.report.converged
        beta, xs, ys, nph = (split.beta.copy(), split.xs.copy(), split.ys.copy(),
                             split.n_phases.copy())
        beta[i], xs[i], ys[i], nph[i] = sp.beta, sp.xs, sp.ys, sp.n_phases
        return T, ok, fl.PTSplit(beta, xs, ys, nph, beta >= 1,
                                 fl.SolveReport(ok, np.zeros(T.shape[0], int),
                                                np.zeros(T.shape[0]), ""))

    def _initial_T(self, P, target, zs, which):
        """Ideal-gas temperature with the target enthalpy (entropy), a few Newton steps."""
        c = self.comps
        T = np.full(P.shape, IDEAL_T_START)
        with np.errstate(divide="ignore", invalid="ignore"):
            mix = np.sum(np.where(zs > 0, zs * np.log(zs), 0.0), axis=1)
        for _ in range(IDEAL_T_STEPS):
            cp0 = np.einsum("ij,ij->i", zs, c.cp0(T))
            if which == "h":
                f = np.einsum("ij,ij->i", zs, c.h0(T)) - target
                T = T - f / cp0
            else:
                s0 = np.einsum("ij,ij->i", zs, c.s0(T)) - R * np.log(P / P_REF) - R * mix
                T = T - (s0 - target) * T / cp0
            T = np.clip(T, fl.T_LOW + IDEAL_T_MARGIN, fl.T_HIGH - IDEAL_T_MARGIN)
        return T

    def _solve_T_pure(self, P, target, zs, ip, which, T_guess):
        """PH/PS for pure components: saturated when the target lies between the saturated
        liquid and vapour values, otherwise a single-phase Newton on the proper side."""
        n = P.shape[0]
        Tsat = fl.pure_saturation_T(self.eos, P, ip)
        has = np.isfinite(Tsat)
        beta = np.full(n, -1.0)
        T = np.full(n, np.nan)
        conv = np.zeros(n, dtype=bool)
        Tl = np.full(n, fl.T_LOW)
        Th = np.full(n, fl.T_HIGH)
        if has.any():
            j = np.nonzero(has)[0]
            V = self._phase(Tsat[j], P[j], zs[j], 1)
            L = self._phase(Tsat[j], P[j], zs[j], -1)
            xV, xL = V[which], L[which]
            t = target[j]
            inside = (t >= xL) & (t <= xV)
            beta[j[inside]] = (t[inside] - xL[inside]) / (xV[inside] - xL[inside])
            T[j[inside]] = Tsat[j[inside]]
            conv[j[inside]] = True
            Tl[j] = np.where(t > xV, Tsat[j], Tl[j])
            Th[j] = np.where(t < xL, Tsat[j], Th[j])
        rest = ~conv
        if rest.any():
            i = np.nonzero(rest)[0]
            Ti = self._initial_T(P[i], target[i], zs[i], which)
            Ti = np.clip(Ti, Tl[i] + 1e-6, Th[i] - 1e-6)
            lo, hi = Tl[i].copy(), Th[i].copy()
            # side of the dome decides the root: above Tsat vapour, below liquid
            code = np.where(np.isfinite(Tsat[i]) & (hi <= Tsat[i] + 1e-12), -1,
                            np.where(np.isfinite(Tsat[i]), 1, 0))
            ok = np.zeros(i.size, dtype=bool)
            for _ in range(fl.PH_MAX_ITER):
                if ok.all():
                    break
                ph = self._phase(Ti, P[i], zs[i], code)
                f = ph[which] - target[i]
                slope = ph["cp"] if which == "h" else ph["cp"] / Ti
                lo = np.where(f < 0, Ti, lo)
                hi = np.where(f > 0, Ti, hi)
                Tn = Ti - f / slope
                bad = ~np.isfinite(Tn) | (Tn <= lo) | (Tn >= hi)
                Tn = np.where(bad, _bisect(lo, hi, Ti, f), Tn)
                ok = ok | (np.abs(Tn - Ti) < fl.PH_TOL_T)
                Ti = np.where(ok, Ti, Tn)
            # a step that stopped moving is an answer only where it meets the target: a target
            # beyond the bracket (h far above any state up to T_HIGH) ends pinned at the bound
            ph = self._phase(Ti, P[i], zs[i], code)
            slope = ph["cp"] if which == "h" else ph["cp"] / Ti
            ok &= np.abs(ph[which] - target[i]) <= PURE_RESIDUAL_K * np.abs(slope)
            T[i] = Ti
            conv[i] = ok
            beta[i] = np.where(code < 0, 0.0, 1.0)
            # supercritical pressure: name by temperature
            sc = code == 0
            beta[i[sc]] = np.where(Ti[sc] > self.comps.Tcs[ip[i[sc]]], 1.0, 0.0)
        return T, beta, conv


def _flash_TP_mixed_tol(eos, T, P, zs, K, assume, loose):
    """flash_TP on a batch where some cases take the loose split tolerance, the rest the full one."""
    if loose.all() or not loose.any():
        tol = LOOSE_TOL if loose.all() else fl.LN_TOL
        return fl.flash_TP(eos, T, P, zs, K_init=K, assume=assume, tol=tol)
    parts = []
    for m, tol in ((loose, LOOSE_TOL), (~loose, fl.LN_TOL)):
        parts.append((m, fl.flash_TP(eos, T[m], P[m], zs[m], K_init=K[m], assume=assume[m],
                                     tol=tol)))
    n = T.shape[0]
    beta = np.empty(n)
    xs = np.empty_like(zs)
    ys = np.empty_like(zs)
    nph = np.empty(n, dtype=int)
    sv = np.empty(n, dtype=bool)
    conv = np.empty(n, dtype=bool)
    iters = np.empty(n, dtype=int)
    res = np.empty(n)
    for m, sp in parts:
        beta[m], xs[m], ys[m], nph[m], sv[m] = sp.beta, sp.xs, sp.ys, sp.n_phases, sp.single_is_vapour
        conv[m], iters[m], res[m] = sp.report.converged, sp.report.iterations, sp.report.residual
    return fl.PTSplit(beta, xs, ys, nph, sv, fl.SolveReport(conv, iters, res, "PT flash"))


def _k_values(ys, xs):
    """K = y/x, 1 for components absent from both phases."""
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where((xs > 0) & (ys > 0), ys / np.where(xs > 0, xs, 1.0), 1.0)


def _bisect(lo, hi, T, f):
    """Bisection inside the bracket; where one side is still the global bound, step by 20 %."""
    open_lo = lo <= fl.T_LOW
    open_hi = hi >= fl.T_HIGH
    mid = 0.5 * (lo + hi)
    mid = np.where(open_hi & ~open_lo, np.minimum(T * BRACKET_GROW, 0.5 * (T + hi)), mid)
    mid = np.where(open_lo & ~open_hi, np.maximum(T * BRACKET_SHRINK, 0.5 * (T + lo)), mid)
    return mid


def _check_TP(T, P):
    from ...errors import InputError
    if not (np.isfinite(T).all() and (T > 0).all()):
        raise InputError(f"temperature must be a positive number of kelvin (got {T[~(T > 0)][:3]})")
    if not (np.isfinite(P).all() and (P > 0).all()):
        raise InputError(f"pressure must be positive (got {P[~(P > 0)][:3]} Pa)")
