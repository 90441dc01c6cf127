"""Expander (turbo-expander): lets a stream down to ``P_out`` recovering shaft power.

``h_out = h_in - eta_s (h_in - h(P_out, s_in))``; power recovered ``F (h_in - h_out)``.

Liquid at the outlet: the block reports the outlet's liquid fraction (``outlet_liquid_fraction``,
molar, and ``outlet_liquid_mass_fraction``) and flags it. Turbo-expanders of gas plants commonly
run with a few % of liquid at the outlet (common practice), so any liquid is ``outlet_liquid``, a
check: the machine must be meant for it, and the constant isentropic efficiency used here does not
allow for it. Beyond :data:`LIQUID_HAZARD` by mass it is ``outlet_liquid_high``, a hazard.
"""
from __future__ import annotations

import numpy as np

from ..errors import InputError
from .common import case_text, field_name, finish, liquid_fractions, outlet_pressure
from .compressor import efficiency_spec, isentropic_step

#: Largest liquid mass fraction at an expander's outlet that is a check rather than a hazard [-].
#: From memory: expanders of gas-processing plants are designed for up to about 10-20 % liquid by
#: mass at the exhaust; we take the low end of that range, 10 %, since a let-down station's
#: power-recovery expander is usually built for dry gas. Beyond it wheel erosion and an efficiency
#: below the one assumed are expected.
LIQUID_HAZARD = 0.10


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
        ``outlets={"out": ...}``, ``power`` [W] recovered, ``dP`` [Pa], details ``outlet_T_K``,
        ``isentropic_power_W`` (the ideal power ``F (h_in - h(P_out, s_in))``),
        ``outlet_liquid_fraction`` and ``outlet_liquid_mass_fraction`` [-]; flags
        ``outlet_liquid`` and ``outlet_liquid_high`` (see the module docstring).

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
    molar, mass = liquid_fractions(fluid, out)
    wet = (inlet.flow > 0) & (mass > 0.0)
    return finish(inlets, {"out": out}, -power, power=power, dP=inlet.P - P_out,
                  details={"outlet_T_K": out.T, "isentropic_power_W": -inlet.flow * dh_ideal,
                           "outlet_liquid_fraction": molar, "outlet_liquid_mass_fraction": mass},
                  flags={"outlet_liquid": wet & (mass <= LIQUID_HAZARD),
                         "outlet_liquid_high": wet & (mass > LIQUID_HAZARD)})
