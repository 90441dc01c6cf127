"""Separator (two-phase drum): the inlet flashed adiabatically, its vapour and liquid sent apart.

The inlet is flashed at ``P_in - dP`` and its own enthalpy (``dP`` defaults to 0), which also splits a
pure component at saturation correctly. The vapour outlet carries ``V = beta F`` at the vapour
composition ``ys`` and the vapour phase's properties; the liquid outlet carries the rest, its
component flows taken by difference (``F z_i - V y_i``) so that the mole balance closes to rounding.
An absent phase leaves an empty outlet (zero flow, the inlet's state). The ``water`` port is accepted
and stays empty until the three-phase flash exists.
"""
from __future__ import annotations

import numpy as np

from .common import TINY_FLOW, finish, outlet_pressure
from .stream import StreamBatch

#: Phase properties the fluid's batch ``States`` gives per phase (``States.vapour``/``.liquid``).
PHASE_FIELDS = ("h", "s", "Z", "density", "molar_mass")


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
        Optional ``dP`` [Pa].

    Returns
    -------
    BlockOutcome
        ``outlets={"vapour": ..., "liquid": ..., "water": ...}``, ``dP`` [Pa].

    Raises
    ------
    InputError
        If the outlet pressure is not positive.
    """
    inlet = inlets["in"]
    P_out = outlet_pressure({"dP": params.get("dP", 0.0)}, inlet, name, required=True)
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
    outlets = {"vapour": vapour, "liquid": liquid, "water": water}
    return finish(inlets, outlets, 0.0, dP=inlet.P - P_out)
