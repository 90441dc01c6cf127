"""Throttle (regulator, valve, choke): an isenthalpic pressure drop, optionally rated as a valve.

``h_out = h_in`` at ``P_out`` (given directly or as ``P_in - dP``); the outlet is a P-h flash of the
inlet composition. No heat, no work.

A throttle given ``valve`` (a mapping, SI values; see :data:`VALVE_KEYS`) is also rated by
IEC 60534-2-1 and IEC 60534-8-3 (:mod:`letdown.equipment.valve`): the flow coefficient it needs,
the opening of its rated one, choking, the noise at the outlet pipe and the pipe velocities are
added to its details. The rating does not change the flowsheet's numbers (the pressure drop is
still given); a valve too small for the flow is flagged, not refused.
"""
from __future__ import annotations

import numpy as np

from ..errors import InputError
from . import valve as iec
from .common import TRIAL, case_text, field_name, finish, outlet_pressure, refuse
from .stream import StreamBatch, flash_stream

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
        ``P_out`` [Pa] or ``dP`` [Pa] (number or array over cases); optional ``valve`` (the
        rating, :data:`VALVE_KEYS`, SI) and ``protection`` (``{"set_pressure": [Pa]}``).

    Returns
    -------
    BlockOutcome
        ``outlets={"out": ...}``, ``dP`` [Pa], flag ``two_phase_outlet``; with a rating the
        details and flags of :func:`rate` (and of :func:`fail_open` with a protection).

    Raises
    ------
    InputError
        If the outlet pressure is above the inlet pressure (a throttle cannot raise pressure), or
        neither or both of ``P_out`` and ``dP`` are given; a bad ``valve`` mapping
        (:func:`valve_problem`); a ``protection`` without a rating, or whose set pressure is not
        above the outlet pressure (those cases).
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
    rating = params.get("valve")
    protection = params.get("protection")
    if protection is not None and rating is None:
        raise InputError("the fail-open flow into the protection needs the valve's rating "
                         "(valve: {Kv: ...})", field=field_name(name, "protection"))
    if protection is not None:
        P_set = np.broadcast_to(np.asarray(protection["set_pressure"], dtype=float),
                                (inlet.n_cases,))
        refuse(params, (P_set <= P_out) & (inlet.flow > 0),
               lambda i: (f"the protection's set pressure {P_set[i]:.6g} Pa is not above the "
                          f"throttle's outlet pressure {P_out[i]:.6g} Pa: it would act in normal "
                          "operation"), name, "protection")
    if rating is not None:
        problem = valve_problem(rating)
        if problem is not None:
            raise InputError(problem[1], field=field_name(name, "valve." + problem[0]))
    if params.get(TRIAL):
        # a loop iterating or a goal searching: the rating changes no stream, so it waits for the
        # final pass (it costs a P-T flash of the inlet and the sizing per pass)
        rating = protection = None
    if rating is None:
        out = flash_stream(fluid, inlet.flow, inlet.zs, P=P_out, h=inlet.h)
    else:
        # the outlet's own states are kept: the rating needs its speed of sound
        out_states = fluid.flash(zs=np.asarray(inlet.zs), P=P_out, h=np.asarray(inlet.h))
        out = StreamBatch.from_states(out_states, inlet.flow)
    lo, hi = TWO_PHASE_BOUNDS
    # an empty stream has no phases to speak of: it is not flagged
    two_phase = (out.vapour_fraction > lo) & (out.vapour_fraction < hi) & (inlet.flow > 0)
    flags = {"two_phase_outlet": two_phase}
    details = {}
    if rating is not None:
        in_states = fluid.flash(zs=np.asarray(inlet.zs), T=np.asarray(inlet.T),
                                P=np.asarray(inlet.P))
        details, more = rate(rating, inlet, in_states, out, out_states)
        flags.update(more)
        if protection is not None:
            fo_details, fo_flags = fail_open(rating, inlet, details["isentropic_exponent"],
                                             protection["set_pressure"])
            details.update(fo_details)
            flags.update(fo_flags)
    return finish(inlets, {"out": out}, 0.0, dP=inlet.P - P_out, details=details,
                  flags=flags)


def fail_open(v, inlet, kappa, set_pressure):
    """The flow through a rated valve failed wide open into its downstream protection.

    The valve passes its rated Kv (full travel) from the throttle's inlet state, held as in
    normal operation (conservative: a larger flow would draw the upstream pressure down), into
    the pressure at which the downstream protection acts (a monitor regulator, slam-shut or relief
    device): the load that protection must take (IEC 60534-2-1, forward equation, FR = 1).

    Parameters
    ----------
    v : Mapping
        The ``valve`` mapping.
    inlet : StreamBatch
        The throttle's inlet.
    kappa : ndarray (n,)
        The inlet's isentropic exponent [-].
    set_pressure : float or ndarray (n,)
        The protection's set pressure [Pa].

    Returns
    -------
    details : dict of ndarray (n,)
        ``fail_open_flow_kg_s`` [kg/s], ``fail_open_flow_mol_s`` [mol/s], ``fail_open_choked``
        (bool), ``protection_set_pressure_Pa`` [Pa]; zero flow where the set pressure is at or
        above the inlet pressure.
    flags : dict of ndarray of bool (n,)
        ``fail_open_load``: the note that carries the numbers and the caution.
    """
    n = inlet.n_cases
    P_set = np.broadcast_to(np.asarray(set_pressure, dtype=float), (n,))
    P2 = np.minimum(P_set, inlet.P)
    Kv_rated = v["Kv"] if "Kv" in v else v["Cv"] / iec.CV_PER_KV
    xT = np.full(n, float(v["xT"]))
    W = iec.mass_flow(np.full(n, float(Kv_rated)), inlet.P, P2, inlet.density, kappa, xT,
                      v.get("size"), v.get("inlet_pipe"), v.get("outlet_pipe"))
    x = (inlet.P - P2) / inlet.P
    choked = x >= iec.choked_ratio(np.full(n, float(Kv_rated)), kappa, xT, v.get("size"),
                                   v.get("inlet_pipe"), v.get("outlet_pipe"))
    return ({"fail_open_flow_kg_s": W, "fail_open_flow_mol_s": W / inlet.molar_mass,
             "fail_open_choked": choked, "protection_set_pressure_Pa": P_set.copy()},
            {"fail_open_load": np.isfinite(W)})


#: Outlet Mach number at which the outlet pipe itself chokes [-] (a pipe cannot carry gas faster
#: than its speed of sound; Fanno flow).
SONIC_MACH = 1.0

#: The entries of a throttle's ``valve`` mapping (SI: sizes in m; Kv in m3/h, Cv in US gal/min at
#: 1 psi, as the coefficients are defined). ``xT`` is required (it governs choking and is a
#: property of the valve style and its trim, with no typical value to fall back on); ``FL`` and
#: ``Fd`` are required for the noise, which is computed when the outlet pipe is given.
VALVE_KEYS = ("Kv", "Cv", "xT", "FL", "Fd", "An", "size", "inlet_pipe", "outlet_pipe",
              "wall_thickness", "characteristic", "rangeability")


def valve_problem(v) -> tuple[str, str] | None:
    """What is wrong with a ``valve`` mapping (SI values), as ``(key, message)``, or None.

    Shared by the loader (located at the file's line) and :func:`run` (for callers from Python).
    """
    unknown = [k for k in v if k not in VALVE_KEYS]
    if unknown:
        return unknown[0], (f"unknown valve entry '{unknown[0]}' (known: "
                            f"{', '.join(VALVE_KEYS)})")
    if ("Kv" in v) == ("Cv" in v):
        return ("Cv" if "Cv" in v else "Kv"), "give the valve's rated Kv or its Cv (exactly one)"
    for key in ("Kv", "Cv", "size", "inlet_pipe", "outlet_pipe", "wall_thickness"):
        if key in v and not (_number(v[key]) and v[key] > 0.0):
            return key, f"{key} must be a positive number, got {v[key]!r}"
    for key in ("xT", "FL", "Fd"):
        if key in v and not (_number(v[key]) and 0.0 < v[key] <= 1.0):
            return key, f"{key} must lie in (0, 1], got {v[key]!r}"
    if "xT" not in v:
        return "xT", ("give the valve's xT (pressure differential ratio factor at choked flow, "
                      "from the valve's data sheet; IEC 60534-2-1)")
    if "An" in v and not (_number(v["An"]) and -10.0 < v["An"] < 0.0):
        return "An", f"An (log10 of an acoustic efficiency factor) lies in (-10, 0), got {v['An']!r}"
    if "characteristic" not in v:
        return "characteristic", ("give the valve's characteristic: "
                                  + " or ".join(iec.CHARACTERISTICS))
    if v["characteristic"] not in iec.CHARACTERISTICS:
        return "characteristic", (f"unknown characteristic {v['characteristic']!r} (known: "
                                  f"{', '.join(iec.CHARACTERISTICS)})")
    if "rangeability" in v and not (_number(v["rangeability"]) and v["rangeability"] > 1.0):
        return "rangeability", f"rangeability must be above 1, got {v['rangeability']!r}"
    if v["characteristic"] == "equal-percentage" and "rangeability" not in v:
        return "rangeability", "an equal-percentage valve needs its rangeability (such as 50)"
    pipes = [k for k in ("inlet_pipe", "outlet_pipe") if k in v]
    if pipes and "size" not in v:
        return pipes[0], "give the valve's size (its bore) with the pipe diameters"
    for key in pipes:
        if v[key] < v["size"]:
            return key, (f"the {key.replace('_', ' ')} ({v[key]:g} m) is narrower than the valve "
                         f"({v['size']:g} m); IEC 60534-2-1 rates reducers to larger pipes only")
    if "outlet_pipe" in v:
        for key in ("wall_thickness", "FL", "Fd"):
            if key not in v:
                return key, (f"the noise at the outlet pipe needs the valve's {key} "
                             + {"wall_thickness": "(of the outlet pipe, steel)",
                                "FL": "(liquid pressure recovery factor)",
                                "Fd": "(valve style modifier)"}[key])
        if 2.0 * v["wall_thickness"] >= v["outlet_pipe"]:
            return "wall_thickness", "the outlet pipe's wall is thicker than half its bore"
    return None


def _number(x) -> bool:
    return isinstance(x, (int, float)) and not isinstance(x, bool) and np.isfinite(x)


def rate(v, inlet, in_states, out, out_states):
    """The valve rating of a throttle batch: (details, flags).

    Parameters
    ----------
    v : Mapping
        The ``valve`` mapping (checked by :func:`valve_problem`).
    inlet, out : StreamBatch
        The throttle's inlet and outlet.
    in_states, out_states : StateBatch
        Their flashed states (for the speed of sound).

    Returns
    -------
    details : dict of ndarray (n,)
        ``Kv_required`` [m3/h], ``Cv_required`` [US gal/min at 1 psi], ``Kv_rated`` [m3/h],
        ``opening_fraction``, ``choked``, ``x``, ``x_choked``, ``Y``, ``Fp``,
        ``isentropic_exponent`` [-]; with the pipes ``inlet_velocity_m_s``,
        ``outlet_velocity_m_s``, ``outlet_mach`` [-] and ``noise_dBA`` [dB(A)].
    flags : dict of ndarray of bool (n,)
        ``valve_undersized`` (the required Kv exceeds the rated one), ``valve_below_range``
        (below 1/rangeability of the rated Kv), ``valve_fittings_limit`` (no Kv passes the flow
        through these reducers), ``valve_not_gas`` (liquid at the inlet or outlet: the gas
        equations do not apply; the numbers are NaN there), ``valve_outlet_sonic`` (the outlet
        pipe would carry the gas at or above its speed of sound: the pipe, not the valve, sets
        the pressure there, and the flowsheet's outlet state cannot be reached).

    Notes
    -----
    The ratio of specific heats is the inlet's real-gas isentropic exponent ``rho w^2 / P``
    (:mod:`letdown.equipment.valve` says why). Reynolds number factor FR = 1 (turbulent gas).
    """
    n = inlet.n_cases
    flowing = inlet.flow > 0
    m = inlet.mass_flow
    w1 = np.asarray(in_states.w, dtype=float)
    kappa = inlet.density * w1 ** 2 / inlet.P
    lo, hi = TWO_PHASE_BOUNDS
    not_gas = flowing & ((inlet.vapour_fraction < hi) | (out.vapour_fraction < hi)
                         | ~np.isfinite(kappa))
    kappa = np.where(not_gas, np.nan, kappa)
    d = v.get("size")
    D1, D2 = v.get("inlet_pipe"), v.get("outlet_pipe")
    Kv_rated = v["Kv"] if "Kv" in v else v["Cv"] / iec.CV_PER_KV
    xT = np.full(n, float(v["xT"]))
    sized = iec.size(m, inlet.P, out.P, inlet.density, kappa, xT, d, D1, D2)
    phi = sized["Kv"] / Kv_rated
    h = iec.opening(phi, v["characteristic"], v.get("rangeability", np.inf))
    details = {"Kv_required": sized["Kv"], "Cv_required": sized["Cv"],
               "Kv_rated": np.full(n, float(Kv_rated)), "opening_fraction": h,
               "choked": sized["choked"] & ~not_gas, "x": sized["x"],
               "x_choked": sized["x_choked"], "Y": sized["Y"], "Fp": sized["Fp"],
               "isentropic_exponent": kappa}
    if D1 is not None:
        details["inlet_velocity_m_s"] = iec.velocity(m, inlet.density, D1)
    if D2 is not None:
        u2 = iec.velocity(m, out.density, D2)
        details["outlet_velocity_m_s"] = u2
        details["outlet_mach"] = np.where(not_gas, np.nan, u2 / np.asarray(out_states.w))
        FLP = iec.flp(v["FL"], sized["Kv"], d, D1) if D1 is not None else None
        details["noise_dBA"] = iec.noise(
            m, inlet.P, out.P, inlet.T, out.T, inlet.density, kappa, inlet.molar_mass,
            sized["Cv"], v["FL"], v["Fd"], d, D2, v["wall_thickness"],
            Fp=sized["Fp"] if D1 is not None else None, FLP=FLP, An=v.get("An", iec.AN_DEFAULT))
    rangeability = v.get("rangeability")
    flags = {"valve_undersized": flowing & (phi > 1.0),
             "valve_fittings_limit": flowing & ~not_gas & np.isnan(sized["Kv"]),
             "valve_not_gas": not_gas}
    if D2 is not None:
        with np.errstate(invalid="ignore"):
            flags["valve_outlet_sonic"] = flowing & (details["outlet_mach"] >= SONIC_MACH)
    if rangeability is not None:
        flags["valve_below_range"] = flowing & (phi < 1.0 / rangeability)
    return details, flags
