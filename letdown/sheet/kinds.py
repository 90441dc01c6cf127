"""The block kinds a flowsheet file may name, as the sheet layer's tables: their numeric parameters
with quantity kinds, the groups of alternative specifications, the block quantities a reading may
measure. All of it is read from the one declaration of each kind,
:data:`letdown.equipment.registry.REGISTRY`; the loader, the measurements, the sweep and the
comparison read these tables."""

from __future__ import annotations

from types import MappingProxyType

from ..equipment.registry import REGISTRY

#: A mass flow kept in kg/s (an inhibitor's rate), not turned into a molar flow of the gas: a
#: quantity kind of this loader only, parsed as a ``flow`` that must be given by mass.
MASS_RATE = "mass_rate"

#: Block kinds and, for each, its numeric parameters and their quantity kinds
#: (see :mod:`letdown.quantities`).
PARAMETERS: dict[str, dict[str, str]] = {
    name: {key: p.quantity for key, p in kind.parameters.items()} for name, kind in REGISTRY.items()}

#: For each kind, groups of alternative specifications of which exactly one must be given
#: (in the file or as the parameter a goal varies).
EXACTLY_ONE: dict[str, tuple[tuple[str, ...], ...]] = {
    name: kind.alternatives for name, kind in REGISTRY.items() if kind.alternatives}

#: Block quantities a reading may measure: attribute -> (quantity kind, kinds reporting it).
MEASURABLE = MappingProxyType({
    attr: (next(k.measurable[attr] for k in REGISTRY.values() if attr in k.measurable),
           tuple(name for name, k in REGISTRY.items() if attr in k.measurable))
    for attr in dict.fromkeys(a for k in REGISTRY.values() for a in k.measurable)})

#: Which of duty, power and dP each kind's result reports (a blank outcome has the same fields).
NUMBERS = MappingProxyType({name: kind.numbers for name, kind in REGISTRY.items()})
