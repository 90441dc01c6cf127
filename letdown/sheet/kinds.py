"""The block kinds a flowsheet file may name, their numeric parameters with quantity kinds, and the
groups of alternative specifications (a leaf of the sheet layer: the loader, the measurements, the
sweep and the comparison read it; it imports nothing of letdown)."""

from __future__ import annotations

#: A mass flow kept in kg/s (an inhibitor's rate), not turned into a molar flow of the gas: a
#: quantity kind of this loader only, parsed as a ``flow`` that must be given by mass.
MASS_RATE = "mass_rate"

#: Block kinds and, for each, its numeric parameters and their quantity kinds
#: (see :mod:`letdown.quantities`). The schema documents the same set.
PARAMETERS: dict[str, dict[str, str]] = {
    "throttle": {"P_out": "pressure", "dP": "pressure_difference"},
    "heater": {"T_out": "temperature", "duty": "power", "fuel": "power",
               "efficiency": "fraction", "dP": "pressure_difference"},
    "cooler": {"T_out": "temperature", "duty": "power", "dP": "pressure_difference"},
    "separator": {"dP": "pressure_difference"},
    "compressor": {"P_out": "pressure", "efficiency": "fraction"},
    "expander": {"P_out": "pressure", "efficiency": "fraction"},
    "mixer": {"P_out": "pressure"},
    "splitter": {},
    "exchanger": {"hot_T_out": "temperature", "cold_T_out": "temperature", "duty": "power",
                  "min_approach": "temperature_difference", "UA": "ua",
                  "hot_dP": "pressure_difference", "cold_dP": "pressure_difference"},
    "inject": {"rate": "mass_rate", "depression": "temperature_difference"},
    "pipe": {"length": "length", "diameter": "length", "roughness": "length",
             "elevation_change": "length"},
}

#: For each kind, groups of alternative specifications of which exactly one must be given
#: (in the file or as the parameter a goal varies).
EXACTLY_ONE: dict[str, tuple[tuple[str, ...], ...]] = {
    "throttle": (("P_out", "dP"),),
    "heater": (("T_out", "duty", "fuel"),),
    "cooler": (("T_out", "duty"),),
    "exchanger": (("hot_T_out", "cold_T_out", "duty", "min_approach", "UA"),),
    "inject": (("rate", "depression"),),
}
