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

Guards (a number is right, warned or refused)
---------------------------------------------
A block refuses (:class:`letdown.errors.InputError` with ``cases=``, the field named) what its
parameters ask for explicitly against its physics -- a heater given an outlet colder than its inlet,
an exchanger given a cold outlet hotter than its hot inlet -- and flags (a warning in the flowsheet
result) what the flowsheet drives it to. Two reserved entries of ``params``, set by the solver and
never by a file, decide which applies:

* ``params[BY_GOAL]``: the parameters a goal is varying (a tuple of names). A goal may pass through
  a cooling heater on its way and may even end there: that is flagged, not refused.
* ``params[TRIAL]``: True while a loop iterates or a goal searches. Those passes are not the answer,
  and an iterate may break a rule the converged flowsheet keeps, so nothing is refused in them
  (:func:`refuse` returns); the final pass refuses.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Mapping

import numpy as np

from ..errors import InputError
from ..fluid.components import COMPONENTS, R
from .stream import StreamBatch, blend

#: Flows below this [mol/s] count as an empty stream (no division by them). Far below any real
#: process flow; common practice for guarding divisions.
TINY_FLOW = 1e-300

#: Reserved ``params`` entry: the names of the parameters a goal varies (see the module docstring).
BY_GOAL = "_by_goal"
#: Reserved ``params`` entry: True in a trial pass of a loop or goal (see the module docstring).
TRIAL = "_trial"
#: Reserved ``params`` entry: the sheet's water-content method (``gas.water_method``), with which a
#: separator splits the water its inlet carries (:mod:`letdown.equipment.watersplit`).
WATER_METHOD = "_water_method"
#: Reserved ``params`` entry: whether a separator splits the inhibitor its inlet carries by the
#: three-phase equilibrium (any ``inject`` block of the sheet on ``losses: equilibrium``) or sends
#: it all with the free water (:func:`letdown.equipment.watersplit.split_inhibitor`).
INHIBITOR_EQUILIBRIUM = "_inhibitor_equilibrium"
#: Reserved ``params`` entry of an ``inject`` block: the dose rate over the cases [kg/s] the
#: solver found for it at its protected point downstream (:mod:`letdown.equipment.inject`).
DOSE_RATE = "_dose_rate"
#: A vapour fraction strictly between these bounds counts as two phases [-] (flash noise around 0
#: and 1 is not a second phase; common practice).
TWO_PHASE_BOUNDS = (1e-9, 1.0 - 1e-9)


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
           own_carry: bool = False, **kwargs) -> BlockOutcome:
    """Build a :class:`BlockOutcome`, computing its balance closures from the streams.

    The water the inlets carry beside the gas (:class:`letdown.equipment.stream.Carry`) goes to
    every outlet as the flow-weighted blend of the inlets' (:func:`letdown.equipment.stream.
    blend`, weighted by the inlets' molar flows): a one-inlet block keeps it, free water is not
    carried on. This is the rule of every block kind that does not move the water itself; one
    that does (an exchanger keeps each side's own, a separator splits, a mixer blends by dry flow,
    an ``inject`` block adds its dose) attaches its outlets' carries and passes
    ``own_carry=True``.
    """
    n = next(iter(inlets.values())).n_cases
    if not own_carry and all(s.carry is not None for s in inlets.values()):
        outlets, _ = carry(None, "", inlets, outlets, {})
    energy_in = np.broadcast_to(np.asarray(energy_in, dtype=float), (n,)).copy()
    mole, energy = closures(inlets.values(), outlets.values(), energy_in)
    return BlockOutcome(outlets=dict(outlets), energy_in=energy_in, mole_closure=mole,
                        energy_closure=energy, **kwargs)


def carry(fluid, name: str, inlets: Mapping[str, StreamBatch], outlets: Mapping[str, StreamBatch],
          params: Mapping) -> tuple[dict, dict]:
    """The default carry rule (:func:`finish`): every outlet takes the flow-weighted blend of the
    inlets' water and inhibitor (:func:`letdown.equipment.stream.blend`), nothing free.

    Every kind has a rule of this signature (``KINDS_CARRY`` in :mod:`letdown.equipment`): its
    ``run`` applies it, and the solver applies it alone, to the outlets a pass has already
    solved, while a loop whose gas has settled settles its water and inhibitor.

    Returns
    -------
    outlets : dict
        Port -> the outlet carrying its water and inhibitor.
    details : dict
        Numbers of the carry for the block's details (none here).
    """
    mixed = blend([i.flow for i in inlets.values()], [i.carry for i in inlets.values()])
    return {port: s.with_carry(mixed) for port, s in outlets.items()}, {}


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


def by_goal(params: Mapping, key: str) -> bool:
    """Whether a goal varies parameter ``key`` of this block (see the module docstring)."""
    return key in (params.get(BY_GOAL) or ())


def refuse(params: Mapping, bad: np.ndarray, message, block: str, key: str) -> None:
    """Raise an :class:`InputError` for the cases ``bad`` (n,) unless this is a trial pass.

    Parameters
    ----------
    params : Mapping
        The block's parameters (for :data:`TRIAL`).
    bad : ndarray of bool (n,)
        The cases refused.
    message : callable
        ``message(i)`` -> the text for the first refused case ``i`` (its numbers and what to change).
    block, key : str
        The block's name and the parameter at fault (the error's field).

    Raises
    ------
    InputError
        With ``cases=bad`` and ``field`` ``equipment.<block>.<key>``, if any case is bad and this
        is not a trial pass.
    """
    refusals = Refusals(params, block)
    refusals.add(bad, message, key)
    refusals.raise_any()


class Refusals:
    """Several reasons to refuse cases of one block, raised together as one :class:`InputError`.

    The error's ``cases`` is the union of every reason's cases, so that a batch that sets the
    refused cases aside meets no second refusal of the same block; its message is the first reason
    given (with its first case) and says how many cases are refused in all.
    """

    def __init__(self, params: Mapping, block: str):
        self.trial = bool(params.get(TRIAL))
        self.block = block
        self.reasons: list = []

    def add(self, bad, message, key: str) -> None:
        """Refuse the cases ``bad`` (n,) for ``message(i)``, parameter ``key`` at fault."""
        bad = np.asarray(bad, dtype=bool)
        if np.any(bad):
            self.reasons.append((bad, message, key))

    def raise_any(self) -> None:
        """Raise the refusal if there is one and this is not a trial pass.

        Raises
        ------
        InputError
            See the class docstring.
        """
        if self.trial or not self.reasons:
            return
        bad, message, key = self.reasons[0]
        every = np.logical_or.reduce([b for b, _, _ in self.reasons])
        i = int(np.flatnonzero(bad)[0])
        n, count = every.shape[0], int(every.sum())
        where = ""
        if n > 1:
            where = f" (case {i}" + (f"; {count} of {n} cases refused" if count > 1 else "") + ")"
        raise InputError(f"{message(i)}{where}", field=field_name(self.block, key),
                         cases=every.copy())


def liquid_fractions(fluid, stream: StreamBatch) -> tuple[np.ndarray, np.ndarray]:
    """Molar and mass fractions of a stream that are liquid [-], (n,) each.

    Two phases: ``1 - beta`` and ``(1 - beta) M(xs) / M(zs)``. A single phase the flash names
    liquid-like (``beta = 0``) counts as liquid below the pseudo-critical temperature of its
    composition (:func:`pseudo_critical`) and as a dense gas above it (fraction 0), so that a rich
    gas above its cricondenbar is not called a liquid.
    """
    beta = np.asarray(stream.vapour_fraction, dtype=float)
    lo, hi = TWO_PHASE_BOUNDS
    Ms = np.asarray(fluid.molar_masses, dtype=float)
    M_all = stream.zs @ Ms
    two = (beta > lo) & (beta < hi)
    T_pc, _ = pseudo_critical(fluid, stream.zs)
    liquid_like = (beta <= lo) & (stream.T < T_pc)
    molar = np.where(two, 1.0 - beta, np.where(liquid_like, 1.0, 0.0))
    mass = np.where(two, (1.0 - beta) * (stream.xs @ Ms) / np.maximum(M_all, TINY_FLOW), molar)
    return molar, mass


def pseudo_critical(fluid, zs) -> tuple[np.ndarray, np.ndarray]:
    """Pseudo-critical temperature [K] and pressure [Pa] of compositions ``zs`` (n, nc) by Kay's
    rule, ``T_pc = sum z_i Tc_i``, ``P_pc = sum z_i Pc_i`` (Kay, Ind. Eng. Chem. 28 (1936) 1014;
    citation from memory).

    A rough marker of where a single phase stops being a liquid: above ``T_pc`` a liquid-like phase
    is a dense (supercritical) gas, not a liquid with a free surface. It is not the mixture's true
    critical point, which the phase envelope gives.
    """
    Tcs = np.array([COMPONENTS[c].Tc for c in fluid.components])
    Pcs = np.array([COMPONENTS[c].Pc for c in fluid.components])
    zs = np.atleast_2d(np.asarray(zs, dtype=float))
    return zs @ Tcs, zs @ Pcs


def case_text(i: int, n: int) -> str:
    """`` (case i)`` for batches of more than one case, else nothing."""
    return f" (case {i})" if n > 1 else ""
