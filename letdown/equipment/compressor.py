"""Compressor: raises a stream to ``P_out`` with an isentropic or a polytropic efficiency.

``efficiency`` is isentropic unless ``efficiency_kind`` says ``polytropic``. Isentropic::

    h_out = h_in + (h(P_out, s_in) - h_in) / eta_s

Polytropic: the same relation applied over
``POLYTROPIC_STEPS`` small pressure steps of equal ratio, each starting from the previous step's
actual state -- the numerical integration of ``dh = v dP / eta_p`` along the real path (common
practice for real-gas polytropic work; it needs no polytropic exponent). Power ``F (h_out - h_in)``.
"""
from __future__ import annotations

import numpy as np

from ..errors import InputError
from .common import array_param, case_text, check_fraction, field_name, finish, outlet_pressure
from .stream import flash_stream

#: Pressure steps of the polytropic path. The isentropic step error falls with the square of the
#: step; 40 steps of equal ratio put it below 1e-4 of the head for ratios up to 10 (our check in
#: tests/test_equipment_compressor.py against 160 steps).
POLYTROPIC_STEPS = 40

EFFICIENCY_KINDS = ("isentropic", "polytropic")


def efficiency_spec(params, name: str, n: int) -> tuple[str, np.ndarray]:
    """Which efficiency is given (``efficiency_kind``, default isentropic) and its values.

    Returns
    -------
    kind : str
        ``"isentropic"`` or ``"polytropic"``.
    eta : ndarray (n,)
        Efficiency [-], in (0, 1].

    Raises
    ------
    InputError
        If the efficiency is missing or outside (0, 1], or the kind is unknown.
    """
    kind = params.get("efficiency_kind") or "isentropic"
    if kind not in EFFICIENCY_KINDS:
        raise InputError(f"efficiency_kind is {kind!r}; use one of {', '.join(EFFICIENCY_KINDS)}",
                         field=field_name(name, "efficiency_kind"))
    if params.get("efficiency") is None:
        raise InputError("give the efficiency", field=field_name(name, "efficiency"))
    eta = array_param(params, "efficiency", n, name)
    check_fraction(eta, "efficiency", name)
    return kind, eta


def isentropic_step(fluid, stream, P_out, eta, *, compress: bool):
    """One isentropic-efficiency step from ``stream`` to ``P_out``; returns the outlet stream."""
    ideal = fluid.flash(P=P_out, s=stream.s, zs=stream.zs)
    dh_ideal = np.asarray(ideal.h, dtype=float) - stream.h
    h_out = stream.h + (dh_ideal / eta if compress else dh_ideal * eta)
    return flash_stream(fluid, stream.flow, stream.zs, P=P_out, h=h_out), dh_ideal


def run(fluid, name: str, inlets, params):
    """Compress a batch.

    Parameters
    ----------
    fluid : letdown.fluid.Fluid
    name : str
        Block name (for error messages).
    inlets : Mapping[str, StreamBatch]
        ``{"in": stream}``.
    params : Mapping
        ``P_out`` [Pa] (or ``dP`` [Pa], negative for a rise); ``efficiency`` [-];
        ``efficiency_kind`` (``"isentropic"``, the default, or ``"polytropic"``).

    Returns
    -------
    BlockOutcome
        ``outlets={"out": ...}``, ``power`` [W] absorbed, ``dP`` [Pa] (negative: a rise), details
        ``discharge_T_K`` and ``isentropic_power_W`` (the ideal power ``F (h(P_out, s_in) - h_in)``).

    Raises
    ------
    InputError
        If the outlet pressure is below the inlet pressure or the efficiency is outside (0, 1].
    """
    inlet = inlets["in"]
    n = inlet.n_cases
    P_out = outlet_pressure(params, inlet, name, required=True)
    below = P_out < inlet.P
    if np.any(below):
        i = int(np.flatnonzero(below)[0])
        raise InputError(f"outlet pressure {P_out[i]:.6g} Pa is below the inlet pressure "
                         f"{inlet.P[i]:.6g} Pa{case_text(i, n)}; a compressor raises the pressure",
                         field=field_name(name, "P_out" if params.get("P_out") is not None else "dP"))
    kind, eta = efficiency_spec(params, name, n)
    if kind == "isentropic":
        out, dh_ideal = isentropic_step(fluid, inlet, P_out, eta, compress=True)
    else:
        ratio = (P_out / inlet.P) ** (1.0 / POLYTROPIC_STEPS)
        out = inlet
        for k in range(1, POLYTROPIC_STEPS + 1):
            P_k = P_out if k == POLYTROPIC_STEPS else inlet.P * ratio ** k
            out, _ = isentropic_step(fluid, out, P_k, eta, compress=True)
        dh_ideal = np.asarray(fluid.flash(P=P_out, s=inlet.s, zs=inlet.zs).h) - inlet.h
    power = inlet.flow * (out.h - inlet.h)
    return finish(inlets, {"out": out}, power, power=power, dP=inlet.P - P_out,
                  details={"discharge_T_K": out.T, "isentropic_power_W": inlet.flow * dh_ideal})
