"""Expander (turbo-expander): lets a stream down to ``P_out`` recovering shaft power.

``h_out = h_in - eta_s (h_in - h(P_out, s_in))``; power recovered ``F (h_in - h_out)``.
"""
from __future__ import annotations

import numpy as np

from ..errors import InputError
from .common import case_text, field_name, finish, outlet_pressure
from .compressor import efficiency_spec, isentropic_step


def run(fluid, name: str, inlets, params):
    """Expand a batch.

    Parameters
    ----------
    fluid : letdown.fluid.Fluid
    name : str
        Block name (for error messages).
    inlets : Mapping[str, StreamBatch]
        ``{"in": stream}``.
    params : Mapping
        ``P_out`` [Pa] or ``dP`` [Pa]; ``efficiency`` [-] (isentropic).

    Returns
    -------
    BlockOutcome
        ``outlets={"out": ...}``, ``power`` [W] recovered, ``dP`` [Pa], details ``outlet_T_K``
        and ``isentropic_power_W`` (the ideal power ``F (h_in - h(P_out, s_in))``).

    Raises
    ------
    InputError
        If the outlet pressure is above the inlet pressure, the efficiency is polytropic (not
        offered for expanders) or outside (0, 1].
    """
    inlet = inlets["in"]
    n = inlet.n_cases
    P_out = outlet_pressure(params, inlet, name, required=True)
    above = P_out > inlet.P
    if np.any(above):
        i = int(np.flatnonzero(above)[0])
        raise InputError(f"outlet pressure {P_out[i]:.6g} Pa is above the inlet pressure "
                         f"{inlet.P[i]:.6g} Pa{case_text(i, n)}; an expander lowers the pressure",
                         field=field_name(name, "P_out" if params.get("P_out") is not None else "dP"),
                         cases=above)
    kind, eta = efficiency_spec(params, name, n)
    if kind != "isentropic":
        raise InputError("an expander takes an isentropic efficiency",
                         field=field_name(name, "efficiency_kind"))
    out, dh_ideal = isentropic_step(fluid, inlet, P_out, eta, compress=False)
    power = inlet.flow * (inlet.h - out.h)
    return finish(inlets, {"out": out}, -power, power=power, dP=inlet.P - P_out,
                  details={"outlet_T_K": out.T, "isentropic_power_W": -inlet.flow * dh_ideal})
