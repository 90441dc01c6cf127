"""Freezing and hydrate margins of every stream: the water the gas carries, its water dew point,
its hydrate formation temperature, and how far each stream is from them.

The hydrocarbon flash stays **water-free**. The water is carried beside it, per stream, as the mole
ratio ``r`` of water to dry gas [mol/mol]; reports show it as mg per standard cubic metre of dry
gas (15 degC, 101.325 kPa), as the mole fraction of the wet gas, ``y = r / (1 + r)``, and as the
water flow ``r F`` [mol/s, kg/s] (F the dry flow).

Where the water comes from (``gas.water``, :class:`letdown.sheet.spec.WaterSpec`):

* a mole fraction ``y`` of the wet gas: ``r = y / (1 - y)``;
* ``mg/Sm3`` or ``lb/MMscf`` per standard volume of dry gas (ideal-gas standard volumes, as in
  :mod:`letdown.fluid.aqueous.water`): ``r`` is that many moles of water per mole of dry gas;
* ``saturated: {T, P}`` and ``dew_point: {T, P}`` (the same thing in two words): ``y`` is the water
  content of the gas saturated with liquid water at (T, P) by ``gas.water_method`` (Bukacek 1955
  by default);
* nothing: every feed is taken as saturated at its own temperature and pressure in each case (a
  warning says so) -- the common state of gas from a wet pipeline or storage, and the safe
  assumption for hydrates;
* water listed in ``gas.composition``: each stream's own water fraction.

How it moves: **inside the solve**, with the streams (:class:`letdown.equipment.stream.Carry`,
attached to the feeds by :func:`letdown.sheet.carried.feed_carries`). Each block passes it on in its own ``run``: by
default the flow-weighted mean ratio of its inlets (a mixer blends; a splitter, heater, cooler,
throttle, compressor, expander and any kind that does not override it keep it), an exchanger each
side's own, a separator splits it (:mod:`letdown.equipment.watersplit`: the vapour and the
hydrocarbon liquid keep at most their saturated contents at the drum by ``gas.water_method``, the
same route as the water dew point below, and the rest leaves as free water by the ``water`` port,
or with the liquid without one). A stream below its water dew point keeps its water in the count
(it is the free water that can freeze or form hydrate). Loops settle the water in their tear
iterations with the gas (:mod:`letdown.sheet.solve`). This module reads what the streams carry
(:func:`letdown.sheet.carried.water_flows`): free water [mol/s] (:class:`letdown.sheet.carried.WaterCarry`) on a separator's ``water`` outlet,
which holds no gas and whose water per dry gas is shown as NaN. Free water flowing from a
``water`` outlet into any block but a separator is not carried on (a note says so). Hydrocarbons
dissolved in the free water are not counted: the water-free flash does not see the water.

With **water as a component** (listed in ``gas.composition``) the separator is a three-phase drum
(:mod:`letdown.equipment.separator`) and each stream's water is its own water fraction.

**Inhibitor** (``inject`` blocks, :mod:`letdown.equipment.inject`): carried the same way, per
stream, as moles of methanol and of MEG per mole of dry gas (:func:`letdown.sheet.carried.inhibitor_carried`), never in
the hydrocarbon flash; the gas's mole and energy balances do not see it. An ``inject`` block adds
its dose in its run; a separator splits it with its phases, whichever way the water is carried
(:func:`letdown.equipment.watersplit.split_inhibitor`: the three-phase split at the drum with
``losses: equilibrium``, all with the free water with ``losses: none``); the others carry it as
the water. A block sized by ``depression`` protects the coldest gas-carrying stream downstream
(:func:`letdown.sheet.dosing.protected_point`: never a separator's ``water`` or ``liquid`` outlet), which is solved
after it: the solver finds that point from a solve (:func:`letdown.sheet.dosing.find_doses`, the search over the graph,
with the block's own arithmetic, :func:`letdown.equipment.inject.dose`) and runs the blocks again
with the rate found. A dose that did not converge, has no gas to protect, or exceeds
:data:`letdown.sheet.dosing.MAX_DOSE_TO_GAS` of the gas mass is refused: NaN, a hazard record ``inhibitor_dose``, and
the case marked not converged (:func:`letdown.sheet.dosing._check_dose`). With all of a stream's water taken as free
water, the stream's aqueous phase holds ``inhibitor_wt_pct`` (:func:`aqueous`), and its hydrate
temperature is found with the water activity a_w = gamma_w x_w of that phase (gamma_w at the
hydrate temperature, :func:`letdown.fluid.aqueous.inhibitor.water_activity_coefficient`; reported as
``water_activity``); the freezing point of its free water keeps the ideal a_w = x_w (warm: the
safe side). When an ``inject`` block counts its losses (``losses: equilibrium``), each stream's
aqueous phase comes instead from the split of water and inhibitor at the stream's own T and P
(:func:`aqueous_equilibrium`).

What stays here is the margin calculation: water dew points, hydrate temperatures, ice, the
warnings. The water and inhibitor the streams carried are read by :mod:`letdown.sheet.carried`;
the inject blocks' doses are found by :mod:`letdown.sheet.dosing`.

Per stream and case:

* ``water_dew_T`` -- the water dew point at the stream's pressure (over liquid water, supercooled
  below 0 degC; :func:`letdown.fluid.aqueous.water.water_dew_point`), NaN for dry gas or a dew point outside
  200-450 K;
* ``hydrate_T`` -- the hydrate formation temperature at the stream's pressure for its dry
  composition (van der Waals-Platteeuw, Munck et al. 1988; free water assumed, a_w of pure water
  lowered by dissolved gas: :mod:`letdown.fluid.aqueous.hydrate`, and by the stream's inhibitor), NaN
  where the gas has no hydrate former
  or no hydrate forms above 230 K;
* ``free_water`` -- free water can be in the stream: at or below its water dew point, or a
  separator's free water (:func:`free_water`);
* ``ice_T`` -- where free water can form, its freezing point with the stream's inhibitor
  (:func:`letdown.fluid.aqueous.solution.freezing_point` of the water activity; 0 degC without
  inhibitor), NaN elsewhere;
* margins ``T - limit`` [K] (positive: warmer than the limit): hydrate, water dew point, ice
  (against ``ice_T``; none where no free water can form), ``limits.min_T`` and
  ``limits.outlet_min_T`` (the streams it covers).

The checks run on **every** solve, whatever the file holds; what they assumed is stated in the
result (:func:`basis`: the margin and its source, the water, the rules below). The warning rules
(:func:`freezing_warnings`; one record per stream and cause; ``m`` = ``limits.hydrate_margin``,
or :data:`DEFAULT_HYDRATE_MARGIN` = 3 K, common practice, when absent):

* hydrate warnings only on streams that carry gas (:func:`letdown.sheet.carried.gas_carrying`: not a separator's
  ``water`` or hydrocarbon ``liquid`` outlet, not all liquid) and water: none on a hydrocarbon
  liquid or a dry refrigerant loop;
* **hydrate** (hazard) where ``T < hydrate_T + m`` and ``T <= water_dew_T``: hydrate needs water,
  and at or below its water dew point the gas has free water to form it (common practice, e.g.
  the gas processors' handbooks: "free water" is the first condition of hydrate formation);
* **hydrate_no_free_water** (check) where ``T < hydrate_T + m`` but the gas is above its water
  dew point, or is a separator's vapour leaving at its dew point with its free water taken out:
  hydrate can still grow straight from the vapour when its water content exceeds the (lower)
  content in equilibrium with hydrate (not modelled), and the margin assumes free water (slugs,
  carry-over, a wetter day), so this is a check rather than a pass;
* **ice** where free water can form and ``T < ice_T`` (no margin: the freezing point is a
  property of the water, not a prediction with a scatter; the ideal-solution point is on the warm
  side of measured ones): a hazard with free water, a check on a separator's saturated vapour;
  ``limits.min_T`` does **not** switch it off;
* **min_T** (hazard, :mod:`letdown.sheet.solve`): ``limits.min_T`` is the material's limit, checked
  as written in every stream, and nothing else;
* **outlet_min_T** (hazard): the user's rule for the pipe downstream (buried pipe: frost heave;
  exposed pipe, coatings), ``limits.outlet_min_T`` as written, on the streams named or every gas
  outlet (:func:`outlet_rule`).

Engineering estimates; designs must follow local codes and be checked by qualified, licensed staff.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..constants import ZERO_CELSIUS
from ..equipment.stream import INHIBITOR_NAMES
from ..equipment.watersplit import dry_flow
from ..errors import ConvergenceError
from ..fluid.aqueous.hydrate import LANGMUIR
from ..fluid.aqueous.solution import density as aqueous_density, freezing_point
from ..fluid.aqueous.inhibitor import INHIBITORS, water_activity_coefficient
from ..fluid.aqueous.inhibitor import _solution_hydrate_T as solution_hydrate_T
from ..fluid.aqueous.losses import partition
from ..fluid.aqueous.water import (M_WATER, MOL_PER_SM3, DEW_T_RANGE, water_content,
                                   water_dew_point)
from .carried import gas_carrying, inhibitor_carried, water_flows
from .dosing import dose_details, find_doses
from .result import WarningRecord

#: The ice point used for the ice margin [K] (pure water at about 1 atm; the depression by pressure,
#: 0.0073 K/bar, is within any margin; common practice).
ICE_T = ZERO_CELSIUS
#: The hydrate margin of the checks when the file gives no ``limits.hydrate_margin`` [K]: 3 K
#: (about 5 degF) above the predicted hydrate temperature is what station engineers commonly keep
#: (common practice; 3-5 K), covering the prediction's own error of 1-2 K and the swing of the
#: gas temperature.
DEFAULT_HYDRATE_MARGIN = 3.0
#: A stream within this of its water dew point counts as at it [K]: the dew point is found by
#: bisection to 1e-7 K (:data:`letdown.fluid.aqueous.water.DEW_T_TOL`), so a feed saturated at its own
#: temperature lands a few 1e-8 K either side.
DEW_T_SLACK = 1e-6
#: Column of methanol in the inhibitor arrays (the rest is MEG).
METHANOL = INHIBITOR_NAMES.index("methanol")


@dataclass(frozen=True, eq=False)
class StreamFreezing:
    """Water and hydrate numbers of one stream over the cases.

    Attributes
    ----------
    water_ratio : ndarray (n,)
        Water per dry gas [mol/mol].
    water_dew_T : ndarray (n,)
        Water dew point at the stream's pressure [K] (NaN: dry, or outside 200-450 K).
    hydrate_T : ndarray (n,)
        Hydrate formation temperature at the stream's pressure [K] (NaN: none above 230 K).
    hydrate_structure : ndarray of str (n,)
        ``sI``, ``sII`` or ``""``.
    inhibitor_ratio : ndarray (n, k) or None
        Inhibitor per dry gas [mol/mol], k over :data:`INHIBITOR_NAMES` (None: none anywhere).
    inhibitor_wt_pct : ndarray (n,) or None
        Inhibitor in the free water, all the water taken as condensed [wt %].
    water_activity : ndarray (n,) or None
        Water activity used for ``hydrate_T`` (x_w of the water-inhibitor phase) [-].
    water_flow : ndarray (n,) or None
        All the water the stream carries [mol/s]: ``water_ratio`` times the dry flow, or the free
        water of a separator's ``water`` outlet (whose ``water_ratio`` is NaN: it holds no gas).
    inhibitor_flow : ndarray (n, k) or None
        All the inhibitor the stream carries [mol/s]: ``inhibitor_ratio`` times the dry flow plus
        what a separator sent with its free water (None: no inhibitor anywhere).
    free_water : ndarray of bool (n,) or None
        Free (liquid) water can be in the stream: it is at or below its water dew point, or it
        carries a separator's free water (:func:`free_water`).
    ice_T : ndarray (n,) or None
        Freezing point of that free water with its inhibitor [K] (:func:`letdown.fluid.aqueous.solution.
        freezing_point` of ``water_activity``; 273.15 K without inhibitor); NaN where no free
        water can form.
    outlet_min_T : float or None
        ``limits.outlet_min_T`` [K] where the rule applies to this stream.
    aqueous_density : ndarray (n,) or None
        Density of the free water and its inhibitor where the stream holds nothing else (a
        separator's ``water`` outlet, water beside the gas) [kg/m3]
        (:func:`letdown.fluid.aqueous.solution.density`); NaN elsewhere.
    """

    water_ratio: np.ndarray
    water_dew_T: np.ndarray
    hydrate_T: np.ndarray
    hydrate_structure: np.ndarray
    inhibitor_ratio: np.ndarray | None = None
    inhibitor_wt_pct: np.ndarray | None = None
    water_activity: np.ndarray | None = None
    water_flow: np.ndarray | None = None
    inhibitor_flow: np.ndarray | None = None
    free_water: np.ndarray | None = None
    ice_T: np.ndarray | None = None
    outlet_min_T: float | None = None
    aqueous_density: np.ndarray | None = None

    @property
    def water_mole_fraction(self) -> np.ndarray:
        """Water mole fraction of the wet gas [-]."""
        return self.water_ratio / (1.0 + self.water_ratio)

    @property
    def water_mg_Sm3(self) -> np.ndarray:
        """Water per standard cubic metre of dry gas (15 degC, 101.325 kPa) [mg/Sm3]."""
        return self.water_ratio * MOL_PER_SM3 * M_WATER * 1e6


def aqueous(water_ratio, inhibitor_ratio) -> tuple[np.ndarray, np.ndarray]:
    """Inhibitor in the free water and the water activity, all the water taken as condensed.

    Parameters
    ----------
    water_ratio : ndarray (n,)
        Water per dry gas [mol/mol].
    inhibitor_ratio : ndarray (n, k)
        Inhibitor per dry gas [mol/mol], k over :data:`INHIBITOR_NAMES`.

    Returns
    -------
    wt_pct : ndarray (n,)
        Inhibitor in the water-inhibitor phase [wt %] (NaN without water).
    water_activity : ndarray (n,)
        x_w, the water mole fraction of that phase (the ideal a_w); 1 without inhibitor or
        without water [-]. The hydrate temperature takes a_w = gamma_w x_w from it
        (:func:`_hydrate_Ts`).
    methanol_fraction : ndarray (n,)
        Methanol mole fraction of that phase (the rest of the inhibitor is MEG) [-].
    """
    w = np.asarray(water_ratio, float)
    inh = np.asarray(inhibitor_ratio, float)
    M = np.array([INHIBITORS[nm].M * 1e-3 for nm in INHIBITOR_NAMES])
    mi = inh @ M
    mw = w * M_WATER
    wet = w > 0.0
    wt = np.where(wet, 100.0 * mi / np.where(wet, mi + mw, 1.0), np.nan)
    ni = inh.sum(axis=1)
    aw = np.where(wet & (ni > 0.0), w / np.where(wet, w + ni, 1.0), 1.0)
    xm = np.where(wet & (ni > 0.0), inh[:, METHANOL] / np.where(wet, w + ni, 1.0), 0.0)
    return wt, aw, xm


def aqueous_equilibrium(fluid, T, P, zs, water_ratio, inhibitor_ratio):
    """Inhibitor in the aqueous liquid and the water activity of streams at their own (T, P), the
    inhibitor split by :func:`letdown.fluid.aqueous.losses.partition` (what the vapour and a
    hydrocarbon liquid hold is not in the aqueous phase). Rows without inhibitor or water keep
    :func:`aqueous`'s answer; rows with inhibitor but no aqueous liquid at their state have NaN
    wt % and a_w = 1 (no free water there).

    Returns
    -------
    wt_pct, water_activity, methanol_fraction : ndarray (n,)
        As for :func:`aqueous`.
    """
    wt, aw, xm = aqueous(water_ratio, inhibitor_ratio)
    rows = np.flatnonzero((np.asarray(inhibitor_ratio).sum(axis=1) > 0.0)
                          & (np.asarray(water_ratio) > 0.0) & np.isfinite(T) & (P > 0.0))
    if rows.size:
        p = partition(fluid, T[rows], P[rows], zs[rows], water_ratio[rows],
                      inhibitor_ratio[rows])
        wt[rows] = p.wt_pct
        aw[rows] = np.where(np.isfinite(p.water_mole_fraction), p.water_mole_fraction, 1.0)
        total = p.water_aqueous + p.aqueous.sum(axis=1)
        xm[rows] = np.where(total > 0.0, p.aqueous[:, METHANOL] / np.where(total > 0.0, total, 1.0),
                            0.0)
    return wt, aw, xm


def _dew_points(fluid, method, y, P, zs) -> np.ndarray:
    """Water dew points [K] of gases of compositions ``zs`` (n, nc) (used by the ``eos`` method);
    NaN for dry gas and for dew points outside :data:`DEW_T_RANGE`."""
    out = np.full(y.shape, np.nan)
    wet = y > 0.0
    if not wet.any():
        return out
    Zw = np.asarray(zs, float)[wet]
    lo = np.asarray(water_content(fluid, np.full(wet.sum(), DEW_T_RANGE[0]), P[wet],
                                  method=method, zs=Zw))
    hi = np.asarray(water_content(fluid, np.full(wet.sum(), DEW_T_RANGE[1]), P[wet],
                                  method=method, zs=Zw))
    idx = np.flatnonzero(wet)
    ok = (y[wet] >= lo) & (y[wet] <= hi)
    if ok.any():
        out[idx[ok]] = water_dew_point(y[idx[ok]], P[idx[ok]], fluid=fluid, method=method,
                                       zs=np.asarray(zs, float)[idx[ok]])
    return out


def _hydrate_Ts(fluid, P, zs, aw=None, xm=None) -> tuple:
    """Hydrate temperatures [K] and structures of rows (P, zs, water mole fraction aw of the free
    water and methanol mole fraction xm in it), each distinct row solved once.

    With an inhibitor (aw < 1 and ``xm`` given) the water activity is gamma_w x_w, gamma_w of
    :func:`letdown.fluid.aqueous.inhibitor.water_activity_coefficient` at the inhibited hydrate temperature
    itself (its fixed point); where that fixed point does not settle, the ideal a_w = x_w stays (it
    understates the depression: the safe side).

    Returns
    -------
    T, structure, failed, water_activity
        ``water_activity`` the a_w each row was solved with [-].
    """
    names = list(fluid.components)
    formers = [j for j, nm in enumerate(names) if nm in LANGMUIR]
    T = np.full(P.shape, np.nan)
    st = np.full(P.shape, "", dtype=object)
    failed = []
    aw = np.ones(P.shape) if aw is None else np.array(aw, float)
    has = (np.asarray(zs)[:, formers].sum(axis=1) > 0.0) if formers else np.zeros(P.shape, bool)
    has &= np.isfinite(P) & (P > 0.0)
    if not has.any():
        return T, st, failed, aw
    inhibited = has & (aw < 1.0) & np.isfinite(aw)
    if xm is not None and inhibited.any():
        xw, xmi = aw[inhibited], np.asarray(xm, float)[inhibited]
        # each distinct row once, as for the hydrate temperatures below
        rows = np.column_stack([P[inhibited], xw, xmi, np.asarray(zs)[inhibited]])
        uniq, back = np.unique(rows, axis=0, return_inverse=True)
        try:
            T_fix = solution_hydrate_T(fluid, uniq[:, 0], uniq[:, 1], uniq[:, 2],
                                       zs=uniq[:, 3:])[np.asarray(back).reshape(-1)]
        except ConvergenceError:
            T_fix = None
        if T_fix is not None:
            gamma = np.asarray(water_activity_coefficient(
                xw, xmi, np.where(np.isfinite(T_fix), T_fix, ICE_T)), float)
            aw[inhibited] = np.minimum(xw * gamma, 1.0)
    rows = np.column_stack([P[has], aw[has], zs[has]])
    uniq, inverse = np.unique(rows, axis=0, return_inverse=True)
    inverse = np.asarray(inverse).reshape(-1)
    try:
        curve = fluid.hydrate_curve(uniq[:, 0], water_activity=uniq[:, 1], zs=uniq[:, 2:])
        Tu, su = curve.T, curve.structure
    except ConvergenceError:
        # named fallback: solve the distinct rows one by one, so one bad row does not blank all
        Tu = np.full(len(uniq), np.nan)
        su = np.full(len(uniq), "", dtype=object)
        for k, row in enumerate(uniq):
            try:
                c = fluid.hydrate_curve(row[:1], water_activity=row[1:2], zs=row[None, 2:])
                Tu[k], su[k] = c.T[0], c.structure[0]
            except ConvergenceError:
                failed.append(float(row[0]))
    T[has] = Tu[inverse]
    st[has] = np.asarray(su, dtype=object)[inverse]
    return T, st, failed, aw


def stream_freezing(fs, fluid, streams, steps, doses=None, params=None, outcomes=None,
                    found=None) -> tuple[dict, list]:
    """Water, inhibitor, water dew point and hydrate temperature of every stream.

    The hydrate temperature uses the water activity of the stream's free water with its inhibitor
    (:func:`aqueous`): an ``inject`` block upstream lowers it.

    Parameters
    ----------
    fs, fluid, streams, steps
        As for :func:`letdown.sheet.carried.water_flows`.
    doses : dict, optional
        Filled with ``inject`` block name -> details for its outcome: ``inhibitor_rate_kg_s``
        [kg/s], ``inhibitor_wt_pct`` [wt %], ``hydrate_depression_K`` (Hammerschmidt at that
        wt %) [K], ``hydrate_depression_vdwp_K`` (outlet hydrate temperature without and with the
        inhibitor, vdW-P) [K]; and, with water as a component of the gas, with separator name
        -> its water: ``water_in_mol_s``, ``water_in_vapour_mol_s``, ``water_in_liquid_mol_s``,
        ``free_water_mol_s`` [mol/s] and ``free_water_kg_s`` [kg/s] (:class:`letdown.sheet.carried.WaterCarry`; with
        the water beside the gas the separator reports its split itself,
        :mod:`letdown.equipment.watersplit`).
    params : Mapping[str, Mapping], optional
        As for :func:`letdown.sheet.dosing.find_doses`.
    outcomes : Mapping[str, BlockOutcome], optional
        As for :func:`letdown.sheet.carried.water_flows`.
    found : tuple, optional
        The doses and their notes (:func:`letdown.sheet.dosing.find_doses`) the solver found; default found here.

    Returns
    -------
    freezing : dict
        Stream name -> :class:`StreamFreezing`.
    notes : list of WarningRecord
        The assumptions made (water taken as saturated, loops) and any hydrate solve that failed.
    """
    carried = water_flows(fs, fluid, streams, steps, outcomes)
    ratios, notes = carried.ratios, carried.notes
    dosing = any(b.kind == "inject" for b in fs.blocks.values())
    if found is None and dosing:
        found = find_doses(fs, fluid, streams, steps, params, outcomes)
    block_doses, inh_notes = found if found is not None else ({}, [])
    inh, free_inh = inhibitor_carried(fs, streams)
    if not dosing:
        free_inh = {}
    notes.extend(inh_notes)
    names = list(streams)
    n = streams[names[0]].n_cases
    P = np.concatenate([np.asarray(streams[s].P, float) for s in names])
    zs = np.concatenate([np.asarray(streams[s].zs, float) for s in names])
    # a stream holding only free water (a separator's water outlet) has no water per dry gas;
    # nor, with water as a component, an aqueous stream (water its largest part)
    shown = {s: np.where(((np.asarray(streams[s].flow, float) > 0.0)
                          | (carried.free.get(s, np.zeros(n)) <= 0.0))
                         & ~(ratios[s] > 1.0), ratios[s], np.nan)
             for s in names}
    r = np.concatenate([shown[s] for s in names])
    inh_all = np.concatenate([inh[s] for s in names])
    if any(d["losses"] == "equilibrium" for d in block_doses.values()):
        T_all = np.concatenate([np.asarray(streams[s].T, float) for s in names])
        wt, aw, xm = aqueous_equilibrium(fluid, T_all, P, zs, r, inh_all)
    else:
        wt, aw, xm = aqueous(r, inh_all)
    # a stream of free water only (a separator's water outlet): its own water and inhibitor
    for k, s in enumerate(names):
        if s in free_inh and s in carried.free and np.isnan(shown[s]).any():
            sl = slice(k * n, (k + 1) * n)
            w_free, a_free, m_free = aqueous(carried.free[s], free_inh[s])
            only = np.isnan(shown[s])
            wt[sl] = np.where(only, w_free, wt[sl])
            aw[sl] = np.where(only, a_free, aw[sl])
            xm[sl] = np.where(only, m_free, xm[sl])
    y = r / (1.0 + r)
    dew = _dew_points(fluid, fs.gas.water_method, y, P, zs)
    # the inject outlets once more without inhibitor, for the vdW-P depression of each block
    outs = [fs.blocks[b].outlets["out"] for b in block_doses]
    P_all = np.concatenate([P] + [np.asarray(streams[s].P, float) for s in outs])
    zs_all = np.concatenate([zs] + [np.asarray(streams[s].zs, float) for s in outs])
    aw_all = np.concatenate([aw, np.ones(n * len(outs))])
    xm_all = np.concatenate([xm, np.zeros(n * len(outs))])
    hT_all, hs_all, failed, a_eff = _hydrate_Ts(fluid, P_all, zs_all, aw_all, xm_all)
    hT, hs = hT_all[: P.size], hs_all[: P.size]
    # the water activity reported is the one the hydrate temperature was solved with; the freezing
    # point of the free water keeps the ideal solution (x_w), which errs warm (the safe side)
    x_w, aw = aw, np.where(np.isfinite(a_eff[: P.size]), a_eff[: P.size], aw)
    for p in failed:
        notes.append(WarningRecord("hydrate", f"the hydrate temperature at {p / 1e5:.4g} bar did not "
                                              "converge; that stream's hydrate margin is blank",
                                   kind="hydrate_unconverged", severity="check"))
    out = {}
    dosed = bool(block_doses)
    rule_T, rule_streams = outlet_rule(fs, streams)
    for k, s in enumerate(names):
        sl = slice(k * n, (k + 1) * n)
        free = free_water(streams[s], dew[sl], carried.free.get(s))
        rho = None
        if s in carried.free and carried.water_index is None:
            only = (np.asarray(streams[s].flow, float) <= 0.0) & (carried.free[s] > 0.0)
            fi = free_inh.get(s, np.zeros((n, len(INHIBITOR_NAMES))))
            rho = np.where(only, aqueous_density(
                np.asarray(streams[s].T, float), carried.free[s] * M_WATER,
                {nm: fi[:, j] * INHIBITORS[nm].M * 1e-3 for j, nm in enumerate(INHIBITOR_NAMES)}),
                np.nan)
        out[s] = StreamFreezing(shown[s].copy(), dew[sl].copy(), hT[sl].copy(),
                                np.asarray(hs[sl], dtype=object),
                                inh[s].copy() if dosed else None,
                                wt[sl].copy() if dosed else None,
                                aw[sl].copy() if dosed else None,
                                carried.flow(s, streams[s]),
                                (inh[s] * dry_flow(fluid, streams[s])[:, None]
                                 + free_inh.get(s, 0.0)) if dosed else None,
                                free, np.where(free, freezing_point(x_w[sl]), np.nan),
                                rule_T if s in rule_streams else None, rho)
    if doses is not None:
        if carried.water_index is not None:
            for b, split in carried.separators.items():
                doses[b] = {**split, "free_water_kg_s": split["free_water_mol_s"] * M_WATER}
        for m, (b, d) in enumerate(block_doses.items()):
            free = hT_all[P.size + m * n: P.size + (m + 1) * n]
            doses[b] = {**dose_details(d),
                        "hydrate_depression_vdwp_K": free - out[outs[m]].hydrate_T}
    return out, notes


def free_water(stream, water_dew_T, free=None) -> np.ndarray:
    """Cases in which a stream can hold free (liquid) water [bool (n,)]: it is at or below its
    water dew point (:data:`DEW_T_SLACK`), or it carries a separator's free water (``free``
    [mol/s], a ``water`` outlet or a drum's liquid without a water port)."""
    T = np.asarray(stream.T, float)
    out = T <= np.asarray(water_dew_T, float) + DEW_T_SLACK
    if free is not None:
        out |= np.asarray(free, float) > 0.0
    return out


def hydrate_margin(fs) -> tuple[float, str]:
    """The hydrate margin of the checks [K] and where it comes from: ``limits.hydrate_margin``,
    or :data:`DEFAULT_HYDRATE_MARGIN` (common practice) when the file gives none."""
    if "hydrate_margin" in fs.limits:
        return float(fs.limits["hydrate_margin"]), "limits.hydrate_margin"
    return DEFAULT_HYDRATE_MARGIN, "the default, common practice; set limits.hydrate_margin"


def outlet_rule(fs, streams) -> tuple[float | None, tuple]:
    """``limits.outlet_min_T`` [K] and the streams it applies to: those the file names, else
    every gas outlet of the sheet (a stream no block takes in, not a feed, not a separator's
    water or liquid outlet)."""
    T = fs.limits.get("outlet_min_T")
    if T is None:
        return None, ()
    named = fs.limits.get("outlet_streams")
    if named:
        return float(T), tuple(named)
    taken = {s for b in fs.blocks.values() for s in b.inlets.values()}
    drains = {s for b in fs.blocks.values() if b.kind == "separator"
              for p, s in b.outlets.items() if p in ("water", "liquid")}
    return float(T), tuple(s for s in streams
                           if s not in taken and s not in fs.feeds and s not in drains)


def basis(fs, fluid) -> dict:
    """What the freezing checks assumed, for the report and the JSON (``freezing_basis``):
    ``hydrate_margin_K`` and ``hydrate_margin_source``; ``water`` (where each stream's water
    comes from); ``hydrate_T`` and ``ice`` (what each limit assumes); ``min_T_K`` and
    ``outlet_min_T_K`` (None when not given)."""
    m, source = hydrate_margin(fs)
    if "water" in fluid.components:
        water = "water as a component of the gas (each stream's own water)"
    elif fs.gas.water is None:
        water = ("no gas.water: every feed taken as saturated with water at its own temperature "
                 "and pressure (the safe assumption for hydrates)")
    else:
        water = "given in gas.water, carried through the blocks; separators take out free water"
    return {"hydrate_margin_K": m, "hydrate_margin_source": source, "water": water,
            "hydrate_T": "free water assumed (vdW-P; lowered by the stream's inhibitor); a "
                         "hazard where the stream is at or below its water dew point, a check "
                         "above it",
            "ice": "judged only where free water can form (at or below the water dew point, or "
                   "a separator's free water), against its freezing point lowered by the "
                   "inhibitor it carries; no margin",
            "min_T_K": fs.limits.get("min_T"), "outlet_min_T_K": fs.limits.get("outlet_min_T")}


def _separator_port(fs, name, port) -> bool:
    return any(b.kind == "separator" and b.outlets.get(port) == name for b in fs.blocks.values())


def freezing_warnings(fs, streams, freezing) -> list:
    """Warnings for streams inside a margin (module docstring, "The warning rules"): one
    :class:`WarningRecord` per stream and cause, with its numbers (SI)."""
    out = []
    m, source = hydrate_margin(fs)
    rule_T, rule_streams = outlet_rule(fs, streams)
    for name, s in streams.items():
        fz = freezing[name]
        T = np.asarray(s.T, float)
        P = np.asarray(s.P, float)
        flowing = (np.asarray(s.flow, float) > 0.0) | (np.nan_to_num(fz.water_flow) > 0.0
                                                        if fz.water_flow is not None else False)
        carries = gas_carrying(fs, streams, name)
        water = np.nan_to_num(fz.water_ratio) > 0.0
        free = fz.free_water if fz.free_water is not None else np.zeros(T.shape, bool)
        # a drum's vapour leaves at its own dew point with its free water taken out
        drum_vapour = _separator_port(fs, name, "vapour")
        saturated = drum_vapour & (np.abs(T - fz.water_dew_T) <= DEW_T_SLACK)
        wet = free & ~saturated
        near = carries & water & (T < fz.hydrate_T + m)
        numbers = {"T_K": T, "hydrate_T_K": fz.hydrate_T, "P_Pa": P, "margin_K": T - fz.hydrate_T,
                   "wanted_margin_K": m, "water_dew_T_K": fz.water_dew_T}
        for mask, kind, severity, tail in (
                (near & wet, "hydrate", "hazard",
                 "and at or below its water dew point {dew}: free water can form hydrate"),
                (near & ~wet, "hydrate_no_free_water", "check",
                 "{sat}; the margin assumes free water (slugs, carry-over, a wetter day): "
                 "check the water, or keep the margin")):
            if not mask.any():
                continue
            i = int(np.flatnonzero(mask)[0])
            dew = (f"{fz.water_dew_T[i] - 273.15:.2f} degC" if np.isfinite(fz.water_dew_T[i])
                   else "(dry gas)")
            sat = (f"at its water dew point {dew}, its free water taken out by the separator"
                   if saturated[i] else f"but above its water dew point {dew}: no free water by "
                                        "the dew point")
            out.append(WarningRecord(name, (
                f"hydrate margin {T[i] - fz.hydrate_T[i]:+.2f} K is below the {m:g} K wanted "
                f"({source}): {T[i] - 273.15:.2f} degC against a hydrate temperature of "
                f"{fz.hydrate_T[i] - 273.15:.2f} degC at {P[i] / 1e5:.4g} bar "
                f"({fz.hydrate_structure[i]}), " + tail.format(dew=dew, sat=sat)),
                tuple(np.flatnonzero(mask).tolist()), kind=kind, severity=severity,
                numbers=numbers))
        if fz.ice_T is not None:
            cold = flowing & (free | saturated) & (T < fz.ice_T)
            if cold.any():
                i = int(np.flatnonzero(cold)[0])
                hazard = bool(np.any(cold & wet))
                inhibited = fz.ice_T[i] < ICE_T - 1e-9
                out.append(WarningRecord(name, (
                    f"ice: {T[i] - 273.15:.2f} degC is {fz.ice_T[i] - T[i]:.2f} K below the "
                    f"freezing point of its free water ({fz.ice_T[i] - 273.15:.2f} degC"
                    + (", lowered by its inhibitor" if inhibited else "") + ")"
                    + (": free water freezes; regulator bodies and pilot lines ice up"
                       if hazard else ": at its water dew point, the drum took its free water; "
                                      "any further cooling condenses water that freezes")),
                    tuple(np.flatnonzero(cold).tolist()), kind="ice",
                    severity="hazard" if hazard else "check",
                    numbers={"T_K": T, "ice_T_K": fz.ice_T, "margin_K": T - fz.ice_T,
                             "water_dew_T_K": fz.water_dew_T}))
        if rule_T is not None and name in rule_streams:
            cold = flowing & (T < rule_T)
            if cold.any():
                i = int(np.flatnonzero(cold)[0])
                out.append(WarningRecord(name, (
                    f"{T[i] - 273.15:.2f} degC is below limits.outlet_min_T "
                    f"{rule_T - 273.15:.2f} degC, the coldest gas allowed into the pipe "
                    "downstream"), tuple(np.flatnonzero(cold).tolist()), kind="outlet_min_T",
                    severity="hazard",
                    numbers={"T_K": T, "outlet_min_T_K": rule_T, "margin_K": T - rule_T}))
    return out
