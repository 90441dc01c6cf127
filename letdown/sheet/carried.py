"""The water and inhibitor the streams carry, as the solve carried them: where the feeds' water
comes from (``gas.water``, :func:`feed_carries`), and reading it back from the solved streams
(:func:`water_flows`, :func:`inhibitor_carried`), with which streams carry gas at all
(:func:`gas_carrying`). The freezing margins (:mod:`letdown.sheet.freezing`) and the inject blocks'
doses (:mod:`letdown.sheet.dosing`) read these; the water itself moves inside the solve, block by
block (:class:`letdown.equipment.stream.Carry`).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..equipment.stream import Carry
from ..errors import InputError
from ..fluid.aqueous.water import M_WATER, MOL_PER_SCF, MOL_PER_SM3, LB, water_content
from .result import WarningRecord



def ratio_from_spec(water, fluid, method: str, T=None, P=None) -> np.ndarray:
    """Water per dry gas [mol/mol] from a :class:`letdown.sheet.spec.WaterSpec` (or, with ``water=None``, saturated at
    ``T`` [K], ``P`` [Pa]).

    Raises
    ------
    InputError
        An unknown water method or a state outside the correlation's inputs (located by the caller).
    """
    if water is None:
        y = np.asarray(water_content(fluid, np.asarray(T, float), np.asarray(P, float),
                                     method=method), dtype=float)
        return y / (1.0 - y)
    if water.kind == "mole_fraction":
        return np.asarray(water.value / (1.0 - water.value))
    if water.kind == "mg_Sm3":
        return np.asarray(water.value * 1e-6 / M_WATER / MOL_PER_SM3)
    if water.kind == "lb_MMscf":
        return np.asarray(water.value * 1e-6 * LB / M_WATER / MOL_PER_SCF)
    y = float(np.asarray(water_content(fluid, water.T, water.P, method=method)).reshape(-1)[0])
    return np.asarray(y / (1.0 - y))


def feed_carries(fs, fluid, streams) -> dict:
    """The water every feed carries beside its gas, from ``gas.water`` (module docstring): feed
    name -> :class:`letdown.equipment.stream.Carry` (no free water). The solver attaches it to
    the feeds; the blocks carry it on.

    Raises
    ------
    InputError
        A water method or a feed state the water-content route cannot take, located at
        ``gas.water``.
    """
    water = fs.gas.water
    method = fs.gas.water_method
    out = {}
    where = water.where if water is not None else None
    try:
        for name in fs.feeds:
            s = streams[name]
            r = ratio_from_spec(water, fluid, method, s.T, s.P)
            r = np.broadcast_to(r, s.T.shape).astype(float)
            out[name] = Carry(r, np.zeros(r.shape))
    except InputError as exc:
        raise exc.located(file=(where.file if where else None) or fs.source,
                          line=where.line if where else None, field="gas.water") from None
    return out


def _water_notes(fs, streams) -> list:
    """The note that the water was assumed (no ``gas.water``)."""
    if fs.gas.water is not None or not fs.feeds:
        return []
    return [WarningRecord(
        "gas", "no gas.water given: each feed is taken as saturated with water at its own "
               f"temperature and pressure ({fs.gas.water_method}); hydrate and water dew point "
               "margins follow from that", tuple(range(next(iter(streams.values())).n_cases)),
        kind="water_assumed", severity="note")]


@dataclass(frozen=True, eq=False)
class WaterCarry:
    """The water of every stream and what each separator did with it.

    Attributes
    ----------
    ratios : dict
        Stream name -> water per dry gas, ndarray (n,) [mol/mol].
    free : dict
        Stream name -> free water with no gas to carry it, ndarray (n,) [mol/s]: a separator's
        ``water`` outlet (or its ``liquid`` outlet when it has no ``water`` port and no
        hydrocarbon liquid); absent for every other stream.
    separators : dict
        Separator name -> {``water_in_mol_s``, ``water_in_vapour_mol_s``,
        ``water_in_liquid_mol_s``, ``free_water_mol_s``} over the cases [mol/s].
    notes : list of WarningRecord
    """

    ratios: dict
    free: dict
    separators: dict
    notes: list
    water_index: int | None = None

    def flow(self, name: str, stream) -> np.ndarray:
        """All the water stream ``name`` carries [mol/s]: ratio times dry flow plus free water,
        or, with water as a component (``water_index``), its water fraction times its flow."""
        F = np.asarray(stream.flow, float)
        if self.water_index is not None:
            return np.asarray(stream.zs, float)[:, self.water_index] * F
        return self.ratios[name] * F + self.free.get(name, np.zeros(stream.n_cases))


def _drains(fs) -> dict:
    """Separator name -> the stream its free water leaves by: its ``water`` outlet, or its
    ``liquid`` outlet where it has no ``water`` port."""
    return {b: spec.outlets.get("water", spec.outlets["liquid"])
            for b, spec in fs.blocks.items() if spec.kind == "separator"}


def water_flows(fs, fluid, streams, steps=None, outcomes=None) -> WaterCarry:
    """The water of every stream: ratios per dry gas, free water, and each separator's split.

    The solve carries the water with the streams (:class:`letdown.equipment.stream.Carry`: the
    blocks pass it on, separators split it, :mod:`letdown.equipment.watersplit`, loops settle it
    in their tear iterations); this reads it. Free water that flows on from a separator into
    another block is not carried further (a note says so): a drum's water outlet normally ends at
    a product. With water in ``gas.composition`` the ratios are each stream's own water fraction.

    Parameters
    ----------
    fs : SheetSpec
    fluid : Fluid
    streams : Mapping[str, StreamBatch]
        The solved streams (carrying their water, unless water is a component).
    steps : sequence, optional
        Not used (the solve order); kept for the callers.
    outcomes : Mapping[str, BlockOutcome], optional
        The blocks' outcomes: each separator's split from its details.

    Returns
    -------
    WaterCarry
    """
    if "water" in fluid.components:
        iw = fluid.components.index("water")
        water = lambda s: np.asarray(streams[s].zs, float)[:, iw] * np.asarray(streams[s].flow,
                                                                              float)
        free, split = {}, {}
        for block, spec in fs.blocks.items():
            if spec.kind != "separator" or "water" not in spec.outlets:
                continue
            wat = spec.outlets["water"]
            free[wat] = water(wat)
            split[block] = {"water_in_mol_s": water(spec.inlets["in"]),
                            "water_in_vapour_mol_s": water(spec.outlets["vapour"]),
                            "water_in_liquid_mol_s": water(spec.outlets["liquid"]),
                            "free_water_mol_s": free[wat]}
        return WaterCarry({name: s.zs[:, iw] / np.maximum(1.0 - s.zs[:, iw], 1e-300)
                           for name, s in streams.items()}, free, split, [], iw)
    notes = _water_notes(fs, streams)
    r = {name: np.asarray(s.carry.water_ratio, float) for name, s in streams.items()}
    free = {s: np.asarray(streams[s].carry.free_water, float)
            for s in _drains(fs).values() if s in streams}
    split = {}
    for block in _drains(fs):
        details = (outcomes or {}).get(block)
        details = {} if details is None else details.details
        if "free_water_mol_s" in details:
            split[block] = {k: details[k] for k in ("water_in_mol_s", "water_in_vapour_mol_s",
                                                    "water_in_liquid_mol_s", "free_water_mol_s")}
    for block, spec in fs.blocks.items():
        if spec.kind == "separator":
            continue
        lost = [s for s in spec.inlets.values() if s in free and np.any(free[s] > 0.0)]
        for s in lost:
            notes.append(WarningRecord(block, f"the free water of stream '{s}' is not carried "
                                              "through this block (only separators split water; "
                                              "send a water outlet to a product)",
                                       kind="water_not_carried", severity="check"))
    return WaterCarry(r, free, split, notes)


def gas_carrying(fs, streams, name) -> np.ndarray:
    """Cases in which stream ``name`` carries gas [bool (n,)]: it flows, has a vapour (vapour
    fraction above 0; a single dense phase named vapour-like counts), and is not a separator's
    ``water`` or ``liquid`` outlet (free water, or a hydrocarbon liquid that left its gas in the
    drum). Only such streams are protected points of an inhibitor dose and get hydrate warnings."""
    s = streams[name]
    out = (np.asarray(s.flow, float) > 0.0) & (np.nan_to_num(np.asarray(s.vapour_fraction,
                                                                         float)) > 0.0)
    for spec in fs.blocks.values():
        if spec.kind == "separator" and name in (spec.outlets.get("water"),
                                                 spec.outlets.get("liquid")):
            return np.zeros(out.shape, bool)
    return out


def inhibitor_carried(fs, streams) -> tuple[dict, dict]:
    """Inhibitor per dry gas of every stream, ndarray (n, k) [mol/mol] (k over
    :data:`letdown.equipment.stream.INHIBITOR_NAMES`), and the inhibitor sent with each separator's free water, ndarray
    (n, k) [mol/s] (its ``water`` outlet, or its ``liquid`` outlet without one), as the solve
    carried them (:class:`letdown.equipment.stream.Carry`)."""
    ratios = {s: np.asarray(b.carry.inhibitor_ratio, float) for s, b in streams.items()}
    free = {s: np.asarray(streams[s].carry.free_inhibitor, float)
            for s in _drains(fs).values() if s in streams}
    return ratios, free


