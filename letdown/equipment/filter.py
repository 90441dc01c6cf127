"""Filter: a dry-gas filter or strainer in the line (a dust filter, a cartridge filter ahead of the
regulators), taken as a fixed pressure drop ``dP`` at constant enthalpy.

A filter is not a separator: whatever liquid reaches it goes on with the gas (a filter-separator
that drains its liquid is a ``separator`` with a ``dP``). The outcome reports the liquid mole
fraction of its inlet (``inlet_liquid_fraction``), so a wet stream at a filter shows in the result.

Its pressure drop cools the gas by Joule-Thomson expansion as a throttle's does (0.3-0.5 K for a
clean filter's 0.5-1 bar at transmission pressure: a dirty filter's larger drop is a what-if worth a
sweep over ``dP``).

>>> import letdown
>>> from letdown.equipment.stream import flash_stream
>>> gas = letdown.Fluid({"methane": 0.95, "ethane": 0.05})
>>> inlet = flash_stream(gas, [100.0], [gas.zs], T=[283.15], P=[64e5])
>>> out = run(gas, "strainer", {"in": inlet}, {"dP": 0.5e5})
>>> round(float(out.outlets["out"].P[0] / 1e5), 3), bool(out.outlets["out"].T[0] < 283.15)
(63.5, True)
"""
from __future__ import annotations

import numpy as np

from ..errors import InputError
from .common import case_text, field_name, finish, outlet_pressure
from .stream import flash_stream


def run(fluid, name: str, inlets, params):
    """Pass a batch through the filter.

    Parameters
    ----------
    fluid : letdown.fluid.Fluid
    name : str
        Block name (for error messages).
    inlets : Mapping[str, StreamBatch]
        ``{"in": stream}``.
    params : Mapping
        ``dP`` [Pa] (number or array over cases), at least 0.

    Returns
    -------
    BlockOutcome
        ``outlets={"out": ...}``, ``dP`` [Pa], ``details["inlet_liquid_fraction"]`` [-].

    Raises
    ------
    InputError
        A negative pressure drop, or one that leaves no positive outlet pressure (those cases).
    """
    inlet = inlets["in"]
    if params.get("dP") is None:
        raise InputError("a filter needs its pressure drop dP", field=field_name(name, "dP"))
    dP = np.broadcast_to(np.asarray(params["dP"], dtype=float), (inlet.n_cases,))
    negative = dP < 0.0
    if np.any(negative):
        i = int(np.flatnonzero(negative)[0])
        raise InputError(f"dP {dP[i]:.6g} Pa is negative: a filter only loses pressure"
                         + case_text(i, inlet.n_cases), field=field_name(name, "dP"),
                         cases=negative)
    P_out = outlet_pressure({"dP": dP}, inlet, name, required=True)
    out = flash_stream(fluid, inlet.flow, inlet.zs, P=P_out, h=inlet.h)
    liquid = np.where(inlet.flow > 0, 1.0 - inlet.vapour_fraction, 0.0)
    return finish(inlets, {"out": out}, 0.0, dP=inlet.P - P_out,
                  details={"inlet_liquid_fraction": liquid})
