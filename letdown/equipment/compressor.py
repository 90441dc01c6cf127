"""Compressor: raises a stream to ``P_out`` with an isentropic or a polytropic efficiency.

``efficiency`` is isentropic unless ``efficiency_kind`` says ``polytropic``. Isentropic::

    h_out = h_in + (h(P_out, s_in) - h_in) / eta_s

Polytropic: the path is integrated from the definition of the polytropic efficiency,
``eta_p = v dP / dh`` at every point of the compression (the small-stage efficiency; Schultz,
J. Eng. Power 84 (1962) 69, from memory), i.e. ``dh / d(ln P) = P v / eta_p``, by Heun's
second-order method over ``POLYTROPIC_STEPS`` and half as many equal steps of ``ln P``, combined by
Richardson extrapolation ``h = h_N + (h_N - h_N/2) / 3``; ``v`` is the molar volume of the actual
state. It needs no polytropic exponent. Power ``F (h_out - h_in)``.

Liquid in the feed: a compressor takes no liquid (common practice: droplets erode and slugs break
the machine, which is why a suction scrubber stands before every stage). The block reports the
feed's liquid fraction (``inlet_liquid_fraction``, molar, and ``inlet_liquid_mass_fraction``) and
flags it -- it does not refuse: the feed is what the flowsheet upstream makes of it, not a number
the file gave the compressor, and a loop or goal may pass through a wet iterate on its way to a dry
answer. Up to :data:`LIQUID_TRACE` by mass the flag is ``liquid_feed_trace`` (a check: a feed at its
dew point, whose trace a scrubber catches; the power is hardly touched); beyond it ``liquid_feed``
(a hazard: a two-phase feed, whose power here -- the two phases compressed as one fluid -- means
nothing for a real machine). A single liquid-like phase counts as liquid below its pseudo-critical
temperature and as dense gas above it (:func:`letdown.equipment.common.liquid_fractions`).
"""
from __future__ import annotations

import numpy as np

from ..errors import InputError
from .common import (array_param, case_text, check_fraction, field_name, finish,
                     liquid_fractions, outlet_pressure)
from .stream import flash_stream

#: Steps of ln P on the polytropic path (and half as many for the extrapolation). Heun's error falls
#: with the square of the step (measured: 5.3e-4, 1.3e-4, 3.4e-5 of the power for 10, 20, 40 steps
#: at a pressure ratio of 10, efficiency 1); extrapolated from 20 and 10 steps it is about 4e-6.
#: tests/equipment/test_equipment_compressor.py holds it to 1e-5.
POLYTROPIC_STEPS = 20

EFFICIENCY_KINDS = ("isentropic", "polytropic")

#: Largest liquid mass fraction of a compressor's feed that counts as a trace [-] (a check rather
#: than a hazard). Our choice: 0.1 % by mass is what a feed a fraction of a kelvin inside its dew
#: point carries, well within what a suction scrubber removes (common practice), and it changes the
#: compression power by less than the uncertainty of an efficiency.
LIQUID_TRACE = 1e-3


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


def _heun_path(fluid, inlet, P_out, eta, steps):
    """Enthalpy after ``steps`` Heun steps of ``dh / d(ln P) = P v / eta`` [J/mol] and the last state."""
    ln_ratio = np.log(P_out / inlet.P) / steps
    state = inlet
    for k in range(1, steps + 1):
        P_next = P_out if k == steps else inlet.P * np.exp(k * ln_ratio)
        slope = state.P * state.molar_mass / state.density / eta          # P v / eta [J/mol]
        guess = flash_stream(fluid, state.flow, state.zs, P=P_next, h=state.h + ln_ratio * slope,
                             T_guess=state.T)
        slope_next = guess.P * guess.molar_mass / guess.density / eta
        state = flash_stream(fluid, state.flow, state.zs, P=P_next,
                             h=state.h + 0.5 * ln_ratio * (slope + slope_next), T_guess=guess.T)
    return state.h, state


def polytropic_path(fluid, inlet, P_out, eta):
    """Outlet of a polytropic compression (Heun's method with Richardson extrapolation)."""
    h_fine, last = _heun_path(fluid, inlet, P_out, eta, POLYTROPIC_STEPS)
    h_coarse, _ = _heun_path(fluid, inlet, P_out, eta, POLYTROPIC_STEPS // 2)
    return flash_stream(fluid, inlet.flow, inlet.zs, P=P_out, h=h_fine + (h_fine - h_coarse) / 3.0,
                        T_guess=last.T)


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
        ``discharge_T_K``, ``isentropic_power_W`` (the ideal power ``F (h(P_out, s_in) - h_in)``),
        ``inlet_liquid_fraction`` and ``inlet_liquid_mass_fraction`` [-]; flags
        ``liquid_feed_trace`` and ``liquid_feed`` (see the module docstring).

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
                         field=field_name(name, "P_out" if params.get("P_out") is not None else "dP"),
                         cases=below)
    kind, eta = efficiency_spec(params, name, n)
    if kind == "isentropic":
        out, dh_ideal = isentropic_step(fluid, inlet, P_out, eta, compress=True)
    else:
        out = polytropic_path(fluid, inlet, P_out, eta)
        dh_ideal = np.asarray(fluid.flash(P=P_out, s=inlet.s, zs=inlet.zs).h) - inlet.h
    power = inlet.flow * (out.h - inlet.h)
    molar, mass = liquid_fractions(fluid, inlet)
    wet = (inlet.flow > 0) & (mass > 0.0)
    return finish(inlets, {"out": out}, power, power=power, dP=inlet.P - P_out,
                  details={"discharge_T_K": out.T, "isentropic_power_W": inlet.flow * dh_ideal,
                           "inlet_liquid_fraction": molar, "inlet_liquid_mass_fraction": mass},
                  flags={"liquid_feed_trace": wet & (mass <= LIQUID_TRACE),
                         "liquid_feed": wet & (mass > LIQUID_TRACE)})
