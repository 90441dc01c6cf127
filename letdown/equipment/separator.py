"""Separator: the inlet flashed adiabatically at the outlet pressure, its phases sent apart.

The inlet is flashed at ``P_in - dP`` and its own enthalpy (``dP`` defaults to 0), which also splits a
pure component at saturation correctly.

**Two phases** (water not a component of the gas, the usual case): the vapour outlet carries
``V = beta F`` at the vapour composition ``ys`` and the vapour phase's properties; the liquid outlet
carries the rest, its component flows taken by difference (``F z_i - V y_i``) so that the mole
balance closes to rounding. An absent phase leaves an empty outlet (zero flow, the inlet's state).
The water the gas carries beside this water-free flash (the inlet's
:class:`letdown.equipment.stream.Carry`) is split here (:func:`letdown.equipment.watersplit.split`):
the vapour keeps at most its saturated content at the drum's T and P, the hydrocarbon liquid what
dissolves in it, and the ``water`` outlet (a stream with no gas: zero flow here, vapour fraction 0:
never the inlet's vapour) gets the rest as free water; the split is reported in the details
(``water_in_mol_s``, ``water_in_vapour_mol_s``, ``water_in_liquid_mol_s``, ``free_water_mol_s``,
``free_water_kg_s``).

**Three phases** (``water`` is a component of the gas): the drum is adiabatic and three-phase. Its
temperature T solves

    beta_V h_V(T) + beta_L h_L(T) + beta_W h_W(T) = h_in

at the outlet pressure, the phase fractions and compositions from the three-phase PT flash
(:func:`letdown.fluid.flash.threephase.flash_TP_three`) and each phase's enthalpy from the cubic equation
plus the ideal-gas part (:func:`letdown.fluid.flash.threephase.phase_properties`). T is found by
:func:`letdown.fluid.flash.threephase_px.flash_PX_three` (the bracketed root finder on the three-phase h(T)),
started from the temperature of the inlet's P-h flash (``Fluid.flash`` with the inlet temperature
as its guess, which for fluids with water uses the same routine), so the drum usually ends at
that first evaluation. The vapour,
hydrocarbon liquid and aqueous phases leave by ``vapour``, ``liquid`` and ``water``; the aqueous
component flows are taken by difference so that the mole balance closes to rounding. Without a
``water`` port the aqueous phase leaves with the hydrocarbon liquid (one stream of two liquid
phases: moles, enthalpy, entropy and volume added). Limits: the aqueous phase is the cubic
equation's (hydrocarbons dissolved in it are an
order-of-magnitude figure, see :mod:`letdown.fluid.flash.threephase`); a single liquid phase with water
as its largest component leaves by ``water`` (a vapour-like one, steam, by ``vapour``); a case
whose drum temperature cannot be bracketed or met is marked unconverged (no fallback to the
two-phase split). GERG-2008 has no three-phase flash: with it the two-phase path is used. The
outcome reports ``dT_vs_two_phase_K``, the drum temperature minus that of the inlet's P-h flash
(``Fluid.flash``, three-phase where it applies: the blocks upstream flash water-bearing gas in
three phases too; the name is kept from when they did not), and flags ``three_phase_T_shift``
beyond :data:`T_SHIFT_FLAG` (a warning in the flowsheet result): a check that the two agree.

**A single liquid-like inlet.** Where no vapour forms at the drum's temperature and pressure, every
mole leaves by the liquid (or water) outlet and the vapour outlet carries no flow. The outcome flags
it: ``dense_phase_inlet`` where the drum temperature is above the inlet's pseudo-critical
temperature (Kay's rule, :func:`letdown.equipment.common.pseudo_critical`: a dense gas above its
cricondenbar, which a real drum cannot separate and would pass out of whichever outlet is open --
a hazard in the flowsheet result), ``liquid_inlet`` below it (a subcooled liquid: the drum separates
nothing -- a check).
"""
from __future__ import annotations

import dataclasses

import numpy as np

from ..constants import R
from ..fluid.flash.twophase import is_vapour_like
from ..fluid.flash.threephase import PHASES, aqueous_third, phase_properties
from ..fluid.flash.threephase_px import flash_PX_three
from . import watersplit
from .common import TINY_FLOW, finish, outlet_pressure, pseudo_critical
from .stream import StreamBatch

#: Phase properties the fluid's batch ``StateBatch`` gives per phase (``StateBatch.vapour``/``.liquid``).
PHASE_FIELDS = ("h", "s", "Z", "density", "molar_mass")
#: The three-phase drum is flagged when its temperature differs from the P-h flash of its inlet
#: (``Fluid.flash``) by more than this [K]. Both are the three-phase equilibrium now (the same
#: routine, :func:`letdown.fluid.flash.threephase_px.flash_PX_three`), so the difference is within the solver's
#: tolerance; the flag stays as a check that the blocks upstream and the drum agree.
T_SHIFT_FLAG = 0.1


def _phase_stream(states, phase: str, flow, zs, present) -> StreamBatch:
    """Outlet stream of one phase; where the phase is absent, an empty stream of the whole state."""
    props = getattr(states, phase)
    values = {k: np.where(present, np.asarray(props[k], dtype=float), np.asarray(getattr(states, k)))
              for k in PHASE_FIELDS}
    whole = np.asarray(states.vapour_fraction, dtype=float)
    vapour_fraction = np.where(present, 1.0 if phase == "vapour" else 0.0, whole)
    return StreamBatch(flow=np.where(present, flow, 0.0), T=states.T, P=states.P, zs=zs, ys=zs, xs=zs,
                       vapour_fraction=vapour_fraction, converged=states.converged, **values)


def run(fluid, name: str, inlets, params):
    """Separate a batch into its phases.

    Parameters
    ----------
    fluid : letdown.fluid.Fluid
    name : str
        Block name (for error messages).
    inlets : Mapping[str, StreamBatch]
        ``{"in": stream}``.
    params : Mapping
        Optional ``dP`` [Pa]; ``water_port`` (bool, default True): whether the ``water`` outlet
        is connected (the loader says); without it a three-phase drum sends its aqueous phase
        with the hydrocarbon liquid (and a two-phase drum the free water it splits off).
        ``params[common.WATER_METHOD]`` (set by the solver): the water-content method of the
        water split (default ``bukacek``).

    Returns
    -------
    BlockOutcome
        ``outlets={"vapour": ..., "liquid": ..., "water": ...}``, ``dP`` [Pa]; flags
        ``dense_phase_inlet`` and ``liquid_inlet`` (no vapour forms; see the module docstring)
        and, three-phase, ``three_phase_T_shift``.

    Raises
    ------
    InputError
        If the outlet pressure is not positive.
    """
    inlet = inlets["in"]
    P_out = outlet_pressure({"dP": params.get("dP", 0.0)}, inlet, name, required=True)
    if "water" in fluid.components and fluid.model != "gerg-2008":
        # the three-phase P-h flash starts from the inlet temperature (the answer when dP = 0)
        states = fluid.flash(P=P_out, h=inlet.h, zs=inlet.zs, T_guess=inlet.T)
        outlets = _three_phase(fluid, inlet, P_out, states, bool(params.get("water_port", True)))
        shift = outlets["vapour"].T - np.asarray(states.T, dtype=float)
        if inlet.carry is not None:       # the inhibitor beside the gas (the water is in it)
            outlets, _ = carry(fluid, name, inlets, outlets, params)
        return finish(inlets, outlets, 0.0, own_carry=inlet.carry is not None,
                      dP=inlet.P - P_out,
                      details={"dT_vs_two_phase_K": shift},
                      flags={"three_phase_T_shift": ~(np.abs(shift) <= T_SHIFT_FLAG)
                                                    & (inlet.flow > 0),
                             **_single_phase_flags(fluid, inlet, outlets)})
    states = fluid.flash(P=P_out, h=inlet.h, zs=inlet.zs)
    beta = np.asarray(states.vapour_fraction, dtype=float)
    ys = np.asarray(states.ys, dtype=float)
    F = inlet.flow
    has_vapour = beta > 0.0
    has_liquid = beta < 1.0
    V = np.where(has_vapour, beta * F, 0.0)
    liquid_flows = np.where(has_vapour[:, None], F[:, None] * inlet.zs - V[:, None] * ys,
                            F[:, None] * inlet.zs)
    liquid_flows = np.where(has_liquid[:, None], np.maximum(liquid_flows, 0.0), 0.0)
    L = liquid_flows.sum(axis=1)
    xs = np.where((L > TINY_FLOW)[:, None], liquid_flows / np.maximum(L, TINY_FLOW)[:, None],
                  np.asarray(states.xs, dtype=float))
    vapour = _phase_stream(states, "vapour", V, np.where(has_vapour[:, None], ys, inlet.zs),
                           has_vapour)
    liquid = _phase_stream(states, "liquid", L, xs, has_liquid)
    water = _phase_stream(states, "liquid", np.zeros_like(F), inlet.zs, np.zeros_like(has_liquid))
    # no aqueous phase in the water-free flash: an empty liquid outlet, never the inlet's vapour
    water = dataclasses.replace(water, vapour_fraction=np.zeros_like(F))
    outlets = {"vapour": vapour, "liquid": liquid, "water": water}
    details = {}
    if inlet.carry is not None:
        outlets, details = carry(fluid, name, inlets, outlets, params)
    return finish(inlets, outlets, 0.0, own_carry=inlet.carry is not None, dP=inlet.P - P_out,
                  flags=_single_phase_flags(fluid, inlet, outlets), details=details)


def carry(fluid, name: str, inlets, outlets, params) -> tuple[dict, dict]:
    """The separator's carry rule (:func:`letdown.equipment.common.carry`): the water and
    inhibitor of the inlet split between the outlets (:func:`letdown.equipment.watersplit.
    carry_through`), with the water split as details."""
    return watersplit.carry_through(fluid, params, inlets["in"], outlets)


def _single_phase_flags(fluid, inlet, outlets) -> dict:
    """``dense_phase_inlet`` and ``liquid_inlet``: cases with flow in and none out of the vapour
    outlet, above or below the inlet's pseudo-critical temperature (Kay's rule)."""
    no_vapour = (inlet.flow > 0) & ~(outlets["vapour"].flow > 0)
    T_pc, _ = pseudo_critical(fluid, inlet.zs)
    dense = outlets["vapour"].T >= T_pc
    return {"dense_phase_inlet": no_vapour & dense, "liquid_inlet": no_vapour & ~dense}


def _three_phase(fluid, inlet, P_out, states, water_port: bool):
    """Vapour, hydrocarbon liquid and aqueous outlets of an adiabatic three-phase drum."""
    zs = np.asarray(inlet.zs, dtype=float)
    h = np.asarray(inlet.h, dtype=float)
    F = np.asarray(inlet.flow, dtype=float)
    drum = flash_PX_three(fluid.engine, P_out, h, zs, "h", np.asarray(states.T, dtype=float))
    T, res = drum.T, drum.flash
    ok = drum.report.converged & np.asarray(inlet.converged, dtype=bool)
    props = phase_properties(fluid.engine, T, P_out, zs, res)
    betas = {name: np.asarray(getattr(res, b), dtype=float) for name, b, _ in PHASES}
    comps = {name: np.where((betas[name] > 0.0)[:, None], getattr(res, x), zs)
             for name, _, x in PHASES}
    # the flash names a lone phase that is mostly water aqueous; if it is vapour-like (steam) it
    # leaves by the vapour outlet
    alone = betas["aqueous"] >= 1.0
    if alone.any():
        steam = np.zeros_like(alone)
        steam[alone] = is_vapour_like(fluid.engine.eos, T[alone], P_out[alone],
                                      comps["aqueous"][alone])
        betas["vapour"] = np.where(steam, 1.0, betas["vapour"])
        betas["aqueous"] = np.where(steam, 0.0, betas["aqueous"])
        comps["vapour"] = np.where(steam[:, None], comps["aqueous"], comps["vapour"])
    flows = {name: F[:, None] * betas[name][:, None] * comps[name] for name in ("vapour", "liquid")}
    # the aqueous component flows by difference: the mole balance closes to rounding
    rest = F[:, None] * zs - flows["vapour"] - flows["liquid"]
    flows["aqueous"] = np.where((betas["aqueous"] > 0.0)[:, None], np.maximum(rest, 0.0), 0.0)
    moles = {name: betas[name] * F for name in betas}
    # the third phase leaves with the hydrocarbon liquid where the water port is not connected,
    # and where it is not aqueous (a second hydrocarbon liquid: never out of the water port)
    iw = list(fluid.components).index("water")
    merge = ~aqueous_third(res, iw) | (not water_port)
    if merge.any():
        # moles, h, s and volume add
        L, W = moles["liquid"], moles["aqueous"]
        both = L + W
        pl, pw = props["liquid"], props["aqueous"]
        has = both > 0.0
        wl = np.where(has, L / np.where(has, both, 1.0), 1.0)
        mixed = {k: wl * pl[k] + (1.0 - wl) * pw[k] for k in ("h", "s", "v", "molar_mass")}
        mixed["Z"] = P_out * mixed["v"] / (R * T)
        mixed["density"] = mixed["molar_mass"] / mixed["v"]
        props = {**props, "liquid": {k: np.where(merge, mixed[k], pl[k]) for k in pl}}
        m2 = merge[:, None]
        flows = {"vapour": flows["vapour"],
                 "liquid": np.where(m2, flows["liquid"] + flows["aqueous"], flows["liquid"]),
                 "aqueous": np.where(m2, 0.0, flows["aqueous"])}
        betas = {**betas, "liquid": np.where(merge, betas["liquid"] + betas["aqueous"],
                                             betas["liquid"]),
                 "aqueous": np.where(merge, 0.0, betas["aqueous"])}
    whole = props["whole"]
    out = {}
    for port, name in (("vapour", "vapour"), ("liquid", "liquid"), ("water", "aqueous")):
        present = betas[name] > 0.0
        flow = np.where(present, flows[name].sum(axis=1), 0.0)
        xs = np.where(present[:, None], flows[name] / np.maximum(flow, TINY_FLOW)[:, None], zs)
        p = props[name]
        # an absent phase: an empty stream of the drum's overall state
        values = {"h": np.where(present, p["h"], whole["h"]),
                  "s": np.where(present, p["s"], whole["s"]),
                  "Z": np.where(present, p["Z"], P_out * whole["v"] / (R * T)),
                  "molar_mass": np.where(present, p["molar_mass"], zs @ fluid.molar_masses)}
        values["density"] = np.where(present, p["density"],
                                     values["molar_mass"] / whole["v"])
        vapour_fraction = np.where(present, 1.0 if name == "vapour" else 0.0,
                                   0.0 if port == "water" else res.beta_V)
        out[port] = StreamBatch(flow=flow, T=T, P=P_out, zs=xs, ys=xs, xs=xs,
                                vapour_fraction=vapour_fraction, converged=ok, **values)
    return out
