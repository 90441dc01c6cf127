"""A year of operation: the flowsheet solved for every hour of a profile, goals held.

The profile is a CSV file with a header ``time,flow [unit],T_in [unit],P_in [unit]`` and optionally
``P_out [unit]`` (the let-down set point) and ``ground_T [unit]`` (used as the inlet temperature
where ``T_in`` is absent: buried supply lines bring the gas to the ground temperature -- common
practice). Units are those of the flowsheet file (``Sm3/h``, ``degC``, ``barg``...).

Reported: the heat each heater delivers over the year [MWh], the fuel gas it burns (standard m3 at
15 degC / 101.325 kPa) at its own efficiency (the heater's ``efficiency`` in the file; the command
line's value only for a heater without one; else 0.75, stated as assumed) with the calorific value
of the feed gas by ISO 6976:2016, 15 degC combustion (gross by default, net on request, stated),
the peak duty and its hour, the hours in which a stream is below ``limits.min_T``, the outlet
temperature range, and the hours that failed (with the reason; the other hours are kept).

Every hour is solved with the freezing margins (:mod:`letdown.sheet.freezing`), so each stream's
hourly hydrate temperature is kept (``stream_hydrate_T``, a column of ``hourly.csv``) and the
summary gives the hours each stream spends below its hydrate temperature, and below it plus
``limits.hydrate_margin``, both with free water assumed and counted only where the stream can hold
free water by its water dew point (:meth:`YearResult.hydrate_hours`); the heat and fuel of each
calendar month (:meth:`YearResult.months`); a duty-duration summary (hours at or above each tenth
of the peak, :meth:`YearResult.duty_duration`); and the peak hour of all heaters together.

**A heater never cools.** In an hour where a heater's duty comes out negative (warm gas, and a
goal or a fixed outlet temperature below the inlet's), the heater stays cold: that hour is solved
again with the heater at zero duty and without the goals that vary it, so its outlet floats warmer
than the goal's target. The same holds for an hour whose goal fails because the gas is too warm
even at the low end of the goal's bracket: it is solved with that heater off and kept when its
held stream is then at or above the target. Such hours are counted per heater
(``floored_hours``) and shown. Summing
the negative duties instead would bill the warm hours as heat recovered (on a warm-day profile
that gave a twentieth of the heat the cold hours needed).
"""
from __future__ import annotations

import csv
import dataclasses
from dataclasses import dataclass

import numpy as np

from ..errors import InputError
from ..quantities import parse_quantity
from ..sheet.solve import solve_cases
from ..sheet.spec import SheetSpec
from .executors import Serial, chunks
from .model_bias import bias_line
from .sweep import _reasons

#: Profile columns and the quantity kind of each.
COLUMNS = {"flow": "flow", "T_in": "temperature", "P_in": "pressure", "P_out": "pressure",
           "ground_T": "temperature"}
#: Hours per profile row [h].
HOURS_PER_ROW = 1.0
#: Cases per chunk handed to an executor: large enough to keep the batch flash efficient.
CHUNK_CASES = 2190
#: Heater efficiency used when neither the file nor the command line gives one [-] (the middle of
#: the 50-80 % of water-bath heaters; common practice), stated as assumed.
DEFAULT_EFFICIENCY = 0.75
#: Points of the duty-duration summary (hours at or above each tenth of the peak duty).
DURATION_LEVELS = 10
#: Calorific bases of the fuel figures (ISO 6976:2016, 15 degC combustion and metering).
CALORIFIC = ("gross", "net")


@dataclass(frozen=True)
class Profile:
    """An hourly profile in SI: ``time`` strings and arrays per column."""

    time: tuple
    values: dict
    source: str

    @property
    def n(self) -> int:
        return len(self.time)


def read_profile(path, atmosphere=None) -> Profile:
    """Read a profile CSV (see the module docstring).

    Every value is checked before any solve: finite, within the plausibility bounds of its kind
    (:data:`letdown.quantities.PLAUSIBLE`), and a flow above zero.

    Raises
    ------
    InputError
        A missing or unreadable file (not UTF-8, a control character), a missing or unknown column
        or unit, a row with the wrong number of columns or none, a value that is not a number or not
        plausible, a flow that is zero or negative (file, line and column named).
    """
    from ..sheet.inputtext import read_text
    file = str(path)
    lines = read_text(path, "a profile", field="--profile").splitlines()
    try:
        rows = list(csv.reader(lines))
    except csv.Error as exc:
        raise InputError(f"broken CSV: {exc}", file=file) from None
    if len(rows) < 2:
        raise InputError("the profile has no data rows", file=file, line=1)
    header = [h.strip() for h in rows[0]]
    if not header or header[0] != "time":
        raise InputError("the first column must be 'time'", file=file, line=1, field="time")
    cols = {}
    for j, h in enumerate(header[1:], start=1):
        name, _, unit = h.partition("[")
        name, unit = name.strip(), unit.rstrip("]").strip()
        if name not in COLUMNS:
            raise InputError(f"unknown profile column '{name}' (known: {', '.join(COLUMNS)})",
                             file=file, line=1, field=name)
        if name in cols:
            raise InputError(f"column '{name}' is given twice", file=file, line=1, field=name)
        if not unit:
            raise InputError(f"column '{name}' needs a unit in brackets, e.g. '{name} [degC]'",
                             file=file, line=1, field=name)
        cols[name] = (j, unit)
    if "flow" not in cols or "P_in" not in cols or not ({"T_in", "ground_T"} & set(cols)):
        raise InputError("the profile needs flow, P_in and T_in (or ground_T) columns",
                         file=file, line=1)
    data = rows[1:]
    for i, row in enumerate(data):
        if not row or not "".join(row).strip():
            raise InputError("an empty row (remove it)", file=file, line=i + 2)
        if len(row) != len(header):
            raise InputError(f"the row has {len(row)} columns, the header {len(header)} columns",
                             file=file, line=i + 2)
    kw = {"atmosphere": atmosphere} if atmosphere else {}
    values = {}
    for name, (j, unit) in cols.items():
        out = np.empty(len(data))
        for i, row in enumerate(data):
            text = row[j].strip()
            try:
                v = parse_quantity(f"{text} {unit}", COLUMNS[name], field=name, file=file,
                                   line=i + 2, **kw)
            except InputError as exc:
                raise exc.located(file=file, line=i + 2, field=name) from None
            if hasattr(v, "kg_s"):
                raise InputError("mass flows are not supported in profiles; give a molar or "
                                 "standard-volume flow", file=file, line=i + 2, field=name)
            if name == "flow" and not v > 0.0:
                raise InputError(f"a flow must be positive, got {text!r} (an hour without flow "
                                 f"is left out of the profile)", file=file, line=i + 2, field=name)
            out[i] = float(v)
        values[name] = out
    return Profile(tuple(r[0] for r in data), values, file)


def _heaters_off(fs: SheetSpec, names) -> SheetSpec:
    """``fs`` with the heaters ``names`` at zero duty and the goals that vary them dropped."""
    blocks = dict(fs.blocks)
    for h in names:
        params = {k: v for k, v in blocks[h].params.items() if k not in ("T_out", "fuel")}
        params["duty"] = 0.0
        blocks[h] = dataclasses.replace(blocks[h], params=params)
    goals = tuple(g for g in fs.goals if g.by.partition(".")[0] not in names)
    return dataclasses.replace(fs, blocks=blocks, goals=goals)


def _chunk_arrays(res):
    m = res.n_cases
    heaters = {n: np.where(res.converged, e.duty, np.nan) for n, e in res.equipment.items()
               if e.kind in ("heater",) and e.duty is not None}
    streams_T = {n: np.where(res.converged, s.T, np.nan) for n, s in res.streams.items()}
    fz = res.freezing or {}
    nan = np.full(m, np.nan)

    def per_stream(get):
        return {n: np.where(res.converged, get(fz[n]), np.nan) if n in fz else nan.copy()
                for n in res.streams}
    return {"converged": np.asarray(res.converged, dtype=bool), "reasons": list(_reasons(res, m)),
            "heaters": heaters, "T": streams_T,
            "hydT": per_stream(lambda f: np.asarray(f.hydrate_T, float)),
            "dewT": per_stream(lambda f: np.asarray(f.water_dew_T, float)),
            "free": {n: (np.asarray(fz[n].free_water, bool) & res.converged
                         if n in fz and fz[n].free_water is not None else np.zeros(m, bool))
                     for n in res.streams}}


#: Per-stream hourly arrays of a chunk, copied together when an hour is solved again.
STREAM_ARRAYS = ("T", "hydT", "dewT", "free")


def _solve_chunk(task):
    """Solve one chunk of hours (top level, so process pools and Dask can ship it); hours where a
    heater would cool are solved again with that heater off (module docstring)."""
    fs, cases, model = task
    res = solve_cases(fs, cases, model=model, strict=False, margins=True)
    out = _chunk_arrays(res)
    m = res.n_cases
    off = {h: np.zeros(m, dtype=bool) for h in out["heaters"]}
    for _ in range(len(off)):           # each pass can only add heaters to an hour's off set
        grew = False
        for h, d in out["heaters"].items():
            neg = out["converged"] & (np.nan_to_num(d, nan=0.0) < 0.0) & ~off[h]
            if neg.any():
                off[h] |= neg
                grew = True
        if not grew:
            break
        keys = np.array([tuple(bool(off[h][i]) for h in off) for i in range(m)]) \
            if off else np.zeros((m, 0), bool)
        for key in {tuple(k) for k in keys if any(k)}:
            idx = np.flatnonzero(np.all(keys == np.array(key), axis=1))
            names = [h for h, flag in zip(off, key) if flag]
            sub = solve_cases(_heaters_off(fs, names), {k: np.asarray(v)[idx] if np.ndim(v) else v
                                                        for k, v in cases.items()},
                              model=model, strict=False, margins=True)
            part = _chunk_arrays(sub)
            out["converged"][idx] = part["converged"]
            for j, i in enumerate(idx):
                out["reasons"][i] = part["reasons"][j]
            for h in out["heaters"]:
                out["heaters"][h][idx] = part["heaters"][h]
            for key in STREAM_ARRAYS:
                for s_name in out[key]:
                    out[key][s_name][idx] = part[key][s_name]
    # a goal that fails because the gas is too warm even at the low end of its bracket: the
    # heater it varies stays cold, and the hour is kept if its held stream is then warm enough
    for g in fs.goals:
        stream, _, attr = g.hold.partition(".")
        h = g.by.partition(".")[0]
        if attr != "T" or h not in off or stream not in out["T"]:
            continue
        idx = np.flatnonzero(~out["converged"] & ~np.any([o for o in off.values()], axis=0))
        if not idx.size:
            continue
        sub = solve_cases(_heaters_off(fs, [h]), {k: np.asarray(v)[idx] if np.ndim(v) else v
                                                   for k, v in cases.items()},
                          model=model, strict=False, margins=True)
        part = _chunk_arrays(sub)
        warm = part["converged"] & (part["T"][stream] >= g.target - fs.solver.goal_tolerance)
        for j in np.flatnonzero(warm):
            i = idx[j]
            out["converged"][i], out["reasons"][i] = True, ""
            off[h][i] = True
            for name in out["heaters"]:
                out["heaters"][name][i] = part["heaters"][name][j]
            for key in STREAM_ARRAYS:
                for s_name in out[key]:
                    out[key][s_name][i] = part[key][s_name][j]
    out["off"] = off
    out["model"] = res.model
    return out


@dataclass(frozen=True)
class YearResult:
    """Hour-by-hour results and the year's totals.

    ``heater_duty`` holds each heater's duty per hour [W], zero in the hours it stays cold
    (``heater_off``, bool per hour); ``efficiencies`` each heater's efficiency [-] with
    ``efficiency_sources``; ``cv`` the calorific value on ``calorific`` basis [J/Sm3]."""

    profile: Profile
    model: str
    converged: np.ndarray
    reasons: tuple
    heater_duty: dict          # heater -> W per hour
    stream_T: dict             # stream -> K per hour
    outlet: str
    efficiencies: dict         # heater -> [-]
    efficiency_sources: dict   # heater -> where it came from
    cv: float                  # J per standard m3 (15 degC, 101.325 kPa), ISO 6976:2016
    calorific: str             # "gross" or "net"
    min_T: float | None
    outlet_hydrate_T: np.ndarray | None = None   # K per hour at the outlet pressure (free water)
    hydrate_margin: float = 0.0                  # K (limits.hydrate_margin)
    heater_off: dict = dataclasses.field(default_factory=dict)   # heater -> bool per hour
    model_bias: str | None = None
    stream_hydrate_T: dict = dataclasses.field(default_factory=dict)    # stream -> K per hour
    stream_water_dew_T: dict = dataclasses.field(default_factory=dict)  # stream -> K per hour
    stream_free_water: dict = dataclasses.field(default_factory=dict)   # stream -> bool per hour

    @property
    def efficiency(self) -> float | None:
        """The one efficiency when every heater has the same, else None [-]."""
        values = set(self.efficiencies.values())
        return values.pop() if len(values) == 1 else None

    @property
    def gross_cv(self) -> float:
        """The calorific value used [J/Sm3] (its basis in ``calorific``)."""
        return self.cv

    @property
    def floored_hours(self) -> dict:
        """Heater -> hours it stayed cold because the gas needed no heat (a solved hour only)."""
        return {n: int(np.sum(off & self.converged)) for n, off in self.heater_off.items()}

    @property
    def energy_MWh(self) -> dict:
        return {n: float(np.nansum(d)) * HOURS_PER_ROW / 1e6 for n, d in self.heater_duty.items()}

    @property
    def fuel_MWh(self) -> dict:
        """Heat of the fuel each heater burns over the year [MWh] (duty / its efficiency)."""
        return {n: e / self.efficiencies[n] for n, e in self.energy_MWh.items()}

    @property
    def fuel_Sm3(self) -> float:
        heat_J = sum(float(np.nansum(d)) * HOURS_PER_ROW * 3600.0 / self.efficiencies[n]
                     for n, d in self.heater_duty.items())
        return heat_J / self.cv

    @property
    def hours_below_min_T(self) -> int:
        if self.min_T is None:
            return 0
        cold = np.zeros(self.profile.n, dtype=bool)
        for T in self.stream_T.values():
            cold |= np.nan_to_num(T, nan=np.inf) < self.min_T
        return int(cold.sum())

    @property
    def hours_below_hydrate(self) -> int | None:
        """Hours in which the outlet is colder than its hydrate temperature plus the margin (free
        water assumed), or None where the hydrate temperature was not computed."""
        if self.outlet_hydrate_T is None:
            return None
        T = self.stream_T[self.outlet]
        return int(np.sum(np.nan_to_num(T, nan=np.inf) < self.outlet_hydrate_T + self.hydrate_margin))

    def hydrate_hours(self) -> dict:
        """Hours each stream spends in the hydrate region, stream -> {key: hours}:

        * ``below_hydrate_T_free_water_assumed``: T below the stream's hydrate temperature (free
          water assumed, as the freezing checks do);
        * ``below_hydrate_T_plus_margin_free_water_assumed``: T below hydrate T + ``hydrate_margin``;
        * ``below_hydrate_T_by_dew_point`` and ``below_hydrate_T_plus_margin_by_dew_point``: the
          same, counted only in hours in which the stream can hold free water (at or below its
          water dew point, or a separator's free water: the freezing checks' ``free_water``).

        Streams without a hydrate temperature in any hour (no former, or none above 230 K) are
        left out."""
        out = {}
        for name, hT in self.stream_hydrate_T.items():
            if not np.any(np.isfinite(hT)):
                continue
            T = np.nan_to_num(self.stream_T[name], nan=np.inf)
            h = np.nan_to_num(hT, nan=-np.inf)
            free = self.stream_free_water.get(name, np.zeros(T.shape, bool))
            inside, near = T < h, T < h + self.hydrate_margin
            out[name] = {"below_hydrate_T_free_water_assumed": int(inside.sum()),
                         "below_hydrate_T_plus_margin_free_water_assumed": int(near.sum()),
                         "below_hydrate_T_by_dew_point": int((inside & free).sum()),
                         "below_hydrate_T_plus_margin_by_dew_point": int((near & free).sum()),
                         "min_margin_K": float(np.nanmin(self.stream_T[name] - hT))
                         if np.any(np.isfinite(self.stream_T[name] - hT)) else None}
        return out

    def months(self) -> dict | None:
        """Heat and fuel by calendar month, ``"YYYY-MM"`` -> {``heat_MWh``: {heater: MWh},
        ``fuel_MWh``: {heater: MWh}, ``fuel_Sm3``, ``hours``}; None where the profile's times do
        not start with a year and month (ISO 8601, ``2026-01-01T00:00``)."""
        keys = [str(t)[:7] for t in self.profile.time]
        if not all(len(k) == 7 and k[4] == "-" and k[:4].isdigit() and k[5:].isdigit()
                   for k in keys):
            return None
        keys = np.array(keys)
        out = {}
        for month in sorted(set(keys)):
            sel = keys == month
            heat = {n: float(np.nansum(d[sel])) * HOURS_PER_ROW / 1e6
                    for n, d in self.heater_duty.items()}
            fuel = {n: e / self.efficiencies[n] for n, e in heat.items()}
            out[month] = {"hours": int(sel.sum()), "heat_MWh": heat, "fuel_MWh": fuel,
                          "fuel_Sm3": sum(fuel.values()) * 3.6e9 / self.cv}
        return out

    def duty_duration(self, levels: int = DURATION_LEVELS) -> dict:
        """The duty-duration curve of each heater at ``levels`` duties evenly spaced from the
        peak / levels up to the peak: heater -> {``duty_W``: [...], ``hours_at_or_above``: [...]}
        (solved hours only; a heater that stays cold counts zero)."""
        out = {}
        for n, d in self.heater_duty.items():
            ok = d[np.isfinite(d)]
            if ok.size == 0 or not np.max(ok) > 0.0:
                continue
            duties = np.max(ok) * np.arange(1, levels + 1) / levels
            out[n] = {"duty_W": [float(x) for x in duties],
                      "hours_at_or_above": [int(np.sum(ok >= x * (1 - 1e-12))) for x in duties]}
        return out

    def summary(self) -> dict:
        """The year's figures in SI (and MWh, Sm3), JSON-ready."""
        peak = {}
        for n, d in self.heater_duty.items():
            if np.all(np.isnan(d)):
                continue
            i = int(np.nanargmax(d))
            peak[n] = {"duty_W": float(d[i]), "time": self.profile.time[i]}
        T_out = self.stream_T[self.outlet]
        finite = T_out[np.isfinite(T_out)]
        return {"model": self.model, "hours": self.profile.n,
                "failed_hours": int((~self.converged).sum()),
                "heat_MWh": self.energy_MWh, "fuel_MWh": self.fuel_MWh, "fuel_Sm3": self.fuel_Sm3,
                "heaters": {n: {"efficiency": self.efficiencies[n],
                                "efficiency_source": self.efficiency_sources[n]}
                            for n in self.heater_duty},
                "heater_off_hours": self.floored_hours,
                "calorific_basis": self.calorific, "calorific_value_J_Sm3": self.cv,
                "calorific_standard": "ISO 6976:2016, 15 degC / 15 degC",
                "peak": peak, "hours_below_min_T": self.hours_below_min_T,
                "min_T_K": self.min_T, "outlet": self.outlet,
                "hours_below_hydrate_T_plus_margin": self.hours_below_hydrate,
                "hydrate_margin_K": self.hydrate_margin,
                "outlet_T_K": {"min": float(finite.min()) if finite.size else None,
                               "max": float(finite.max()) if finite.size else None},
                "model_bias": self.model_bias,
                "hydrate_hours": self.hydrate_hours(), "months": self.months(),
                "duty_duration": self.duty_duration(),
                "peak_total": self._peak_total()}

    def _peak_total(self) -> dict | None:
        """The hour of the largest duty of all heaters together."""
        if not self.heater_duty:
            return None
        total = np.sum([np.nan_to_num(d, nan=0.0) for d in self.heater_duty.values()], axis=0)
        total = np.where(self.converged, total, np.nan)
        if np.all(np.isnan(total)):
            return None
        i = int(np.nanargmax(total))
        return {"duty_W": float(total[i]), "time": self.profile.time[i]}


def year(fs: SheetSpec, profile: Profile, *, efficiency: float | None = None,
         feed: str | None = None, outlet_block: str | None = None, model: str | None = None,
         executor=None, show_progress: bool = False, calorific: str = "gross") -> YearResult:
    """Solve every hour of ``profile`` on ``fs`` with its goals held.

    Parameters
    ----------
    fs : SheetSpec
    profile : Profile
    efficiency : float, optional
        Heater efficiency on the chosen calorific value [-] for heaters whose ``efficiency`` the
        file does not give (water-bath heaters run about 0.5-0.8; common practice). Default
        :data:`DEFAULT_EFFICIENCY`, an assumption the report states.
    feed : str, optional
        The feed the profile drives (default: the flowsheet's only feed).
    outlet_block : str, optional
        The throttle whose ``P_out`` the profile's ``P_out`` column sets (default: the only throttle
        whose outlet is a product).
    model : str, optional
    executor : optional
        :mod:`letdown.study.executors` executor (default: this process).
    show_progress : bool
        A progress bar over the chunks on the terminal (for the command line).
    calorific : str
        ``"gross"`` (default) or ``"net"``: the calorific value of the fuel gas (ISO 6976:2016).

    Raises
    ------
    InputError
        An ambiguous or unknown feed or outlet block, an efficiency outside (0, 1], an unknown
        calorific basis.
    """
    if efficiency is not None and not 0.0 < float(efficiency) <= 1.0:
        raise InputError(f"heater efficiency must lie in (0, 1] (got {efficiency})",
                         field="--efficiency")
    if calorific not in CALORIFIC:
        raise InputError(f"the calorific basis is 'gross' or 'net' (got '{calorific}')",
                         field="--calorific")
    feed = _only(feed, list(fs.feeds), "feed")
    consumed = {s for b in fs.blocks.values() for s in b.inlets.values()}
    throttles = [n for n, b in fs.blocks.items() if b.kind == "throttle"
                 and any(s not in consumed for s in b.outlets.values())]
    v = profile.values
    cases = {f"{feed}.flow": v["flow"], f"{feed}.P": v["P_in"],
             f"{feed}.T": v["T_in"] if "T_in" in v else v["ground_T"]}
    outlet_stream = None
    if "P_out" in v or outlet_block:
        outlet_block = _only(outlet_block, throttles, "outlet throttle")
        if "P_out" in v:
            cases[f"{outlet_block}.P_out"] = v["P_out"]
    if outlet_block:
        outlet_stream = next(iter(fs.blocks[outlet_block].outlets.values()))
    elif throttles:
        outlet_stream = next(iter(fs.blocks[throttles[-1]].outlets.values()))
    executor = executor or Serial()
    parts = chunks(profile.n, max(executor.workers, int(np.ceil(profile.n / CHUNK_CASES))))
    tasks = [(fs, {k: a[idx] for k, a in cases.items()}, model) for idx in parts]
    outs = executor.map(_solve_chunk, tasks, show_progress=show_progress)
    conv = np.concatenate([o["converged"] for o in outs])
    reasons = tuple(r for o in outs for r in o["reasons"])
    heaters = {n: np.concatenate([o["heaters"][n] for o in outs]) for n in outs[0]["heaters"]}
    temps = {n: np.concatenate([o["T"][n] for o in outs]) for n in outs[0]["T"]}
    off = {n: np.concatenate([o["off"][n] for o in outs]) for n in outs[0]["off"]}
    hydT, dewT, free = ({n: np.concatenate([o[key][n] for o in outs]) for n in outs[0][key]}
                        for key in ("hydT", "dewT", "free"))
    if outlet_stream is None:
        outlet_stream = list(temps)[-1]
    effs, sources = {}, {}
    for n in heaters:
        own = fs.blocks[n].params.get("efficiency")
        if own is not None:
            effs[n], sources[n] = float(own), f"the file ({n}.efficiency)"
        elif efficiency is not None:
            effs[n], sources[n] = float(efficiency), "the command line (--efficiency)"
        else:
            effs[n], sources[n] = DEFAULT_EFFICIENCY, "assumed (no efficiency given)"
    from ..fluid.quality import quality
    comps = list(fs.gas.composition)
    feed_comp = fs.feeds[feed].composition or fs.gas.composition
    z = np.array([feed_comp.get(c, 0.0) for c in comps], dtype=float)
    q = quality(comps, z / z.sum(), 288.15, 288.15)
    cv = float(q.gross_volumetric if calorific == "gross" else q.net_volumetric)
    # the outlet's hydrate temperature of every hour: the freezing checks' own (free water)
    hyd = hydT.get(outlet_stream)
    if hyd is not None and not np.any(np.isfinite(hyd)):
        hyd = None
    return YearResult(profile, outs[0]["model"], conv, reasons, heaters, temps, outlet_stream,
                      effs, sources, cv, calorific, fs.limits.get("min_T"), hyd,
                      float(fs.limits.get("hydrate_margin", 0.0)), off,
                      bias_line(outs[0]["model"]), hydT, dewT, free)


def _only(name, options, what):
    if name is not None:
        if name not in options:
            raise InputError(f"unknown {what} '{name}' (this flowsheet has: {', '.join(options) or 'none'})",
                             field=f"--{what.split()[-1]}")
        return name
    if len(options) != 1:
        raise InputError(f"the flowsheet has {len(options)} candidates for the {what} "
                         f"({', '.join(options) or 'none'}); name one", field=f"--{what.split()[-1]}")
    return options[0]
