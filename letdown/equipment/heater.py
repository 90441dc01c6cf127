"""Heater and cooler: a stream brought to an outlet temperature, or given (or relieved of) a duty.

Outlet pressure ``P_in - dP`` (``dP`` defaults to 0). With ``T_out`` the outlet is a T-P flash and the
duty is ``F (h_out - h_in)``; with ``duty`` the outlet is a P-h flash at ``h_in + duty / F`` (heater)
or ``h_in - duty / F`` (cooler). A heater's duty is the heat it adds, a cooler's the heat it removes;
either may come out negative when ``T_out`` asks for the other direction.
"""
from __future__ import annotations

import numpy as np

from .common import TINY_FLOW, array_param, finish, one_of, outlet_pressure
from .stream import flash_stream

SPECS = ("T_out", "duty")


def _run(fluid, name, inlets, params, sign):
    inlet = inlets["in"]
    n = inlet.n_cases
    spec = one_of(params, SPECS, name)
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
    return finish(inlets, {"out": out}, heat_in, duty=sign * heat_in, dP=inlet.P - P_out)


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
        One of ``T_out`` [K] or ``duty`` [W] (heat added); optional ``dP`` [Pa].

    Returns
    -------
    BlockOutcome
        ``outlets={"out": ...}``, ``duty`` [W] (heat added), ``dP`` [Pa].

    Raises
    ------
    InputError
        If neither or both of ``T_out`` and ``duty`` are given, or the outlet pressure is not positive.
    """
    return _run(fluid, name, inlets, params, +1.0)


def run_cooler(fluid, name: str, inlets, params):
    """Cool a batch; as :func:`run_heater` but ``duty`` [W] is the heat removed."""
    return _run(fluid, name, inlets, params, -1.0)
