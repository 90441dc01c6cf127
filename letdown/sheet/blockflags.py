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
              "velocity_high": ("max_velocity", "check"),
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
          "velocity_high": _velocity_high, "two_phase_flow": _two_phase_flow}
