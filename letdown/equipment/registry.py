"""The block kinds: one declaration per kind, read by every layer that needs to know a kind.

Each :class:`BlockKind` says what the kind is and how it is written in a flowsheet file: its ``run``
function, its port layout, its numeric parameters with their quantity kinds
(:mod:`letdown.quantities`) and the text that documents them, the groups of alternative
specifications (exactly one of each group), the other required entries, the entries that are not
plain quantities (a throttle's ``valve`` rating, a pipe's ``surroundings``: JSON Schema fragments),
the block quantities a plant reading may measure, and the numbers its result always reports.

Who reads it: :mod:`letdown.equipment` (``KINDS``: kind -> run), the loader and its tables
(:mod:`letdown.sheet.kinds`: parameters, alternatives, ports), the measurements (what a reading may
measure), the sweep and the comparison (a parameter's quantity kind), the solver (the numbers of a
blank outcome) and the JSON Schema of the file format, which :mod:`letdown.sheet.schemagen`
generates from this module (``tests/sheet/test_registry.py`` fails if the shipped schema differs).

Adding a kind: write its module (``run``), declare it here, and test it. Its file entries then
parse, validate (schema and loader), sweep and compare without further edits; a kind whose entries
need more than quantities (nested options) adds their checks to the loader as well.

Port layouts (:data:`PORT_LAYOUTS`): ``one`` (``from``/``to``: ports ``in``/``out``), ``mixer``
(``from`` a list: ``in0``, ``in1``, ...), ``separator`` (``to`` by phase), ``splitter`` (``to`` by
outlet stream) and ``exchanger`` (``hot`` and ``cold`` sides).

This module is data (it imports the block modules for their ``run`` functions only); it reads no
files.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Callable, Mapping

from . import (compressor, exchanger, expander, filter, heater, inject, mixer, pipe, separator,
               splitter, throttle)


@dataclass(frozen=True)
class Parameter:
    """A numeric parameter: its quantity kind (:mod:`letdown.quantities`; ``mass_rate`` is a mass
    flow kept in kg/s) and the sentence that documents it in the file format."""

    quantity: str
    description: str


@dataclass(frozen=True)
class BlockKind:
    """One kind of block (see the module docstring)."""

    name: str
    run: Callable
    ports: str
    description: str
    parameters: Mapping[str, Parameter]
    alternatives: tuple = ()
    required: tuple = ()
    options: Mapping[str, dict] = field(default_factory=dict)
    measurable: Mapping[str, str] = field(default_factory=dict)
    numbers: tuple = ("dP",)
    #: The kind's own rule for the water and inhibitor beside the gas, where it does not keep the
    #: default flow-weighted blend (:func:`letdown.equipment.common.carry`).
    carry: Callable | None = None


#: Port layouts and the file entries that name the streams (JSON Schema fragments).
PORT_SCHEMAS: dict = {
    'one': {
        'from': {'$ref': '#/$defs/name', 'description': 'Stream name.'},
        'to': {'$ref': '#/$defs/name', 'description': 'Stream name.'},
    },
    'separator': {
        'from': {'$ref': '#/$defs/name', 'description': 'Stream name.'},
        'to': {
            'type': 'object',
            'properties': {
                'vapour': {'$ref': '#/$defs/name', 'description': 'Stream name.'},
                'liquid': {'$ref': '#/$defs/name', 'description': 'Stream name.'},
                'water': {'$ref': '#/$defs/name', 'description': 'Stream name.'},
            },
            'required': ['vapour', 'liquid'],
            'additionalProperties': False,
            'description': 'Outlet streams by phase: {vapour: .., liquid: .., water: ..}.',
        },
    },
    'mixer': {
        'from': {
            'type': 'array',
            'items': {'$ref': '#/$defs/name', 'description': 'Stream name.'},
            'minItems': 2,
            'description': 'Inlet streams.',
        },
        'to': {'$ref': '#/$defs/name', 'description': 'Stream name.'},
    },
    'splitter': {
        'from': {'$ref': '#/$defs/name', 'description': 'Stream name.'},
        'to': {
            'type': 'object',
            'minProperties': 2,
            'propertyNames': {'$ref': '#/$defs/name'},
            'additionalProperties': {
                'anyOf': [
                    {'const': 'rest'},
                    {
                        'type': ['string', 'number'],
                        'description': (
                            "Fraction of the inlet. A plain number 0..1 or a percentage '78 %'."
                        ),
                        'x-letdown-quantity': 'fraction',
                    },
                ],
            },
            'description': "{outlet stream: fraction or 'rest'}",
        },
    },
    'exchanger': {
        'hot': {'$ref': '#/$defs/side', 'description': 'Hot side: {from: .., to: ..}.'},
        'cold': {'$ref': '#/$defs/side', 'description': 'Cold side: {from: .., to: ..}.'},
    },
}
PORT_LAYOUTS = tuple(PORT_SCHEMAS)

#: Every kind, in the order the file format lists them.
REGISTRY: Mapping[str, BlockKind] = MappingProxyType({
    "throttle": BlockKind(
        name="throttle", run=throttle.run, ports="one",
        description='Isenthalpic valve (pressure let-down). Give exactly one of P_out or dP.',
        parameters={
            "P_out": Parameter("pressure", (
                "Outlet pressure (must be below the inlet's). Pressure with its unit; gauge "
                "'barg'/'psig' relative to the stated atmosphere, 'bar'/'bara'/'psia'/'kPa'/'MPa' "
                'absolute.'
            )),
            "dP": Parameter("pressure_difference", (
                "Pressure drop. Pressure drop: '0.3 bar', '5 psi', '30 kPa' (>= 0)."
            )),
        },
        alternatives=(('P_out', 'dP'),),
        options={
            'valve': {
                'type': 'object',
                'description': (
                    'Optional rating of the throttle as a control valve or regulator (IEC '
                    '60534-2-1 sizing for gas, IEC 60534-8-3 noise). It adds numbers to the '
                    "throttle's result (required Kv and Cv, opening, choking, velocities, noise) "
                    "and never changes the flowsheet's streams. Give exactly one of Kv or Cv."
                ),
                'properties': {
                    'Kv': {
                        'type': 'number',
                        'description': (
                            'Rated flow coefficient at full travel [m3/h of water at 1 bar] (> 0).'
                        ),
                        'exclusiveMinimum': 0,
                    },
                    'Cv': {
                        'type': 'number',
                        'description': (
                            'Rated flow coefficient at full travel [US gal/min of water at 1 psi] '
                            '(> 0).'
                        ),
                        'exclusiveMinimum': 0,
                    },
                    'xT': {
                        'type': 'number',
                        'description': (
                            'Pressure differential ratio factor at choked flow, without attached '
                            "fittings, from the valve's data sheet [-], in (0, 1]. Required."
                        ),
                        'exclusiveMinimum': 0,
                        'maximum': 1,
                    },
                    'FL': {
                        'type': 'number',
                        'description': (
                            'Liquid pressure recovery factor without fittings [-], in (0, 1]; '
                            'required with outlet_pipe (noise).'
                        ),
                        'exclusiveMinimum': 0,
                        'maximum': 1,
                    },
                    'Fd': {
                        'type': 'number',
                        'description': (
                            'Valve style modifier [-], in (0, 1]; required with outlet_pipe '
                            '(noise).'
                        ),
                        'exclusiveMinimum': 0,
                        'maximum': 1,
                    },
                    'An': {
                        'type': 'number',
                        'description': (
                            'Valve correction factor of acoustic efficiency (IEC 60534-8-3) [-], '
                            "negative; -3.8 when absent (the standard's worked examples, from "
                            'memory).'
                        ),
                    },
                    'size': {
                        'type': ['string', 'number'],
                        'description': (
                            "The valve's size (bore at its ends), required with either pipe. "
                            "Length with its unit: '154 mm', '0.154 m', '6 in'."
                        ),
                        'x-letdown-quantity': 'length',
                    },
                    'inlet_pipe': {
                        'type': ['string', 'number'],
                        'description': (
                            'Inner diameter of the inlet pipe (>= size): inlet reducer and inlet '
                            "velocity. Length with its unit: '154 mm', '0.154 m', '6 in'."
                        ),
                        'x-letdown-quantity': 'length',
                    },
                    'outlet_pipe': {
                        'type': ['string', 'number'],
                        'description': (
                            'Inner diameter of the outlet pipe (>= size): outlet expander, outlet '
                            "velocity and Mach number, noise. Length with its unit: '154 mm', "
                            "'0.154 m', '6 in'."
                        ),
                        'x-letdown-quantity': 'length',
                    },
                    'wall_thickness': {
                        'type': ['string', 'number'],
                        'description': (
                            'Wall thickness of the outlet pipe (steel), required with outlet_pipe '
                            "(noise). Length with its unit: '154 mm', '0.154 m', '6 in'."
                        ),
                        'x-letdown-quantity': 'length',
                    },
                    'characteristic': {
                        'enum': ['linear', 'equal-percentage'],
                        'description': (
                            'Inherent flow characteristic (IEC 60534-2-4), for the opening. '
                            'Required.'
                        ),
                    },
                    'rangeability': {
                        'type': 'number',
                        'description': (
                            'Ratio of the largest to the smallest controllable flow coefficient '
                            '[-] (> 1); required for equal-percentage.'
                        ),
                        'exclusiveMinimum': 1,
                    },
                },
                'required': ['xT', 'characteristic'],
                'additionalProperties': False,
            },
            'protection': {
                'type': 'object',
                'additionalProperties': False,
                'required': ['set_pressure'],
                'description': (
                    'The downstream protection (monitor regulator, slam-shut or relief device) of '
                    'a rated throttle: the result reports the flow through the valve failed wide '
                    'open (its rated Kv) from the inlet into this pressure, the load the '
                    'protection must take. Needs valve.'
                ),
                'properties': {
                    'set_pressure': {
                        'type': ['string', 'number'],
                        'x-letdown-quantity': 'pressure',
                        'description': (
                            "Pressure at which the protection acts (above the throttle's outlet "
                            "pressure). Pressure with its unit: '19 barg'."
                        ),
                    },
                },
            },
        },
    ),
    "heater": BlockKind(
        name="heater", run=heater.run_heater, ports="one",
        description=(
            'Heats one stream. Give exactly one of T_out, duty or fuel (fuel needs efficiency); dP'
            ' optional (default 0).'
        ),
        parameters={
            "T_out": Parameter("temperature", (
                "Outlet temperature. Absolute temperature with its unit: '6 degC', '281.15 K', '43"
                " degF'."
            )),
            "duty": Parameter("power", (
                "Heat added to the stream. Power or duty: '500 kW', '1.2 MW', '800 hp' (>= 0)."
            )),
            "fuel": Parameter("power", (
                'Heat of the fuel burnt (fuel gas flow times its calorific value); needs '
                "efficiency; the duty is efficiency times fuel. Power or duty: '500 kW', '1.2 MW',"
                " '800 hp' (>= 0)."
            )),
            "efficiency": Parameter("fraction", (
                'Thermal efficiency: heat into the gas over heat of the fuel burnt; with it the '
                "heater reports its fuel. A plain number 0..1 or a percentage '78 %'."
            )),
            "dP": Parameter("pressure_difference", (
                "Pressure drop. Pressure drop: '0.3 bar', '5 psi', '30 kPa' (>= 0)."
            )),
        },
        alternatives=(('T_out', 'duty', 'fuel'),),
        measurable={'duty': 'power', 'fuel': 'power'},
        numbers=('duty', 'dP'),
    ),
    "cooler": BlockKind(
        name="cooler", run=heater.run_cooler, ports="one",
        description='Cools one stream. Give exactly one of T_out or duty; dP optional (default 0).',
        parameters={
            "T_out": Parameter("temperature", (
                "Outlet temperature. Absolute temperature with its unit: '6 degC', '281.15 K', '43"
                " degF'."
            )),
            "duty": Parameter("power", (
                "Heat removed from the stream. Power or duty: '500 kW', '1.2 MW', '800 hp' (>= 0)."
            )),
            "dP": Parameter("pressure_difference", (
                "Pressure drop. Pressure drop: '0.3 bar', '5 psi', '30 kPa' (>= 0)."
            )),
        },
        alternatives=(('T_out', 'duty'),),
        measurable={'duty': 'power'},
        numbers=('duty', 'dP'),
    ),
    "separator": BlockKind(
        name="separator", run=separator.run, carry=separator.carry, ports="separator",
        description=(
            'Splits one stream by phase at its own T and P (after the optional dP). Outlets: '
            'vapour and liquid required; water optional: the free water (the water the gas carries'
            " beyond what the vapour and the hydrocarbon liquid hold at the drum's T and P), or "
            'the aqueous phase of a three-phase drum when water is a component; without it that '
            'water leaves with the liquid.'
        ),
        parameters={
            "dP": Parameter("pressure_difference", (
                "Pressure drop. Pressure drop: '0.3 bar', '5 psi', '30 kPa' (>= 0)."
            )),
        },
    ),
    "compressor": BlockKind(
        name="compressor", run=compressor.run, ports="one",
        description='Compresses one stream to P_out with an isentropic or polytropic efficiency.',
        parameters={
            "P_out": Parameter("pressure", (
                "Discharge pressure. Pressure with its unit; gauge 'barg'/'psig' relative to the "
                "stated atmosphere, 'bar'/'bara'/'psia'/'kPa'/'MPa' absolute."
            )),
            "efficiency": Parameter("fraction", (
                "Efficiency. A plain number 0..1 or a percentage '78 %'."
            )),
        },
        required=('P_out', 'efficiency'),
        options={
            'efficiency_kind': {
                'enum': ['isentropic', 'polytropic'],
                'default': 'isentropic',
                'description': "Which efficiency 'efficiency' is.",
            },
        },
        measurable={'power': 'power'},
        numbers=('power', 'dP'),
    ),
    "expander": BlockKind(
        name="expander", run=expander.run, ports="one",
        description=(
            'Expands one stream to P_out with an isentropic efficiency; reports the power '
            'recovered.'
        ),
        parameters={
            "P_out": Parameter("pressure", (
                "Outlet pressure. Pressure with its unit; gauge 'barg'/'psig' relative to the "
                "stated atmosphere, 'bar'/'bara'/'psia'/'kPa'/'MPa' absolute."
            )),
            "efficiency": Parameter("fraction", (
                "Isentropic efficiency. A plain number 0..1 or a percentage '78 %'."
            )),
        },
        required=('P_out', 'efficiency'),
        measurable={'power': 'power'},
        numbers=('power', 'dP'),
    ),
    "mixer": BlockKind(
        name="mixer", run=mixer.run, carry=mixer.carry, ports="mixer",
        description=(
            'Mixes two or more streams adiabatically; outlet pressure = lowest inlet unless P_out '
            'is given.'
        ),
        parameters={
            "P_out": Parameter("pressure", (
                "Outlet pressure (optional). Pressure with its unit; gauge 'barg'/'psig' relative "
                "to the stated atmosphere, 'bar'/'bara'/'psia'/'kPa'/'MPa' absolute."
            )),
        },
    ),
    "splitter": BlockKind(
        name="splitter", run=splitter.run, ports="splitter",
        description=(
            "Divides one stream into several of the same state. 'to' maps each outlet stream to "
            "its fraction of the inlet (0..1), and at most one outlet may say 'rest'."
        ),
        parameters={
        },
    ),
    "exchanger": BlockKind(
        name="exchanger", run=exchanger.run, carry=exchanger.carry, ports="exchanger",
        description=(
            'Two-stream heat exchanger (counter-current). Give exactly one of hot_T_out, '
            'cold_T_out, duty, min_approach or UA; hot_dP and cold_dP optional (default 0).'
        ),
        parameters={
            "hot_T_out": Parameter("temperature", (
                "Hot-side outlet temperature. Absolute temperature with its unit: '6 degC', "
                "'281.15 K', '43 degF'."
            )),
            "cold_T_out": Parameter("temperature", (
                "Cold-side outlet temperature. Absolute temperature with its unit: '6 degC', "
                "'281.15 K', '43 degF'."
            )),
            "duty": Parameter("power", (
                "Heat passed from the hot to the cold side. Power or duty: '500 kW', '1.2 MW', "
                "'800 hp' (>= 0)."
            )),
            "min_approach": Parameter("temperature_difference", (
                'Smallest hot-minus-cold temperature difference anywhere inside. Temperature '
                "difference: '3 K', '3 delta_degC', '5 delta_degF' (not degC)."
            )),
            "UA": Parameter("ua", "Overall conductance U times area: '25 kW/K'."),
            "hot_dP": Parameter("pressure_difference", (
                "Hot-side pressure drop. Pressure drop: '0.3 bar', '5 psi', '30 kPa' (>= 0)."
            )),
            "cold_dP": Parameter("pressure_difference", (
                "Cold-side pressure drop. Pressure drop: '0.3 bar', '5 psi', '30 kPa' (>= 0)."
            )),
        },
        alternatives=(('hot_T_out', 'cold_T_out', 'duty', 'min_approach', 'UA'),),
        measurable={'duty': 'power'},
        numbers=('duty',),
    ),
    "inject": BlockKind(
        name="inject", run=inject.run, carry=inject.carry, ports="one",
        description=(
            'Hydrate inhibitor (methanol or MEG) added to a stream; the gas passes unchanged, the '
            'inhibitor is carried beside it like the water. Give exactly one of rate or '
            'depression; sized_by and losses say how a depression becomes a rate.'
        ),
        parameters={
            "rate": Parameter("mass_rate", (
                "Mass flow of pure inhibitor: '25 kg/h', '0.5 t/d', '40 lb/h' (>= 0)."
            )),
            "depression": Parameter("temperature_difference", (
                'Hydrate temperature depression to reach at the coldest stream downstream; the '
                'inhibitor wanted in the aqueous phase follows from the rule named by sized_by. '
                "Temperature difference: '8 K', '8 delta_degC' (0 to 40 K)."
            )),
        },
        alternatives=(('rate', 'depression'),),
        required=('inhibitor',),
        options={
            'inhibitor': {
                'type': 'string',
                'description': 'methanol or MEG (monoethylene glycol).',
            },
            'sized_by': {
                'type': 'string',
                'default': 'hammerschmidt',
                'description': (
                    'With depression: the rule that turns it into the inhibitor wanted in the '
                    'aqueous phase: hammerschmidt, nielsen-bucklin, or hydrate-model (the van der '
                    'Waals-Platteeuw hydrate temperature with the inhibited water activity, at the'
                    " coldest stream's pressure and composition)."
                ),
            },
            'losses': {
                'type': 'string',
                'default': 'equilibrium',
                'description': (
                    'equilibrium: add the inhibitor that stays in the vapour and dissolves in a '
                    'hydrocarbon liquid at the coldest stream downstream (three-phase flash for '
                    "methanol, Raoult's law for MEG); none: the aqueous phase only, all the "
                    "inlet's water taken as free water."
                ),
            },
        },
    ),
    "pipe": BlockKind(
        name="pipe", run=pipe.run, ports="one",
        description=(
            'A length of line: friction (Colebrook-White), elevation and heat exchange with its '
            'surroundings, solved in steps with a real-gas momentum and energy balance. Reports '
            'dP_Pa, duty_W (heat gained), velocities, Reynolds number, friction factor; the '
            "temperature profile with 'solve --profile'."
        ),
        parameters={
            "length": Parameter("length", (
                "Length of the line. Length: '12 km', '0.3 m', '300 mm', '12 in' (> 0)."
            )),
            "diameter": Parameter("length", (
                "Inner diameter. Length: '0.3 m', '300 mm', '12 in' (> 0)."
            )),
            "roughness": Parameter("length", (
                'Absolute roughness of the inner wall; 0.045 mm (commercial steel) when absent. '
                "Length: '0.045 mm'."
            )),
            "elevation_change": Parameter("length", (
                'Height of the outlet above the inlet (negative: downhill); 0 when absent. Length:'
                " '25 m', '-80 ft'."
            )),
        },
        required=('length', 'diameter'),
        options={
            'steps': {
                'type': 'integer',
                'minimum': 1,
                'maximum': 2000,
                'description': 'Number of equal steps along the line (default 20).',
            },
            'surroundings': {
                'type': 'object',
                'description': (
                    'How the line exchanges heat (none when absent): {buried: {depth, '
                    'soil_conductivity, ground_T}}, {air: {T, U}} or {U: ..., T: ...}; U is an '
                    'overall coefficient on the inner surface.'
                ),
                'properties': {
                    'buried': {
                        'type': 'object',
                        'additionalProperties': False,
                        'required': ['depth', 'soil_conductivity', 'ground_T'],
                        'properties': {
                            'depth': {
                                'type': ['string', 'number'],
                                'description': (
                                    "Depth of the pipe's centre line below ground (> diameter/2). "
                                    "Length: '1.2 m'."
                                ),
                                'x-letdown-quantity': 'length',
                            },
                            'soil_conductivity': {
                                'type': ['string', 'number'],
                                'description': (
                                    "Thermal conductivity of the soil. '1.5 W/(m*K)', '0.9 "
                                    "Btu/(h*ft*degF)'."
                                ),
                                'x-letdown-quantity': 'thermal_conductivity',
                            },
                            'ground_T': {
                                'type': ['string', 'number'],
                                'description': (
                                    'Temperature of the ground surface (undisturbed). Absolute '
                                    "temperature with its unit: '6 degC'."
                                ),
                                'x-letdown-quantity': 'temperature',
                            },
                        },
                    },
                    'air': {
                        'type': 'object',
                        'additionalProperties': False,
                        'required': ['T', 'U'],
                        'properties': {
                            'T': {
                                'type': ['string', 'number'],
                                'description': (
                                    "Air temperature. Absolute temperature with its unit: '-5 "
                                    "degC'."
                                ),
                                'x-letdown-quantity': 'temperature',
                            },
                            'U': {
                                'type': ['string', 'number'],
                                'description': (
                                    "Overall heat transfer coefficient on the inner surface. '5 "
                                    "W/(m2*K)', '1 Btu/(h*ft2*degF)'."
                                ),
                                'x-letdown-quantity': 'heat_transfer_coefficient',
                            },
                        },
                    },
                    'U': {
                        'type': ['string', 'number'],
                        'description': (
                            "Overall heat transfer coefficient on the inner surface. '5 W/(m2*K)'."
                        ),
                        'x-letdown-quantity': 'heat_transfer_coefficient',
                    },
                    'T': {
                        'type': ['string', 'number'],
                        'description': (
                            'Temperature of the surroundings. Absolute temperature with its unit.'
                        ),
                        'x-letdown-quantity': 'temperature',
                    },
                },
                'additionalProperties': False,
            },
        },
    ),
    "filter": BlockKind(
        name="filter", run=filter.run, ports="one",
        description=(
            "A dry-gas filter or strainer: a fixed pressure drop at constant enthalpy; liquid "
            "passes with the gas (a filter-separator that drains it is a separator with dP)."
        ),
        parameters={
            "dP": Parameter("pressure_difference", (
                "Pressure drop across the filter. Pressure drop: '0.3 bar', '5 psi', '30 kPa' "
                "(>= 0)."
            )),
        },
        required=("dP",),
    ),
})


def ports(kind: str, raw: Mapping) -> tuple[dict, dict]:
    """(inlets, outlets): port name -> stream name, from a block's file entries.

    >>> ports("mixer", {"from": ["a", "b"], "to": "c"})
    ({'in0': 'a', 'in1': 'b'}, {'out': 'c'})
    >>> ports("exchanger", {"hot": {"from": "h1", "to": "h2"}, "cold": {"from": "c1", "to": "c2"}})
    ({'hot': 'h1', 'cold': 'c1'}, {'hot': 'h2', 'cold': 'c2'})
    """
    layout = REGISTRY[kind].ports
    if layout == "exchanger":
        return ({"hot": raw["hot"]["from"], "cold": raw["cold"]["from"]},
                {"hot": raw["hot"]["to"], "cold": raw["cold"]["to"]})
    if layout == "mixer":
        return {f"in{i}": s for i, s in enumerate(raw["from"])}, {"out": raw["to"]}
    if layout == "separator":
        return {"in": raw["from"]}, dict(raw["to"])
    if layout == "splitter":
        return {"in": raw["from"]}, {s: s for s in raw["to"]}
    return {"in": raw["from"]}, {"out": raw["to"]}


def port_paths(kind: str, raw: Mapping) -> dict:
    """Where each port is written in a block's entries: ``in:PORT`` / ``out:PORT`` -> key path.

    >>> port_paths("throttle", {"from": "a", "to": "b"})
    {'in:in': ('from',), 'out:out': ('to',)}
    """
    layout = REGISTRY[kind].ports
    if layout == "exchanger":
        out = {}
        for side in ("hot", "cold"):
            out[f"in:{side}"] = (side, "from")
            out[f"out:{side}"] = (side, "to")
        return out
    if layout == "mixer":
        out = {f"in:in{i}": ("from", i) for i in range(len(raw["from"]))}
        out["out:out"] = ("to",)
        return out
    out = {"in:in": ("from",)}
    if layout in ("separator", "splitter"):
        out.update({f"out:{port}": ("to", port) for port in raw["to"]})
    else:
        out["out:out"] = ("to",)
    return out
