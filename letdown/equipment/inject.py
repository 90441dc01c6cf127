"""Inject: methanol or MEG hydrate inhibitor added to a stream.

The inhibitor is **not** a component of the hydrocarbon flash. It is carried beside the gas like the
water (:class:`letdown.equipment.stream.Carry`), so the gas passes this block unchanged: the outlet
is the inlet (same T, P, flow, composition), no heat, no pressure drop, and the mole and energy
balances of the gas close exactly. :func:`run` adds the dose to the carried inhibitor:
``rate / (M F)`` moles per mole of dry gas (F the inlet's dry flow).

Parameters: ``inhibitor`` (``methanol`` or ``MEG``) and exactly one of

* ``rate`` -- mass flow of pure inhibitor [kg/s];
* ``depression`` -- the hydrate temperature depression to reach [K] at the **protected point**,
  the coldest flowing stream downstream of the block (:class:`ProtectedPoint`). The inhibitor
  wanted in the aqueous phase there follows from ``sized_by`` (:data:`SIZED_BY`):
  ``hammerschmidt`` (default), ``nielsen-bucklin``, or ``hydrate-model`` (the vdW-P hydrate
  temperature with a_w = x_w at the protected point's pressure and composition,
  :func:`letdown.fluid.aqueous.inhibitor.vdwp_wt_pct`). Neat inhibitor is injected; inhibitor already
  carried by the inlet is not credited.

and ``losses`` (:data:`LOSSES`): ``equilibrium`` (default) adds the inhibitor that stays in the
vapour and dissolves in a hydrocarbon liquid at the protected point
(:func:`letdown.fluid.aqueous.losses.dose_with_losses`; the free water is what the three-phase flash
condenses there); ``none`` gives the aqueous part only, all the water the inlet carries taken as
free water (:func:`letdown.fluid.aqueous.inhibitor.injection_rate`).

A ``depression`` is met at a point **downstream** of this block, which is solved after it: the
solver therefore finds the protected point from a solve of the sheet (the search stays in the
sheet layer, :func:`letdown.sheet.dosing.protected_point`, since only the sheet knows the
graph), this module's :func:`dose` does the arithmetic, and the sheet is solved once more with the
rate found (``params[common.DOSE_RATE]``), which :func:`run` adds (the inhibitor changes neither
the gas nor the water, so that second solve repeats every other number). A ``rate`` is added in
the first solve already. The sheet adds the dose's numbers
(:func:`letdown.sheet.dosing.dose_details`: rate, aqueous wt %, the split to aqueous, vapour
and hydrocarbon liquid, the depression by each rule, the protected point) to this block's details.

Engineering estimates; designs must follow local codes and be checked by qualified, licensed staff.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import InputError
from ..fluid.aqueous.inhibitor import (
    INHIBITORS,
    hammerschmidt_depression,
    hammerschmidt_wt_pct,
    hydrate_model_depression,
    inhibitor,
    injection_rate,
    nielsen_bucklin_depression,
    nielsen_bucklin_wt_pct,
    vdwp_wt_pct,
    water_mole_fraction,
)
from ..fluid.aqueous.losses import dose_with_losses, partition, partition_fluid
from .common import DOSE_RATE, array_param, case_text, field_name, finish, one_of
from .stream import INHIBITOR_NAMES, Carry, blend

SPECS = ("rate", "depression")
#: How a ``depression`` is turned into the inhibitor wanted in the aqueous phase (first: default).
SIZED_BY = ("hammerschmidt", "nielsen-bucklin", "hydrate-model")
#: Whether the inhibitor that stays in the vapour and dissolves in a hydrocarbon liquid at the
#: protected point is added to the rate (``equilibrium``, the default) or not (``none``).
LOSSES = ("equilibrium", "none")
#: The detail under which :func:`run` reports each specification's values over the batch.
PARAM_DETAILS = {"rate": "inhibitor_rate_kg_s", "depression": "depression_target_K"}
#: Hammerschmidt's form is used up to about 20 K (module docstring of
#: :mod:`letdown.fluid.aqueous.inhibitor`); a depression above this is refused as outside any rule [K]
#: (our limit: twice the stated range).
MAX_DEPRESSION = 40.0


def checked(name: str, params, n: int):
    """The inhibitor and its one specification, checked.

    Returns
    -------
    inh : letdown.fluid.aqueous.inhibitor.Inhibitor
    spec : str
        ``rate`` or ``depression``.
    value : ndarray (n,)
        The rate [kg/s] or depression [K] over the cases.

    Raises
    ------
    InputError
        Unknown inhibitor, not exactly one of rate and depression, a negative or non-finite value,
        or a depression above :data:`MAX_DEPRESSION`.
    """
    try:
        inh = inhibitor(params.get("inhibitor", "methanol"))
    except InputError as exc:
        raise InputError(exc.message, field=field_name(name, "inhibitor")) from None
    spec = one_of(params, SPECS, name)
    value = array_param(params, spec, n, name)
    bad = ~(np.isfinite(value) & (value >= 0.0))
    if np.any(bad):
        i = int(np.flatnonzero(bad)[0])
        raise InputError(f"{spec} must be zero or positive, got {value[i]:.6g}{case_text(i, n)}",
                         field=field_name(name, spec))
    if spec == "depression" and np.any(value > MAX_DEPRESSION):
        i = int(np.flatnonzero(value > MAX_DEPRESSION)[0])
        raise InputError(f"a hydrate depression of {value[i]:.6g} K is outside the inhibitor "
                         f"rules (at most {MAX_DEPRESSION:g} K here; Hammerschmidt holds to "
                         f"about 20 K){case_text(i, n)}", field=field_name(name, spec))
    return inh, spec, value


def options(name: str, params) -> tuple[str, str]:
    """The sizing rule and the loss treatment of a block, checked.

    Returns
    -------
    sized_by : str
        One of :data:`SIZED_BY` (default ``hammerschmidt``).
    losses : str
        One of :data:`LOSSES` (default ``equilibrium``).

    Raises
    ------
    InputError
        A value not in the list (field ``equipment.NAME.sized_by`` or ``.losses``).
    """
    out = []
    for key, allowed, default in (("sized_by", SIZED_BY, SIZED_BY[0]),
                                  ("losses", LOSSES, LOSSES[0])):
        raw = params.get(key, default)
        value = str(raw).strip().lower().replace("_", "-").replace(" ", "-")
        if value not in allowed:
            raise InputError(f"{key} is {raw!r}; use one of {', '.join(allowed)}",
                             field=field_name(name, key))
        out.append(value)
    return out[0], out[1]


@dataclass(frozen=True, eq=False)
class ProtectedPoint:
    """The coldest point downstream of an inject block, per case: where the dose must hold.

    Attributes
    ----------
    fluid : letdown.fluid.Fluid
        The sheet's fluid (model, kij).
    stream : ndarray of str (n,)
        Name of the coldest flowing stream downstream of the block (its outlet included).
    T, P : ndarray (n,)
        Its temperature [K] and pressure [Pa].
    zs : ndarray (n, nc)
        Its gas composition [-].
    water_ratio : ndarray (n,)
        Water it carries per mole of dry gas [mol/mol].
    flow : ndarray (n,)
        Molar flow of the gas through the block [mol/s] (the inhibitor per mole of gas is kept
        from the block to this point: splitters keep it; a mixer with undosed gas downstream
        would dilute it and is not credited).
    """

    fluid: object
    stream: np.ndarray
    T: np.ndarray
    P: np.ndarray
    zs: np.ndarray
    water_ratio: np.ndarray
    flow: np.ndarray


def target_wt_pct(inh, sized_by: str, dT, point: ProtectedPoint):
    """Inhibitor wanted in the aqueous phase for a depression dT [K] by the chosen rule [wt %].

    ``hammerschmidt`` and ``nielsen-bucklin``: the inverse rules of :mod:`letdown.fluid.aqueous.inhibitor`;
    ``hydrate-model``: the wt % for which the vdW-P hydrate temperature at the protected point's
    pressure and composition falls by dT with a_w = x_w
    (:func:`letdown.fluid.aqueous.inhibitor.vdwp_wt_pct`).
    """
    dT = np.asarray(dT, float)
    if sized_by == "hammerschmidt":
        return np.asarray(hammerschmidt_wt_pct(dT, inh.name), float).reshape(dT.shape)
    if sized_by == "nielsen-bucklin":
        return np.asarray(nielsen_bucklin_wt_pct(dT, inh.name), float).reshape(dT.shape)
    fluid = point.fluid
    free = np.asarray(fluid.hydrate_T(point.P, zs=point.zs), float).reshape(dT.shape)
    W = np.zeros(dT.shape)
    has = np.isfinite(free) & (dT > 0.0)
    if has.any():
        W[has] = np.asarray(vdwp_wt_pct(fluid, point.P[has], free[has] - dT[has], inh.name,
                                        zs=point.zs[has]), float).reshape(-1)
    return W


def dose(name: str, params, water_kg_s, point: ProtectedPoint) -> dict:
    """As :func:`_dose`, for the cases that have a protected point (a finite ``point.T``); the
    others (no gas-carrying stream downstream: nothing the dose could be sized for) get NaN
    numbers and an empty ``protected_stream``, for the sheet to refuse."""
    water = np.asarray(water_kg_s, dtype=float)
    n = water.shape[0]
    has = np.isfinite(np.asarray(point.T, float))
    if has.all():
        return _dose(name, params, water, point)
    _, spec, value = checked(name, params, n)
    rows = np.flatnonzero(has)
    sub = None
    if rows.size:
        given = {k: (np.asarray(v, float)[rows] if k in SPECS and np.ndim(v) else v)
                 for k, v in params.items()}
        sub = _dose(name, given, water[rows], ProtectedPoint(
            point.fluid, np.asarray(point.stream)[rows], np.asarray(point.T)[rows],
            np.asarray(point.P)[rows], np.asarray(point.zs)[rows],
            np.asarray(point.water_ratio)[rows], np.asarray(point.flow)[rows]))
    inh = inhibitor(params.get("inhibitor", "methanol"))
    sized_by, losses = options(name, params)
    out = {"inhibitor": inh.name, "spec": spec, "sized_by": sized_by, "losses": losses}
    for key in ("rate_kg_s", "wt_pct", "aqueous_kg_s", "vapour_kg_s", "hc_liquid_kg_s",
                "depression_K", "depression_nielsen_bucklin_K", "depression_hydrate_model_K",
                "protected_T_K", "protected_P_Pa"):
        full = np.full(n, np.nan)
        if sub is not None:
            full[rows] = sub[key]
        out[key] = full
    if spec == "rate":          # a given rate is injected whatever it protects
        out["rate_kg_s"] = value
    stream = np.full(n, "", dtype=object)
    if sub is not None:
        stream[rows] = sub["protected_stream"]
    out["protected_stream"] = stream
    return out


def _dose(name: str, params, water_kg_s, point: ProtectedPoint) -> dict:
    """The inhibitor this block injects, where it goes at the protected point, and what each rule
    says it achieves there.

    Parameters
    ----------
    name : str
        Block name (for error messages).
    params : Mapping
        ``inhibitor``, ``rate`` [kg/s] or ``depression`` [K], ``sized_by``, ``losses``.
    water_kg_s : ndarray (n,)
        Water carried by the inlet [kg/s] (all of it free water when ``losses: none``).
    point : ProtectedPoint
        The coldest point downstream.

    Returns
    -------
    dict
        ``inhibitor``, ``spec`` (``rate`` or ``depression``), ``sized_by``, ``losses`` (str);
        arrays (n,): ``rate_kg_s`` injected [kg/s];
        ``wt_pct`` inhibitor of this block in the aqueous phase at the protected point [wt %]
        (NaN without free water); ``aqueous_kg_s``, ``vapour_kg_s``, ``hc_liquid_kg_s`` where
        the injected inhibitor goes there [kg/s] (NaN with ``losses: none``); the depressions
        there by ``depression_K`` (Hammerschmidt), ``depression_nielsen_bucklin_K`` and
        ``depression_hydrate_model_K`` (vdW-P, a_w = x_w) [K]; ``protected_stream``,
        ``protected_T_K``, ``protected_P_Pa``.

    Raises
    ------
    InputError
        See :func:`checked` and :func:`options`.
    ConvergenceError
        The dose search with losses or a hydrate solve did not converge.
    """
    water = np.asarray(water_kg_s, dtype=float)
    n = water.shape[0]
    inh, spec, value = checked(name, params, n)
    sized_by, losses = options(name, params)
    M = inh.M * 1e-3
    j = list(INHIBITORS).index(inh.name)
    nan = np.full(n, np.nan)
    flow = np.asarray(point.flow, float)
    per_gas = np.where(flow > 0.0, 1.0 / (M * np.where(flow > 0.0, flow, 1.0)), 0.0)
    if losses == "none":
        if spec == "depression":
            W = target_wt_pct(inh, sized_by, value, point)
            rate = np.asarray(injection_rate(water, W, 100.0), dtype=float).reshape(n)
        else:
            rate = value
        total = water + rate
        wet = water > 0.0
        W = np.where(wet, 100.0 * rate / np.where(total > 0.0, total, 1.0), np.nan)
        x_w = np.where(wet, np.asarray(water_mole_fraction(np.nan_to_num(W), inh.name), float),
                       np.nan)
        aq = vap = hcl = nan
    else:
        pf = partition_fluid(point.fluid)
        if spec == "depression":
            W_t = target_wt_pct(inh, sized_by, value, point)
            p = dose_with_losses(point.fluid, point.T, point.P, point.zs, point.water_ratio, W_t,
                                 inh.name, pf)
            rate = np.where(flow > 0.0, p.injected[:, j] * M * flow, 0.0)
        else:
            rate = value
            ratios = np.zeros((n, len(INHIBITORS)))
            ratios[:, j] = rate * per_gas
            p = partition(point.fluid, point.T, point.P, point.zs, point.water_ratio, ratios, pf)
        scale = M * flow
        aq, vap, hcl = p.aqueous[:, j] * scale, p.vapour[:, j] * scale, p.hc_liquid[:, j] * scale
        W, x_w = p.wt_pct, p.water_mole_fraction
    wet = np.isfinite(W)
    dT = {"depression_K": nan.copy(), "depression_nielsen_bucklin_K": nan.copy(),
          "depression_hydrate_model_K": nan.copy()}
    if wet.any():
        dT["depression_K"][wet] = hammerschmidt_depression(W[wet], inh.name)
        dT["depression_nielsen_bucklin_K"][wet] = nielsen_bucklin_depression(W[wet], inh.name)
        dT["depression_hydrate_model_K"][wet] = hydrate_model_depression(
            point.fluid, point.P[wet], x_w[wet], zs=point.zs[wet], name=inh.name)
    return {"inhibitor": inh.name, "spec": spec, "sized_by": sized_by, "losses": losses,
            "rate_kg_s": rate,
            "wt_pct": W, "aqueous_kg_s": aq, "vapour_kg_s": vap, "hc_liquid_kg_s": hcl, **dT,
            "protected_stream": np.asarray(point.stream, dtype=object),
            "protected_T_K": np.asarray(point.T, float), "protected_P_Pa": np.asarray(point.P, float)}


def run(fluid, name: str, inlets, params):
    """Pass a batch through an injection point (the gas is unchanged; see the module docstring).

    Parameters
    ----------
    fluid : letdown.fluid.Fluid
        Not used (no flash); kept for the common signature.
    name : str
        Block name (for error messages).
    inlets : Mapping[str, StreamBatch]
        ``{"in": stream}``.
    params : Mapping
        ``inhibitor`` (``methanol`` or ``MEG``) and one of ``rate`` [kg/s] or ``depression`` [K];
        ``params[common.DOSE_RATE]`` (set by the solver): the rate found for the protected point
        [kg/s] (NaN: refused, nothing added), which replaces a given ``rate``.

    Returns
    -------
    BlockOutcome
        ``outlets={"out": inlet}`` with the dose added to the inhibitor it carries (a
        ``depression`` before the solver has sized it adds nothing), ``dP`` 0; details
        ``inhibitor_rate_kg_s`` [kg/s] (rate given) or ``depression_target_K`` [K] (depression
        given), the values of this batch (cases and goals included), from which the sheet
        computes the rest (module docstring).

    Raises
    ------
    InputError
        See :func:`checked`.
    """
    inlet = inlets["in"]
    n = inlet.n_cases
    inh, spec, value = checked(name, params, n)
    options(name, params)
    details = {PARAM_DETAILS[spec]: value}
    outlets, own = {"out": inlet}, inlet.carry is not None
    if own:
        outlets, _ = carry(fluid, name, inlets, outlets, params)
    return finish(inlets, outlets, 0.0, own_carry=own, dP=np.zeros(n), details=details)


def carry(fluid, name: str, inlets, outlets, params) -> tuple[dict, dict]:
    """The inject block's carry rule (:func:`letdown.equipment.common.carry`): the inlet's water
    kept and its dose added (:func:`dosed`): ``params[common.DOSE_RATE]`` where the solver gives
    it, else a given ``rate``; a ``depression`` not yet sized adds nothing."""
    inlet = inlets["in"]
    inh, spec, value = checked(name, params, inlet.n_cases)
    rate = params.get(DOSE_RATE, value if spec == "rate" else None)
    return {"out": outlets["out"].with_carry(dosed(inlet, rate, inh.name,
                                                   _dry_flow(fluid, inlet)))}, {}


def _dry_flow(fluid, stream):
    F = np.asarray(stream.flow, float)
    if "water" in fluid.components:
        return F * (1.0 - np.asarray(stream.zs, float)[:, fluid.components.index("water")])
    return F


def dosed(inlet, rate, name: str, flow) -> Carry:
    """The carry of an inject block's outlet: the inlet's water kept, its inhibitor plus
    ``rate / (M F)`` moles of inhibitor ``name`` per mole of dry gas.

    Parameters
    ----------
    inlet : StreamBatch
        Carrying a :class:`letdown.equipment.stream.Carry`.
    rate : ndarray (n,) or None
        Mass flow of pure inhibitor [kg/s]; NaN or None: nothing added.
    name : str
        The inhibitor (a key of :data:`letdown.fluid.aqueous.inhibitor.INHIBITORS`).
    flow : ndarray (n,)
        Dry gas flow of the inlet, F [mol/s].

    >>> import numpy as np
    >>> from letdown import Fluid
    >>> from letdown.equipment.stream import Carry, flash_stream
    >>> s = flash_stream(Fluid({"methane": 1.0}), [100.0], [[1.0]], T=[280.0], P=[50e5])
    >>> s = s.with_carry(Carry(np.array([1e-4]), np.zeros(1)))
    >>> c = dosed(s, np.array([0.032042]), "methanol", s.flow)   # 1 mol/s of methanol
    >>> round(float(c.inhibitor_ratio[0, 0]), 6)
    0.01
    """
    n = inlet.n_cases
    kept = blend([inlet.flow], [inlet.carry])
    added = np.zeros((n, len(INHIBITOR_NAMES)))
    if rate is not None:
        flow = np.asarray(flow, float)
        added[:, INHIBITOR_NAMES.index(name)] = np.where(
            flow > 0.0, np.nan_to_num(np.broadcast_to(np.asarray(rate, float), (n,)))
            / (INHIBITORS[name].M * 1e-3) / np.where(flow > 0.0, flow, 1.0), 0.0)
    return Carry(kept.water_ratio, kept.free_water,
                 np.asarray(inlet.carry.inhibitor_ratio, float) + added)
