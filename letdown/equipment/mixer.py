"""Mixer: several streams joined adiabatically.

Outlet pressure: the lowest pressure of the inlets that flow unless ``P_out`` is given (which may not
exceed any of theirs). An empty inlet (zero flow) has no say: its pressure is that of a stream that
carries nothing (an idle branch, a dry drum's liquid outlet) and would otherwise drag the outlet
down. Where every inlet is empty the lowest of all counts. Outlet composition and enthalpy are the
flow-weighted means; the outlet is a P-h flash::

    F = sum F_k,   F z_i = sum F_k z_k,i,   F h = sum F_k h_k

The water and inhibitor carried beside the gas (:class:`letdown.equipment.stream.Carry`, per mole of
dry gas) are blended by the inlets' **dry** flows, ``r = sum D_k r_k / sum D_k``: their molar flows
when the water is beside the gas, less their water where water is a component of it (so that the
inhibitor is conserved when gases of different water content meet).
"""
from __future__ import annotations

import numpy as np

from ..errors import InputError
from .common import TINY_FLOW, array_param, case_text, field_name, finish
from .stream import blend, flash_stream
from .watersplit import dry_flow


def run(fluid, name: str, inlets, params):
    """Mix a batch of inlets.

    Parameters
    ----------
    fluid : letdown.fluid.Fluid
    name : str
        Block name (for error messages).
    inlets : Mapping[str, StreamBatch]
        Port name (``in0``, ``in1``, ...) -> stream; one or more.
    params : Mapping
        Optional ``P_out`` [Pa].

    Returns
    -------
    BlockOutcome
        ``outlets={"out": ...}``, ``dP`` [Pa] (lowest pressure of the inlets that flow - outlet
        pressure).

    Raises
    ------
    InputError
        If ``P_out`` is above the pressure of an inlet that flows.
    """
    streams = list(inlets.values())
    n = streams[0].n_cases
    Ps = np.array([s.P for s in streams])
    flowing = np.array([s.flow > 0 for s in streams])
    # the lowest pressure among the inlets that flow; of all of them where none flows
    P_low = np.where(flowing.any(axis=0), np.min(np.where(flowing, Ps, np.inf), axis=0),
                     np.min(Ps, axis=0))
    P_out = array_param(params, "P_out", n, name)
    if P_out is None:
        P_out = P_low
    above = P_out > P_low
    if np.any(above):
        i = int(np.flatnonzero(above)[0])
        raise InputError(f"outlet pressure {P_out[i]:.6g} Pa is above the lowest inlet pressure "
                         f"{P_low[i]:.6g} Pa{case_text(i, n)}; a mixer cannot raise the pressure: "
                         "lower P_out or leave it out (the lowest inlet pressure)",
                         field=field_name(name, "P_out"), cases=above)
    flow = sum(s.flow for s in streams)
    component_flows = sum(s.component_flows for s in streams)
    empty = flow <= TINY_FLOW
    F = np.maximum(flow, TINY_FLOW)
    # an all-empty case takes the plain mean of the inlets (any state will do for no flow)
    zs = np.where(empty[:, None], np.mean([s.zs for s in streams], axis=0),
                  component_flows / F[:, None])
    h = np.where(empty, np.mean([s.h for s in streams], axis=0),
                 sum(s.enthalpy_flow for s in streams) / F)
    outlets = {"out": flash_stream(fluid, flow, zs, P=P_out, h=h)}
    carried = all(s.carry is not None for s in streams)
    if carried:
        outlets, _ = carry(fluid, name, inlets, outlets, params)
    return finish(inlets, outlets, 0.0, own_carry=carried, dP=P_low - P_out)


def carry(fluid, name: str, inlets, outlets, params) -> tuple[dict, dict]:
    """The mixer's carry rule (:func:`letdown.equipment.common.carry`): water and inhibitor per dry
    gas blended by the inlets' dry flows (module docstring)."""
    streams = list(inlets.values())
    mixed = blend([dry_flow(fluid, s) for s in streams], [s.carry for s in streams])
    return {port: s.with_carry(mixed) for port, s in outlets.items()}, {}
