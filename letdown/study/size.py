"""Preheat sizing over operating cases (``letdown size``): the station, not one stream.

Each goal that holds a stream temperature by varying a heater names a **held stream** (typically
a regulator outlet) and a **sized heater** (several goals: several sized heaters, such as a
preheater holding the stream between two regulators and an interstage heater holding the outlet;
the first is the one the single-heater figures refer to). Every other heater is a **fixed
heater**: it runs as the file says, and its duty counts in the station's heat and fuel.

Limits of a stream (``m`` = ``limits.hydrate_margin``; the freezing checks' default,
3 K, common practice, when absent, with a note)::

    min_T      limits.min_T                   (the material's limit, as written, no margin)
    ice        ice point + m                  (the ice point the result carries, 0 degC)
    hydrate    hydrate_T(P, z, inhibitor) + m (vdW-P, at the stream's pressure)
    others     any further ``*_margin_K`` the result carries, as written

read generically from each stream's freezing figures (``T - margin_K`` is the limit), so a change
in how the margins are computed flows through. Two ways to judge free water (``free_water``):

* ``"always"`` (default): free water is assumed in every stream whatever the water dew point.
  Liquid water arrives with pipeline gas (slugs, carry-over) more often than dew-point figures
  suggest, and a preheater is sized for the bad day (common practice). The hydrate and ice limits
  then always apply.
* ``"by-dew-point"``: the water dew point is trusted. A stream warmer than its water dew point
  plus ``m`` has no free water, so neither hydrate nor ice forms there: the hydrate and ice limits
  become ``min(limit, water_dew_T) + m`` (a dry stream has none).

For every case (the ``cases`` section, or the file as written) the held stream's target is its own
governing limit (the largest). All cases are solved in one batch (``strict=False``: a case whose
goal or loop fails is recorded with its reason and the others go on). Then every stream
**downstream of a sized heater** is checked against its limits (a stream belongs to the nearest
sized heater upstream of it): where one is colder than its limit, that heater's held target in
that case is raised (secant steps on the largest shortfall, at most
:data:`MAX_RAISES` passes) until every downstream stream meets its limit; the stream that then
sets the target is reported as governing. Streams **not downstream** of any sized heater (a
regulator before it, a parallel branch) cannot be warmed by one: one colder than its limit makes the
case **not met**, with the stream named. Feeds are taken as they arrive (the station cannot change
the gas it receives): a feed colder than its limits is reported in a note, not judged.

A heater's duty floors at zero (negative: the gas arrives warm enough and the heater stays cold;
the negative figure is shown; the streams after it are still taken at the goal's temperature,
colder than with the heater off, which is the safe side for the limits). The station's heat in a case is the sum over all heaters; the
design case is the one with the largest station heat among the cases that solved. Fuel: each
heater's duty over its own ``efficiency`` (the file's, else the command line's, else
:data:`DEFAULT_EFFICIENCY`, stated as assumed; water-bath heaters run about 50-80 %, common
practice), in standard m3 of feed gas by its calorific value (ISO 6976:2016, 15 degC / 15 degC;
gross by default, net on request).
"""
from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

from ..constants import STANDARD_T  # the fuel's standard volume: Sm3 at 15 degC (ISO 13443)
from ..caution import CAUTION
from ..errors import InputError
from ..fluid.quality import quality
from ..sheet.freezing import ICE_T, hydrate_margin
from ..sheet.graph import downstream_streams
from ..sheet.solve import make_fluid, solve_cases
from ..sheet.spec import SheetSpec
from .model_bias import bias_line
from .sweep import _reasons

#: Heater efficiency used when neither the file nor the command line gives one [-] (the middle of
#: the 50-80 % of water-bath heaters; common practice), stated in the report as assumed.
DEFAULT_EFFICIENCY = 0.75
#: A stream colder than its own limit by more than this makes its case not met [K] (the goal
#: holds the held stream to its tolerance, 1e-6 K by default, and raises stop at RAISE_TOL).
LIMIT_SLACK = 1e-3
#: The held target is raised until the largest downstream shortfall is within this [K].
RAISE_TOL = 1e-5
#: Passes of raising the held target (secant steps; a throttle chain is nearly linear in the
#: held temperature, so two or three passes usually do).
MAX_RAISES = 8
#: The two ways to judge free water, and how the report states them.
FREE_WATER = {
    "always": "free water assumed in every stream, whatever its water dew point (the default: "
              "pipeline gas brings slugs and carry-over)",
    "by-dew-point": "free water only below the water dew point: a stream warmer than its water "
                    "dew point + margin has no hydrate or ice limit (--free-water by-dew-point)"}
#: Calorific bases of the fuel figures (ISO 6976:2016, combustion and metering at 15 degC).
CALORIFIC = ("gross", "net")
#: Margin keys of a stream's freezing figures that are conditions, not limits.
NOT_LIMITS = ("water_dew_margin_K",)


@dataclass(frozen=True)
class CaseSize:
    """What one operating case needs (SI).

    Attributes
    ----------
    name : str
    values : dict
        What the case sets (``feed.T`` [K], ...).
    held_P : float
        Pressure of the held stream [Pa].
    hydrate_T, water_dew_T : float
        Hydrate formation temperature and water dew point of the held stream [K] (NaN: none).
    limits : dict
        The held stream's own limits plus margins [K] (those that apply), by kind.
    governing : str
        The kind of limit that sets the target (``min_T``, ``ice``, ``hydrate``, ...).
    governing_stream : str
        The stream whose limit sets it (the held stream, or one downstream that needed more).
    target : float
        The held stream's temperature [K].
    duty : float
        Sized heater's duty [W], floored at zero; ``raw_duty`` as solved (negative: no heat needed).
    heaters, raw_heaters : dict
        Every heater's duty [W], floored at zero and as solved.
    heater_T_out : float
        Sized heater's outlet temperature [K].
    met : bool
        The case solved and every stream the station makes meets its limits.
    reason : str
        Why the case failed to solve ("" when it solved).
    short : tuple of dict
        Streams colder than a limit: ``stream``, ``limit``, ``T_K``, ``limit_K``,
        ``downstream_of_sized_heater``, ``upstream_of_sized_heater``, ``sized_heater`` (the one
        that owns it, or all of them when none can warm it).
    warnings : tuple of dict
    sized : tuple of dict
        Per sized heater (the first is the one above): ``heater``, ``held``, ``held_P_Pa``,
        ``hydrate_T_K``, ``water_dew_T_K``, ``limits_K``, ``governing_limit``,
        ``governing_stream``, ``target_T_K``, ``heater_T_out_K``, ``duty_W``, ``heater_duty_W``.
    """

    name: str
    values: dict
    held_P: float
    hydrate_T: float
    water_dew_T: float
    limits: dict
    governing: str
    governing_stream: str
    target: float
    duty: float
    raw_duty: float
    heaters: dict
    raw_heaters: dict
    heater_T_out: float
    met: bool
    reason: str
    short: tuple
    warnings: tuple
    sized: tuple = ()

    @property
    def heat(self) -> float:
        """Station heat: every heater's duty, floored at zero [W] (NaN: the case failed)."""
        return float(sum(self.heaters.values()))


@dataclass(frozen=True)
class SizeResult:
    """Preheat sizing over the operating cases.

    Attributes
    ----------
    title, model, heater, held : str
        The flowsheet, the model, the sized heater and the held stream.
    margin : float
        ``limits.hydrate_margin`` used [K].
    min_T : float or None
    free_water : str
        ``"always"`` or ``"by-dew-point"`` (:data:`FREE_WATER`).
    efficiency : float
        Sized heater's efficiency [-]; ``efficiency_source`` says where it came from.
    heater_info : dict
        Heater -> {"efficiency", "efficiency_source", "sized"} for every heater.
    calorific : str
        ``"gross"`` or ``"net"``; ``cv`` its value for the feed gas [J/Sm3] (ISO 6976:2016).
    cases : tuple of CaseSize
    design : int or None
        Index of the design case (the largest station heat among those that solved).
    notes : tuple of str
    model_bias : str or None
        The cubic model's known bias against GERG-2008 (None for GERG-2008).
    """

    title: str
    model: str
    heater: str
    held: str
    margin: float
    min_T: float | None
    free_water: str
    efficiency: float
    efficiency_source: str
    heater_info: dict
    calorific: str
    cv: float
    cases: tuple
    design: int | None
    notes: tuple
    model_bias: str | None = None

    @property
    def gross_cv(self) -> float:
        """The calorific value used [J/Sm3] (kept for callers of the gross-only version)."""
        return self.cv

    @property
    def design_case(self) -> CaseSize | None:
        return None if self.design is None else self.cases[self.design]

    @property
    def design_duty(self) -> float:
        """Sized heater's duty in the design case [W]."""
        return np.nan if self.design is None else self.design_case.duty

    @property
    def design_heat(self) -> float:
        """Station heat in the design case, fixed heaters included [W]."""
        return np.nan if self.design is None else self.design_case.heat

    def case_fuel(self, c: CaseSize) -> float:
        """Heat of the fuel all heaters burn in case ``c`` [W]."""
        return float(sum(d / self.heater_info[h]["efficiency"] for h, d in c.heaters.items()))

    @property
    def design_fuel(self) -> float:
        """Heat of the fuel burnt in the design case, every heater at its efficiency [W]."""
        return np.nan if self.design is None else self.case_fuel(self.design_case)

    @property
    def design_fuel_Sm3_h(self) -> float:
        """Fuel gas in the design case [Sm3/h] (15 degC, 101.325 kPa)."""
        return self.design_fuel / self.cv * 3600.0

    @property
    def all_met(self) -> bool:
        """Every case solved and met its limits."""
        return all(c.met for c in self.cases)

    def to_dict(self) -> dict:
        """JSON-ready figures (SI, unit in each key; NaN as None)."""
        def num(x):
            return None if x is None or not np.isfinite(x) else float(x)
        d = self.design_case
        design = None if d is None else {
            "case": d.name, "duty_W": num(d.duty), "heat_W": num(d.heat),
            "heaters_W": {h: num(v) for h, v in d.heaters.items()},
            "governing_limit": d.governing, "governing_stream": d.governing_stream,
            "target_T_K": num(d.target), "fuel_W": num(self.design_fuel),
            "fuel_Sm3_h": num(self.design_fuel_Sm3_h), "met": d.met}
        return {
            "title": self.title, "model": self.model, "heater": self.heater, "held": self.held,
            "hydrate_margin_K": self.margin, "min_T_K": num(self.min_T),
            "free_water": self.free_water, "free_water_rule": FREE_WATER[self.free_water],
            "efficiency": self.efficiency, "efficiency_source": self.efficiency_source,
            "heaters": {h: dict(v) for h, v in self.heater_info.items()},
            "calorific_basis": self.calorific, "calorific_value_J_Sm3": self.cv,
            "calorific_standard": "ISO 6976:2016, 15 degC / 15 degC",
            "all_met": self.all_met, "design": design,
            "cases": [{"name": c.name, "values": dict(c.values), "held_P_Pa": num(c.held_P),
                       "hydrate_T_K": num(c.hydrate_T), "water_dew_T_K": num(c.water_dew_T),
                       "limits_K": {k: num(v) for k, v in c.limits.items()},
                       "governing_limit": c.governing, "governing_stream": c.governing_stream,
                       "target_T_K": num(c.target), "duty_W": num(c.duty),
                       "heater_duty_W": num(c.raw_duty), "heat_W": num(c.heat),
                       "heaters_W": {h: num(v) for h, v in c.heaters.items()},
                       "heaters_as_solved_W": {h: num(v) for h, v in c.raw_heaters.items()},
                       "heater_T_out_K": num(c.heater_T_out), "fuel_W": num(self.case_fuel(c)),
                       "fuel_Sm3_h": num(self.case_fuel(c) / self.cv * 3600.0),
                       "met": c.met, "reason": c.reason,
                       "streams_not_met": [dict(x) for x in c.short],
                       "sized_heaters": [{k: (num(v) if isinstance(v, float) else v)
                                          for k, v in sz.items()} for sz in c.sized],
                       "warnings": [dict(w) for w in c.warnings]}
                      for c in self.cases],
            "notes": list(self.notes), "model_bias": self.model_bias, "caution": CAUTION}


def _sizing_goals(fs: SheetSpec) -> list:
    """[(goal index, held stream, heater)] of the goals that hold a stream temperature by varying
    a heater (one per heater: a second goal on the same heater is left as written)."""
    out, seen = [], set()
    for k, g in enumerate(fs.goals):
        stream, _, attr = g.hold.partition(".")
        block, _, _param = g.by.partition(".")
        if attr == "T" and block in fs.blocks and fs.blocks[block].kind == "heater" \
                and stream not in fs.blocks and block not in seen:
            out.append((k, stream, block))
            seen.add(block)
    if not out:
        raise InputError("letdown size needs a goal that holds the coldest point's temperature by "
                         "varying the preheater, e.g. goals: [{hold: network.T, at: 5 degC, by: "
                         "preheat.T_out, within: [-10 degC, 90 degC]}]; its target is replaced by "
                         "each case's limit", file=fs.source, field="goals")
    return out


def _case_arrays(fs: SheetSpec):
    """(names, {key: values over the cases}) from the ``cases`` section."""
    if not fs.cases:
        return ("as written",), {}, ({},)
    keys = []
    for c in fs.cases:
        keys.extend(k for k in c.values if k not in keys)
    arrays = {}
    for key in keys:
        name, _, attr = key.partition(".")
        if name in fs.feeds:
            default = getattr(fs.feeds[name], attr)
        else:
            default = fs.blocks[name].params.get(attr)
        vals = []
        for c in fs.cases:
            if key in c.values:
                vals.append(c.values[key])
            elif default is None:
                raise InputError(f"case '{c.name}' does not set {key}, which the file leaves "
                                 "unset and another case sets; give it in every case",
                                 file=c.where.file or fs.source, line=c.where.line,
                                 field=f"cases.{c.name}")
            else:
                vals.append(default)
        arrays[key] = np.array(vals, dtype=float)
    return tuple(c.name for c in fs.cases), arrays, tuple(dict(c.values) for c in fs.cases)


def stream_limits(T: float, fz: dict | None, margin: float, min_T: float | None,
                  free_water: str = "always") -> dict:
    """The limits plus margins of one stream in one case [K], by kind (those that apply).

    Parameters
    ----------
    T : float
        The stream's temperature [K].
    fz : dict or None
        Its freezing figures as the result carries them (``hydrate_margin_K``, ``ice_margin_K``,
        ``min_T_margin_K``, ``water_dew_T_K``, ...; a margin is ``T - limit``, None where the limit
        does not apply).
    margin : float
        ``limits.hydrate_margin`` [K].
    min_T : float or None
        ``limits.min_T`` [K].
    free_water : str
        ``"always"`` or ``"by-dew-point"`` (module docstring).

    Examples
    --------
    >>> fz = {"hydrate_margin_K": 3.0, "ice_margin_K": 5.0, "min_T_margin_K": 5.0,
    ...       "water_dew_T_K": 250.0, "water_dew_margin_K": 28.15}
    >>> stream_limits(278.15, fz, 3.0, 273.15)
    {'min_T': 273.15, 'ice': 276.15, 'hydrate': 278.15}
    >>> stream_limits(278.15, fz, 3.0, 273.15, "by-dew-point")
    {'min_T': 273.15, 'ice': 253.0, 'hydrate': 253.0}
    """
    out = {}
    fz = fz or {}
    if fz.get("min_T_margin_K") is not None:
        out["min_T"] = T - fz["min_T_margin_K"]
    elif min_T is not None:
        out["min_T"] = float(min_T)
    dew = fz.get("water_dew_T_K")

    def wet(base):
        if free_water == "always":
            return base + margin
        return None if dew is None or not np.isfinite(dew) else min(base, dew) + margin

    im = fz.get("ice_margin_K")
    if im is not None or free_water == "always":
        out["ice"] = wet(T - im if im is not None else ICE_T)
    hm = fz.get("hydrate_margin_K")
    if hm is not None:
        out["hydrate"] = wet(T - hm)
    for key, value in fz.items():
        kind = key[:-len("_margin_K")]
        if key.endswith("_margin_K") and key not in NOT_LIMITS and kind not in out \
                and kind not in ("ice", "hydrate", "min_T") and value is not None:
            out[kind] = T - value
    return {k: round(float(v), 12) for k, v in out.items() if v is not None and np.isfinite(v)}


def _upstream_streams(fs: SheetSpec, block: str) -> set:
    """Streams from which ``block`` is reached (its inlets and everything feeding them)."""
    producer = {s: b for b, spec in fs.blocks.items() for s in spec.outlets.values()}
    seen, todo = set(), list(fs.blocks[block].inlets.values())
    while todo:
        s = todo.pop()
        if s in seen:
            continue
        seen.add(s)
        b = producer.get(s)
        if b is not None:
            todo.extend(fs.blocks[b].inlets.values())
    return seen


def _shortfalls(res, i, streams, margin, min_T, free_water):
    """[(shortfall [K], stream, kind, T, limit)] of ``streams`` in case ``i`` (flowing ones)."""
    case = res.case(i)
    out = []
    for s in streams:
        st = case.streams[s]
        if not (st.flow > 0.0) or not np.isfinite(st.T):
            continue
        lim = stream_limits(st.T, st.freezing, margin, min_T, free_water)
        for kind, value in lim.items():
            out.append((value - st.T, s, kind, st.T, value))
    return out, case


def size(fs: SheetSpec, *, efficiency: float | None = None, model: str | None = None,
         free_water: str = "always", calorific: str = "gross") -> SizeResult:
    """Size the preheat of the station over the operating cases (module docstring).

    Parameters
    ----------
    fs : SheetSpec
    efficiency : float, optional
        Heater efficiency [-] for heaters the file gives none (default
        :data:`DEFAULT_EFFICIENCY`, stated as assumed).
    model : str, optional
        Thermodynamic model overriding the file's.
    free_water : str
        ``"always"`` (default) or ``"by-dew-point"``.
    calorific : str
        ``"gross"`` (default) or ``"net"`` calorific value for the fuel gas volume.

    Returns
    -------
    SizeResult
        Cases that fail to solve are recorded (``met`` False, ``reason``), not raised.

    Raises
    ------
    InputError
        No goal holding a stream temperature by a heater; an efficiency outside (0, 1]; an unknown
        ``free_water`` or ``calorific``; a case that leaves a parameter unset.
    """
    goals = _sizing_goals(fs)
    k, held, heater = goals[0]
    if efficiency is not None and not 0.0 < float(efficiency) <= 1.0:
        raise InputError(f"heater efficiency must lie in (0, 1] (got {efficiency})",
                         field="--efficiency")
    if free_water not in FREE_WATER:
        raise InputError(f"free water is judged 'always' or 'by-dew-point' (got '{free_water}')",
                         field="--free-water")
    if calorific not in CALORIFIC:
        raise InputError(f"the calorific basis is 'gross' or 'net' (got '{calorific}')",
                         field="--calorific")
    notes = []
    margin, source = hydrate_margin(fs)
    if "hydrate_margin" not in fs.limits:
        notes.append(f"no limits.hydrate_margin: {margin:g} K used ({source})")
    min_T = fs.limits.get("min_T")
    if min_T is None:
        notes.append("no limits.min_T: no material limit applied (give the coldest temperature "
                     "the pipe, regulators and heater may see)"
                     + ("; trusting the water dew point, a dry stream may then be sized far "
                        "below 0 degC" if free_water == "by-dew-point" else ""))
    names, cases, values = _case_arrays(fs)
    if not fs.cases:
        notes.append("the file has no cases section: its one case is sized as written")
    n, ng = len(names), len(goals)
    # pass 1, goals off: each held stream's limits in every case (they depend on its pressure,
    # composition, water and inhibitor, not on its temperature)
    bare = dataclasses.replace(fs, goals=())
    first = solve_cases(bare, cases or None, model=model, margins=True, strict=False)
    fluid = make_fluid(fs, model)
    limits = [[None] * n for _ in range(ng)]
    held_P, hyd_T, dew_T = (np.full((ng, n), np.nan) for _ in range(3))
    for i in range(n):
        case = first.case(i)
        for j, (_, h_stream, _) in enumerate(goals):
            st = case.streams[h_stream]
            limits[j][i] = stream_limits(st.T, st.freezing, margin, min_T, free_water)
            fz = st.freezing or {}
            held_P[j, i] = st.P
            hyd_T[j, i] = np.nan if fz.get("hydrate_T_K") is None else fz["hydrate_T_K"]
            dew_T[j, i] = np.nan if fz.get("water_dew_T_K") is None else fz["water_dew_T_K"]
    if not any(limits[0]):
        raise InputError("no limit applies to the held stream (no limits.min_T, and no free "
                         "water by the dew point): give limits.min_T", file=fs.source,
                         field="limits")
    governing = [[max(lim, key=lim.get) if lim else "goal as written" for lim in limits[j]]
                 for j in range(ng)]
    gstream = [[goals[j][1]] * n for j in range(ng)]
    own = np.array([[lim[g] if lim else fs.goals[goals[j][0]].target
                     for lim, g in zip(limits[j], governing[j])] for j in range(ng)])
    # each stream downstream of a sized heater belongs to the nearest one (the smallest
    # downstream set holding it); its limits raise that heater's held target
    downs = [[s for s in downstream_streams(fs, h) if s not in fs.feeds] for _, _, h in goals]
    owner = {}
    for j in sorted(range(ng), key=lambda j: -len(downs[j])):
        owner.update({s: j for s in downs[j]})
    down = set(owner)
    # pass 2: every case at its targets; raise a target where a stream it owns is colder than its
    # own limit (secant steps on the largest shortfall, per case and sized heater)
    x, x_prev, g_prev = own.copy(), np.full((ng, n), np.nan), np.full((ng, n), np.nan)
    for _ in range(MAX_RAISES + 1):
        res = solve_cases(fs, {**cases, **{f"@goal{goals[j][0] + 1}.at": x[j] for j in range(ng)}},
                          model=model, margins=True, strict=False)
        x_new, moved = x.copy(), False
        for i in range(n):
            if not res.converged[i]:
                continue
            found, _ = _shortfalls(res, i, sorted(down), margin, min_T, free_water)
            for j in range(ng):
                g, s, kind = max(((f[0], f[1], f[2]) for f in found if owner[f[1]] == j),
                                 default=(-np.inf, goals[j][1], ""))
                if not np.isfinite(g) or (g <= RAISE_TOL
                                          and (x[j, i] <= own[j, i] or g >= -RAISE_TOL)):
                    continue
                if np.isfinite(g_prev[j, i]) and g != g_prev[j, i]:
                    step = -g * (x[j, i] - x_prev[j, i]) / (g - g_prev[j, i])
                else:
                    step = g
                x_prev[j, i], g_prev[j, i] = x[j, i], g
                x_new[j, i] = max(own[j, i], x[j, i] + step)
                if x_new[j, i] != x[j, i]:
                    moved = True
                    if x_new[j, i] > own[j, i]:
                        governing[j][i], gstream[j][i] = kind, s
                    else:
                        governing[j][i] = max(limits[j][i], key=limits[j][i].get)
                        gstream[j][i] = goals[j][1]
        if not moved:
            break
        x = x_new
    heater_names = [h for h, e in res.equipment.items() if e.kind == "heater"]
    raw = {h: np.broadcast_to(res.equipment[h].duty, (n,)) for h in heater_names}
    T_outs = [np.broadcast_to(res.streams[next(iter(fs.blocks[h].outlets.values()))].T, (n,))
              for _, _, h in goals]
    reasons = _reasons(res, n)
    up = set().union(*(_upstream_streams(fs, h) for _, _, h in goals))
    others = [s for s in res.streams if s not in fs.feeds]
    sized_names = ", ".join(h for _, _, h in goals)
    feed_cold: dict = {}
    out = []
    for i in range(n):
        ok = bool(res.converged[i])
        short = []
        if ok:
            found, case = _shortfalls(res, i, others, margin, min_T, free_water)
            for g, s, kind, T, lim in found:
                if g > LIMIT_SLACK:
                    short.append({"stream": s, "limit": kind, "T_K": T, "limit_K": lim,
                                  "downstream_of_sized_heater": s in down,
                                  "upstream_of_sized_heater": s in up and s not in down,
                                  "sized_heater": goals[owner[s]][2] if s in down
                                  else sized_names})
            fed, _ = _shortfalls(res, i, list(fs.feeds), margin, min_T, free_water)
            for g, s, kind, T, lim in fed:
                if g > LIMIT_SLACK:
                    feed_cold.setdefault((s, kind), []).append(names[i])
            warns = tuple(dict(w) for w in case.warnings)
        else:
            warns = tuple(dict(w) for w in res.case(i).warnings)
        if ok:
            raw_i = {h: float(raw[h][i]) for h in heater_names}
        else:
            raw_i = {h: np.nan for h in heater_names}
        floored = {h: max(v, 0.0) if np.isfinite(v) else np.nan for h, v in raw_i.items()}
        sized = tuple({"heater": h, "held": hs, "held_P_Pa": float(held_P[j, i]),
                       "hydrate_T_K": float(hyd_T[j, i]), "water_dew_T_K": float(dew_T[j, i]),
                       "limits_K": dict(limits[j][i]), "governing_limit": governing[j][i],
                       "governing_stream": gstream[j][i], "target_T_K": float(x[j, i]),
                       "heater_T_out_K": float(T_outs[j][i]) if ok else np.nan,
                       "duty_W": floored[h], "heater_duty_W": raw_i[h]}
                      for j, (_, hs, h) in enumerate(goals))
        out.append(CaseSize(
            name=names[i], values=values[i], held_P=float(held_P[0, i]),
            hydrate_T=float(hyd_T[0, i]), water_dew_T=float(dew_T[0, i]), limits=limits[0][i],
            governing=governing[0][i], governing_stream=gstream[0][i], target=float(x[0, i]),
            duty=floored[heater], raw_duty=raw_i[heater], heaters=floored, raw_heaters=raw_i,
            heater_T_out=sized[0]["heater_T_out_K"], met=ok and not short, reason=reasons[i],
            short=tuple(short), warnings=warns, sized=sized))
    for (s, kind), which in feed_cold.items():
        notes.append(f"feed {s} arrives below its {kind} limit in case(s) {', '.join(which)}: the "
                     "station cannot change the gas it receives, so feeds are not judged (see "
                     "the warnings)")
    solved = [i for i, c in enumerate(out) if np.isfinite(c.heat)]
    design = max(solved, key=lambda i: out[i].heat) if solved else None
    info = {}
    for h in heater_names:
        eff_file = fs.blocks[h].params.get("efficiency")
        if eff_file is not None:
            info[h] = {"efficiency": float(eff_file),
                       "efficiency_source": f"the file ({h}.efficiency)"}
        elif efficiency is not None:
            info[h] = {"efficiency": float(efficiency),
                       "efficiency_source": "the command line (--efficiency)"}
        else:
            info[h] = {"efficiency": DEFAULT_EFFICIENCY,
                       "efficiency_source": "assumed (no efficiency given; water-bath heaters run "
                                            "about 50-80 %)"}
        info[h]["sized"] = any(h == g[2] for g in goals)
    if efficiency is not None and all(fs.blocks[h].params.get("efficiency") is not None
                                      for h in heater_names):
        notes.append(f"--efficiency {efficiency:g} ignored: every heater gives its own efficiency")
    comps = list(fluid.components)
    feed = next(iter(fs.feeds.values()))
    comp = feed.composition or fs.gas.composition
    z = np.array([comp.get(c, 0.0) for c in comps])
    q = quality(comps, z / z.sum(), STANDARD_T, STANDARD_T)
    cv = float(q.gross_volumetric if calorific == "gross" else q.net_volumetric)
    return SizeResult(title=fs.title, model=res.model, heater=heater, held=held,
                      margin=float(margin), min_T=min_T, free_water=free_water,
                      efficiency=info[heater]["efficiency"],
                      efficiency_source=info[heater]["efficiency_source"], heater_info=info,
                      calorific=calorific, cv=cv, cases=tuple(out), design=design,
                      notes=tuple(notes), model_bias=bias_line(res.model))
