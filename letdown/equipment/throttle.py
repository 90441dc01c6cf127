"""Throttle (regulator, valve, choke): an isenthalpic pressure drop.

``h_out = h_in`` at ``P_out`` (given directly or as ``P_in - dP``); the outlet is a P-h flash of the
inlet composition. No heat, no work.
"""
from __future__ import annotations

import numpy as np

from ..errors import InputError
from .common import case_text, field_name, finish, outlet_pressure
from .stream import flash_stream

#: A vapour fraction strictly between these bounds counts as a two-phase outlet [-] (flash noise
#: around 0 and 1 is not a second phase; common practice).
TWO_PHASE_BOUNDS = (1e-9, 1.0 - 1e-9)


def run(fluid, name: str, inlets, params):
    """Throttle a batch.

    Parameters
    ----------
    fluid : letdown.fluid.Fluid
    name : str
        Block name (for error messages).
    inlets : Mapping[str, StreamBatch]
        ``{"in": stream}``.
    params : Mapping
        ``P_out`` [Pa] or ``dP`` [Pa] (number or array over cases).

    Returns
    -------
    BlockOutcome
        ``outlets={"out": ...}``, ``dP`` [Pa], flag ``two_phase_outlet``.

    Raises
    ------
    InputError
        If the outlet pressure is above the inlet pressure (a throttle cannot raise pressure), or
        neither or both of ``P_out`` and ``dP`` are given.
    """
    inlet = inlets["in"]
    P_out = outlet_pressure(params, inlet, name, required=True)
    raise_above = P_out > inlet.P
    if np.any(raise_above):
        i = int(np.flatnonzero(raise_above)[0])
        key = "P_out" if params.get("P_out") is not None else "dP"
        raise InputError(f"outlet pressure {P_out[i]:.6g} Pa is above the inlet pressure "
                         f"{inlet.P[i]:.6g} Pa{case_text(i, inlet.n_cases)}; a throttle can only "
                         "lower the pressure", field=field_name(name, key),
                         cases=raise_above)
    out = flash_stream(fluid, inlet.flow, inlet.zs, P=P_out, h=inlet.h)
    lo, hi = TWO_PHASE_BOUNDS
    # an empty stream has no phases to speak of: it is not flagged
    two_phase = (out.vapour_fraction > lo) & (out.vapour_fraction < hi) & (inlet.flow > 0)
    return finish(inlets, {"out": out}, 0.0, dP=inlet.P - P_out,
                  flags={"two_phase_outlet": two_phase})
