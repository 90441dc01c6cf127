"""Preheat sizing over operating cases (``letdown size``).

The flowsheet's first goal that holds a stream temperature by varying a heater names the **held
stream** (the coldest point downstream of the preheater, typically the regulator outlet) and the
**preheater**. For every operating case of the ``cases`` section (or the file as written when it
has none), the held stream's target becomes the governing limit of that case::

    target = max(limits.min_T,                      (as written: the user's coldest allowed)
                 0 degC + m,                         (ice; dropped when limits.min_T < 0 degC)
                 hydrate_T(P_held, z_held) + m)      (vdW-P, free water assumed)

with ``m`` = ``limits.hydrate_margin`` (0 K when absent, with a warning). The hydrate temperature
is taken at the held stream's pressure and dry composition in that case, **with free water assumed
whatever the water dew point**: liquid water arrives with pipeline gas (slugs, carry-over) more
often than dew-point figures suggest, and a preheater is sized for the bad day (common practice).
The ice limit stands for ice on regulator bodies and pilot lines and for frost heave under buried
pipe, which need no water in the gas.

Every case is then solved with its target (one batch through the solver, the goal iterating all
cases together); the heater's duty is that case's duty (negative: the gas arrives warm enough and
no heat is needed -- reported as zero). The design duty is the largest; its case and its limit
govern. Fuel: duty / efficiency, the efficiency being the heater's ``efficiency`` parameter if the
file gives one, else the one stated on the command line (water-bath heaters run about 50-80 %,
common practice), with the gross calorific value of the feed gas by ISO 6976:2016 (15 degC / 15
degC) for the standard volume of fuel gas.

Every stream downstream of the preheater is checked against its own limit (the same formula at its
own pressure); a stream colder than its limit is reported (the held stream is then not the coldest
point, and the goal should hold that one).
"""
from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

from ..caution import CAUTION
from ..errors import InputError
from ..fluid.quality import quality
from ..sheet.freezing import ICE_T
from ..sheet.graph import downstream_streams
from ..sheet.solve import make_fluid, solve_cases
from ..sheet.spec import Flowsheet

#: Heater efficiency used when neither the file nor the command line gives one [-] (the middle of
#: the 50-80 % of water-bath heaters; common practice), stated in the report as assumed.
DEFAULT_EFFICIENCY = 0.75
#: A downstream stream colder than its own limit by more than this is reported [K] (the goal
#: holds the held stream to its tolerance, 1e-6 K by default).
LIMIT_SLACK = 1e-3
#: Molar volume basis of the fuel's standard volume: Sm3 at 15 degC, 101.325 kPa (ISO 13443).
STANDARD_T = 288.15


@dataclass(frozen=True)
class CaseSize:
    """The preheat one operating case needs (SI).

    Attributes
    ----------
    name : str
    values : dict
        What the case sets (``feed.T`` [K], ...).
    held_P : float
        Pressure of the held stream [Pa].
    hydrate_T : float
        Hydrate formation temperature there [K] (NaN: none above 230 K).
    limits : dict
        ``min_T``, ``ice``, ``hydrate``: each limit plus its margin [K] (absent when it does not
        apply).
    governing : str
        Which limit sets the target.
    target : float
        The held stream's temperature [K].
    duty : float
        Preheater duty [W], zero when the gas needs no heat.
    raw_duty : float
        The heater's duty at the target [W] (negative when the gas arrives warmer than needed).
    heater_T_out : float
        Preheater outlet temperature [K].
    water_dew_T : float
        Water dew point of the held stream [K] (NaN: dry).
    met : bool
        The goal met the target.
    colder : tuple
        ``(stream, T, limit)`` of downstream streams colder than their own limit [K].
    warnings : tuple of (where, what)
    """

    name: str
    values: dict
    held_P: float
    hydrate_T: float
    limits: dict
    governing: str
    target: float
    duty: float
    raw_duty: float
    heater_T_out: float
    water_dew_T: float
    met: bool
    colder: tuple
    warnings: tuple


@dataclass(frozen=True)
class SizeResult:
    """Preheat sizing over the operating cases.

    Attributes
    ----------
    title, model, heater, held : str
        The flowsheet, the model, the preheater and the held stream.
    margin : float
        ``limits.hydrate_margin`` used [K].
    min_T : float or None
    efficiency : float
        Heater efficiency [-]; ``efficiency_source`` says where it came from.
    gross_cv : float
        Gross calorific value of the feed gas [J/Sm3] (ISO 6976:2016, 15 degC / 15 degC).
    cases : tuple of CaseSize
    design : int
        Index of the governing case (the largest duty among the cases whose goal was met).
    notes : tuple of str
    """

    title: str
    model: str
    heater: str
    held: str
    margin: float
    min_T: float | None
    efficiency: float
    efficiency_source: str
    gross_cv: float
    cases: tuple
    design: int
    notes: tuple

    @property
    def design_case(self) -> CaseSize:
        return self.cases[self.design]

    @property
    def design_duty(self) -> float:
        """The design duty [W]."""
        return self.design_case.duty

    @property
    def design_fuel(self) -> float:
        """Heat of the fuel burnt at the design duty [W]."""
        return self.design_duty / self.efficiency

    @property
    def design_fuel_Sm3_h(self) -> float:
        """Fuel gas at the design duty [Sm3/h] (15 degC, 101.325 kPa)."""
        return self.design_fuel / self.gross_cv * 3600.0

    def to_dict(self) -> dict:
        """JSON-ready figures (SI, unit in each key)."""
        def num(x):
            return None if x is None or not np.isfinite(x) else float(x)
        d = self.design_case
        return {
            "title": self.title, "model": self.model, "heater": self.heater, "held": self.held,
            "hydrate_margin_K": self.margin, "min_T_K": num(self.min_T),
            "efficiency": self.efficiency, "efficiency_source": self.efficiency_source,
            "gross_cv_J_Sm3": self.gross_cv,
            "design": {"case": d.name, "duty_W": d.duty, "governing_limit": d.governing,
                       "target_T_K": d.target, "fuel_W": self.design_fuel,
                       "fuel_Sm3_h": self.design_fuel_Sm3_h},
            "cases": [{"name": c.name, "values": dict(c.values), "held_P_Pa": c.held_P,
                       "hydrate_T_K": num(c.hydrate_T), "water_dew_T_K": num(c.water_dew_T),
                       "limits_K": dict(c.limits), "governing_limit": c.governing,
                       "target_T_K": c.target, "duty_W": c.duty, "heater_duty_W": c.raw_duty,
                       "heater_T_out_K": c.heater_T_out, "fuel_W": c.duty / self.efficiency,
                       "fuel_Sm3_h": c.duty / self.efficiency / self.gross_cv * 3600.0,
                       "met": c.met,
                       "colder_streams": [{"stream": s, "T_K": t, "limit_K": lim}
                                          for s, t, lim in c.colder],
                       "warnings": [{"where": w, "what": x} for w, x in c.warnings]}
                      for c in self.cases],
            "notes": list(self.notes), "caution": CAUTION}


def _sizing_goal(fs: Flowsheet):
    for k, g in enumerate(fs.goals):
        stream, _, attr = g.hold.partition(".")
        block, _, _param = g.by.partition(".")
        if attr == "T" and block in fs.blocks and fs.blocks[block].kind == "heater":
            return k, stream, block
    raise InputError("letdown size needs a goal that holds the coldest point's temperature by "
                     "varying the preheater, e.g. goals: [{hold: network.T, at: 5 degC, by: "
                     "preheat.T_out, within: [-10 degC, 90 degC]}]; its target is replaced by "
                     "each case's limit", file=fs.source, field="goals")


def _case_arrays(fs: Flowsheet):
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


def _limits(T_h, margin, min_T):
    """Limits plus margins [K] of one point: {"min_T", "ice", "hydrate"} (those that apply)."""
    lim = {}
    if min_T is not None:
        lim["min_T"] = float(min_T)
    if min_T is None or min_T >= ICE_T:
        lim["ice"] = ICE_T + margin
    if np.isfinite(T_h):
        lim["hydrate"] = float(T_h) + margin
    return lim


def size(fs: Flowsheet, *, efficiency: float | None = None, model: str | None = None) -> SizeResult:
    """Size the preheater over the operating cases (module docstring).

    Parameters
    ----------
    fs : Flowsheet
    efficiency : float, optional
        Heater efficiency [-] when the file's heater has none (default
        :data:`DEFAULT_EFFICIENCY`, stated as assumed).
    model : str, optional
        Thermodynamic model overriding the file's.

    Returns
    -------
    SizeResult

    Raises
    ------
    InputError
        No goal holding a stream temperature by a heater; an efficiency outside (0, 1]; a case
        that leaves a parameter unset; a target the goal's bracket cannot reach (with the values at
        the bracket's ends).
    ConvergenceError
        A flash, loop or goal that did not converge.
    """
    k, held, heater = _sizing_goal(fs)
    if efficiency is not None and not 0.0 < float(efficiency) <= 1.0:
        raise InputError(f"heater efficiency must lie in (0, 1] (got {efficiency})",
                         field="--efficiency")
    notes = []
    margin = fs.limits.get("hydrate_margin")
    if margin is None:
        margin = 0.0
        notes.append("no limits.hydrate_margin: 0 K used (3-5 K is common practice)")
    min_T = fs.limits.get("min_T")
    if min_T is not None and min_T < ICE_T:
        notes.append("limits.min_T is below 0 degC: the ice limit is not applied")
    names, cases, values = _case_arrays(fs)
    if not fs.cases:
        notes.append("the file has no cases section: its one case is sized as written")
    n = len(names)
    # pass 1, goals off: the held stream's pressure and composition in every case
    bare = dataclasses.replace(fs, goals=())
    first = solve_cases(bare, cases or None, model=model)
    fluid = make_fluid(fs, model)
    hs = first.streams[held]
    P_held = np.broadcast_to(hs.P, (n,)).copy()
    curve = fluid.hydrate_curve(P_held, zs=np.broadcast_to(hs.zs, (n, hs.zs.shape[1])))
    limits = [_limits(curve.T[i], margin, min_T) for i in range(n)]
    if not all(limits):
        raise InputError("no limit applies to the held stream (no limits.min_T, the ice limit "
                         "dropped and no hydrate former): give limits.min_T", file=fs.source,
                         field="limits")
    governing = [max(lim, key=lim.get) for lim in limits]
    targets = np.array([lim[g] for lim, g in zip(limits, governing)])
    # pass 2: every case at its own target, margins computed
    res = solve_cases(fs, {**cases, f"goal{k + 1}.at": targets}, model=model, margins=True)
    eq = res.equipment[heater]
    raw = np.broadcast_to(eq.duty, (n,))
    T_out = np.broadcast_to(res.streams[next(iter(fs.blocks[heater].outlets.values()))].T, (n,))
    met = np.broadcast_to(res.goals[0].met if res.goals else np.ones(n, bool), (n,))
    goal_rec = next((g for g in res.goals if g.hold == fs.goals[k].hold), None)
    if goal_rec is not None:
        met = np.broadcast_to(goal_rec.met, (n,))
    down = downstream_streams(fs, heater)
    out = []
    for i in range(n):
        colder = []
        for s in down:
            T = float(res.streams[s].T[i])
            fz = res.freezing[s]
            lim = _limits(fz.hydrate_T[i], margin, min_T)
            if lim and T < max(lim.values()) - LIMIT_SLACK:
                colder.append((s, T, max(lim.values())))
        case_res = res.case(i)
        warns = tuple((w["where"], w["what"]) for w in case_res.warnings)
        fz_held = res.freezing[held]
        out.append(CaseSize(
            name=names[i], values=values[i], held_P=float(P_held[i]),
            hydrate_T=float(curve.T[i]), limits=limits[i], governing=governing[i],
            target=float(targets[i]), duty=max(float(raw[i]), 0.0), raw_duty=float(raw[i]),
            heater_T_out=float(T_out[i]), water_dew_T=float(fz_held.water_dew_T[i]),
            met=bool(met[i]), colder=tuple(colder), warnings=warns))
    ok = [i for i, c in enumerate(out) if c.met]
    if not ok:
        raise InputError("the goal met no case's target", file=fs.source, field="goals")
    design = max(ok, key=lambda i: out[i].duty)
    eff_file = fs.blocks[heater].params.get("efficiency")
    if eff_file is not None:
        eff, source = float(eff_file), f"the file ({heater}.efficiency)"
        if efficiency is not None:
            notes.append(f"--efficiency {efficiency:g} ignored: the file gives {heater}.efficiency")
    elif efficiency is not None:
        eff, source = float(efficiency), "the command line (--efficiency)"
    else:
        eff, source = DEFAULT_EFFICIENCY, "assumed (no efficiency given; water-bath heaters run " \
                                          "about 50-80 %)"
    comps = list(fluid.components)
    feed = next(iter(fs.feeds.values()))
    comp = feed.composition or fs.gas.composition
    z = np.array([comp.get(c, 0.0) for c in comps])
    cv = float(quality(comps, z / z.sum(), STANDARD_T, STANDARD_T).gross_volumetric)
    return SizeResult(title=fs.title, model=res.model, heater=heater, held=held,
                      margin=float(margin), min_T=min_T, efficiency=eff, efficiency_source=source,
                      gross_cv=cv, cases=tuple(out), design=design, notes=tuple(notes))
