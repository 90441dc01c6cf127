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

from .common import BlockOutcome, carry, closures
from .registry import REGISTRY, BlockKind, Parameter
from .stream import Carry, StreamBatch, flash_stream

#: Block kind -> its ``run`` function (from :data:`letdown.equipment.registry.REGISTRY`).
KINDS = {name: kind.run for name, kind in REGISTRY.items()}

#: Block kind -> its carry rule (the water and inhibitor beside the gas; see
#: :func:`letdown.equipment.common.carry`), for the kinds that do not keep the default (declared
#: with the kind, :data:`letdown.equipment.registry.REGISTRY`).
CARRY_RULES = {name: kind.carry for name, kind in REGISTRY.items() if kind.carry is not None}


def carry_rule(kind: str):
    """The carry rule of a block kind: its own, or the default (:func:`common.carry`)."""
    return CARRY_RULES.get(kind, carry)


__all__ = ["CARRY_RULES", "KINDS", "REGISTRY", "BlockKind", "BlockOutcome", "Carry", "Parameter",
           "StreamBatch", "carry_rule", "closures", "flash_stream"]
