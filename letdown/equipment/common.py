"""What every unit block shares: its outcome type, parameter reading, and balance closure.

Sign conventions (all blocks)
-----------------------------
* ``duty`` [W] is the heat a heater adds, the heat a cooler removes, the heat an exchanger passes from
  its hot to its cold stream: positive in the block's normal direction.
* ``power`` [W] is the shaft power a compressor absorbs or an expander recovers: positive in the
  block's normal direction.
* ``energy_in`` [W] is the net heat plus work that enters the process streams through the block
  (heater ``+duty``, cooler ``-duty``, compressor ``+power``, expander ``-power``, others 0). The energy
  balance is ``sum(flow_in * h_in) + energy_in = sum(flow_out * h_out)``.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Mapping

import numpy as np

from ..errors import InputError
from ..fluid.components import R
from .stream import StreamBatch

#: Flows below this [mol/s] count as an empty stream (no division by them). Far below any real
#: process flow; common practice for guarding divisions.
TINY_FLOW = 1e-300


@dataclass(frozen=True)
class BlockOutcome:
    """What a block returns for a batch of ``n`` cases.

    Attributes
    ----------
    outlets : Mapping[str, StreamBatch]
        Port name -> outlet stream.
    energy_in : ndarray (n,)
        Net heat plus work entering the streams [W] (see the module's sign conventions).
    duty : ndarray (n,) or None
        Heat duty [W], for heaters, coolers and exchangers.
    power : ndarray (n,) or None
        Shaft power [W], for compressors and expanders.
    dP : ndarray (n,) or None
        Pressure drop inlet - outlet [Pa] (single-path blocks).
    mole_closure, energy_closure : ndarray (n,)
        Relative closure of the block's mole and energy balance [-] (see :func:`closures`).
    details : Mapping[str, ndarray]
        Further numbers, keyed with their unit (``discharge_T_K``, ``UA_W_K``, ...).
    flags : Mapping[str, ndarray of bool]
        Per-case conditions the solver turns into warnings (``two_phase_outlet``, ...).
    """

    outlets: Mapping[str, StreamBatch]
    energy_in: np.ndarray
    duty: np.ndarray | None = None
    power: np.ndarray | None = None
    dP: np.ndarray | None = None
    mole_closure: np.ndarray | None = None
    energy_closure: np.ndarray | None = None
    details: Mapping[str, np.ndarray] = field(default_factory=dict)
    flags: Mapping[str, np.ndarray] = field(default_factory=dict)


def finish(inlets: Mapping[str, StreamBatch], outlets: Mapping[str, StreamBatch], energy_in,
           **kwargs) -> BlockOutcome:
    """Build a :class:`BlockOutcome`, computing its balance closures from the streams."""
    n = next(iter(inlets.values())).n_cases
    energy_in = np.broadcast_to(np.asarray(energy_in, dtype=float), (n,)).copy()
    mole, energy = closures(inlets.values(), outlets.values(), energy_in)
    return BlockOutcome(outlets=dict(outlets), energy_in=energy_in, mole_closure=mole,
                        energy_closure=energy, **kwargs)


def closures(inlets, outlets, energy_in) -> tuple[np.ndarray, np.ndarray]:
    """Relative mole and energy balance closure of a block, per case.

    Mole: ``max_i |sum_in F z_i - sum_out F z_i| / sum_in F``.
    Energy: ``|sum_in F h + energy_in - sum_out F h| / scale`` with
    ``scale = sum_in F (|h| + R T) + |energy_in|``. The ``R T`` term keeps the scale away from zero
    where enthalpies pass through their reference (ideal gas at 298.15 K) -- our choice, stated here.

    Parameters
    ----------
    inlets, outlets : iterable of StreamBatch
    energy_in : ndarray (n,)
        Net heat plus work entering the streams [W].

    Returns
    -------
    mole, energy : ndarray (n,)
        Relative closures [-] (0 for a case with no flow and no energy).
    """
    inlets = list(inlets)
    outlets = list(outlets)
    comp_in = sum(s.component_flows for s in inlets)
    comp_out = sum(s.component_flows for s in outlets)
    flow_in = sum(s.flow for s in inlets)
    mole = np.max(np.abs(comp_in - comp_out), axis=1) / np.maximum(flow_in, TINY_FLOW)
    e_in = sum(s.enthalpy_flow for s in inlets) + energy_in
    e_out = sum(s.enthalpy_flow for s in outlets)
    scale = sum(s.flow * (np.abs(s.h) + R * s.T) for s in inlets) + np.abs(energy_in)
    energy = np.abs(e_in - e_out) / np.maximum(scale, TINY_FLOW)
    return mole, energy


# -- parameters -------------------------------------------------------------------------------------
def field_name(block: str, key: str) -> str:
    """Dotted field path of a block parameter, as the loader names it."""
    return f"equipment.{block}.{key}"


def array_param(params: Mapping, key: str, n: int, block: str, default=None) -> np.ndarray | None:
    """A numeric parameter broadcast over the ``n`` cases, or ``default`` when absent.

    Raises
    ------
    InputError
        If the value is not a number or an array of ``n`` numbers.
    """
    value = params.get(key)
    if value is None:
        if default is None:
            return None
        value = default
    try:
        out = np.broadcast_to(np.asarray(value, dtype=float), (n,)).copy()
    except (TypeError, ValueError) as exc:
        raise InputError(f"expected a number (or {n} numbers), got {value!r}",
                         field=field_name(block, key)) from exc
    return out


def one_of(params: Mapping, keys: tuple[str, ...], block: str) -> str:
    """The one specification among ``keys`` that ``params`` gives.

    Raises
    ------
    InputError
        If none or more than one is given.
    """
    given = [k for k in keys if params.get(k) is not None]
    if len(given) != 1:
        what = "none" if not given else ", ".join(given)
        raise InputError(f"give exactly one of {', '.join(keys)} (given: {what})",
                         field=field_name(block, given[1] if len(given) > 1 else keys[0]))
    return given[0]


def outlet_pressure(params: Mapping, inlet: StreamBatch, block: str, *, required: bool) -> np.ndarray:
    """Outlet pressure from ``P_out`` or ``dP`` [Pa].

    With ``required=False`` a block given neither keeps its inlet pressure.

    Raises
    ------
    InputError
        If both are given, neither is given where one is required, or the outlet pressure is not
        positive.
    """
    n = inlet.n_cases
    if params.get("P_out") is not None and params.get("dP") is not None:
        raise InputError("give P_out or dP, not both", field=field_name(block, "dP"))
    if params.get("P_out") is not None:
        P_out, key = array_param(params, "P_out", n, block), "P_out"
    elif params.get("dP") is not None:
        P_out, key = inlet.P - array_param(params, "dP", n, block), "dP"
    elif required:
        raise InputError("give P_out or dP", field=field_name(block, "P_out"))
    else:
        return inlet.P.copy()
    bad = ~(P_out > 0.0)
    if np.any(bad):
        i = int(np.flatnonzero(bad)[0])
        raise InputError(f"outlet pressure {P_out[i]:.6g} Pa is not positive"
                         + case_text(i, n), field=field_name(block, key))
    return P_out


def check_fraction(values: np.ndarray, key: str, block: str, *, low_open=True) -> None:
    """Raise InputError unless every value lies in (0, 1] (or [0, 1] with ``low_open=False``)."""
    bad = ~((values > 0.0) & (values <= 1.0)) if low_open else ~((values >= 0.0) & (values <= 1.0))
    if np.any(bad):
        i = int(np.flatnonzero(bad)[0])
        interval = "(0, 1]" if low_open else "[0, 1]"
        raise InputError(f"{values[i]:.6g} is outside {interval}" + case_text(i, len(values)),
                         field=field_name(block, key))


def case_text(i: int, n: int) -> str:
    """`` (case i)`` for batches of more than one case, else nothing."""
    return f" (case {i})" if n > 1 else ""
