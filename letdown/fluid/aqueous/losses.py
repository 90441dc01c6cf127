"""Where an injected hydrate inhibitor goes: vapour, hydrocarbon liquid, aqueous liquid, and the dose
that leaves a wanted wt % in the water after those losses.

Split from :mod:`letdown.fluid.aqueous.inhibitor` (issue 12: module size) along its seam: that module
holds the inhibitors themselves (depression correlations, the water activity, doses for the aqueous
phase alone); this one holds the three-phase flash of the gas with its water and inhibitor, which
needs a fluid and a flash.

Methanol is split between vapour, hydrocarbon liquid and aqueous liquid by the three-phase flash of
the gas with its water and methanol on the fluid's cubic model (:func:`partition`); MEG by Raoult's
law against the aqueous liquid of that flash with the vapour pressure of Perry's Handbook
(:data:`MEG_PSAT_PERRY`), none in a hydrocarbon liquid. The cubic with van der Waals mixing is crude
for methanol-water (its pure methanol vapour pressure is 8-17 % low at 298-268 K, its activity
coefficient of methanol in water at infinite dilution about 3.3; methane-methanol has no published
kij here); the losses are estimates to about a factor of two (docs/models.md, known limits).
:func:`dose_with_losses` finds the feed that leaves W wt % in the aqueous liquid.

Every output that judges freezing carries the caution: engineering estimates; designs must follow
local codes and be checked by qualified, licensed staff.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ...errors import ConvergenceError
from ...numerics.rootfind import bracketed_root
from ...numerics.report import SolveReport
from .inhibitor import INHIBITORS, M_WATER_G, _out, _wt, inhibitor, water_activity_coefficient

#: Components the partition flash adds to the gas: water and both inhibitors (in this order).
PARTITION_EXTRA = ("water", "methanol", "ethylene-glycol")
#: Dose search: relative tolerance on the aqueous wt % reached [-] and iteration cap (an Illinois
#: step on ln n converges superlinearly; 80 steps cover any bracket the doubling finds).
DOSE_WT_RTOL = 1e-9
DOSE_MAX_ITER = 80
#: The upper end of the dose bracket is doubled at most this many times from the aqueous need.
DOSE_MAX_DOUBLINGS = 60
#: Vapour pressure of ethylene glycol, ln(P/Pa) = C1 + C2/T + C3 ln T + C4 T^C5 (DIPPR equation
#: 101): Green & Perry, Perry's Chemical Engineers' Handbook, 8th ed. (2008), Table 2-8, as
#: transcribed in the data of the ``chemicals`` package (stated range 260.15-720 K).
MEG_PSAT_PERRY = (84.09, -10411.0, -8.1976, 1.6536e-18, 6.0)


def meg_vapour_pressure(T):
    """Vapour pressure of ethylene glycol [Pa] (:data:`MEG_PSAT_PERRY`; about 2 Pa at 5 degC)."""
    c1, c2, c3, c4, c5 = MEG_PSAT_PERRY
    T = np.asarray(T, float)
    return _out(np.exp(c1 + c2 / T + c3 * np.log(T) + c4 * T ** c5))


def _meg_split(g, liquid, V, T, P):
    """MEG of ``g`` mol split between an aqueous liquid holding ``liquid`` mol of other matter and
    ``V`` mol of vapour by Raoult's law, y P = x P_sat (ideal solution, ideal gas):
    n_aq (1 + k / (n_aq + liquid)) = g, k = V P_sat / P, solved as a quadratic. Returns the
    aqueous and vapour amounts [mol]."""
    k = V * np.asarray(meg_vapour_pressure(T), float) / P
    b = liquid + k - g
    aq = 0.5 * (-b + np.sqrt(b * b + 4.0 * g * liquid))
    aq = np.where(liquid > 0.0, aq, g)      # no aqueous liquid: the glycol is the liquid itself
    return aq, g - aq


@dataclass(frozen=True)
class Partition:
    """Where the inhibitor goes at one state: vapour, hydrocarbon liquid, aqueous liquid.

    All amounts per mole of dry gas fed [mol/mol]; arrays (n,) over cases, (n, 2) for the two
    inhibitors in the order of :data:`INHIBITORS` (methanol, MEG).

    Attributes
    ----------
    injected, aqueous, vapour, hc_liquid : ndarray (n, 2)
        Inhibitor fed, and in the aqueous liquid, the vapour and the hydrocarbon liquid [mol/mol].
    water_aqueous : ndarray (n,)
        Water in the aqueous liquid [mol/mol] (0 where there is none).
    wt_pct : ndarray (n,)
        Inhibitor in the aqueous liquid, salt- and gas-free basis (water + inhibitors) [wt %]
        (NaN where there is no aqueous liquid).
    water_mole_fraction : ndarray (n,)
        x_w of the aqueous liquid on the same basis (the a_w used with the hydrate model) [-].
    beta_V, beta_L, beta_W : ndarray (n,)
        Phase fractions of the flash [-].
    report : SolveReport
        The flash's convergence, or the dose search's.
    water_activity : ndarray (n,) or None
        a_w = gamma_w x_w of the aqueous liquid at its T (:func:`water_activity_coefficient`) [-]
        (NaN where there is no aqueous liquid).
    """

    injected: np.ndarray
    aqueous: np.ndarray
    vapour: np.ndarray
    hc_liquid: np.ndarray
    water_aqueous: np.ndarray
    wt_pct: np.ndarray
    water_mole_fraction: np.ndarray
    beta_V: np.ndarray
    beta_L: np.ndarray
    beta_W: np.ndarray
    report: SolveReport
    water_activity: np.ndarray | None = None

    @property
    def balance_closure(self) -> np.ndarray:
        """max |injected - aqueous - vapour - hc_liquid| / injected over the inhibitors (n,) [-]."""
        inj = self.injected
        miss = np.abs(inj - self.aqueous - self.vapour - self.hc_liquid)
        return np.max(np.where(inj > 0.0, miss / np.where(inj > 0.0, inj, 1.0), miss), axis=1)


def partition_fluid(fluid):
    """The fluid of the partition flash: ``fluid``'s components plus water, methanol and MEG, on
    its cubic model (Peng-Robinson for GERG-2008, which has no three-phase flash here) with its
    interaction-parameter choice. Pairs with no published kij (methane-methanol, every MEG pair
    but none listed) are zero and listed in ``missing_kij``."""
    from ..fluid import Fluid
    names = list(fluid.components) + [c for c in PARTITION_EXTRA if c not in fluid.components]
    comp = {c: (1.0 if k == 0 else 0.0) for k, c in enumerate(names)}
    model = "peng-robinson" if fluid.model == "gerg-2008" else fluid.model
    return Fluid(comp, model=model, kij=getattr(fluid, "_kij_spec", None))


def _feed(pf, fluid, zs_dry, water_ratio, inh_ratio):
    """Feed compositions (n, nc) of the partition fluid for 1 mol dry gas + water + inhibitors,
    and the total moles per mole of dry gas (n,)."""
    zs_dry = np.asarray(zs_dry, float)
    n = zs_dry.shape[0]
    names = list(pf.components)
    Z = np.zeros((n, len(names)))
    dry = zs_dry.copy()
    if "water" in fluid.components:
        dry[:, fluid.components.index("water")] = 0.0
    for k in (INHIBITORS):
        if k in fluid.components:
            dry[:, fluid.components.index(k)] = 0.0
    dry /= dry.sum(axis=1, keepdims=True)
    for j, c in enumerate(fluid.components):
        Z[:, names.index(c)] = dry[:, j]
    Z[:, names.index("water")] += water_ratio
    for j, c in enumerate(INHIBITORS):
        Z[:, names.index(c)] += inh_ratio[:, j]
    total = Z.sum(axis=1)
    return Z / total[:, None], total


def partition(fluid, T, P, zs_dry, water_ratio, inhibitor_ratio, pf=None) -> Partition:
    """Split water and inhibitor between vapour, hydrocarbon liquid and aqueous liquid by the
    three-phase flash (:meth:`letdown.fluid.Fluid.flash_three_phase`) of the gas with its water and inhibitor.

    Parameters
    ----------
    fluid : Fluid
        The gas (its model and kij; see :func:`partition_fluid`).
    T, P : ndarray (n,)
        The state [K], [Pa].
    zs_dry : ndarray (n, nc)
        Gas composition in ``fluid``'s component order (water and inhibitor in it are ignored) [-].
    water_ratio : ndarray (n,)
        Water per dry gas [mol/mol].
    inhibitor_ratio : ndarray (n, 2)
        Methanol and MEG per dry gas [mol/mol].
    pf : Fluid, optional
        A ready :func:`partition_fluid` (saves building it).

    Returns
    -------
    Partition

    Raises
    ------
    ConvergenceError
        The three-phase flash did not converge for some case.

    Notes
    -----
    The model's limits for these mixtures (a cubic with van der Waals one-fluid mixing and
    constant kij; docs/models.md, known limits): methanol's vapour pressure and its activity in water
    are both off (tests/sheet/test_inhibitor_loss.py measures them), and methanol-methane and all MEG
    pairs have no published kij here (zero), so the losses are estimates to a factor of about
    two, not design figures.
    """
    pf = partition_fluid(fluid) if pf is None else pf
    T = np.atleast_1d(np.asarray(T, float))
    P = np.atleast_1d(np.asarray(P, float))
    zs_dry = np.atleast_2d(np.asarray(zs_dry, float))
    n = zs_dry.shape[0]
    w_in = np.broadcast_to(np.asarray(water_ratio, float), (n,))
    inh = np.broadcast_to(np.asarray(inhibitor_ratio, float), (n, len(INHIBITORS)))
    j_meg = list(INHIBITORS).index("ethylene-glycol")
    meg = inh[:, j_meg].copy()
    flash_inh = np.array(inh, float)
    flash_inh[:, j_meg] = 0.0
    Z, total = _feed(pf, fluid, zs_dry, w_in, flash_inh)
    r = pf.flash_three_phase(np.broadcast_to(T, (n,)), np.broadcast_to(P, (n,)), Z)
    names = list(pf.components)
    cols = [names.index(c) for c in INHIBITORS]
    iw = names.index("water")

    def amount(beta, X, j):
        return np.where(beta > 0.0, beta * np.nan_to_num(X[:, j]), 0.0) * total

    aq = np.stack([amount(r.beta_W, r.w, j) for j in cols], axis=1)
    vap = np.stack([amount(r.beta_V, r.y, j) for j in cols], axis=1)
    hcl = np.stack([amount(r.beta_L, r.x, j) for j in cols], axis=1)
    water_aq = amount(r.beta_W, r.w, iw)
    g_aq, g_vap = _meg_split(meg, water_aq + aq.sum(axis=1), r.beta_V * total,
                             np.broadcast_to(T, (n,)), np.broadcast_to(P, (n,)))
    aq[:, j_meg], vap[:, j_meg] = g_aq, g_vap
    M = np.array([INHIBITORS[c].M for c in INHIBITORS])
    m_inh = aq @ M
    m_w = water_aq * M_WATER_G
    wet = water_aq > 0.0
    wt = np.where(wet, 100.0 * m_inh / np.where(wet, m_inh + m_w, 1.0), np.nan)
    tot_aq = np.where(wet, water_aq + aq.sum(axis=1), 1.0)
    xw = np.where(wet, water_aq / tot_aq, np.nan)
    xm = np.where(wet, aq[:, list(INHIBITORS).index("methanol")] / tot_aq, np.nan)
    gam = np.asarray(water_activity_coefficient(np.nan_to_num(xw, nan=1.0),
                                                np.nan_to_num(xm, nan=0.0),
                                                np.broadcast_to(T, (n,))), float)
    aw = np.where(wet, np.minimum(xw * gam, 1.0), np.nan)
    return Partition(np.array(inh, float), aq, vap, hcl, water_aq, wt, xw, r.beta_V, r.beta_L,
                     r.beta_W, r.report, aw)


def dose_with_losses(fluid, T, P, zs_dry, water_ratio, W, name="methanol", pf=None) -> Partition:
    """The inhibitor to feed per mole of dry gas so that the aqueous liquid at (T, P) holds W wt %
    after what the vapour and a hydrocarbon liquid take (:func:`partition`).

    The aqueous wt % rises with the dose; the dose n (mol inhibitor per mol dry gas) is bracketed
    from the aqueous need with all the water condensed (a lower end of 1e-3 of it, an upper end
    doubled until the wt % is reached) and found by the Illinois method on ln n, all cases
    together, to a relative :data:`DOSE_WT_RTOL` in wt %.

    Parameters
    ----------
    fluid, T, P, zs_dry, water_ratio, pf
        As for :func:`partition`.
    W : float or ndarray (n,)
        Inhibitor wanted in the aqueous liquid [wt %].
    name : str
        ``methanol`` or ``MEG``.

    Returns
    -------
    Partition
        At the dose found (``injected`` holds it); zero dose and NaN wt % where W is 0 or where
        the flash finds no aqueous liquid without inhibitor (no free water at (T, P): nothing to
        protect).

    Raises
    ------
    ConvergenceError
        The wt % is not reached within the bracket, or the search did not converge.
    """
    inh = inhibitor(name)
    j = list(INHIBITORS).index(inh.name)
    pf = partition_fluid(fluid) if pf is None else pf
    zs_dry = np.atleast_2d(np.asarray(zs_dry, float))
    n = zs_dry.shape[0]
    T = np.broadcast_to(np.asarray(T, float), (n,))
    P = np.broadcast_to(np.asarray(P, float), (n,))
    rw = np.broadcast_to(np.asarray(water_ratio, float), (n,))
    W = np.broadcast_to(_wt(W), (n,))
    k = len(INHIBITORS)

    def ratios(x, rows):
        out = np.zeros((rows.size, k))
        out[:, j] = x
        return out

    def wt_at(x, rows):
        p = partition(fluid, T[rows], P[rows], zs_dry[rows], rw[rows], ratios(x, rows), pf)
        return np.nan_to_num(p.wt_pct, nan=0.0) - W[rows]

    dose = np.zeros(n)
    free = partition(fluid, T, P, zs_dry, rw, np.zeros((n, k)), pf)
    need = (W > 0.0) & (free.beta_W > 0.0)
    its = np.zeros(n, dtype=int)
    conv = ~need
    res = np.zeros(n)
    if need.any() and inh.name == "ethylene-glycol":
        # Raoult's law for the glycol (see partition): closed form from the free water
        i = np.flatnonzero(need)
        x = W[i] / inh.M / (W[i] / inh.M + (100.0 - W[i]) / M_WATER_G)
        n_aq = free.water_aqueous[i] * x / (1.0 - x)
        V = free.beta_V[i] * (1.0 + rw[i])    # the glycol does not change the flash here
        n_vap = x * V * np.asarray(meg_vapour_pressure(T[i]), float) / P[i]
        dose[i] = n_aq + n_vap
        conv[i] = True
    elif need.any():
        i = np.flatnonzero(need)
        n_aq = rw[i] * M_WATER_G * W[i] / ((100.0 - W[i]) * inh.M)
        lo = np.log(1e-3 * n_aq)
        hi = np.log(n_aq)
        f_lo = wt_at(np.exp(lo), i)
        f_hi = wt_at(np.exp(hi), i)
        if np.any(f_lo > 0.0):
            raise ConvergenceError("inhibitor dose: the aqueous liquid is already above the "
                                   "wanted wt % at the lower end of the bracket",
                                   result=SolveReport(conv, its, res, "dose, bracket"))
        for _ in range(DOSE_MAX_DOUBLINGS):
            low = f_hi <= 0.0
            if not low.any():
                break
            lo = np.where(low, hi, lo)
            f_lo = np.where(low, f_hi, f_lo)
            hi = np.where(low, hi + np.log(2.0), hi)
            f_hi[low] = wt_at(np.exp(hi[low]), i[low])
        if np.any(f_hi <= 0.0):
            raise ConvergenceError("inhibitor dose: the wanted aqueous wt % is not reached "
                                   "by any dose the search tried",
                                   result=SolveReport(conv, its, res, "dose, bracket"))
        rep = bracketed_root(lambda c, rows: wt_at(np.exp(c), i[rows]), lo, hi, f_lo, f_hi,
                             ftol=DOSE_WT_RTOL * W[i], max_iterations=DOSE_MAX_ITER)
        its[i], res[i], conv[i] = rep.iterations, np.abs(rep.fx), rep.converged
        if not rep.converged.all():
            raise ConvergenceError("inhibitor dose with losses did not converge",
                                   result=SolveReport(conv, its, res, "dose, Illinois on ln n"))
        dose[i] = np.exp(rep.x)
    out = partition(fluid, T, P, zs_dry, rw, ratios(dose, np.arange(n)), pf)
    return Partition(out.injected, out.aqueous, out.vapour, out.hc_liquid, out.water_aqueous,
                     np.where(need, out.wt_pct, np.nan), out.water_mole_fraction, out.beta_V,
                     out.beta_L, out.beta_W, SolveReport(conv, its, res, "dose, Illinois on ln n"),
                     out.water_activity)
