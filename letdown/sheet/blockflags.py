"""Block flags as warnings: each flag a block raises becomes one :class:`WarningRecord`.

A block (:mod:`letdown.equipment`) returns per-case boolean ``flags``; this module says what each one
means for the plant -- its ``kind`` and ``severity`` (:data:`FLAG_KINDS`), one sentence with the
numbers of the first case concerned and what to change, and the SI figures behind it over every case
(``numbers``, the unit in each key). The severities follow :data:`letdown.sheet.result.SEVERITIES`:
a block run against its physics is a ``hazard``; a condition that may be right but must be verified
is a ``check``.
"""
from __future__ import annotations

import numpy as np

from ..equipment.common import pseudo_critical
from ..equipment.compressor import LIQUID_TRACE
from ..equipment.expander import LIQUID_HAZARD
from .result import WarningRecord

#: Block flag -> (warning kind, severity). A flag not listed here is a "check" of its own name.
FLAG_KINDS = {"two_phase_outlet": ("two_phase_outlet", "check"),
              "temperature_cross": ("temperature_cross", "hazard"),
              "spec_unmet": ("spec_unmet", "hazard"),
              "reverse_duty": ("exchanger_reverse_duty", "hazard"),
              "three_phase_T_shift": ("three_phase_T_shift", "check"),
              "heater_cooling": ("heater_cooling", "hazard"),
              "cooler_heating": ("cooler_heating", "hazard"),
              "liquid_feed": ("compressor_liquid", "hazard"),
              "liquid_feed_trace": ("compressor_liquid_trace", "check"),
              "outlet_liquid": ("expander_liquid", "check"),
              "outlet_liquid_high": ("expander_liquid_high", "hazard"),
              "dense_phase_inlet": ("separator_dense_inlet", "hazard"),
              "liquid_inlet": ("separator_liquid_inlet", "check"),
              "valve_undersized": ("valve_undersized", "hazard"),
              "valve_fittings_limit": ("valve_undersized", "hazard"),
              "valve_below_range": ("valve_below_range", "check"),
              "valve_not_gas": ("valve_not_gas", "check"),
              "valve_outlet_sonic": ("valve_outlet_sonic", "hazard"),
              "fail_open_load": ("fail_open_load", "note"),
              "velocity_high": ("velocity_limit", "check"),
              "two_phase_flow": ("pipe_two_phase", "check")}


def _C(T) -> str:
    return f"{T - 273.15:.2f} degC"


def _bar(P) -> str:
    return f"{P / 1e5:.2f} bar"


def _pct(x, digits=1) -> str:
    return f"{100.0 * x:.{digits}f} %"


def flag_warning(fluid, name: str, flag: str, values, outcome, inlets, outlets) -> WarningRecord:
    """The warning of one block flag.

    Parameters
    ----------
    fluid : letdown.fluid.Fluid
        The flowsheet's fluid (for the separator's pseudo-critical point).
    name : str
        The block.
    flag : str
        The flag's name (a key of ``outcome.flags``).
    values : ndarray of bool (n,)
        The cases flagged (at least one).
    outcome : BlockOutcome or EquipmentBatch
        The block's numbers (``duty``, ``power``, ``details``).
    inlets, outlets : Mapping[str, StreamBatch]
        The block's streams by port.

    Returns
    -------
    WarningRecord
    """
    kind, severity = FLAG_KINDS.get(flag, (flag, "check"))
    values = np.asarray(values, dtype=bool)
    i = int(np.flatnonzero(values)[0])
    d = outcome.details
    text = _TEXTS.get(flag)
    if text is None:
        what, numbers = flag.replace("_", " "), {}
    else:
        what, numbers = text(fluid, i, outcome, d, inlets, outlets)
    return WarningRecord(name, what, tuple(np.flatnonzero(values).tolist()), kind=kind,
                         severity=severity, numbers=numbers)


def _two_phase_outlet(fluid, i, outcome, d, inlets, outlets):
    return "throttle outlet is in two phases", {}


def _temperature_cross(fluid, i, outcome, d, inlets, outlets):
    return ("temperature cross inside the exchanger (smallest approach "
            f"{d['min_approach_K'][i]:.2f} K at {100 * d['min_approach_at'][i]:.0f} % of the duty "
            "from the hot end)",
            {"min_approach_K": d["min_approach_K"], "duty_W": outcome.duty})


def _spec_unmet(fluid, i, outcome, d, inlets, outlets):
    return "the specification cannot be met with these inlet temperatures", {}


def _reverse_duty(fluid, i, outcome, d, inlets, outlets):
    hot, cold = inlets["hot"], inlets["cold"]
    return (f"the exchanger's duty is negative ({outcome.duty[i] / 1e3:.1f} kW): heat would pass "
            f"from the cold side (inlet {_C(cold.T[i])}) to the hot side (inlet {_C(hot.T[i])}), "
            "which no exchanger does. A goal drove it there: move the goal's target or bracket, "
            "or swap the hot and cold streams",
            {"duty_W": outcome.duty, "hot_T_in_K": hot.T, "cold_T_in_K": cold.T})


def _three_phase_T_shift(fluid, i, outcome, d, inlets, outlets):
    return ("the three-phase drum temperature differs by more than 0.1 K from its inlet's "
            "temperature at the same enthalpy: the inlet's flash missed a phase "
            f"(by {d['dT_vs_two_phase_K'][i]:+.2f} K)", {"dT_K": d["dT_vs_two_phase_K"]})


def _backwards(kind, other):
    def text(fluid, i, outcome, d, inlets, outlets):
        T_in, T_out, duty = inlets["in"].T, outlets["out"].T, outcome.duty
        if kind == "heater":
            what = (f"the heater's duty is negative ({duty[i] / 1e3:.1f} kW): it takes heat out of "
                    f"the gas, from {_C(T_in[i])} at its inlet to {_C(T_out[i])}, which a heater "
                    "cannot do. The gas arrives warmer than needed (a goal drove it there, or a "
                    "liquid warms on the heater's pressure drop): let the heater stand idle (no "
                    "heat, the outlet floats warmer), move the goal's target or bracket, or use a "
                    "cooler")
        else:
            what = (f"the cooler's duty is negative ({duty[i] / 1e3:.1f} kW): it adds heat to the "
                    f"gas, from {_C(T_in[i])} at its inlet to {_C(T_out[i])}, which a cooler "
                    "cannot do. The gas arrives colder than asked for: let the cooler stand idle, "
                    "move the goal's target or bracket, or use a heater")
        return what, {"duty_W": duty, "T_in_K": T_in, "T_out_K": T_out}
    return text


def _liquid_feed(fluid, i, outcome, d, inlets, outlets):
    inlet = inlets["in"]
    mass, molar = d["inlet_liquid_mass_fraction"], d["inlet_liquid_fraction"]
    return (f"{_pct(mass[i])} of the compressor's feed by mass ({_pct(molar[i])} by moles) is "
            f"liquid at {_C(inlet.T[i])} and {_bar(inlet.P[i])}: a compressor takes no liquid "
            "(common practice), and its power here treats the two phases as one fluid. Take the "
            "liquid out upstream (a suction scrubber or knock-out drum) or warm the feed above "
            "its dew point",
            {"liquid_mass_fraction": mass, "liquid_fraction": molar, "T_K": inlet.T,
             "P_Pa": inlet.P})


def _liquid_feed_trace(fluid, i, outcome, d, inlets, outlets):
    inlet = inlets["in"]
    mass, molar = d["inlet_liquid_mass_fraction"], d["inlet_liquid_fraction"]
    return (f"a trace of liquid in the compressor's feed ({_pct(mass[i], 3)} by mass, at most "
            f"{_pct(LIQUID_TRACE, 1)}): the feed sits at its dew point at {_C(inlet.T[i])} and "
            f"{_bar(inlet.P[i])}. Check that a suction scrubber is upstream and that the feed "
            "stays above its dew point in every case",
            {"liquid_mass_fraction": mass, "liquid_fraction": molar, "T_K": inlet.T,
             "P_Pa": inlet.P})


def _outlet_liquid(fluid, i, outcome, d, inlets, outlets):
    out = outlets["out"]
    mass, molar = d["outlet_liquid_mass_fraction"], d["outlet_liquid_fraction"]
    return (f"{_pct(mass[i])} of the expander's outlet by mass ({_pct(molar[i])} by moles) is "
            f"liquid at {_C(out.T[i])}: a few % is common in turbo-expanders of gas plants (common "
            "practice), but check that the machine is meant for it; the constant isentropic "
            "efficiency used here does not allow for the liquid",
            {"liquid_mass_fraction": mass, "liquid_fraction": molar, "T_K": out.T,
             "P_Pa": out.P})


def _outlet_liquid_high(fluid, i, outcome, d, inlets, outlets):
    out = outlets["out"]
    mass, molar = d["outlet_liquid_mass_fraction"], d["outlet_liquid_fraction"]
    return (f"{_pct(mass[i])} of the expander's outlet by mass ({_pct(molar[i])} by moles) is "
            f"liquid at {_C(out.T[i])}, beyond the {_pct(LIQUID_HAZARD, 0)} taken here as the most "
            "an expander wheel is built for: expect erosion and a lower efficiency than assumed. "
            "Warm the inlet (preheat) or take a smaller pressure ratio in this stage",
            {"liquid_mass_fraction": mass, "liquid_fraction": molar, "T_K": out.T,
             "P_Pa": out.P, "limit_liquid_mass_fraction": LIQUID_HAZARD})


def _single_phase_inlet(dense):
    def text(fluid, i, outcome, d, inlets, outlets):
        inlet = inlets["in"]
        T, P = outlets["liquid"].T, outlets["liquid"].P
        T_pc, P_pc = pseudo_critical(fluid, inlet.zs)
        ports = [p for p in ("liquid", "water") if p in outlets and outlets[p].flow[i] > 0]
        port = " and ".join(ports or ["liquid"]) + (" outlets" if len(ports) > 1 else " outlet")
        if dense:
            what = (f"the drum's inlet is one dense phase at {_C(T[i])} and {_bar(P[i])} (above its "
                    f"pseudo-critical temperature, {_C(T_pc[i])} by Kay's rule): no gas and liquid "
                    f"separate, so all of it is sent out of the {port} and the vapour outlet "
                    "carries no flow; a real drum passes a dense fluid out of whichever outlet is "
                    "open, so the streams downstream are not what the plant would see. Lower the "
                    "drum's pressure below the gas's cricondenbar or cool its inlet into two phases")
        else:
            what = (f"the drum's inlet is all liquid at {_C(T[i])} and {_bar(P[i])}: no vapour forms, "
                    f"all of it leaves by the {port} and the vapour outlet carries no flow. "
                    "Check that a drum is meant here (a drum fed liquid separates nothing)")
        return what, {"T_K": T, "P_Pa": P, "pseudo_critical_T_K": T_pc,
                      "pseudo_critical_P_Pa": P_pc, "flow_mol_s": inlet.flow}
    return text


def _fail_open_load(fluid, i, outcome, d, inlets, outlets):
    inlet = inlets["in"]
    W = d["fail_open_flow_kg_s"]
    return (f"if this valve fails wide open, {W[i] * 3600.0:.0f} kg/h "
            f"({d['fail_open_flow_mol_s'][i] * 3.6:.1f} kmol/h"
            f"{', choked' if d['fail_open_choked'][i] else ''}) flows through its rated Kv "
            f"{d['Kv_rated'][i]:.4g} m3/h from {_bar(inlet.P[i])} into the protection set at "
            f"{_bar(d['protection_set_pressure_Pa'][i])}: the load that protection must take "
            f"(normal flow {inlet.mass_flow[i] * 3600.0:.0f} kg/h; inlet pressure held). "
            "Overpressure protection and material selection follow local codes and licensed "
            "practice",
            {"fail_open_flow_kg_s": W, "fail_open_flow_mol_s": d["fail_open_flow_mol_s"],
             "set_pressure_Pa": d["protection_set_pressure_Pa"], "P_in_Pa": inlet.P})


def _valve_outlet_sonic(fluid, i, outcome, d, inlets, outlets):
    return (f"the gas would leave the valve at Mach {d['outlet_mach'][i]:.2f} in its outlet pipe "
            f"({d['outlet_velocity_m_s'][i]:.0f} m/s): a pipe cannot carry gas at or above its "
            "speed of sound, so this flow and outlet pressure cannot be reached; use a larger "
            "outlet pipe", {"outlet_mach": d["outlet_mach"],
                            "outlet_velocity_m_s": d["outlet_velocity_m_s"]})


def _valve_undersized(fluid, i, outcome, d, inlets, outlets):
    if not np.isfinite(d["Kv_required"][i]):
        return ("the valve is asked to pass a flow with no pressure drop, which needs an "
                "unbounded flow coefficient: give the throttle a pressure drop",
                {"Kv_required": d["Kv_required"], "Kv_rated": d["Kv_rated"]})
    return (f"the valve cannot pass the flow: it needs Kv {d['Kv_required'][i]:.4g} m3/h "
            f"(Cv {d['Cv_required'][i]:.4g}) and is rated Kv {d['Kv_rated'][i]:.4g} m3/h at full "
            "travel (IEC 60534-2-1). Choose a larger valve or trim, or a smaller pressure drop "
            "elsewhere", {"Kv_required": d["Kv_required"], "Kv_rated": d["Kv_rated"],
                          "opening_fraction": d["opening_fraction"]})


def _valve_fittings_limit(fluid, i, outcome, d, inlets, outlets):
    return ("no flow coefficient passes the flow through this valve size with its reducers to "
            "the pipes (IEC 60534-2-1 piping geometry factor): the valve's bore is too small for "
            "the flow; choose a larger size", {"Kv_required": d["Kv_required"]})


def _valve_below_range(fluid, i, outcome, d, inlets, outlets):
    return (f"the valve works below its controllable range: it needs "
            f"{_pct(d['Kv_required'][i] / d['Kv_rated'][i])} of its rated Kv, under "
            "1/rangeability (the opening is shown as 0); it may not control steadily. Consider a "
            "smaller valve or trim, or split the range between two valves",
            {"Kv_required": d["Kv_required"], "Kv_rated": d["Kv_rated"]})


def _valve_not_gas(fluid, i, outcome, d, inlets, outlets):
    return ("the valve's inlet or outlet holds liquid: the gas sizing and noise equations of "
            "IEC 60534 do not apply, and the valve's numbers are left blank", {})


def _velocity_high(fluid, i, outcome, d, inlets, outlets):
    v, lim = d["velocity_max_m_s"], d["max_velocity_m_s"]
    return (f"gas velocity {v[i]:.2f} m/s in the pipe is above limits.max_velocity "
            f"{lim[i]:.2f} m/s (erosion, noise, vibration): give a larger diameter or a higher "
            "pressure, or lower the flow",
            {"velocity_max_m_s": v, "max_velocity_m_s": lim, "velocity_in_m_s":
             d["velocity_in_m_s"], "velocity_out_m_s": d["velocity_out_m_s"]})


def _two_phase_flow(fluid, i, outcome, d, inlets, outlets):
    return ("liquid forms along the pipe: its pressure drop takes gas and liquid as one "
            "homogeneous fluid (no slip, no liquid hold-up), an estimate only; check the line "
            "with a two-phase flow method", {})


_TEXTS = {"two_phase_outlet": _two_phase_outlet, "temperature_cross": _temperature_cross,
          "spec_unmet": _spec_unmet, "reverse_duty": _reverse_duty,
          "three_phase_T_shift": _three_phase_T_shift,
          "heater_cooling": _backwards("heater", "cooler"),
          "cooler_heating": _backwards("cooler", "heater"),
          "liquid_feed": _liquid_feed, "liquid_feed_trace": _liquid_feed_trace,
          "outlet_liquid": _outlet_liquid, "outlet_liquid_high": _outlet_liquid_high,
          "dense_phase_inlet": _single_phase_inlet(True),
          "liquid_inlet": _single_phase_inlet(False),
          "valve_undersized": _valve_undersized, "valve_fittings_limit": _valve_fittings_limit,
          "valve_below_range": _valve_below_range, "valve_not_gas": _valve_not_gas,
          "valve_outlet_sonic": _valve_outlet_sonic, "fail_open_load": _fail_open_load,
          "velocity_high": _velocity_high, "two_phase_flow": _two_phase_flow}


#: Limits on the blocks' hydraulic numbers: ``limits`` entry -> (detail keys it bounds, warning
#: kind). ``max_velocity`` bounds every detail whose key holds ``velocity`` and ends in ``_m_s``
#: (a valve's inlet and outlet pipes, and any other block that reports a velocity).
LIMITED_DETAILS = {"max_velocity": "velocity_limit", "max_opening": "opening_limit",
                   "max_noise": "noise_limit"}


#: The detail each limit other than max_velocity bounds, and the unit-keyed name of each limit in a
#: warning's ``numbers``.
_LIMIT_DETAIL = {"max_opening": "opening_fraction", "max_noise": "noise_dBA"}
_LIMIT_NUMBER = {"max_velocity": "max_velocity_m_s", "max_opening": "max_opening_fraction",
                 "max_noise": "max_noise_dBA"}


def _limited_keys(limit: str, details) -> list:
    if limit == "max_velocity":
        return [k for k in details if "velocity" in k and k.endswith("_m_s")]
    return [k for k in (_LIMIT_DETAIL[limit],) if k in details]


def limit_warnings(limits, outcomes) -> list:
    """Warnings (``check``) where a block's velocity, valve opening or valve noise is above the
    flowsheet's ``limits.max_velocity`` [m/s], ``max_opening`` [-] or ``max_noise`` [dB(A)].

    Parameters
    ----------
    limits : Mapping[str, float]
        The flowsheet's limits (SI).
    outcomes : Mapping[str, BlockOutcome]
        The blocks' outcomes by name (their ``details``).

    Returns
    -------
    list of WarningRecord
        One per block and number over its limit, naming the block, with the first case's figures
        and the SI ``numbers`` over the cases.
    """
    out = []
    for limit, kind in LIMITED_DETAILS.items():
        bound = limits.get(limit)
        if bound is None:
            continue
        for name, outcome in outcomes.items():
            if limit == "max_velocity" and "velocity_high" in outcome.flags:
                continue            # a pipe checks its own velocities (flag velocity_high)
            for key in _limited_keys(limit, outcome.details):
                values = np.asarray(outcome.details[key], dtype=float)
                over = values > bound
                if not np.any(over):
                    continue
                i = int(np.flatnonzero(over)[0])
                if limit == "max_velocity":
                    where = key.replace("_velocity_m_s", "").replace("velocity_", "")
                    where = where.replace("_m_s", "").replace("_", " ")
                    what = (f"gas velocity {values[i]:.1f} m/s ({where}) is above "
                            f"limits.max_velocity {bound:.1f} m/s: expect noise, erosion by "
                            "any dust or liquid and vibration; use a larger pipe")
                elif limit == "max_opening":
                    what = (f"the valve needs {_pct(values[i])} of its travel, above "
                            f"limits.max_opening {_pct(bound)}: too little margin to control a "
                            "rise in flow; choose a larger valve or trim")
                else:
                    what = (f"valve noise {values[i]:.1f} dBA at 1 m from the outlet pipe "
                            f"(IEC 60534-8-3) is above limits.max_noise {bound:.1f} dBA; "
                            "consider a low-noise trim, a smaller pressure drop per stage, a "
                            "thicker pipe wall or acoustic insulation")
                out.append(WarningRecord(name, what, tuple(np.flatnonzero(over).tolist()),
                                         kind=kind, severity="check",
                                         numbers={key: values, _LIMIT_NUMBER[limit]: bound}))
    return out
