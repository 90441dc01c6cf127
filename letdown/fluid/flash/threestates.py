"""The cubic engine's three-phase states: which cases take the three-phase path, the P-T and
P-h / P-s states on it, and their assembly as :class:`letdown.fluid.state.StateBatch`.

A mixin of :class:`letdown.fluid.flash.engine.CubicEngine` (the engine's two-phase flash, phase
properties and assembly stay there); the equilibrium itself is computed by
:mod:`letdown.fluid.flash.threephase`.

Which cases are retested for a third phase (:meth:`ThreePhaseStates._three_phase_cases`):

* a mixture holding water: every converged answer (a free-water phase can appear at any
  temperature);
* a mixture without water: every converged two-phase answer below :data:`VLL_SCREEN_T`, and at
  any temperature where the mixture holds :data:`ACID_RICH` or more of CO2 + H2S, or methanol or
  glycol (:data:`POLAR`); a single-phase answer has passed the stability test already. Elsewhere
  nothing is done, so the common warm path costs one comparison per case.

The third phase of a water-free fluid is a second hydrocarbon liquid (vapour-liquid-liquid, e.g.
a CO2- or H2S-rich liquid beside a methane-rich one). It is never put in the aqueous slot of the
state: ``aqueous_fraction`` stays None (0 for a fluid with water whose two liquids are both
hydrocarbon-rich), the two liquids are reported apart in ``StateBatch.two_liquids`` and lumped in
``xs`` / ``liquid`` (what a two-outlet separator's liquid outlet carries).
"""
from __future__ import annotations

from dataclasses import replace

import numpy as np

from . import twophase as fl
from . import threephase, threephase_px
from .steps import (TWO_PHASE_DERIV_TOL, TWO_PHASE_DP_REL, TWO_PHASE_DT, blank_unconverged,
                    take_split)
from ..components import R
from ..state import StateBatch, empty_two_liquids

#: Water-free mixtures: two-phase answers below this temperature [K] are retested for a second
#: liquid. Measured (2026-12-02, scans of random compositions of the bench/fuzz_flash.py
#: families and of random mixtures of methane, ethane, propane, n-butane, nitrogen with CO2 or
#: H2S and n-hexane to n-decane, 100-330 K, 1-200 bar, PR and SRK, about 90,000 two-phase
#: answers): the lean, rich and hydrogen-blend gases showed a second liquid up to 153 K,
#: CO2-rich 180 K, sour 217 K, and every mixture with less than 0.327 of CO2 + H2S up to 221 K
#: (methane + H2S with ethane and propane, PR; a further 13,000 two-phase answers of such
#: nine-component mixtures at 200-260 K: up to 216 K). Warmer ones all held at least 0.327 of
#: CO2 + H2S (up to 293-300 K with 0.83 of CO2 or H2S and 0.10 of n-decane): :data:`ACID_RICH`.
#: The screen sits 9 K above 221 K; it costs the 8,760 P-h batch of bench/flash.py the retest of
#: its 232 outlets below it (of 2,828 two-phase; 235 K would take 807, 250 K all).
VLL_SCREEN_T = 230.0
#: A water-free mixture holding at least this mole fraction of CO2 + H2S [-] is retested at every
#: temperature (the scans above: the least acid-gas content of a second liquid above 221 K was
#: 0.327).
ACID_RICH = 0.25
ACID = ("carbon-dioxide", "hydrogen-sulfide")
#: A phase of a three-phase answer with a trial below this tangent-plane distance [-] shows a
#: fourth phase (the early-exit level of the stability test, clear of round-off: a converged
#: phase of an equilibrium gives 0 to about 1e-14).
FOURTH_PHASE_TM = -1e-6
#: Components that make a liquid-liquid split with hydrocarbons at any temperature (common
#: practice: methanol and glycols are only partly miscible with hydrocarbon liquids): a
#: water-free fluid holding one is retested at every temperature.
POLAR = ("methanol", "ethylene-glycol")


class ThreePhaseStates:
    """Three-phase steps of :class:`letdown.fluid.flash.engine.CubicEngine` (a mixin: it uses the
    engine's ``comps``, ``eos``, ``_iw``, ``_phase`` and ``model``)."""

    def _screen_weights(self):
        """0/1 weights (nc,) of the acid-gas and of the polar components, or None where the
        fluid has none (cached on the engine)."""
        w = getattr(self, "_screen_w", None)
        if w is None:
            names = list(self.comps.names)
            acid = np.array([n in ACID for n in names], dtype=float)
            polar = np.array([n in POLAR for n in names], dtype=float)
            w = (acid if acid.any() else None, polar if polar.any() else None)
            self._screen_w = w
        return w

    def _dry_candidates(self, zs, T, n_phases):
        """Two-phase answers a water-free mixture's screen retests (module docstring), pure
        fluids not yet excluded: (n,) bool. A few array comparisons (the common path)."""
        acid, polar = self._screen_weights()
        with np.errstate(invalid="ignore"):
            cold = T < VLL_SCREEN_T
        if acid is not None:
            cold = cold | (zs @ acid >= ACID_RICH)
        if polar is not None:
            cold = cold | (zs @ polar > 0.0)
        return (n_phases == 2) & cold

    def _three_phase_needed(self, st: StateBatch) -> bool:
        """Whether any case of these (two-phase flash) states takes a three-phase step."""
        if self._iw is not None:
            return True
        return bool(self._dry_candidates(st.zs, st.T, st.n_phases).any()
                    or not st.converged.all())

    def _three_phase_cases(self, zs, T, n_phases):
        """Cases to retest for a third phase: (wet, dry) boolean masks (n,) (module docstring)."""
        n = zs.shape[0]
        dry = self._dry_candidates(zs, T, n_phases)
        wet = np.zeros(n, dtype=bool)
        if self._iw is not None:
            wet = zs[:, self._iw] > 0.0
            dry &= ~wet
            check = wet | dry
        else:
            check = dry
        if check.any():
            # pure fluids never: their two phases share the composition
            i = np.flatnonzero(check)
            pure, _ = fl._pure_index(zs[i])
            wet[i[pure]] = False
            dry[i[pure]] = False
        return wet, dry

    def _fourth_phase(self, T, P, zs, res, conv):
        """Three-phase answers in the screen (:meth:`_dry_candidates`: cold, acid-gas-rich or
        polar) whose vapour or first liquid is unstable, (n,) bool: a fourth phase (vapour, two
        hydrocarbon liquids and water: found in 629 of 1,396 three-phase states of wet sour gases
        at 150-215 K) is not sought, so such a state is refused (unconverged), not given as
        three-phase. Elsewhere False without a test."""
        out = np.zeros(T.shape[0], dtype=bool)
        c = np.flatnonzero(conv & (res.n_phases == 3)
                           & self._dry_candidates(zs, T, np.full(T.shape[0], 2)))
        if c.size == 0:
            return out
        for beta, x in ((res.beta_V, res.y), (res.beta_L, res.x)):
            i = c[beta[c] > 0.0]
            if i.size:
                out[i] |= fl.stability(self.eos, T[i], P[i], x[i]).tm < FOURTH_PHASE_TM
        return out

    def _aqueous_of_two(self, st: StateBatch):
        """Aqueous fraction of states from the two-phase flash [-]: the liquid's fraction where
        water is its largest component, else 0."""
        aq = np.argmax(st.xs, axis=1) == self._iw
        beta = st.vapour_fraction
        with np.errstate(invalid="ignore"):
            return np.where(aq & (beta < 1.0), 1.0 - beta, 0.0)

    def _three_phase_TP(self, st: StateBatch, split: fl.PTSplit) -> StateBatch:
        """The PT states with a third phase where one exists: each converged answer of the cases
        of :meth:`_three_phase_cases` is tested for stability (with the free-water trials where
        the case holds water); where it fails, the state is the three-phase split's
        (:func:`letdown.fluid.flash.threephase.retest_two_phase`)."""
        if self._iw is not None:
            st = replace(st, aqueous_fraction=self._aqueous_of_two(st))
        wet, dry = self._three_phase_cases(st.zs, st.T, split.n_phases)
        c = np.flatnonzero((wet | dry) & split.report.converged)
        if c.size == 0:
            return st
        res, unstable = threephase.retest_two_phase(self.eos, st.T[c], st.P[c], st.zs[c],
                                                    take_split(split, c))
        if not unstable.any():
            return st
        u = c[unstable]
        return st.put(u, self._assemble_three(st.T[u], st.P[u], st.zs[u],
                                              threephase.take_result(res, unstable)))

    def _three_phase_PX(self, st: StateBatch, target, which, T_guess=None) -> StateBatch:
        """The P-h (P-s) states with a third phase where one exists. The two-phase answer of a
        case of :meth:`_three_phase_cases` is tested for stability at its temperature; where it
        is not stable (or the two-phase solve failed) T is solved again on the three-phase
        equilibrium (:func:`letdown.fluid.flash.threephase_px.flash_PX_three`), started from
        ``T_guess`` where one is given (a block's inlet temperature, a loop's last answer: often
        the answer itself), else from the two-phase temperature. h(T) of the true equilibrium
        rises with T, so a stable answer is the answer. With water, a two-phase answer below
        :data:`letdown.fluid.flash.threephase_px.T_FLOOR` is solved again too; without water, a
        failed solve whose last temperature is screened (or not finite)."""
        if self._iw is not None:
            st = replace(st, aqueous_fraction=self._aqueous_of_two(st))
        wet, dry = self._three_phase_cases(st.zs, st.T, st.n_phases)
        # a failed two-phase solve of a water-free mixture is retried on the three-phase
        # equilibrium where it ended cold or nowhere (any phase count: its last split says little)
        _, dry_any = self._three_phase_cases(st.zs, np.where(np.isfinite(st.T), st.T, 0.0),
                                             np.full(len(st), 2))
        # with water, a two-phase answer below the three-phase solve's floor is not trusted
        # either: water in the cubic's liquid there (tens of kelvin) is no state of a gas with
        # water, and such an answer has been seen to meet h on a branch far from the
        # equilibrium (61 K for 343 K)
        suspect = ~st.converged | (wet & (st.T < threephase_px.T_FLOOR))
        failed = np.flatnonzero((wet & suspect) | (dry_any & ~st.converged))
        c = np.flatnonzero((wet | dry) & ~suspect)
        unstable_idx = np.zeros(0, dtype=int)
        start = None
        if c.size:
            m = c.size
            sp = fl.PTSplit(st.vapour_fraction[c], st.xs[c], st.ys[c], st.n_phases[c],
                            st.vapour_fraction[c] >= 1.0,
                            fl.SolveReport(np.ones(m, dtype=bool), np.zeros(m, int), np.zeros(m)))
            res, unstable = threephase.retest_two_phase(self.eos, st.T[c], st.P[c], st.zs[c], sp)
            unstable_idx = c[unstable]
            start = threephase.take_result(res, unstable)
        if failed.size:
            s = np.concatenate([unstable_idx, failed])
            start = None
        else:
            s = unstable_idx
        if s.size == 0:
            return st
        T_start = np.where(np.isfinite(st.T[s]), st.T[s], np.nan)
        if T_guess is not None:
            guess = T_guess[s]
            T_start = np.where(np.isfinite(guess), guess, T_start)
            start = None
        px = threephase_px.flash_PX_three(self, st.P[s], target[s], st.zs[s], which, T_start,
                                       start)
        return st.put(s, self._assemble_three(px.T, st.P[s], st.zs[s], px.flash,
                                              px.report.converged))

    def _assemble_three(self, T, P, zs, res, extra_conv=None) -> StateBatch:
        """States of a three-phase flash result: the whole from the phases present (h, s and
        volume mole-weighted), the vapour, and the two liquids lumped as the liquid (composition
        and h, s mole-weighted, volumes added). The third slot of ``res`` is the aqueous liquid
        where water is its largest component (``aqueous_fraction``), else a second hydrocarbon
        liquid (``two_liquids``, never the aqueous fraction). Heat capacity and Joule-Thomson
        coefficient of several phases by forward differences (steps TWO_PHASE_DT,
        TWO_PHASE_DP_REL) along the equilibrium; of a single phase, analytic."""
        from .threephase import phase_properties
        from .threephase_px import enthalpy_near
        n = T.shape[0]
        props = phase_properties(self, T, P, zs, res)
        bV, bL, bW = res.beta_V, res.beta_L, res.beta_W
        whole = props["whole"]
        M = zs @ self.comps.Ms
        nan = np.full(n, np.nan)
        fields = ("Z", "density", "h", "s", "molar_mass")
        has_v = bV > 0.0
        vap = {k: np.where(has_v, props["vapour"][k], nan) for k in fields}
        b_liq = bL + bW
        has_l = b_liq > 0.0
        wl = np.where(has_l, bL / np.where(has_l, b_liq, 1.0), 0.0)   # first liquid's share
        pl, pw = props["liquid"], props["aqueous"]
        lump = {k: wl * pl[k] + (1.0 - wl) * pw[k] for k in ("h", "s", "v", "molar_mass")}
        lump["Z"] = P * lump["v"] / (R * T)
        lump["density"] = lump["molar_mass"] / lump["v"]
        liq = {k: np.where(has_l, lump[k], nan) for k in fields}
        ys = np.where(has_v[:, None], res.y, zs)
        x_l = np.where((bL > 0.0)[:, None], res.x, 0.0)
        x_w = np.where((bW > 0.0)[:, None], res.w, 0.0)
        with np.errstate(invalid="ignore", divide="ignore"):
            xs = np.where(has_l[:, None], (bL[:, None] * x_l + bW[:, None] * x_w)
                          / np.where(has_l, b_liq, 1.0)[:, None], zs)
        aq = threephase.aqueous_third(res, self._iw)
        two_liq = (bW > 0.0) & ~aq & (bL > 0.0)
        two_liquids = None
        if two_liq.any():
            two_liquids = empty_two_liquids(n, zs.shape[1])
            for side, beta, x, p in (("light", bL, res.x, pl), ("heavy", bW, res.w, pw)):
                two_liquids[f"{side}_fraction"] = np.where(two_liq, beta, 0.0)
                two_liquids[f"{side}_zs"] = np.where(two_liq[:, None], x, np.nan)
                for k in fields:
                    two_liquids[f"{side}_{k}"] = np.where(two_liq, p[k], np.nan)
        v = whole["v"]
        conv = res.report.converged.copy()
        if extra_conv is not None:
            conv &= extra_conv
        conv &= ~self._fourth_phase(T, P, zs, res, conv)
        cp = nan.copy()
        cv = nan.copy()
        jt = nan.copy()
        w = nan.copy()
        many = np.flatnonzero(conv & (res.n_phases >= 2))
        if many.size:
            r = threephase.take_result(res, many)
            m = many.size
            T2 = np.concatenate([T[many] + TWO_PHASE_DT, T[many]])
            P2 = np.concatenate([P[many], P[many] * (1.0 + TWO_PHASE_DP_REL)])
            z2 = np.concatenate([zs[many], zs[many]])
            h2 = enthalpy_near(self, T2, P2, z2, threephase.concat_results(r, r),
                               TWO_PHASE_DERIV_TOL)
            cp[many] = (h2[:m] - whole["h"][many]) / TWO_PHASE_DT
            jt[many] = -(h2[m:] - whole["h"][many]) / (TWO_PHASE_DP_REL * P[many]) / cp[many]
        one = np.flatnonzero(conv & (res.n_phases == 1))
        if one.size:
            A = self._phase(T[one], P[one], zs[one], 0)
            cp[one], cv[one], jt[one], w[one] = A["cp"], A["cv"], A["jt"], A["w"]
        st = StateBatch(T=T.copy(), P=P.copy(), h=whole["h"].copy(), s=whole["s"].copy(),
                    Z=P * v / (R * T), cp=cp, cv=cv, jt=jt, w=w, density=M / v, molar_mass=M,
                    vapour_fraction=bV.copy(), zs=zs.copy(), ys=ys, xs=xs,
                    n_phases=res.n_phases.copy(), converged=conv, vapour=vap, liquid=liq,
                    components=self.comps.names, model=self.model,
                    aqueous_fraction=None if self._iw is None else np.where(aq, bW, 0.0),
                    two_liquids=two_liquids)
        return blank_unconverged(st)
