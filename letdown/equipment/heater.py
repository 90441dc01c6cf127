"""Heater and cooler: a stream brought to an outlet temperature, or given (or relieved of) a duty.

Outlet pressure ``P_in - dP`` (``dP`` defaults to 0). With ``T_out`` the outlet is a T-P flash and the
duty is ``F (h_out - h_in)``; with ``duty`` the outlet is a P-h flash at ``h_in + duty / F`` (heater)
or ``h_in - duty / F`` (cooler). A heater's duty is the heat it adds, a cooler's the heat it removes;
either may come out negative when ``T_out`` asks for the other direction.

A fired heater may state its thermal ``efficiency`` eta (heat into the gas over heat of the fuel
burnt, on the fuel's calorific value) [-]. It then reports ``fuel_W``, the heat of the fuel burnt::

    fuel = duty / eta

and may be specified by ``fuel`` instead of ``T_out`` or ``duty`` (duty = eta * fuel). The fuel gas
flow is ``fuel`` divided by the fuel's calorific value (not modelled here).

Guards: a heater removes no heat and a cooler adds none. Where the parameters ask for it explicitly
-- a heater's ``T_out`` below its inlet temperature, a cooler's above it, a negative ``duty`` or
``fuel`` -- the cases concerned are refused (``InputError`` with ``cases=``). Where a goal varies the
parameter and drives the duty negative, or the duty comes out negative although ``T_out`` lies on
the right side of the inlet (a liquid warming on a pressure drop), the outcome flags
``heater_cooling`` (``cooler_heating``), a hazard in the flowsheet result. Empty streams (zero
flow) are neither refused nor flagged: they take no heat.
"""
from __future__ import annotations

import numpy as np

from ..errors import InputError
from ..constants import R
from ..fluid.flash.twophase import T_HIGH, T_LOW
from .common import (TINY_FLOW, Refusals, array_param, by_goal, field_name, finish, one_of,
                     outlet_pressure, refuse)
from .stream import flash_stream

SPECS = ("T_out", "duty")
#: A heater's specifications: a cooler's, plus the heat of the fuel burnt (with an efficiency).
HEATER_SPECS = ("T_out", "duty", "fuel")

#: A given ``T_out`` counts as on the wrong side of the inlet temperature beyond this [K] (rounding
#: of an inlet computed upstream; far below any design figure).
T_TOLERANCE = 1e-6
#: A duty counts as negative below ``-DUTY_NOISE * F (|h_in| + R T_in)`` [-]: the flash's rounding
#: (about 1e-12 relative) of a heater asked for no change is no cooling.
DUTY_NOISE = 1e-9


def _efficiency(params, n, name):
    """The heater's thermal efficiency over the cases, or None (checked to lie in (0, 1])."""
    eta = array_param(params, "efficiency", n, name)
    if eta is not None and not np.all((eta > 0.0) & (eta <= 1.0)):
        bad = eta[~((eta > 0.0) & (eta <= 1.0))][0]
        raise InputError(f"efficiency must lie in (0, 1], got {bad:g}",
                         field=field_name(name, "efficiency"))
    return eta


def _degC(T) -> str:
    return f"{T:.2f} K ({T - 273.15:.2f} degC)"


def _beyond_range(fluid, name, params, given, inlet, h_out, P_out, sign, refusals):
    """Refuse the cases whose outlet enthalpy lies beyond the model's temperature range (a duty or
    fuel too large for the flow, often a unit slip): no outlet state exists there, and the fault is
    this block's parameter (``given``: ``duty`` or ``fuel``), not the stream (a fuzz find: a fixed
    fuel heating 85 Sm3/h instead of 85,000 failed as "stream 'warm': the flash did not converge",
    naming no block)."""
    T_edge = T_HIGH if sign > 0 else T_LOW
    n = h_out.size
    live = (inlet.flow > 0.0) & np.isfinite(h_out)
    edge = flash_stream(fluid, inlet.flow, inlet.zs, T=np.full(n, T_edge), P=P_out)
    beyond = live & edge.converged & (sign * (h_out - edge.h) > 0.0)
    if not np.any(beyond):
        return
    value = array_param(params, given, n, name)
    verb = "adds" if sign > 0 else "removes"
    refusals.add(beyond,
                 lambda i: f"{given} {value[i] / 1e3:.6g} kW {verb} "
                           f"{abs(h_out[i] - inlet.h[i]) / 1e3:.4g} kJ/mol on a flow of "
                           f"{inlet.flow[i]:.4g} mol/s: more than it takes to bring the gas to "
                           f"{T_edge:.0f} K at the outlet pressure, the model's "
                           f"{'upper' if sign > 0 else 'lower'} limit; check the {given} (its "
                           f"unit) and the feed's flow", given)


def _run(fluid, name, inlets, params, sign, specs=SPECS):
    inlet = inlets["in"]
    n = inlet.n_cases
    kind, other = ("heater", "cooler") if sign > 0 else ("cooler", "heater")
    spec = given = one_of(params, specs, name)
    flowing = inlet.flow > 0
    # every refusal of a duty or fuel is raised together, before the flash (one error holds all
    # the refused cases, so the rest of a batch then passes)
    refusals = Refusals(params, name)
    eta = _efficiency(params, n, name) if sign > 0 else None
    if spec == "fuel":
        if eta is None:
            raise InputError("a heater given its fuel needs its efficiency",
                             field=field_name(name, "fuel"))
        fuel = array_param(params, "fuel", n, name)
        if not by_goal(params, "fuel"):
            refusals.add(flowing & (fuel < 0.0),
                         lambda i: f"fuel {fuel[i]:.6g} W is negative: the fuel is the heat of the "
                                   "fuel burnt; give zero or more, or use a cooler to take heat out",
                         "fuel")
        params = {**params, "duty": eta * fuel}
        spec = "duty"
    P_out = outlet_pressure({"dP": params.get("dP", 0.0)}, inlet, name, required=True)
    if spec == "T_out":
        T_out = array_param(params, "T_out", n, name)
        if not by_goal(params, "T_out"):
            wrong = flowing & (sign * (T_out - inlet.T) < -T_TOLERANCE)
            side, verb, change = (("below", "cool", "raise") if sign > 0
                                  else ("above", "heat", "lower"))
            refuse(params, wrong,
                   lambda i: f"T_out {_degC(T_out[i])} is {side} the inlet temperature "
                             f"{_degC(inlet.T[i])}: a {kind} cannot {verb} the gas; {change} "
                             f"T_out to the inlet temperature or beyond, or use a {other}",
                   name, "T_out")
        out = flash_stream(fluid, inlet.flow, inlet.zs, T=T_out, P=P_out)
        heat_in = inlet.flow * (out.h - inlet.h)
    else:
        duty = array_param(params, "duty", n, name)
        fixed = not (by_goal(params, "duty") or by_goal(params, "fuel"))
        if fixed:
            what = "adds" if sign > 0 else "removes"
            refusals.add(flowing & (duty < 0.0),
                         lambda i: f"duty {duty[i]:.6g} W is negative: a {kind}'s duty is the heat "
                                   f"it {what}; give zero or more, or use a {other}", "duty")
        # an empty stream takes no heat: its outlet keeps the inlet enthalpy
        heat_in = np.where(flowing, sign * duty, 0.0)
        h_out = inlet.h + heat_in / np.maximum(inlet.flow, TINY_FLOW)
        if fixed:
            _beyond_range(fluid, name, params, given, inlet, h_out, P_out, sign, refusals)
        refusals.raise_any()
        out = flash_stream(fluid, inlet.flow, inlet.zs, P=P_out, h=h_out)
    details = {}
    if eta is not None:
        details["fuel_W"] = sign * heat_in / eta
    noise = DUTY_NOISE * inlet.flow * (np.abs(inlet.h) + R * inlet.T)
    backwards = flowing & (sign * heat_in < -noise)
    return finish(inlets, {"out": out}, heat_in, duty=sign * heat_in, dP=inlet.P - P_out,
                  details=details, flags={f"{kind}_{'cooling' if sign > 0 else 'heating'}": backwards})


def run_heater(fluid, name: str, inlets, params):
    """Heat a batch.

    Parameters
    ----------
    fluid : letdown.fluid.Fluid
    name : str
        Block name (for error messages).
    inlets : Mapping[str, StreamBatch]
        ``{"in": stream}``.
    params : Mapping
        One of ``T_out`` [K], ``duty`` [W] (heat added) or ``fuel`` [W] (heat of the fuel burnt,
        needs ``efficiency``); optional ``dP`` [Pa] and ``efficiency`` [-] (thermal, in (0, 1]).

    Returns
    -------
    BlockOutcome
        ``outlets={"out": ...}``, ``duty`` [W] (heat added), ``dP`` [Pa]; with an efficiency,
        ``details["fuel_W"]`` = duty / efficiency [W].

    Raises
    ------
    InputError
        If not exactly one of ``T_out``, ``duty`` and ``fuel`` is given, ``fuel`` comes without
        ``efficiency``, the efficiency lies outside (0, 1], or the outlet pressure is not positive.
    """
    return _run(fluid, name, inlets, params, +1.0, HEATER_SPECS)


def run_cooler(fluid, name: str, inlets, params):
    """Cool a batch; as :func:`run_heater` but ``duty`` [W] is the heat removed."""
    return _run(fluid, name, inlets, params, -1.0)
