"""Results of a flowsheet solve: one case (:class:`Result`) or a batch of cases (:class:`BatchResult`).

Both are values (frozen). A :class:`BatchResult` keeps every stream as a
:class:`letdown.equipment.StreamBatch` (arrays over the cases) for studies; ``batch.case(i)`` gives
the :class:`Result` of one case, whose numbers are plain floats and whose :meth:`Result.to_dict` /
:meth:`Result.to_json` give the JSON contract of DESIGN.md (SI values, the unit in each key).

Every result checks its balances when it is made: each block's mole balance must close to
``MOLE_CLOSURE`` and its energy balance to ``ENERGY_CLOSURE`` (relative, see
:func:`letdown.equipment.closures`), recomputed here from the stored streams, not taken from the
blocks' own reports.
"""
from __future__ import annotations

import dataclasses
import json
import math
from dataclasses import dataclass, field
from functools import cached_property
from typing import Any, Mapping

import numpy as np

from ..equipment import StreamBatch, closures
from ..caution import CAUTION
from ..derived import liquid_volume_flow
from ..errors import ConvergenceError
from ..fluid.aqueous.inhibitor import INHIBITORS
from ..fluid.aqueous.water import M_WATER

#: Molar masses of the inhibitors in the column order of the freezing inhibitor arrays [kg/mol].
INHIBITOR_M = np.array([INHIBITORS[nm].M * 1e-3 for nm in INHIBITORS])

#: Largest relative mole-balance closure accepted for any block (DESIGN.md requirement).
MOLE_CLOSURE = 1e-9
#: Largest relative energy-balance closure accepted for any block (DESIGN.md requirement).
ENERGY_CLOSURE = 1e-6


@dataclass(frozen=True)
class StreamResult:
    """One stream of one case (SI, molar unless the name says otherwise).

    Attributes
    ----------
    name : str
    T : float  temperature [K]
    P : float  pressure [Pa]
    flow : float  molar flow [mol/s]
    mass_flow : float  [kg/s]
    vapour_fraction : float  molar [-]
    zs : dict  overall composition, component -> mole fraction [-]
    dew : dict or None  on request (``letdown solve --dew-points``): ``hc_dew_T_K`` (hydrocarbon dew
        point at the stream's pressure), ``cricondentherm_K``, ``dew_point_model``
    quality : dict or None  ISO 6976:2016 gross calorific value and Wobbe index per standard m3
        (15 degC / 15 degC, keys ``gross_cv_J_m3``, ``wobbe_gross_J_m3``) and relative density
    ys, xs : dict  vapour and liquid compositions [-] (equal to ``zs`` where the phase is absent)
    h : float  molar enthalpy [J/mol]
    s : float  molar entropy [J/(mol K)]
    Z : float  compressibility factor [-]
    density : float  [kg/m3]
    molar_mass : float  [kg/mol]
    converged : bool  the stream's case was solved (False: its case failed, every number is NaN)
    A stream with zero flow reports its ``T`` and ``P`` (the state of the block it leaves) and
    None for every other property and its compositions, except a separator's ``water`` outlet
    carrying free water beside the gas: vapour fraction 0 and the density of that water with its
    inhibitor (:func:`letdown.fluid.aqueous.solution.density`).

    freezing : dict or None
        Water and hydrate figures when they were computed (JSON keys, SI): ``water_mg_Sm3`` (per
        Sm3 of dry gas; None for a separator's water outlet, which holds no gas),
        ``water_mole_fraction``, ``water_flow_mol_s`` and ``water_flow_kg_s`` (all the water the
        stream carries), with inject blocks ``inhibitor_wt_pct``, ``water_activity`` and
        ``inhibitor_flow_kg_s`` (all the inhibitor the stream carries), ``water_dew_T_K``, ``hydrate_T_K``,
        ``hydrate_structure``, ``ice_T_K`` and the margins ``T - limit`` [K], positive when the
        stream is warmer than the limit, None where the limit does not exist:

        * ``hydrate_margin_K``: T minus the hydrate formation temperature at the stream's
          pressure, free water assumed, lowered by the stream's inhibitor (None: no hydrate
          former, or none above 230 K);
        * ``water_dew_margin_K``: T minus the water dew point (negative: free water can form;
          None: dry gas, or a stream of free water only);
        * ``ice_margin_K``: T minus the freezing point of the stream's free water with its
          inhibitor (``ice_T_K``); None where no free water can form (above the water dew point,
          no separator free water);
        * ``min_T_margin_K``: T minus ``limits.min_T``, the material's limit (None without it);
        * ``outlet_min_T_margin_K``: T minus ``limits.outlet_min_T`` for the streams that rule
          covers (None elsewhere).
    """

    name: str
    T: float
    P: float
    flow: float
    mass_flow: float
    vapour_fraction: float
    zs: Mapping[str, float]
    ys: Mapping[str, float]
    xs: Mapping[str, float]
    h: float
    s: float
    Z: float
    density: float
    molar_mass: float
    freezing: Mapping[str, Any] | None = None
    quality: Mapping[str, Any] | None = None
    dew: Mapping[str, Any] | None = None
    converged: bool = True

    @classmethod
    def from_batch(cls, name: str, stream: StreamBatch, i: int, components, freezing=None,
                   min_T=None) -> "StreamResult":
        """Case ``i`` of a stream batch (with its :class:`letdown.sheet.freezing.StreamFreezing`,
        if computed, and ``limits.min_T`` [K] for the margins)."""
        def comp(a):
            return {c: float(a[i, k]) for k, c in enumerate(components)}
        fz = None
        if freezing is not None:
            T = float(stream.T[i])
            fz = {"water_mg_Sm3": _num(freezing.water_mg_Sm3[i]),
                  "water_mole_fraction": _num(freezing.water_mole_fraction[i]),
                  "water_dew_T_K": _num(freezing.water_dew_T[i]),
                  "hydrate_T_K": _num(freezing.hydrate_T[i]),
                  "hydrate_structure": str(freezing.hydrate_structure[i]) or None,
                  "hydrate_margin_K": _num(T - freezing.hydrate_T[i]),
                  "water_dew_margin_K": _num(T - freezing.water_dew_T[i]),
                  "ice_T_K": _num(_at(freezing.ice_T, i)),
                  "ice_margin_K": _num(T - _at(freezing.ice_T, i)),
                  "min_T_margin_K": None if min_T is None else _num(T - min_T),
                  "outlet_min_T_margin_K": None if freezing.outlet_min_T is None
                  else _num(T - freezing.outlet_min_T)}
            if freezing.inhibitor_wt_pct is not None:
                # inhibitor from inject blocks, all the water taken as free water
                fz["inhibitor_wt_pct"] = _num(freezing.inhibitor_wt_pct[i])
                fz["water_activity"] = _num(freezing.water_activity[i])
            if getattr(freezing, "inhibitor_flow", None) is not None:
                # all the inhibitor the stream carries (methanol and MEG together)
                fz["inhibitor_flow_kg_s"] = _num(freezing.inhibitor_flow[i] @ INHIBITOR_M)
            if freezing.water_flow is not None:
                # all the water the stream carries (a separator's water outlet: its free water)
                fz["water_flow_mol_s"] = _num(freezing.water_flow[i])
                fz["water_flow_kg_s"] = _num(freezing.water_flow[i] * M_WATER)
        if stream.converged[i] and not float(stream.flow[i]) > 0.0:
            # a zero-flow stream has no properties of its own (its T and P, the state of the
            # block it leaves, stay); a separator's water outlet with free water beside the gas
            # is that aqueous liquid: vapour fraction 0 and its own density
            blank = {c: None for c in components}
            rho = _at(getattr(freezing, "aqueous_density", None), i) if freezing is not None \
                else math.nan
            aqueous = math.isfinite(rho)
            if fz is not None and not aqueous:
                # nor figures that follow from a composition it does not carry
                fz = {k: (v if k in ("water_flow_mol_s", "water_flow_kg_s",
                                     "inhibitor_flow_kg_s") else None) for k, v in fz.items()}
            return cls(name=name, T=float(stream.T[i]), P=float(stream.P[i]),
                       flow=float(stream.flow[i]), mass_flow=0.0,
                       vapour_fraction=0.0 if aqueous else None, zs=blank, ys=dict(blank),
                       xs=dict(blank), h=None, s=None, Z=None,
                       density=rho if aqueous else None, molar_mass=None, freezing=fz,
                       quality=dict.fromkeys(("gross_cv_J_m3", "wobbe_gross_J_m3",
                                              "relative_density")), converged=True)
        return cls(name=name, T=float(stream.T[i]), P=float(stream.P[i]), flow=float(stream.flow[i]),
                   mass_flow=float(stream.mass_flow[i]),
                   vapour_fraction=float(stream.vapour_fraction[i]), zs=comp(stream.zs),
                   ys=comp(stream.ys), xs=comp(stream.xs), h=float(stream.h[i]),
                   s=float(stream.s[i]), Z=float(stream.Z[i]), density=float(stream.density[i]),
                   molar_mass=float(stream.molar_mass[i]), freezing=fz,
                   quality=_gas_quality(components, stream.zs[i]) if stream.converged[i] else None,
                   converged=bool(stream.converged[i]))

    def to_dict(self) -> dict:
        """The stream's entry of the JSON contract."""
        _num = _opt

        def comp(d):
            return {c: _num(v) for c, v in d.items()}
        return {"converged": self.converged,
                "T_K": _num(self.T), "P_Pa": _num(self.P), "flow_mol_s": _num(self.flow),
                "mass_flow_kg_s": _num(self.mass_flow),
                "vapour_fraction": _num(self.vapour_fraction), "composition": comp(self.zs),
                "h_J_mol": _num(self.h), "s_J_molK": _num(self.s), "Z": _num(self.Z),
                "density_kg_m3": _num(self.density), "molar_mass_kg_mol": _num(self.molar_mass),
                "liquid_volume_flow_m3_s": _num(liquid_volume_flow(self.flow, self.mass_flow,
                                                                   self.vapour_fraction,
                                                                   self.density)),
                "vapour_composition": comp(self.ys), "liquid_composition": comp(self.xs),
                **(dict(self.freezing) if self.freezing is not None else {}),
                **(dict(self.quality) if self.quality is not None else {}),
                **(dict(self.dew) if self.dew is not None else {})}


def _gas_quality(components, zs) -> dict | None:
    """ISO 6976:2016 quality of a stream's composition (15 degC combustion and metering), or None
    where a component has no ISO 6976 data."""
    from ..errors import InputError
    from ..fluid.quality import quality
    try:
        q = quality(list(components), zs, 288.15, 288.15)
    except InputError:
        return None
    return {"gross_cv_J_m3": _num(q.gross_volumetric), "wobbe_gross_J_m3": _num(q.wobbe_gross),
            "relative_density": _num(q.relative_density)}


@dataclass(frozen=True)
class EquipmentBatch:
    """One block over the cases: what it is, its ports and its numbers.

    Attributes
    ----------
    kind : str
    inlets, outlets : Mapping[str, str]
        Port -> stream name.
    energy_in : ndarray (n,)
        Net heat plus work into the streams [W] (see :mod:`letdown.equipment.common`).
    duty, power, dP : ndarray (n,) or None
        [W], [W], [Pa].
    details : Mapping[str, ndarray]
        Further numbers keyed with their unit.
    flags : Mapping[str, ndarray of bool]
    """

    kind: str
    inlets: Mapping[str, str]
    outlets: Mapping[str, str]
    energy_in: np.ndarray
    duty: np.ndarray | None = None
    power: np.ndarray | None = None
    dP: np.ndarray | None = None
    details: Mapping[str, np.ndarray] = field(default_factory=dict)
    flags: Mapping[str, np.ndarray] = field(default_factory=dict)


@dataclass(frozen=True)
class LoopRecord:
    """How one loop converged (all cases together).

    Attributes
    ----------
    blocks, tears : tuple of str
    iterations : ndarray of int (n,)
        Iterations each case took.
    residual : ndarray (n,)
        Final relative change of the tear variables per case [-].
    history : tuple of float
        Largest residual over the active cases at each iteration [-].
    converged : ndarray of bool (n,)
    """

    blocks: tuple
    tears: tuple
    iterations: np.ndarray
    residual: np.ndarray
    history: tuple
    converged: np.ndarray


@dataclass(frozen=True)
class GoalRecord:
    """One goal over the cases: hold ``hold`` at ``target`` by varying ``by``.

    Attributes
    ----------
    hold, by : str
    target : ndarray (n,)  the target of each case (SI)
    value : ndarray (n,)  the varied parameter at the end (SI)
    achieved : ndarray (n,)  the held quantity at the end (SI)
    met : ndarray of bool (n,)
    iterations : ndarray of int (n,)
    """

    hold: str
    target: float
    by: str
    value: np.ndarray
    achieved: np.ndarray
    met: np.ndarray
    iterations: np.ndarray


#: The severities of a warning, most urgent first. ``hazard``: the number describes an unsafe or
#: physically impossible state (hydrate, ice, below the material's limit, a block run against its
#: physics); ``check``: a number to verify before it is used (outside a model's tested range, a
#: two-phase outlet, an assumption that may not hold); ``note``: information.
SEVERITIES = ("hazard", "check", "note")


@dataclass(frozen=True)
class WarningRecord:
    """A condition people should know about, and the cases it concerns.

    Attributes
    ----------
    where : str
        The stream, block or section it concerns.
    what : str
        One sentence for people (its numbers already in it, in the units of the text).
    cases : tuple of int
        The cases it concerns.
    kind : str
        A short, stable key of the cause (``hydrate``, ``ice``, ``min_T``, ``heater_cooling``, ...),
        one warning per ``where`` and ``kind``.
    severity : str
        One of :data:`SEVERITIES`.
    numbers : Mapping[str, float or ndarray]
        The figures behind it, SI with the unit in the key (``T_K``, ``hydrate_T_K``,
        ``margin_K``, ...); an array holds one value per case of the batch.
    """

    where: str
    what: str
    cases: tuple = (0,)
    kind: str = "note"
    severity: str = "check"
    numbers: Mapping[str, Any] = field(default_factory=dict)

    def __post_init__(self):
        if self.severity not in SEVERITIES:
            raise ValueError(f"severity {self.severity!r} is not one of {SEVERITIES}")

    def for_case(self, i: int) -> dict:
        """The JSON record of case ``i``: where, what, kind, severity and its numbers."""
        numbers = {}
        for key, v in self.numbers.items():
            a = np.asarray(v)
            x = a[i] if a.ndim else a[()]
            numbers[key] = str(x) if a.dtype.kind in "US" else _num(x)
        return {"where": self.where, "what": self.what, "kind": self.kind,
                "severity": self.severity, "numbers": numbers}


def _at(values, i) -> float:
    """Element ``i`` of an optional array over the cases (NaN when the array is absent)."""
    return math.nan if values is None else float(values[i])


def _num(x) -> float | None:
    """A JSON number (None for NaN or infinity, which JSON cannot hold)."""
    x = float(x)
    return x if math.isfinite(x) else None



def _opt(x) -> float | None:
    """As :func:`_num`, with None kept (a property a zero-flow stream does not have)."""
    return None if x is None else _num(x)


@dataclass(frozen=True)
class BatchResult:
    """A flowsheet solved for ``n`` cases at once.

    Attributes
    ----------
    title, model : str
    components : tuple of str
    streams : Mapping[str, StreamBatch]
    equipment : Mapping[str, EquipmentBatch]
    goals : tuple of GoalRecord
    loops : tuple of LoopRecord
    warnings : tuple of WarningRecord
    converged : ndarray of bool (n,)
        Each case was solved: its blocks accepted it, its loops and goals converged, its flashes
        converged and its balances close. A failed case's numbers are all NaN (its streams say
        ``converged`` false) and its reason is in ``failures``.
    failures : tuple of str (n,)
        Why each case failed ("" for a case that was solved): the first cause met (a block's
        refusal with the file and line, a loop or goal that did not converge, ...).
    freezing : Mapping[str, StreamFreezing] or None
        Water, water dew point and hydrate temperature per stream (:mod:`letdown.sheet.freezing`),
        when computed.
    min_T : float or None
        ``limits.min_T`` [K], for the margins.
    """

    title: str
    model: str
    components: tuple
    streams: Mapping[str, StreamBatch]
    equipment: Mapping[str, EquipmentBatch]
    goals: tuple = ()
    loops: tuple = ()
    warnings: tuple = ()
    converged: np.ndarray | None = None
    freezing: Mapping | None = None
    min_T: float | None = None
    failures: tuple | None = None
    freezing_basis: Mapping | None = None

    def __post_init__(self):
        if self.converged is None:
            object.__setattr__(self, "converged", np.ones(self.n_cases, dtype=bool))
        if self.failures is None:
            object.__setattr__(self, "failures", tuple(
                "" if ok else "did not converge" for ok in self.converged))

    @property
    def n_cases(self) -> int:
        """Number of cases."""
        return next(iter(self.streams.values())).n_cases

    def balance_closures(self) -> dict:
        """Block name -> (mole, energy) relative closures (n,), recomputed from the streams."""
        return self._closures

    @cached_property
    def _closures(self) -> dict:
        # computed once: case(i) over thousands of cases must not redo it (the result is a value)
        out = {}
        for name, eq in self.equipment.items():
            ins = [self.streams[s] for s in eq.inlets.values()]
            outs = [self.streams[s] for s in eq.outlets.values()]
            out[name] = closures(ins, outs, eq.energy_in)
        return out

    def check_balances(self) -> None:
        """Raise unless every converged case closes every block's balances.

        Raises
        ------
        ConvergenceError
            Naming the block, the closure and the limit.
        """
        for name, (mole, energy) in self.balance_closures().items():
            for what, closure, limit in (("mole", mole, MOLE_CLOSURE),
                                         ("energy", energy, ENERGY_CLOSURE)):
                bad = self.converged & ~(closure <= limit)
                if np.any(bad):
                    i = int(np.flatnonzero(bad)[0])
                    raise ConvergenceError(f"block '{name}': {what} balance closes only to "
                                           f"{closure[i]:.3g} (limit {limit:g})"
                                           + (f" in case {i}" if self.n_cases > 1 else ""))

    def case(self, i: int) -> "Result":
        """The result of case ``i`` with plain numbers."""
        closure = self.balance_closures()
        equipment = {}
        for name, eq in self.equipment.items():
            entry = {"kind": eq.kind}
            if eq.duty is not None:
                entry["duty_W"] = _num(eq.duty[i])
            if eq.power is not None:
                entry["power_W"] = _num(eq.power[i])
            if eq.dP is not None:
                entry["dP_Pa"] = _num(eq.dP[i])
            for key, values in eq.details.items():
                # words (an inject block's sizing rule, its protected stream) stay words
                # and yes/no numbers (a valve's ``choked``) stay booleans; a profile along a
                # block (a pipe's T and P at its steps) is a list
                v = values[i]
                entry[key] = (v if isinstance(v, str) else
                              bool(v) if isinstance(v, (bool, np.bool_)) else
                              [_num(x) for x in v] if np.ndim(v) > 0 else _num(v))
            for key, values in eq.flags.items():
                entry[key] = bool(values[i])
            entry["mole_balance_closure"] = _num(closure[name][0][i])
            entry["energy_balance_closure"] = _num(closure[name][1][i])
            entry["inlets"] = dict(eq.inlets)
            entry["outlets"] = dict(eq.outlets)
            equipment[name] = entry
        goals = [{"hold": g.hold, "target": _num(np.broadcast_to(g.target, (self.n_cases,))[i]),
                  "achieved": _num(g.achieved[i]), "by": g.by,
                  "value": _num(g.value[i]), "met": bool(g.met[i]),
                  "iterations": int(g.iterations[i])} for g in self.goals]
        loops = [{"blocks": list(lp.blocks), "tears": list(lp.tears),
                  "iterations": int(lp.iterations[i]), "residual": _num(lp.residual[i]),
                  "residual_history": [_num(r) for r in lp.history],
                  "converged": bool(lp.converged[i])} for lp in self.loops]
        warnings = sorted((w.for_case(i) for w in self.warnings if i in w.cases),
                          key=lambda w: SEVERITIES.index(w["severity"]))
        fz = self.freezing or {}
        streams = {name: StreamResult.from_batch(name, s, i, self.components, fz.get(name),
                                                 self.min_T)
                   for name, s in self.streams.items()}
        return Result(title=self.title, model=self.model, converged=bool(self.converged[i]),
                      streams=streams, equipment=equipment, goals=goals, loops=loops,
                      warnings=warnings, failure=self.failures[i] or None,
                      freezing_basis=self.freezing_basis)


def _spread(a, idx, n):
    """Per-case values ``a`` of the cases ``idx`` placed among ``n`` cases, the others blank (NaN,
    False, 0 or ""); anything that is not an array over the ``idx.size`` cases is returned as is."""
    if a is None or isinstance(a, str) or np.ndim(a) == 0:
        return a
    a = np.asarray(a)
    if a.shape[0] != idx.size:
        return a
    fill = {"f": np.nan, "c": np.nan, "b": False, "i": 0, "u": 0, "U": "", "S": b""}.get(
        a.dtype.kind, None)
    out = np.full((n,) + a.shape[1:], fill, dtype=a.dtype)
    out[idx] = a
    return out


def spread_result(lived: BatchResult, idx, n: int, goals, loops, converged,
                  failures) -> BatchResult:
    """The result of ``n`` cases from ``lived``, the result of the cases ``idx`` that were solved:
    the other cases are blank (NaN numbers, streams not converged, no warnings).

    Parameters
    ----------
    lived : BatchResult
        Of the ``idx.size`` solved cases.
    idx : ndarray of int
        Their places among the ``n`` cases.
    goals, loops : tuple
        Goal and loop records over the ``n`` cases (already blank where failed).
    converged : ndarray of bool (n,)
    failures : sequence of str (n,)
    """
    idx = np.asarray(idx, dtype=int)
    m = idx.size
    nc = len(lived.components)
    streams = {}
    for name, s in lived.streams.items():
        nan, nan2 = np.full(n, np.nan), np.full((n, nc), np.nan)
        blank = StreamBatch(flow=nan, T=nan, P=nan, zs=nan2, h=nan, s=nan, Z=nan, density=nan,
                            molar_mass=nan, vapour_fraction=nan, ys=nan2, xs=nan2,
                            converged=np.zeros(n, dtype=bool))
        streams[name] = blank.put(idx, s)
    equipment = {name: dataclasses.replace(
        eq, energy_in=_spread(eq.energy_in, idx, n), duty=_spread(eq.duty, idx, n),
        power=_spread(eq.power, idx, n), dP=_spread(eq.dP, idx, n),
        details={k: _spread(v, idx, n) for k, v in eq.details.items()},
        flags={k: _spread(v, idx, n) for k, v in eq.flags.items()})
        for name, eq in lived.equipment.items()}
    warnings = tuple(dataclasses.replace(
        w, cases=tuple(int(idx[c]) for c in w.cases if 0 <= c < m),
        numbers={k: (_spread(v, idx, n) if np.ndim(v) and np.shape(v)[0] == m else v)
                 for k, v in w.numbers.items()}) for w in lived.warnings)
    freezing = None
    if lived.freezing is not None:
        freezing = {name: None if fz is None else dataclasses.replace(fz, **{
            f.name: _spread(getattr(fz, f.name), idx, n) for f in dataclasses.fields(fz)})
            for name, fz in lived.freezing.items()}
    return BatchResult(title=lived.title, model=lived.model, components=lived.components,
                       streams=streams, equipment=equipment, goals=tuple(goals),
                       loops=tuple(loops), warnings=warnings,
                       converged=np.array(converged, dtype=bool),
                       failures=tuple(str(f) for f in failures), freezing=freezing,
                       min_T=lived.min_T, freezing_basis=lived.freezing_basis)


#: Detail keys of a profile along a block (lists over its steps), in the JSON only on request.
PROFILE_PREFIX = "profile_"


@dataclass(frozen=True)
class Result:
    """A flowsheet solved for one case (plain numbers, SI).

    Attributes
    ----------
    title, model : str
    converged : bool
    streams : dict  name -> :class:`StreamResult`
    equipment : dict  name -> {"kind", "duty_W" or "power_W", "dP_Pa", details, balance closures}
    goals : list of dict  {"hold", "target", "achieved", "by", "value", "met", "iterations"}
    loops : list of dict  {"blocks", "tears", "iterations", "residual", "residual_history"}
    warnings : list of dict  {"where", "what", "kind", "severity", "numbers"}, most severe first
    (the JSON also carries ``caution``: engineering estimates, local codes, qualified staff)
    failure : str or None  why the case failed (None when it was solved); its numbers are then null
    freezing_basis : dict or None  what the freezing checks assumed (``hydrate_margin_K`` and its
        source, the water, what the hydrate and ice limits assume, ``min_T_K``,
        ``outlet_min_T_K``; :func:`letdown.sheet.freezing.basis`), when they ran
    """

    title: str
    model: str
    converged: bool
    streams: Mapping[str, StreamResult]
    equipment: Mapping[str, dict]
    goals: list
    loops: list
    warnings: list
    failure: str | None = None
    freezing_basis: Mapping | None = None

    def to_dict(self, profile: bool = False) -> dict:
        """The JSON contract of DESIGN.md as plain Python objects (SI, unit in each key).

        ``profile``: keep the profiles along blocks (``profile_*`` lists of a pipe: position,
        T and P at each step); left out by default (``letdown solve --profile`` asks for them).
        """
        out = {"title": self.title, "model": self.model, "converged": self.converged,
               "failure": self.failure,
               "streams": {n: s.to_dict() for n, s in self.streams.items()},
               "equipment": {n: {k: v for k, v in e.items()
                                 if profile or not k.startswith(PROFILE_PREFIX)}
                             for n, e in self.equipment.items()},
               "goals": [dict(g) for g in self.goals], "loops": [dict(lp) for lp in self.loops],
               "warnings": [dict(w) for w in self.warnings]}
        if self.freezing_basis is not None:
            out["freezing_basis"] = dict(self.freezing_basis)
        # the figures size heaters and judge freezing: the caution goes with them
        out["caution"] = CAUTION
        return out

    def to_json(self, indent: int | None = 2, profile: bool = False) -> str:
        """The JSON contract of DESIGN.md as text (NaN written as null); ``profile`` as in
        :meth:`to_dict`."""
        return json.dumps(self.to_dict(profile=profile), indent=indent, allow_nan=False)
