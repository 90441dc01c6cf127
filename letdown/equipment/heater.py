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
"""
from __future__ import annotations

import numpy as np

from ..errors import InputError
from .common import TINY_FLOW, array_param, field_name, finish, one_of, outlet_pressure
from .stream import flash_stream

SPECS = ("T_out", "duty")
#: A heater's specifications: a cooler's, plus the heat of the fuel burnt (with an efficiency).
HEATER_SPECS = ("T_out", "duty", "fuel")


def _efficiency(params, n, name):
    """The heater's thermal efficiency over the cases, or None (checked to lie in (0, 1])."""
    eta = array_param(params, "efficiency", n, name)
    if eta is not None and not np.all((eta > 0.0) & (eta <= 1.0)):
        bad = eta[~((eta > 0.0) & (eta <= 1.0))][0]
        raise InputError(f"efficiency must lie in (0, 1], got {bad:g}",
                         field=field_name(name, "efficiency"))
    return eta


def _run(fluid, name, inlets, params, sign, specs=SPECS):
    inlet = inlets["in"]
    n = inlet.n_cases
    spec = one_of(params, specs, name)
    eta = _efficiency(params, n, name) if sign > 0 else None
    if spec == "fuel":
        if eta is None:
            raise InputError("a heater given its fuel needs its efficiency",
                             field=field_name(name, "fuel"))
        params = {**params, "duty": eta * array_param(params, "fuel", n, name)}
        spec = "duty"
    P_out = outlet_pressure({"dP": params.get("dP", 0.0)}, inlet, name, required=True)
    if spec == "T_out":
        T_out = array_param(params, "T_out", n, name)
        out = flash_stream(fluid, inlet.flow, inlet.zs, T=T_out, P=P_out)
        heat_in = inlet.flow * (out.h - inlet.h)
    else:
        # an empty stream takes no heat: its outlet keeps the inlet enthalpy
        heat_in = np.where(inlet.flow > 0, sign * array_param(params, "duty", n, name), 0.0)
        h_out = inlet.h + heat_in / np.maximum(inlet.flow, TINY_FLOW)
        out = flash_stream(fluid, inlet.flow, inlet.zs, P=P_out, h=h_out)
    details = {}
    if eta is not None:
        details["fuel_W"] = sign * heat_in / eta
    return finish(inlets, {"out": out}, heat_in, duty=sign * heat_in, dP=inlet.P - P_out,
                  details=details)


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
