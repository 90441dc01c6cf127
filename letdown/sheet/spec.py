"""The parsed flowsheet: plain, immutable data handed from the loader to the graph and the solver.

Everything here is SI (K, Pa, mol/s, W, ...). The loader (``letdown.sheet.loader``) fills it from a
YAML file and records where each field came from, so that later stages (graph validation, the solver,
goals) can raise :class:`letdown.errors.InputError` naming the file and line.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Mapping


@dataclass(frozen=True)
class Where:
    """Where a field came from: file and 1-based line (either may be unknown)."""

    file: str | None = None
    line: int | None = None


@dataclass(frozen=True)
class GasSpec:
    """The ``gas`` section: one shared fluid for the whole flowsheet.

    Attributes
    ----------
    model : str
        Model name accepted by :class:`letdown.Fluid` (``peng-robinson``, ``peng-robinson-1978``,
        ``soave-redlich-kwong``, ``gerg-2008``). Where the file names none, ``peng-robinson`` here and
        ``model_given`` False: a solve then chooses (:mod:`letdown.sheet.modelchoice`).
    composition : Mapping[str, float]
        Canonical component name -> mole fraction [-], summing to 1 (normalised by the loader when
        the file says ``normalise: true``).
    kij : Mapping[tuple[str, str], float] | str | None
        Interaction-parameter overrides (pairs of canonical names), ``"zero"``, or None for the
        library table.
    model_where : Where
        Where the model was chosen: the ``gas.model`` key, or the ``gas`` key when the file leaves
        the model to the default (a model's refusal is reported there).
    """

    model: str
    composition: Mapping[str, float]
    kij: Any = None
    water: "WaterSpec | None" = None
    water_method: str = "bukacek"
    model_given: bool = True
    model_where: Where = Where()


@dataclass(frozen=True)
class WaterSpec:
    """The water carried by the gas (``gas.water``), beside the water-free hydrocarbon flash.

    Attributes
    ----------
    kind : str
        ``mole_fraction`` (``value`` is the water mole fraction of the wet gas [-]),
        ``mg_Sm3`` (``value`` [mg per Sm3 of dry gas, 15 degC, 101.325 kPa]), ``lb_MMscf``
        (``value`` [lb per million scf of dry gas, 60 degF, 14.696 psia]), ``saturated`` (the gas is
        saturated with liquid water at ``T``, ``P``) or ``dew_point`` (its water dew point is ``T`` at
        the pressure ``P``: the same water content as ``saturated`` at that state).
    value : float
        See ``kind`` (NaN for ``saturated`` and ``dew_point``).
    T, P : float
        [K], [Pa] for ``saturated`` and ``dew_point`` (NaN otherwise).
    where : Where
    """

    kind: str
    value: float = float("nan")
    T: float = float("nan")
    P: float = float("nan")
    where: Where = Where()


@dataclass(frozen=True)
class FeedSpec:
    """One feed stream: T [K], P [Pa], molar flow [mol/s], optional own composition.

    ``energy`` [W] is set when the file gives the feed by the energy it delivers (``energy:
    250 MW``, :mod:`letdown.sheet.gases`): ``flow`` is then that energy over the gross molar
    calorific value of the feed's gas, and a study that changes the composition keeps the energy.
    """

    name: str
    T: float
    P: float
    flow: float
    composition: Mapping[str, float] | None = None
    where: Where = Where()
    energy: float | None = None


@dataclass(frozen=True)
class NamedGasSpec:
    """A gas of the ``gases`` section (a biomethane, a hydrogen-rich gas) that a study can blend
    into the feeds (``@blend.<name>``); it is no stream of the flowsheet.

    Attributes
    ----------
    name : str
    composition : Mapping[str, float]
        Canonical component name -> mole fraction [-], summing to 1. Components need not be
        listed under ``gas``: a blend adds them to the flowsheet's gas at zero.
    where : Where
    """

    name: str
    composition: Mapping[str, float]
    where: Where = Where()


@dataclass(frozen=True)
class BlockSpec:
    """One unit block.

    Attributes
    ----------
    name : str
        The block's name (key under ``equipment``).
    kind : str
        Block kind (``throttle``, ``heater``, ``cooler``, ``separator``, ``compressor``,
        ``expander``, ``mixer``, ``splitter``, ``exchanger``).
    inlets : Mapping[str, str]
        Port name -> stream name. Single-inlet blocks use port ``in``; a mixer uses ``in0``, ``in1``,
        ...; an exchanger ``hot`` and ``cold``.
    outlets : Mapping[str, str]
        Port name -> stream name. Single-outlet blocks use ``out``; a separator ``vapour``,
        ``liquid`` (and ``water``); a splitter one port per outlet stream (the stream name); an
        exchanger ``hot`` and ``cold``.
    params : Mapping[str, Any]
        Parameters in SI (``P_out`` [Pa], ``dP`` [Pa], ``T_out`` [K], ``duty`` [W], ``efficiency`` [-],
        splitter ``fractions`` {stream: fraction or "rest"}, ...).
    where : Where
        Location of the block in the file.
    field_where : Mapping[str, Where]
        Location of each parameter (key as in ``params``).
    """

    name: str
    kind: str
    inlets: Mapping[str, str]
    outlets: Mapping[str, str]
    params: Mapping[str, Any]
    where: Where = Where()
    field_where: Mapping[str, Where] = field(default_factory=dict)


@dataclass(frozen=True)
class GoalSpec:
    """Hold ``hold`` (e.g. ``network.T``) at ``target`` by varying ``by`` (e.g. ``preheat.T_out``)
    inside ``within`` = (low, high), all SI."""

    hold: str
    target: float
    by: str
    within: tuple[float, float]
    where: Where = Where()


@dataclass(frozen=True)
class MeasurementSpec:
    """One plant measurement to compare the flowsheet with (all SI).

    Attributes
    ----------
    at : str
        What was measured, as written: ``network.T``, ``preheat.duty``, ``preheat.fuel``.
    target : str
        The stream or block name (``at`` before the dot).
    attribute : str
        ``T`` [K], ``P`` [Pa], ``flow`` [mol/s], ``mass_flow`` [kg/s] (a flow measured as a mass
        flow), ``vapour_fraction`` [-] of a stream; ``duty`` [W], ``power`` [W], ``fuel`` [W] (heat
        of the fuel burnt) of a block.
    value : float
        The measured value [SI unit of ``attribute``].
    uncertainty : float
        Its standard uncertainty (one standard deviation, coverage factor 1) [same unit], > 0.
    where : Where
        Where it was written (flowsheet file or ``--data`` CSV file, and line).
    field : str
        Its field path for messages (``measurements[2]``, ``data[3]``).
    """

    at: str
    target: str
    attribute: str
    value: float
    uncertainty: float
    where: Where = Where()
    field: str = ""


@dataclass(frozen=True)
class CaseSpec:
    """One operating case (the ``cases`` section): a name and the values it changes (all SI).

    Attributes
    ----------
    name : str
    values : Mapping[str, float]
        ``"<feed>.T"`` [K], ``"<feed>.P"`` [Pa], ``"<feed>.flow"`` [mol/s] or
        ``"<block>.<parameter>"`` (SI) -> value.
    where : Where
    """

    name: str
    values: Mapping[str, float]
    where: Where = Where()


@dataclass(frozen=True)
class SolverSpec:
    """Loop and goal tolerances and iteration caps (defaults are the library's)."""

    loop_tolerance: float = 1e-8      # relative change of tear-stream variables
    loop_max_iterations: int = 100
    goal_tolerance: float = 1e-6      # absolute, in SI units of the held quantity
    goal_max_iterations: int = 60


@dataclass(frozen=True)
class SheetSpec:
    """A parsed flowsheet file.

    Attributes
    ----------
    title : str
    gas : GasSpec
    feeds : Mapping[str, FeedSpec]
    blocks : Mapping[str, BlockSpec]
    goals : tuple[GoalSpec, ...]
    limits : Mapping[str, float]
        ``min_T`` [K], ``hydrate_margin`` [K], ... (SI).
    solver : SolverSpec
    source : str | None
        The file it was read from.
    extra : Mapping[str, Any]
        ``atmosphere`` [Pa] used for gauge pressures, ``normalise`` (bool).
    guesses : Mapping[str, FeedSpec]
        Starting values of streams inside loops, by stream name (the ``guesses`` section). A
        closed loop (no feed reaches it) needs one: its tear streams are chosen among the guessed
        streams, and the guessed flow is the circulation. Added by the loader helper.
    measurements : tuple of MeasurementSpec
        Plant measurements (the ``measurements`` section) for ``letdown compare``; the solver
        ignores them.
    cases : tuple of CaseSpec
        Operating cases (the ``cases`` section) for ``letdown size``; a plain solve ignores them.
    gases : Mapping[str, NamedGasSpec]
        Named gases (the ``gases`` section) a sweep may blend into the feeds; a solve ignores
        them.
    """

    title: str
    gas: GasSpec
    feeds: Mapping[str, FeedSpec]
    blocks: Mapping[str, BlockSpec]
    goals: tuple = ()
    limits: Mapping[str, float] = field(default_factory=dict)
    solver: SolverSpec = SolverSpec()
    source: str | None = None
    extra: Mapping[str, Any] = field(default_factory=dict)
    guesses: Mapping[str, FeedSpec] = field(default_factory=dict)
    measurements: tuple = ()
    cases: tuple = ()
    gases: Mapping[str, "NamedGasSpec"] = field(default_factory=dict)
