"""Station capacity over the operating cases (``letdown capacity``, issue 13 part 5).

For each operating case (the file's ``cases`` section, or the file as written), the largest feed
flow the station passes -- every feed scaled by the same factor ``s``, the case's temperatures,
pressures and compositions kept, the file's goals (preheat) held -- before the first of these
**constraints** is reached:

============  ==========================================================  =====================
constraint    quantity (a block's detail)                                 limit
============  ==========================================================  =====================
``opening``   ``opening_fraction`` of a rated throttle (the travel at     ``limits.max_opening``,
              which its rated valve gives the required Kv, IEC            else 1.0 (the rated
              60534-2-4 characteristic)                                   Kv at full travel)
``velocity``  every detail ``*velocity*_m_s`` (a valve's inlet and        ``limits.max_velocity``
              outlet pipes, any other block that reports one)
``noise``     ``noise_dBA`` (IEC 60534-8-3, 1 m from the outlet pipe)     ``limits.max_noise``
``sonic``     ``outlet_mach`` (the outlet pipe at its speed of sound)     1.0
``solve``     the case no longer solves (a goal's bracket, a block's      --
              refusal): the capacity is the largest flow that still
              solves
============  ==========================================================  =====================

The station's **reserve** ``F(s) = max_j (q_j(s) - L_j) / L_j`` over every constraint ``j`` of
the case (``+inf`` where the case fails to solve, or a valve's required Kv has no solution
through its reducers) rises with the flow; the capacity is its root ``F(s*) = 0``, found on
``u = ln s`` by the vectorised Illinois solver of :mod:`letdown.numerics.rootfind` (a secant step
kept inside the bracket; bisection where ``F`` is infinite). Every evaluation is **one batch**
through :func:`letdown.sheet.solve.solve_cases` holding every case still searching: first all
cases at the file's flow (``s = 1``), then a bracket from a first-order estimate (a valve's Kv and
a pipe's velocity grow in proportion to the flow), widened by :data:`BRACKET_GROWTH` until it
holds the root, then the root. The reported numbers come from a last batch of every case at its
capacity. The **margin** at the file's flow is ``s* - 1`` (negative: a limit is already broken).

Assumptions, stated in the report: the pressures the file gives are held (the regulators keep
their set points and the supply its pressure as the flow grows; a real supply pressure falls
with the flow, so the capacity is an upper bound where it does); the feeds keep their
proportions; a heater held by a goal delivers whatever duty the goal asks (its duty at capacity
is reported, so a heater's own rating can be checked against it).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..caution import CAUTION
from ..equipment import valve as iec
from ..equipment.throttle import SONIC_MACH
from ..errors import InputError
from ..numerics.rootfind import bracketed_root
from ..sheet.solve import solve_cases
from ..sheet.spec import SheetSpec
from .size import _case_arrays

#: Opening limit of a rated valve when ``limits.max_opening`` is absent: full travel [-].
FULL_TRAVEL = 1.0
#: The reserve ``F`` (relative to the limit) is solved to this [-]: an opening limit of 0.8 is
#: met to 1e-9 of travel. The goals' own tolerance (1e-6 K on a held temperature) moves an inlet
#: density by about 1e-9 relative, so a tighter figure could not be told from round-off.
RESERVE_TOLERANCE = 1e-9
#: Evaluations of the Illinois root solve per case (it converges in 5-10 on smooth reserves).
MAX_ITERATIONS = 60
#: Factor by which a bracket end moves away from the first estimate while it holds no root [-],
#: and the number of such steps (2^16: a capacity 65,000 times the file's flow, or below
#: 1/65,000 of it, is reported as not found).
BRACKET_GROWTH = 2.0
MAX_BRACKET_STEPS = 16
#: The first bracket end is set this much past the first-order estimate [-] (beyond it by 5 %, so
#: that a reserve rising a little faster than the flow still changes sign there).
ESTIMATE_STEP = 1.05
#: Constraint names and what they bound (for the report).
CONSTRAINTS = {"opening": "valve opening (rated Kv at the maximum opening)",
               "velocity": "gas velocity", "noise": "valve noise",
               "sonic": "outlet pipe at its speed of sound",
               "solve": "the station no longer solves"}


#: The unit of each constraint's quantity in JSON (the detail's own key names it too).
DETAIL_UNITS = {"opening": "fraction of travel", "velocity": "m/s", "noise": "dBA",
                "sonic": "Mach number"}


@dataclass(frozen=True)
class Constraint:
    """One constrained quantity of one case (SI).

    Attributes
    ----------
    kind : str
        A key of :data:`CONSTRAINTS`.
    block : str
    detail : str
        The block's detail key (``opening_fraction``, ``outlet_velocity_m_s``, ...).
    limit : float
        In the detail's unit.
    at_flow, at_capacity : float
        The detail's value at the file's flow and at the capacity.
    """

    kind: str
    block: str
    detail: str
    limit: float
    at_flow: float
    at_capacity: float


@dataclass(frozen=True)
class CaseCapacity:
    """The capacity of one operating case (SI).

    Attributes
    ----------
    name : str
    values : dict
        What the case sets (``feed.T`` [K], ...).
    flow : float
        Total feed flow of the case as the file gives it [mol/s]; ``mass_flow`` [kg/s].
    scale : float
        Capacity over the file's flow ``s*`` [-] (NaN: not found).
    capacity, capacity_mass : float
        Total feed flow at capacity [mol/s] and [kg/s].
    governing : str
        The constraint reached first (:data:`CONSTRAINTS`), ``governing_block`` and
        ``governing_detail`` name where.
    constraints : tuple of Constraint
        Every constraint of the case, at the file's flow and at capacity.
    heaters : dict
        Heater -> (duty at the file's flow, duty at capacity) [W].
    found : bool
        The root was found to :data:`RESERVE_TOLERANCE` (False: see ``reason``).
    reason : str
        Why the capacity is not a root of the reserve ("" when it is): the case failed at its
        own flow, no limit was reached within the bracket, or the station stops solving first.
    iterations : int
        Evaluations of the root solve spent on this case (after the bracket).
    """

    name: str
    values: dict
    flow: float
    mass_flow: float
    scale: float
    capacity: float
    capacity_mass: float
    governing: str
    governing_block: str
    governing_detail: str
    constraints: tuple
    heaters: dict
    found: bool
    reason: str
    iterations: int

    @property
    def margin(self) -> float:
        """Capacity over the file's flow, minus one [-] (negative: a limit is already broken)."""
        return self.scale - 1.0


@dataclass(frozen=True)
class CapacityResult:
    """Capacity of a station over its operating cases.

    Attributes
    ----------
    title, model : str
    feeds : tuple of str
        The feeds scaled together.
    limits : dict
        The limit of each constraint kind used [SI], and ``max_opening_source``.
    cases : tuple of CaseCapacity
    batches : tuple of int
        The number of cases in each batch solve, in order (every evaluation is one batch).
    notes : tuple of str
    """

    title: str
    model: str
    feeds: tuple
    limits: dict
    cases: tuple
    batches: tuple
    notes: tuple

    @property
    def all_found(self) -> bool:
        return all(c.found for c in self.cases)

    def to_dict(self) -> dict:
        """JSON-ready figures (SI, the unit in each key; NaN as None)."""
        def num(x):
            return None if x is None or not np.isfinite(x) else float(x)
        return {
            "title": self.title, "model": self.model, "feeds_scaled": list(self.feeds),
            "limits": {k: (num(v) if isinstance(v, float) else v) for k, v in self.limits.items()},
            "batch_sizes": list(self.batches), "all_found": self.all_found,
            "cases": [{"name": c.name, "values": dict(c.values), "flow_mol_s": num(c.flow),
                       "flow_kg_s": num(c.mass_flow), "capacity_mol_s": num(c.capacity),
                       "capacity_kg_s": num(c.capacity_mass),
                       "capacity_over_flow": num(c.scale), "margin_fraction": num(c.margin),
                       "governing_constraint": c.governing,
                       "governing_block": c.governing_block,
                       "governing_detail": c.governing_detail, "found": c.found,
                       "reason": c.reason, "iterations": c.iterations,
                       "heaters_W": {h: {"at_flow_W": num(a), "at_capacity_W": num(b)}
                                     for h, (a, b) in c.heaters.items()},
                       "constraints": [{"kind": k.kind, "block": k.block, "detail": k.detail,
                                        "unit": DETAIL_UNITS.get(k.kind, ""),
                                        "limit": num(k.limit), "at_flow": num(k.at_flow),
                                        "at_capacity": num(k.at_capacity)}
                                       for k in c.constraints]}
                      for c in self.cases],
            "notes": list(self.notes), "caution": CAUTION}


def _limits(fs: SheetSpec) -> dict:
    lim = fs.limits
    return {"opening": float(lim.get("max_opening", FULL_TRAVEL)),
            "velocity": lim.get("max_velocity"), "noise": lim.get("max_noise"),
            "sonic": SONIC_MACH}


def _constraint_keys(res, limits) -> list:
    """[(kind, block, detail, limit)] of the constraints a result carries."""
    out = []
    for name, eq in res.equipment.items():
        for key in eq.details:
            if key == "opening_fraction":
                out.append(("opening", name, key, limits["opening"]))
            elif "velocity" in key and key.endswith("_m_s") and limits["velocity"] is not None:
                out.append(("velocity", name, key, float(limits["velocity"])))
            elif key == "noise_dBA" and limits["noise"] is not None:
                out.append(("noise", name, key, float(limits["noise"])))
            elif key == "outlet_mach":
                out.append(("sonic", name, key, limits["sonic"]))
    return out


def _values(res, keys) -> np.ndarray:
    """(n_constraints, n) detail values (NaN where the case failed)."""
    ok = np.asarray(res.converged, dtype=bool)
    # a batch whose every case failed carries no details: its figures are NaN
    return np.array([np.where(ok, np.asarray(res.equipment[b].details.get(d, np.nan),
                                             dtype=float), np.nan)
                     for _, b, d, _ in keys]).reshape(len(keys), len(ok))


def _reserve(res, keys):
    """(F, index of the governing constraint (-1: the case failed)) over the cases."""
    v = _values(res, keys)
    lim = np.array([k[3] for k in keys], dtype=float)[:, None]
    with np.errstate(invalid="ignore"):
        r = (v - lim) / lim
    # a valve with no Kv through its reducers (NaN opening in a solved case) cannot pass the flow
    ok = np.asarray(res.converged, dtype=bool)
    r = np.where(np.isnan(r), np.inf, r)
    F = r.max(axis=0)
    j = r.argmax(axis=0)
    F = np.where(ok, F, np.inf)
    return F, np.where(ok, j, -1)


def capacity(fs: SheetSpec, *, model: str | None = None) -> CapacityResult:
    """The largest flow of every operating case before a valve, velocity or noise limit
    (module docstring).

    Parameters
    ----------
    fs : SheetSpec
    model : str, optional
        Thermodynamic model overriding the file's.

    Returns
    -------
    CapacityResult
        A case that fails at its own flow, or reaches no limit within the bracket, is recorded
        (``found`` False, ``reason``), not raised.

    Raises
    ------
    InputError
        No feed flows; the station has nothing to limit it (no rated throttle and no reported
        velocity under ``limits.max_velocity``); a case leaves a parameter unset.
    """
    names, table, values = _case_arrays(fs)
    n = len(names)
    feeds = tuple(f for f in fs.feeds)
    base = {}
    for f in feeds:
        key = f"{f}.flow"
        base[f] = np.broadcast_to(np.asarray(table.get(key, fs.feeds[f].flow), dtype=float),
                                  (n,)).copy()
    total = sum(base.values())
    if not np.any(total > 0.0):
        raise InputError("letdown capacity scales the feed flows: no feed flows in any case",
                         file=fs.source, field="feeds")
    limits = _limits(fs)
    notes = []
    if not fs.cases:
        notes.append("the file has no cases section: its one case is taken as written")
    if "max_opening" not in fs.limits:
        notes.append("no limits.max_opening: a valve's limit is its rated Kv at full travel")
    batches = []

    def run(idx, scale):
        """One batch: the cases ``idx`` at flow factors ``scale``."""
        cases = {k: v[idx] for k, v in table.items()}
        for f in feeds:
            cases[f"{f}.flow"] = base[f][idx] * scale
        batches.append(len(idx))
        # a valve whose required Kv has no solution through its reducers gives NaN figures,
        # read here as a broken limit (the valve's noise then divides NaN by NaN)
        with np.errstate(invalid="ignore"):
            return solve_cases(fs, cases, model=model, strict=False)

    # the smallest trial flow (log) at which each case failed to solve, and why
    fail_u = np.full(n, np.inf)
    fail_why = np.full(n, "", dtype=object)

    def note_failures(idx, u, res):
        bad = ~np.asarray(res.converged, dtype=bool) & (u < fail_u[idx])
        fail_u[idx[bad]] = u[bad]
        fail_why[idx[bad]] = [str(res.failures[k]) for k in np.flatnonzero(bad)]

    every = np.arange(n)
    first = run(every, np.ones(n))
    keys = _constraint_keys(first, limits)
    if not keys and not np.any(first.converged):
        # every case failed at its own flow: nothing to search, every reason reported
        nan = np.full(n, np.nan)
        return _assemble(fs, names, values, feeds, base, first, None, np.arange(0), keys,
                         limits, nan, np.array([str(r) for r in first.failures], dtype=object),
                         np.ones(n, dtype=bool), np.zeros(n, dtype=bool), np.zeros(n, dtype=int),
                         batches, notes)
    if not keys:
        raise InputError("letdown capacity needs something that limits the flow: a rated "
                         "throttle (valve: {Kv: ..., xT: ..., characteristic: ...}) or a block "
                         "reporting a velocity with limits.max_velocity", file=fs.source,
                         field="equipment")
    F0, _ = _reserve(first, keys)
    reasons = np.array([str(r) for r in first.failures], dtype=object)
    failed0 = ~np.asarray(first.converged, dtype=bool)
    # liquid at a rated valve: the gas sizing equations do not apply, so no capacity is judged
    for name, eq in first.equipment.items():
        wet = np.asarray(eq.flags.get("valve_not_gas", np.zeros(n, bool)), dtype=bool) & ~failed0
        for i in np.flatnonzero(wet):
            reasons[i] = (f"liquid at the inlet or outlet of the rated valve '{name}': the gas "
                          "sizing equations (IEC 60534-2-1) do not apply")
        failed0 |= wet
    # bracket on u = ln s: one end at u = 0, the other from a first-order estimate
    u_lo, u_hi = np.full(n, np.nan), np.full(n, np.nan)
    F_lo, F_hi = np.full(n, np.nan), np.full(n, np.nan)
    below = ~failed0 & (F0 < 0.0)
    above = ~failed0 & (F0 > 0.0)
    exact = ~failed0 & (F0 == 0.0)
    u_lo[below], F_lo[below] = 0.0, F0[below]
    u_hi[above], F_hi[above] = 0.0, F0[above]
    est = np.log(_estimate(fs, first, keys, limits))
    step = np.where(below, np.maximum(est, 0.0) + np.log(ESTIMATE_STEP),
                    np.minimum(est, 0.0) - np.log(ESTIMATE_STEP))
    step = np.where(np.isfinite(step), step, np.where(below, np.log(BRACKET_GROWTH),
                                                     -np.log(BRACKET_GROWTH)))
    # the constraint that governed each case's last bracket trial (for the message when no
    # bracket is found)
    last_j, last_v = np.full(n, -1), np.full(n, np.nan)
    searching = below | above
    for _ in range(MAX_BRACKET_STEPS + 1):
        idx = np.flatnonzero(searching)
        if idx.size == 0:
            break
        u = step[idx]
        res = run(idx, np.exp(u))
        note_failures(idx, u, res)
        F, j = _reserve(res, keys)
        last_j[idx] = j
        last_v[idx] = [_values(res, keys)[jj, k] if jj >= 0 else np.nan
                       for k, jj in enumerate(j)]
        up = below[idx]
        got = np.where(up, F >= 0.0, F <= 0.0)
        for k, i in enumerate(idx):
            if got[k]:
                if up[k]:
                    u_hi[i], F_hi[i] = u[k], F[k]
                else:
                    u_lo[i], F_lo[i] = u[k], F[k]
                searching[i] = False
            elif up[k]:
                u_lo[i], F_lo[i] = u[k], F[k]
                step[i] = u[k] + np.log(BRACKET_GROWTH)
            else:
                u_hi[i], F_hi[i] = u[k], F[k]
                step[i] = u[k] - np.log(BRACKET_GROWTH)
    unbracketed = searching.copy()
    for i in np.flatnonzero(unbracketed):
        if below[i]:
            reasons[i] = f"no limit reached up to {np.exp(u_lo[i]):.3g} times the file's flow"
            continue
        what = "a limit is broken"
        if last_j[i] >= 0:
            kind, block, detail, limit = keys[last_j[i]]
            what = (f"{block} {detail} is {last_v[i]:.6g} against its limit {limit:g}"
                    if np.isfinite(last_v[i]) else
                    f"no Kv of {block} passes the flow through its reducers")
        reasons[i] = (f"{what} even at {np.exp(u_hi[i]):.3g} times the file's flow"
                      + ("" if last_j[i] >= 0 else " (the station does not solve there)"))
    u = np.where(exact, 0.0, np.nan)
    iterations = np.zeros(n, dtype=int)
    solve_idx = np.flatnonzero((below | above) & ~unbracketed)
    if solve_idx.size:
        # the largest flow seen within every limit, per case (the answer where the reserve jumps
        # to +inf, the station no longer solving, instead of crossing zero)
        best = u_lo.copy()

        def reserve(x, i):
            j = solve_idx[i]
            res = run(j, np.exp(x))
            note_failures(j, x, res)
            F = _reserve(res, keys)[0]
            best[j] = np.where(F <= 0.0, np.maximum(best[j], x), best[j])
            return F
        # an infinite reserve at the upper end: the Illinois step leaves the bracket and the
        # solver bisects
        report = bracketed_root(reserve, u_lo[solve_idx], u_hi[solve_idx], F_lo[solve_idx],
                                F_hi[solve_idx], ftol=RESERVE_TOLERANCE,
                                max_iterations=MAX_ITERATIONS)
        u[solve_idx] = np.where(report.converged, report.x, best[solve_idx])
        iterations[solve_idx] = report.iterations
        for i in solve_idx[~report.converged]:
            if np.isfinite(fail_u[i]):
                more = np.exp(fail_u[i] - u[i]) - 1.0
                where = ("just above this flow" if more < 1e-6 else
                         f"{100.0 * more:.2g} % above this flow")
                reasons[i] = (f"the station stops solving {where}, before any limit is reached: "
                              f"{fail_why[i]}")
    final_idx = np.flatnonzero(np.isfinite(u))
    final = run(final_idx, np.exp(u[final_idx])) if final_idx.size else None
    return _assemble(fs, names, values, feeds, base, first, final, final_idx, keys, limits, u,
                     reasons, failed0, unbracketed, iterations, batches, notes)


def _estimate(fs, res, keys, limits) -> np.ndarray:
    """First-order capacity factor per case: a valve's required Kv, a velocity and a Mach number
    grow in proportion to the flow (NaN where no constraint gives one)."""
    n = res.n_cases
    est = np.full(n, np.inf)
    v = _values(res, keys)
    for (kind, block, detail, limit), q in zip(keys, v):
        d = res.equipment[block].details
        with np.errstate(divide="ignore", invalid="ignore"):
            if kind == "opening":
                rating = fs.blocks[block].params["valve"]
                phi_lim = iec.relative_flow(limit, rating["characteristic"],
                                            rating.get("rangeability", np.inf))[0]
                s = phi_lim * np.asarray(d["Kv_rated"], float) / np.asarray(d["Kv_required"],
                                                                            float)
            elif kind in ("velocity", "sonic"):
                s = limit / q
            else:
                continue
        est = np.fmin(est, np.where(np.isfinite(s) & (s > 0), s, np.inf))
    return np.where(np.isfinite(est), est, np.nan)


def _assemble(fs, names, values, feeds, base, first, final, final_idx, keys, limits, u, reasons,
              failed0, unbracketed, iterations, batches, notes):
    n = len(names)
    v0 = _values(first, keys)
    vc = np.full_like(v0, np.nan)
    Fc, jc = np.full(n, np.nan), np.full(n, -1)
    cap_mol, cap_kg = np.full(n, np.nan), np.full(n, np.nan)
    heaters = [h for h, b in fs.blocks.items() if b.kind == "heater"]
    duty_c = {h: np.full(n, np.nan) for h in heaters}
    if final is not None:
        vc[:, final_idx] = _values(final, keys)
        F, j = _reserve(final, keys)
        Fc[final_idx], jc[final_idx] = F, j
        ok = np.asarray(final.converged, dtype=bool)
        mol = sum(np.asarray(final.streams[f].flow, float) for f in feeds)
        kg = sum(np.asarray(final.streams[f].flow, float) * np.asarray(final.streams[f].molar_mass,
                                                                        float) for f in feeds)
        cap_mol[final_idx] = np.where(ok, mol, np.nan)
        cap_kg[final_idx] = np.where(ok, kg, np.nan)
        for h in heaters:
            duty_c[h][final_idx] = np.where(ok, np.asarray(final.equipment[h].duty, float), np.nan)
        for k, i in enumerate(final_idx):
            if not ok[k]:
                reasons[i] = reasons[i] or str(final.failures[k])
    kg0 = sum(np.asarray(first.streams[f].flow, float) * np.asarray(first.streams[f].molar_mass,
                                                                   float) for f in feeds)
    total = sum(base.values())
    out = []
    for i in range(n):
        found = bool(np.isfinite(Fc[i]) and abs(Fc[i]) <= RESERVE_TOLERANCE)
        reason = str(reasons[i])
        if failed0[i]:
            reason = f"the case fails at its own flow: {reason}"
        if jc[i] >= 0 and found:
            kind, block, detail, _ = keys[jc[i]]
        elif np.isfinite(u[i]) and not unbracketed[i] and not failed0[i]:
            kind, block, detail = "solve", "", ""
            if not reason:
                reason = ("the station stops solving at a slightly larger flow (a goal, loop or "
                          "block refusal) before any limit is reached")
        else:
            kind, block, detail = "", "", ""
        out.append(CaseCapacity(
            name=names[i], values=dict(values[i]), flow=float(total[i]),
            mass_flow=float(kg0[i]) if np.isfinite(kg0[i]) else np.nan,
            scale=float(np.exp(u[i])) if np.isfinite(u[i]) else np.nan,
            capacity=float(cap_mol[i]), capacity_mass=float(cap_kg[i]),
            governing=kind, governing_block=block, governing_detail=detail,
            constraints=tuple(Constraint(k[0], k[1], k[2], float(k[3]), float(v0[j, i]),
                                         float(vc[j, i])) for j, k in enumerate(keys)),
            heaters={h: (float(first.equipment[h].duty[i]) if first.converged[i] else np.nan,
                         float(duty_c[h][i])) for h in heaters},
            found=found, reason="" if found else reason, iterations=int(iterations[i])))
    lim = dict(limits)
    lim["max_opening_source"] = ("limits.max_opening" if "max_opening" in fs.limits
                                 else "full travel (no limits.max_opening)")
    unused = [k for k in ("velocity", "noise") if lim[k] is None]
    if unused:
        notes.append("no " + " or ".join(f"limits.max_{k}" for k in unused)
                     + ": not a constraint")
    return CapacityResult(title=fs.title, model=first.model, feeds=feeds, limits={
        "max_opening_fraction": lim["opening"], "max_opening_source": lim["max_opening_source"],
        "max_velocity_m_s": lim["velocity"], "max_noise_dBA": lim["noise"],
        "max_outlet_mach": lim["sonic"]}, cases=tuple(out), batches=tuple(batches),
        notes=tuple(notes))


__all__ = ["capacity", "CapacityResult", "CaseCapacity", "Constraint", "CONSTRAINTS"]
