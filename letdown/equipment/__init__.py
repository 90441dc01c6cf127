"""Unit blocks: each kind turns a batch of inlet streams into outlet streams plus its duty or power.

Every block is a function ``run(fluid, name, inlets, params) -> BlockOutcome``:

* ``fluid`` -- the flowsheet's shared :class:`letdown.fluid.Fluid`;
* ``name`` -- the block's name, used in error messages (``equipment.<name>.<field>``);
* ``inlets`` -- port name -> :class:`StreamBatch` (``in``; a mixer's ``in0``, ``in1``, ...; an
  exchanger's ``hot`` and ``cold``), all of the same ``n`` cases;
* ``params`` -- SI parameters, each a number or an array over the cases.

Blocks know nothing of files or graphs; the sheet layer adds the file and line to their
:class:`letdown.errors.InputError`. Sign conventions are in :mod:`letdown.equipment.common`.
"""
from __future__ import annotations

from . import (compressor, exchanger, expander, heater, inject, mixer, separator, splitter,
               throttle)
from .common import BlockOutcome, carry, closures
from .stream import Carry, StreamBatch, flash_stream

#: Block kind -> its ``run`` function.
KINDS = {
    "throttle": throttle.run,
    "heater": heater.run_heater,
    "cooler": heater.run_cooler,
    "separator": separator.run,
    "compressor": compressor.run,
    "expander": expander.run,
    "mixer": mixer.run,
    "splitter": splitter.run,
    "exchanger": exchanger.run,
    "inject": inject.run,
}

#: Block kind -> its carry rule (the water and inhibitor beside the gas; see
#: :func:`letdown.equipment.common.carry`), for the kinds that do not keep the default.
CARRY_RULES = {
    "separator": separator.carry,
    "mixer": mixer.carry,
    "exchanger": exchanger.carry,
    "inject": inject.carry,
}


def carry_rule(kind: str):
    """The carry rule of a block kind: its own, or the default (:func:`common.carry`)."""
    return CARRY_RULES.get(kind, carry)


__all__ = ["CARRY_RULES", "carry_rule", "KINDS", "BlockOutcome", "Carry", "StreamBatch", "closures", "flash_stream"]
