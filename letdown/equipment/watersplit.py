"""A separator's split of the water and inhibitor carried beside the gas
(:class:`letdown.equipment.stream.Carry`).

The hydrocarbon flash stays water-free; the water goes with the streams as a ratio per mole of dry
gas. A separator (:mod:`letdown.equipment.separator`) takes the free water out, at the drum's T and
P (its vapour outlet's):

* the vapour can hold ``r_V = y / (1 - y)`` per mole of dry vapour, ``y`` the water content of the
  gas saturated with liquid water by the sheet's ``gas.water_method``
  (:func:`letdown.fluid.aqueous.water.water_content`) -- the **same route** as the water dew point of the
  freezing checks (:mod:`letdown.sheet.freezing`), so a vapour that leaves saturated has its water
  dew point at the drum temperature (to the dew point's bisection tolerance). The three-phase flash
  would give the cubic equation's own water content instead, which is not what the dew point
  (Bukacek by default) is measured against, so the vapour would leave off its own dew point;
* the hydrocarbon liquid can hold ``r_L`` from the fugacity balance of its water with pure liquid
  water on the cubic equation (:func:`letdown.fluid.aqueous.water.water_in_liquid`). With the constant
  water kij this is 1e-7 to 3e-6 mol/mol at 250-300 K, far below measured solubilities: the free
  water is overstated by the difference (the safe side for freezing);
* with inlet water ``W = r_in F_in + free_in`` and capacity ``C = F_V r_V + F_L r_L``: if
  ``W >= C`` both phases leave saturated and ``W - C`` leaves as free water by the ``water`` outlet;
  otherwise both hold the same fraction ``W / C`` of their saturated contents (the water fugacity is
  common to both and, this dilute, proportional to each content) and the ``water`` outlet gets
  nothing. The balance ``W = vapour + liquid + free`` closes to rounding.

The ``water`` outlet holds no gas (zero flow in the hydrocarbon flash): its water is free water
[mol/s] (``Carry.free_water``), its ratio per dry gas zero. A separator without a ``water`` port
sends the free water with its liquid (as a ratio per mole of hydrocarbon liquid, or as free water
where there is none).

**Inhibitor** (:func:`split_inhibitor`; ratios per mole of dry gas, :func:`dry_flow`). With
equilibrium losses (any ``inject`` block of the sheet on ``losses: equilibrium``, the solver says:
``params[common.INHIBITOR_EQUILIBRIUM]``) the split is the three-phase one at the drum's T and P
(:func:`letdown.fluid.aqueous.losses.partition` of the inlet gas with its water and inhibitor): the
vapour leaves with what the vapour holds, the hydrocarbon liquid with what it dissolves, and the
aqueous part goes with the free water. Without them (``losses: none`` everywhere: all the inhibitor
taken to be in the water) the whole inlet inhibitor goes with the free water where the drum drops
free water, and otherwise stays with the gas, shared by flow. The free water's share leaves by the
``water`` port (free inhibitor [mol/s], the outlet holding no gas), or with the hydrocarbon liquid
when the drum has no ``water`` port. The free water itself is split by :func:`split` (the file's
water-content route), the inhibitor by the flash: the two agree to the flash's own water content
(tests/fluid/test_threephase.py), not exactly. With water a component of the gas (a three-phase drum) the
water is the streams' own and only the inhibitor is split here.

Engineering estimates; designs must follow local codes and be checked by qualified, licensed staff.
"""
from __future__ import annotations

import numpy as np

from ..errors import ConvergenceError
from ..fluid.aqueous.losses import partition
from ..fluid.aqueous.water import water_in_liquid
from ..fluid.aqueous.water import M_WATER, TC_WATER, water_content
from .common import INHIBITOR_EQUILIBRIUM, TRIAL, WATER_METHOD
from .stream import INHIBITOR_NAMES, Carry

#: The keys of the split a separator reports in its details (each over the cases, [mol/s]), and
#: the free water in kg/s.
SPLIT_DETAILS = ("water_in_mol_s", "water_in_vapour_mol_s", "water_in_liquid_mol_s",
                 "free_water_mol_s", "free_water_kg_s")


def saturation_ratios(fluid, method: str, T, P, xs, has_liquid=None, ys=None
                      ) -> tuple[np.ndarray, np.ndarray]:
    """Water a separator's vapour and hydrocarbon liquid can hold at (T, P), per mole of dry
    phase [mol/mol].

    The vapour by ``gas.water_method`` (:func:`letdown.fluid.aqueous.water.water_content`, at the
    vapour's composition ``ys`` for ``eos``), the **same route as the water dew point**, so that
    a vapour leaving saturated has its water dew point at the separator's temperature; the liquid
    by the fugacity balance with pure liquid water on the fluid's cubic equation
    (:func:`letdown.fluid.aqueous.water.water_in_liquid`).

    Parameters
    ----------
    fluid : Fluid
    method : str
        ``bukacek`` or ``eos``.
    T, P : ndarray (n,)
        Separator temperature [K] and pressure [Pa].
    xs : ndarray (n, nc)
        Hydrocarbon liquid composition [-].
    has_liquid : ndarray of bool (n,), optional
        Cases with a hydrocarbon liquid (default all); the others get ``r_liquid = 0``.
    ys : ndarray (n, nc), optional
        Vapour composition [-] (default the file's gas composition).

    Returns
    -------
    r_vapour, r_liquid : ndarray (n,)
        Water per dry vapour and per dry liquid at saturation [mol/mol].

    Raises
    ------
    InputError
        A state outside the water-content route's inputs (:func:`letdown.fluid.aqueous.water.
        water_content`).
    ConvergenceError
        The liquid's fugacity balance did not settle.
    """
    T = np.asarray(T, dtype=float)
    P = np.asarray(P, dtype=float)
    y = np.asarray(water_content(fluid, T, P, method=method, zs=ys), dtype=float).reshape(-1)
    has = np.ones(T.shape, bool) if has_liquid is None else np.asarray(has_liquid, bool)
    r_liquid = np.zeros(T.shape)
    if has.any():
        x = water_in_liquid(fluid, T[has], P[has], np.asarray(xs, float)[has])
        r_liquid[has] = x / (1.0 - x)
    return y / (1.0 - y), r_liquid


def split(fluid, method: str, inlet, vapour, liquid, water_port: bool, trial: bool = False):
    """Split a separator's inlet water between its outlets (module docstring).

    Parameters
    ----------
    fluid : Fluid
    method : str
        The sheet's ``gas.water_method``.
    inlet, vapour, liquid : StreamBatch
        The separator's inlet (carrying a :class:`Carry`) and its solved vapour and liquid outlets.
    water_port : bool
        Whether the ``water`` outlet is connected.
    trial : bool
        A trial pass (a loop iterating, a goal searching): cases whose state the water-content
        route cannot take (no number, or 647 K and above) and a fugacity balance that does not
        settle give NaN water instead of an error (the answer's final pass raises).

    Returns
    -------
    carries : dict
        Port (``vapour``, ``liquid``, ``water``) -> :class:`Carry`.
    details : dict
        :data:`SPLIT_DETAILS` -> ndarray (n,).
    """
    n = inlet.n_cases
    c_in = inlet.carry
    F = np.asarray(inlet.flow, float)
    r_in = np.asarray(c_in.water_ratio, float)
    W_in = r_in * F + np.asarray(c_in.free_water, float)
    FV = np.asarray(vapour.flow, float)
    FL = np.asarray(liquid.flow, float)
    T, P = np.asarray(vapour.T, float), np.asarray(vapour.P, float)
    rows = np.arange(n)
    if trial:
        rows = np.flatnonzero(np.isfinite(T) & (T > 0.0) & (T < TC_WATER) & np.isfinite(P)
                              & (P > 0.0) & np.all(np.isfinite(liquid.zs), axis=1)
                              & np.all(np.isfinite(vapour.zs), axis=1))
    rV_sat, rL_sat = np.full(n, np.nan), np.full(n, np.nan)
    if rows.size:
        try:
            rV_sat[rows], rL_sat[rows] = saturation_ratios(
                fluid, method, T[rows], P[rows], np.asarray(liquid.zs)[rows],
                has_liquid=FL[rows] > 0.0, ys=np.asarray(vapour.zs)[rows])
        except ConvergenceError:
            if not trial:
                raise
    capacity = FV * rV_sat + FL * rL_sat
    wetter = W_in >= capacity
    # below saturation both phases hold the same fraction s of their saturated content (the water
    # fugacity is common to both and, this dilute, proportional to each content)
    s = np.where(wetter, 1.0, W_in / np.where(capacity > 0.0, capacity, 1.0))
    in_vapour = s * FV * rV_sat
    in_liquid = s * FL * rL_sat
    excess = np.where(wetter, W_in - capacity, 0.0)
    carries = {"vapour": Carry(np.where(FV > 0.0, s * rV_sat, r_in), np.zeros(n))}
    if not water_port:
        # a two-phase drum: the free water leaves with the hydrocarbon liquid
        has_L = FL > 0.0
        carries["liquid"] = Carry(np.where(has_L, (in_liquid + excess) / np.where(has_L, FL, 1.0),
                                           r_in), np.where(has_L, 0.0, excess))
        carries["water"] = Carry.zeros(n)
    else:
        carries["liquid"] = Carry(np.where(FL > 0.0, s * rL_sat, r_in), np.zeros(n))
        carries["water"] = Carry(np.zeros(n), excess)
    details = {"water_in_mol_s": W_in, "water_in_vapour_mol_s": in_vapour,
               "water_in_liquid_mol_s": in_liquid, "free_water_mol_s": excess,
               "free_water_kg_s": excess * M_WATER}
    return carries, details


def dry_flow(fluid, stream) -> np.ndarray:
    """Molar flow of a stream's dry gas [mol/s]: its flow, less its water where water is a
    component of the gas (the basis of every ratio per dry gas)."""
    F = np.asarray(stream.flow, float)
    if "water" in fluid.components:
        return F * (1.0 - np.asarray(stream.zs, float)[:, fluid.components.index("water")])
    return F


def _water_ratio(fluid, stream) -> np.ndarray:
    """Water per dry gas of a stream whose water is a component of the gas [mol/mol]."""
    zw = np.asarray(stream.zs, float)[:, fluid.components.index("water")]
    return zw / np.maximum(1.0 - zw, 1e-300)


def split_inhibitor(fluid, inlet, vapour, liquid, water_port: bool, equilibrium: bool,
                    water_in, drops, trial: bool = False) -> dict:
    """Split a separator's inlet inhibitor between its outlets (module docstring).

    Parameters
    ----------
    fluid : Fluid
    inlet, vapour, liquid : StreamBatch
        The inlet (carrying its inhibitor) and the solved vapour and hydrocarbon-liquid outlets.
    water_port : bool
        Whether the ``water`` outlet is connected.
    equilibrium : bool
        Split by the three-phase equilibrium (``losses: equilibrium``) or all with the free
        water.
    water_in : ndarray (n,)
        The inlet's water per dry gas [mol/mol].
    drops : ndarray of bool (n,)
        Cases in which the drum drops free water.
    trial : bool
        A trial pass: a partition that does not settle gives NaN instead of an error.

    Returns
    -------
    dict
        Port -> (inhibitor per dry gas (n, k) [mol/mol], free inhibitor (n, k) [mol/s]).

    Raises
    ------
    ConvergenceError
        The three-phase partition did not converge for some case (not in a trial pass).
    """
    n, k = inlet.n_cases, len(INHIBITOR_NAMES)
    zero = np.zeros((n, k))
    r_in = np.broadcast_to(np.asarray(inlet.carry.inhibitor_ratio, float), (n, k))
    F = dry_flow(fluid, inlet)[:, None]
    FV = dry_flow(fluid, vapour)[:, None]
    FL = dry_flow(fluid, liquid)[:, None]
    to_V, to_L, to_W = zero.copy(), zero.copy(), zero.copy()
    rows = np.flatnonzero((r_in.sum(axis=1) > 0.0) & (F[:, 0] > 0.0))
    if rows.size and equilibrium:
        T, P = np.asarray(vapour.T, float), np.asarray(vapour.P, float)
        if trial:
            rows = rows[np.isfinite(T[rows]) & np.isfinite(P[rows]) & (P[rows] > 0.0)
                        & np.isfinite(np.asarray(water_in, float)[rows])]
        try:
            p = partition(fluid, T[rows], P[rows], np.asarray(inlet.zs, float)[rows],
                          np.asarray(water_in, float)[rows], r_in[rows])
            to_V[rows], to_L[rows], to_W[rows] = p.vapour, p.hc_liquid, p.aqueous
        except ConvergenceError:
            if not trial:
                raise
            to_V[rows] = to_L[rows] = to_W[rows] = np.nan
    elif rows.size:
        d = np.asarray(drops, bool)[rows, None]
        to_W[rows] = np.where(d, r_in[rows], 0.0)
        to_V[rows] = np.where(d, 0.0, r_in[rows] * FV[rows] / F[rows])
        to_L[rows] = np.where(d, 0.0, r_in[rows] * FL[rows] / F[rows])
    per = lambda amount, flow: np.where(flow > 0.0, amount * F / np.where(flow > 0.0, flow, 1.0),
                                        r_in)
    out = {"vapour": (per(to_V, FV), zero)}
    if not water_port:
        out["liquid"] = (per(to_L + to_W, FL), np.where(FL > 0.0, 0.0, (to_L + to_W) * F))
        out["water"] = (zero, zero)
    else:
        out["liquid"] = (per(to_L, FL), zero)
        out["water"] = (zero.copy(), to_W * F)
    return out


def carry_through(fluid, params, inlet, outlets) -> tuple[dict, dict]:
    """A separator's outlets with the water and inhibitor its inlet carries split between them
    (:func:`split`, :func:`split_inhibitor`), and the water split's details (empty with water a
    component of the gas, whose water the streams hold themselves).

    Parameters
    ----------
    fluid : Fluid
    params : Mapping
        The separator's parameters: ``water_port``, and the solver's ``WATER_METHOD``,
        ``INHIBITOR_EQUILIBRIUM`` and ``TRIAL``.
    inlet : StreamBatch
        Carrying a :class:`Carry`.
    outlets : dict
        ``vapour``, ``liquid``, ``water`` -> StreamBatch (solved).
    """
    n = inlet.n_cases
    water_port = bool(params.get("water_port", True))
    trial = bool(params.get(TRIAL, False))
    vapour, liquid = outlets["vapour"], outlets["liquid"]
    if "water" in fluid.components:
        nan = np.full(n, np.nan)
        water = {p: (nan, nan) for p in outlets}
        details = {}
        water_in = _water_ratio(fluid, inlet)
        W = outlets["water"]
        drops = ((np.asarray(W.zs, float)[:, fluid.components.index("water")]
                  * np.asarray(W.flow, float)) > 0.0 if water_port else np.zeros(n, bool))
    else:
        carries, details = split(fluid, params.get(WATER_METHOD, "bukacek"), inlet, vapour,
                                 liquid, water_port, trial=trial)
        water = {p: (c.water_ratio, c.free_water) for p, c in carries.items()}
        water_in = inlet.carry.water_ratio
        drops = np.asarray(details["free_water_mol_s"], float) > 0.0
    inhibitor = split_inhibitor(fluid, inlet, vapour, liquid, water_port,
                                bool(params.get(INHIBITOR_EQUILIBRIUM, True)), water_in, drops,
                                trial=trial)
    return ({p: s.with_carry(Carry(*water[p], *inhibitor[p])) for p, s in outlets.items()},
            details)
