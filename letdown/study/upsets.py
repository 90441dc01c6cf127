"""Upsets of a station over its operating cases (``letdown upsets``, issue 13 part 6).

Three kinds, each over every operating case (the file's ``cases`` section, or the file as
written), all cases of a scenario solved together in one batch:

(a) **Loss of preheat.** Every heater off (duty 0), and each heater alone off when there are
    several. The goals that vary a heater taken off are dropped (nothing is left to hold them);
    the other goals are held (the heaters still running keep their control). For every stream
    the coldest temperature over the cases is reported, and the smallest margins over the cases
    against ``limits.min_T`` (the material's limit), the hydrate temperature and the ice point of
    free water: the freezing checks of the solve (:mod:`letdown.sheet.freezing`: free water
    assumed for the hydrate margin, ice judged where free water can form). The normal operation
    is shown beside them.

(b) **A regulator failing wide open.** For every rated throttle with ``protection:
    {set_pressure}``: the flow through its rated Kv at full travel from its inlet state in
    normal operation into the pressure at which the downstream protection acts (the throttle's
    own ``fail_open_flow_*`` figures, :func:`letdown.equipment.throttle.fail_open`, IEC
    60534-2-1): the load that protection (a monitor, slam-shut or relief device) must take.

(c) **A run of regulators in series** (rated throttles joined through blocks of one inlet and
    one outlet: heaters, coolers, pipes). Two definitions, both reported:

    * *one fails, the others keep regulating* -- the single failure that series protection is
      commonly designed for (common practice): the regulators upstream still hold the failed
      one's inlet pressure and those downstream pass only the demand, so the load on the failed
      one's protection is its own figure of (b);
    * *all fail open together* -- a common-cause failure (a shared pilot or control supply lost;
      common practice treats it as the bounding case): every valve of the run wide open, the
      same mass flow through each, from the run's inlet state into the set pressure of the
      protection of the **last** regulator. Between the valves the gas keeps the run's inlet
      enthalpy (the heaters' duty, spread over a flow several times the normal one, is left out,
      and so are the small pressure drops of the blocks between: colder, denser gas and no
      extra resistance, so the flow is if anything overstated). Solved as nested roots, all cases
      together: for a trial flow ``W``, each valve's pressure-drop ratio ``x`` from ``W = N6 Fp
      Kv Y sqrt(x P1 rho1)`` (IEC 60534-2-1, FR = 1; bracket ``[0, x_choked]``), the state at its
      outlet by a P-h flash, then ``W`` such that the last outlet is at the set pressure
      (Illinois, :mod:`letdown.numerics.rootfind`). Where the first valve chokes before the last
      outlet reaches the set pressure, the run passes the first valve's choked flow.

Every upset carries :data:`letdown.caution.UPSET_CAUTION`.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..caution import UPSET_CAUTION
from ..equipment import valve as iec
from ..numerics.rootfind import bracketed_root
from ..sheet.solve import make_fluid, solve_cases
from ..sheet.spec import SheetSpec
from .size import _case_arrays
from .year import _heaters_off

#: Blocks a series run of regulators may pass through: one inlet, one outlet, no branching.
SERIES_KINDS = ("heater", "cooler", "pipe")
#: The pressure-drop ratio of a valve is solved to this fraction of the trial flow [-] (round-off
#: level of the IEC equation).
FLOW_RTOL = 1e-12
#: The last outlet meets the set pressure to this fraction of it [-].
PRESSURE_RTOL = 1e-10
#: Evaluations per root solve (inner and outer).
MAX_ITERATIONS = 100
#: Margin keys of the freezing figures reported, and their names.
MARGINS = {"min_T_margin_K": "min_T", "hydrate_margin_K": "hydrate", "ice_margin_K": "ice"}


@dataclass(frozen=True)
class UpsetResult:
    """Upsets of a station (SI; lists of dicts ready for JSON, the unit in each key).

    Attributes
    ----------
    title, model : str
    cases : tuple of str
        The operating cases.
    hydrate_margin : float
        ``limits.hydrate_margin`` [K] (the margin wanted; the reported margins are ``T - limit``).
    min_T : float or None
        ``limits.min_T`` [K].
    preheat : tuple of dict
        One per scenario (the first is normal operation): ``scenario``, ``heaters_off``,
        ``goals_dropped``, ``failures`` ({case: reason}), ``streams`` (one dict per stream:
        ``stream``, ``coldest_T_K``, ``coldest_case``, ``P_Pa``, and per margin kind
        ``<kind>_margin_K`` with ``<kind>_case``, the smallest over the cases; ``verdict``).
    fail_open : tuple of dict
        One per rated throttle with a protection, per case: ``flow_kg_s``, ``flow_mol_s``,
        ``choked``, ``inlet_P_Pa``, ``set_pressure_Pa``, ``normal_flow_kg_s`` (and the block's
        ``Kv_rated_m3_h``).
    runs : tuple of dict
        One per series run of two or more rated throttles: ``blocks``, ``single_failure`` (block
        -> the (b) figures per case), ``all_open`` (per case: ``flow_kg_s``, ``flow_mol_s``,
        ``inlet_P_Pa`` of each valve, ``choked`` per valve, ``set_pressure_Pa``), or ``note`` where
        the last regulator has no protection.
    notes : tuple of str
    """

    title: str
    model: str
    cases: tuple
    hydrate_margin: float
    min_T: float | None
    preheat: tuple
    fail_open: tuple
    runs: tuple
    notes: tuple

    @property
    def any_failed(self) -> bool:
        """A case of normal operation failed to solve."""
        return bool(self.preheat and self.preheat[0]["failures"])

    def to_dict(self) -> dict:
        return {"title": self.title, "model": self.model, "cases": list(self.cases),
                "hydrate_margin_K": self.hydrate_margin, "min_T_K": self.min_T,
                "loss_of_preheat": [dict(s) for s in self.preheat],
                "fail_open": [dict(f) for f in self.fail_open],
                "series_runs": [dict(r) for r in self.runs],
                "series_definitions": dict(SERIES_DEFINITIONS),
                "notes": list(self.notes), "caution": UPSET_CAUTION}


#: How the report and JSON state the two definitions of part (c).
SERIES_DEFINITIONS = {
    "single_failure": "one regulator fails wide open and the others keep regulating: its "
                      "protection takes its own fail-open flow (the single failure series "
                      "protection is commonly designed for; common practice)",
    "all_open": "every regulator of the run fails wide open together (a common-cause failure, "
                "such as a shared pilot or control supply lost; the bounding case in common "
                "practice): the same flow through each rated Kv in series, from the run's inlet "
                "state into the set pressure of the last regulator's protection, no heat or "
                "pressure drop between the valves"}


def _num(x):
    x = float(x)
    return x if np.isfinite(x) else None


def upsets(fs: SheetSpec, *, model: str | None = None) -> UpsetResult:
    """Loss of preheat, regulators failing open, and series runs failing open (module
    docstring).

    Parameters
    ----------
    fs : SheetSpec
    model : str, optional
        Thermodynamic model overriding the file's.

    Returns
    -------
    UpsetResult
        Cases that fail to solve in a scenario are recorded with their reason, not raised.

    Raises
    ------
    InputError
        A case leaves a parameter unset (see ``letdown size``).
    """
    names, table, _ = _case_arrays(fs)
    notes = []
    if not fs.cases:
        notes.append("the file has no cases section: its one case is taken as written")
    normal = solve_cases(fs, table or None, model=model, strict=False, margins=True)
    heaters = [b for b, spec in fs.blocks.items() if spec.kind == "heater"]
    scenarios = [("normal operation", ())]
    if heaters:
        scenarios.append(("every heater off", tuple(heaters)))
        if len(heaters) > 1:
            scenarios += [(f"{h} off", (h,)) for h in heaters]
    else:
        notes.append("no heater: no loss-of-preheat scenario")
    preheat = []
    for title, off in scenarios:
        if not off:
            res, dropped = normal, ()
        else:
            sheet = _heaters_off(fs, off)
            dropped = tuple(f"{g.hold} by {g.by}" for g in fs.goals if g not in sheet.goals)
            # what the cases set on a heater taken off no longer applies (it is off)
            kept = {k: v for k, v in table.items() if k.partition(".")[0] not in off}
            if table and not kept and not fs.feeds:
                kept = table            # a closed loop: nothing else to carry the cases
            elif table and not kept:
                # the cases then differ in nothing else: keep their number all the same
                feed = next(iter(fs.feeds))
                kept = {f"{feed}.T": np.full(len(names), float(fs.feeds[feed].T))}
            # the model of normal operation, so that the scenarios compare like with like
            res = solve_cases(sheet, kept or None, model=model or normal.model, strict=False,
                              margins=True)
        preheat.append(_scenario(title, off, dropped, res, names, fs))
    fail_open = _fail_open(fs, normal, names)
    runs = _runs(fs, normal, names, model or normal.model)
    if not fail_open:
        notes.append("no rated throttle with protection: {set_pressure}: no fail-open load")
    hm = fs.limits.get("hydrate_margin")
    return UpsetResult(title=fs.title, model=normal.model, cases=tuple(names),
                       hydrate_margin=float(hm) if hm is not None else np.nan,
                       min_T=fs.limits.get("min_T"), preheat=tuple(preheat),
                       fail_open=tuple(fail_open), runs=tuple(runs), notes=tuple(notes))


def _scenario(title, off, dropped, res, names, fs) -> dict:
    """The coldest temperature and smallest margins of every stream over the cases."""
    ok = np.asarray(res.converged, dtype=bool)
    failures = {names[i]: str(res.failures[i]) for i in range(len(names)) if not ok[i]}
    per_case = [res.case(i) if ok[i] else None for i in range(len(names))]
    wanted = fs.limits.get("hydrate_margin")
    streams = []
    for s in res.streams:
        flowing = [i for i, c in enumerate(per_case)
                   if c is not None and c.streams[s].flow > 0.0 and np.isfinite(c.streams[s].T)]
        row = {"stream": s, "coldest_T_K": None, "coldest_case": None, "P_Pa": None}
        if flowing:
            i = min(flowing, key=lambda k: per_case[k].streams[s].T)
            row.update(coldest_T_K=_num(per_case[i].streams[s].T), coldest_case=names[i],
                       P_Pa=_num(per_case[i].streams[s].P))
        verdict = []
        for key, kind in MARGINS.items():
            vals = [(per_case[i].streams[s].freezing or {}).get(key) for i in flowing]
            got = [(v, i) for v, i in zip(vals, flowing) if v is not None and np.isfinite(v)]
            if got:
                v, i = min(got)
                row[key], row[f"{kind}_case"] = float(v), names[i]
                if v < 0.0:
                    verdict.append(f"below {kind}" + (" T" if kind == "hydrate" else ""))
                elif kind == "hydrate" and wanted is not None and v < wanted:
                    verdict.append("hydrate margin short")
            else:
                row[key], row[f"{kind}_case"] = None, None
        # the water dew point says whether free water (and so hydrate or ice) can form at all
        dews = [((per_case[i].streams[s].freezing or {}).get("water_dew_margin_K"), i)
                for i in flowing]
        dews = [(v, i) for v, i in dews if v is not None and np.isfinite(v)]
        row["water_dew_margin_K"] = float(min(dews)[0]) if dews else None
        if dews and min(dews)[0] > 0.0 and any(v.startswith(("below hydrate", "hydrate"))
                                                 for v in verdict):
            verdict.append("(dry: above its water dew point)")
        row["verdict"] = (", ".join(verdict).replace(", (", " (") if verdict
                          else "ok" if flowing else "no flow")
        streams.append(row)
    return {"scenario": title, "heaters_off": list(off), "goals_dropped": list(dropped),
            "failures": failures, "streams": streams}


def _rated(fs) -> dict:
    return {b: spec for b, spec in fs.blocks.items()
            if spec.kind == "throttle" and spec.params.get("valve") is not None}


def _fail_open(fs, res, names) -> list:
    out = []
    ok = np.asarray(res.converged, dtype=bool)
    for b, spec in _rated(fs).items():
        if spec.params.get("protection") is None:
            continue
        # a result whose every case failed carries no details: blank figures
        blank = np.full(len(names), np.nan)
        d = {k: res.equipment[b].details.get(k, blank) for k in
             ("fail_open_flow_kg_s", "fail_open_flow_mol_s", "fail_open_choked",
              "protection_set_pressure_Pa")}
        inlet = res.streams[spec.inlets["in"]]
        rows = []
        for i, name in enumerate(names):
            m = float(inlet.flow[i] * inlet.molar_mass[i])
            rows.append({"case": name, "solved": bool(ok[i]),
                         "flow_kg_s": _num(d["fail_open_flow_kg_s"][i]),
                         "flow_mol_s": _num(d["fail_open_flow_mol_s"][i]),
                         "choked": bool(d["fail_open_choked"][i]) if ok[i] else None,
                         "inlet_P_Pa": _num(inlet.P[i]),
                         "set_pressure_Pa": _num(d["protection_set_pressure_Pa"][i]),
                         "normal_flow_kg_s": _num(m)})
        out.append({"block": b, "Kv_rated_m3_h": _kv(spec.params["valve"]), "cases": rows})
    return out


def series_runs(fs) -> list:
    """Runs of two or more rated throttles in series, in flow order (lists of block names).

    A run follows a rated throttle's outlet through blocks of :data:`SERIES_KINDS` with one inlet
    and one outlet to the next rated throttle; any other block (a splitter, a mixer, a
    separator, an unrated throttle) ends it.
    """
    rated = _rated(fs)
    consumer = {}
    for b, spec in fs.blocks.items():
        for s in spec.inlets.values():
            consumer.setdefault(s, []).append(b)

    def next_rated(b):
        s = fs.blocks[b].outlets.get("out")
        while s is not None:
            users = consumer.get(s, [])
            if len(users) != 1:
                return None
            u = users[0]
            if u in rated:
                return u
            spec = fs.blocks[u]
            if spec.kind not in SERIES_KINDS or len(spec.inlets) != 1 or len(spec.outlets) != 1:
                return None
            s = next(iter(spec.outlets.values()))
        return None
    following = {b: next_rated(b) for b in rated}
    has_before = {v for v in following.values() if v is not None}
    runs = []
    for b in rated:
        if b in has_before:
            continue
        run = [b]
        while following[run[-1]] is not None and following[run[-1]] not in run:
            run.append(following[run[-1]])
        if len(run) > 1:
            runs.append(run)
    return runs


def _runs(fs, res, names, model) -> list:
    out = []
    fo = {f["block"]: f["cases"] for f in _fail_open(fs, res, names)}
    for run in series_runs(fs):
        entry = {"blocks": list(run),
                 "single_failure": {b: fo.get(b) for b in run}}
        last = fs.blocks[run[-1]].params.get("protection")
        if last is None:
            entry["note"] = (f"the last regulator of the run ({run[-1]}) has no protection: "
                             "the all-open load is not computed")
            out.append(entry)
            continue
        ok = np.asarray(res.converged, dtype=bool)
        idx = np.flatnonzero(ok)
        rows = [{"case": name, "solved": bool(ok[i])} for i, name in enumerate(names)]
        if idx.size:
            fluid = make_fluid(fs, model)
            inlet = res.streams[fs.blocks[run[0]].inlets["in"]]
            P_set = np.broadcast_to(np.asarray(last["set_pressure"], dtype=float),
                                    (len(names),))[idx]
            ratings = [fs.blocks[b].params["valve"] for b in run]
            W, P_in, choked = all_open_flow(
                fluid, ratings, np.asarray(inlet.P)[idx], np.asarray(inlet.h)[idx],
                np.asarray(inlet.zs)[idx], P_set)
            M = np.asarray(inlet.molar_mass)[idx]
            # an intermediate regulator's own protection acts where the pressure after it
            # rises above its set pressure (the all-open flow then splits off there)
            acts = {}
            for j, b in enumerate(run[:-1]):
                prot = fs.blocks[b].params.get("protection")
                if prot is not None:
                    s_j = np.broadcast_to(np.asarray(prot["set_pressure"], float),
                                          (len(names),))[idx]
                    acts[b] = P_in[j + 1] > s_j
            for k, i in enumerate(idx):
                rows[i].update(flow_kg_s=_num(W[k]), flow_mol_s=_num(W[k] / M[k]),
                               set_pressure_Pa=_num(P_set[k]),
                               inlet_P_Pa={b: _num(P_in[j][k]) for j, b in enumerate(run)},
                               choked={b: bool(choked[j][k]) for j, b in enumerate(run)},
                               intermediate_protection_acts={b: bool(a[k])
                                                             for b, a in acts.items()})
        entry["all_open"] = rows
        out.append(entry)
    return out


def _kv(v) -> float:
    return float(v["Kv"]) if "Kv" in v else float(v["Cv"]) / iec.CV_PER_KV


def _state(fluid, P, h, zs):
    """(density [kg/m3], isentropic exponent rho w^2 / P [-]) of the gas at P, h."""
    st = fluid.flash(P=P, h=h, zs=zs)
    rho = np.asarray(st.density, dtype=float)
    return rho, rho * np.asarray(st.w, dtype=float) ** 2 / P


def _valve_x(W, Kv, P1, rho1, kappa, v):
    """Pressure-drop ratio at which a valve of ``Kv`` passes ``W`` [kg/s] (capped at choking),
    and the choked flag."""
    n = W.shape[0]
    xT = np.full(n, float(v["xT"]))
    args = (v.get("size"), v.get("inlet_pipe"), v.get("outlet_pipe"))
    x_ch = iec.choked_ratio(np.full(n, Kv), kappa, xT, *args)
    W_max = iec.mass_flow(np.full(n, Kv), P1, P1 * (1.0 - x_ch), rho1, kappa, xT, *args)
    x = np.array(x_ch, dtype=float)
    choked = W >= W_max * (1.0 - FLOW_RTOL)
    search = np.flatnonzero(~choked & (W > 0.0))
    x[W <= 0.0] = 0.0
    if search.size:
        def f(xs, i):
            j = search[i]
            return iec.mass_flow(np.full(j.size, Kv), P1[j], P1[j] * (1.0 - xs), rho1[j],
                                 kappa[j], xT[j], *_take(args, j)) - W[j]
        rep = bracketed_root(f, np.zeros(search.size), x_ch[search], -W[search],
                             W_max[search] - W[search], ftol=FLOW_RTOL * W[search],
                             max_iterations=MAX_ITERATIONS)
        x[search] = rep.x
    return x, choked, W_max


def _take(args, j):
    return tuple(None if a is None else np.broadcast_to(np.asarray(a, float), (np.size(j),))
                 for a in args)


def all_open_flow(fluid, ratings, P0, h0, zs, P_set):
    """Flow through rated valves in series, all wide open, into ``P_set`` (module docstring).

    Parameters
    ----------
    fluid : letdown.fluid.Fluid
    ratings : list of Mapping
        The ``valve`` mappings in flow order (SI).
    P0, h0 : ndarray (n,)
        Pressure [Pa] and molar enthalpy [J/mol] at the first valve's inlet.
    zs : ndarray (n, nc)
    P_set : ndarray (n,)
        Set pressure of the protection after the last valve [Pa].

    Returns
    -------
    W : ndarray (n,)
        Mass flow [kg/s] (zero where ``P_set >= P0``).
    P_in : list of ndarray (n,)
        Inlet pressure of each valve [Pa].
    choked : list of ndarray of bool (n,)
        Each valve choked at that flow.
    """
    P0, h0, P_set = (np.asarray(a, dtype=float) for a in (P0, h0, P_set))
    zs = np.asarray(zs, dtype=float)
    n = P0.shape[0]
    kvs = [_kv(v) for v in ratings]
    rho0, kappa0 = _state(fluid, P0, h0, zs)

    def march(W, j):
        """Outlet pressure of the last valve at flow W for the cases j; inlet pressures, chokes."""
        P, rho, kappa = P0[j], rho0[j], kappa0[j]
        P_in, chokes = [], []
        dead = np.zeros(j.size, dtype=bool)
        for k, (v, Kv) in enumerate(zip(ratings, kvs)):
            P_in.append(P)
            x, choked, W_max = _valve_x(W, Kv, P, rho, kappa, v)
            # a later valve that cannot pass W at any outlet pressure: W is too large for the run
            dead |= (k > 0) & (W > W_max * (1.0 + FLOW_RTOL))
            chokes.append(choked)
            P = P * (1.0 - x)
            if k + 1 < len(ratings):
                rho, kappa = _state(fluid, P, h0[j], zs[j])
        return np.where(dead, -np.inf, P), P_in, chokes

    every = np.arange(n)
    W = np.zeros(n)
    flowing = P_set < P0
    # the first valve's choked flow bounds the run's
    _, _, W_first = _valve_x(np.zeros(n), kvs[0], P0, rho0, kappa0, ratings[0])
    end, _, _ = march(W_first, every)
    first_chokes = flowing & (end >= P_set)
    W[first_chokes] = W_first[first_chokes]
    search = np.flatnonzero(flowing & ~first_chokes)
    if search.size:
        rep = bracketed_root(
            lambda w, i: march(w, search[i])[0] - P_set[search[i]],
            np.zeros(search.size), W_first[search], P0[search] - P_set[search],
            end[search] - P_set[search], ftol=PRESSURE_RTOL * P_set[search],
            max_iterations=MAX_ITERATIONS)
        W[search] = rep.x
    _, P_in, chokes = march(W, every)
    return W, P_in, chokes
