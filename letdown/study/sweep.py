"""What-if sweeps: one flowsheet over a list, range or grid of input values, as a tidy table.

A swept variable is named by its path in the flowsheet file:

* ``<feed>.T``, ``<feed>.P``, ``<feed>.flow`` -- a feed's state;
* ``<block>.<parameter>`` -- any numeric block parameter (``preheat.T_out``, ``regulator.P_out``);
* ``<feed>.energy`` -- the energy a feed delivers (gross calorific value times standard flow); its
  flow follows from each case's calorific value;
* ``@goal<k>.at`` -- the target of the k-th goal (1-based);
* ``@blend.<gas>`` -- the mole fraction of a component or of a named gas of the file's ``gases``
  section blended into every feed (``@blend.hydrogen`` from 0 to 0.3 gives the hydrogen blends of
  the supply gas: z = (1 - x) z_feed + x z_gas, z_gas a pure component's unit vector or the named
  gas's composition).

The study's own axes begin with ``@``, which no name of the file can contain (names are letters,
digits, ``_`` and ``-``), so a block or feed named ``blend`` or ``goal1`` can be swept like any
other. The older spellings without ``@`` (``blend.hydrogen``, ``goal1.at``) still work where no
block or feed has that name, with a note that they are deprecated (:func:`spelling_note`).

Values are written with units as in the file (``0 degC:20 degC:5`` is a range of 5 values, ``0 degC,
5 degC`` a list; fractions may be plain numbers or percentages). Several variables make a grid (every
combination) or, with ``mode="zip"``, go together case by case. All cases are solved together through
the batch solver (one vectorised pass per distinct goal target); a case that fails is kept in its row
with the reason, never dropped.

Outputs are named by path too: any stream or block quantity of the JSON result, by its key with or
without the unit suffix (``network.hydrate_margin``, ``network.gross_cv``, ``preheat.fuel``,
``meoh.inhibitor_rate``). The default set carries every stream's hydrate margin, so every case is
solved with the freezing margins. With ``basis="energy"`` a blend keeps the energy each feed
delivers instead of its standard flow (:func:`energy_basis`).
"""
from __future__ import annotations

import dataclasses
import itertools
import math
from dataclasses import dataclass

import numpy as np

from ..errors import InputError
from ..fluid.aqueous.water import M_WATER
from ..quantities import SI_UNITS
from ..sheet.solve import solve_cases
from ..sheet.result import liquid_volume_flow
from ..sheet.spec import SheetSpec
# the inputs by path (re-exported: the CLI, the reports and the tests import them from here)
from .paths import (AXIS_PREFIX, FEED_KINDS, MAX_CASES, Variable, _check_values,  # noqa: F401
                    _feed_molar_mass, _held_kind, blend_gas, case_count, parse_variable,
                    spelling_note, study_axis, variable_kind)

#: Cases per chunk when a progress bar is shown (each chunk is still one vectorised batch).
PROGRESS_CHUNK = 500
#: Most cases solved in one batch: a larger sweep is split into chunks of at most this many, so
#: the solver's working memory stays bounded (about 90 MB of peak RSS at 5,000 cases of the gate
#: station with margins, measured by bench/sweep_large.py) while each chunk still vectorises
#: (on the gate station, chunks of 2,000 to 20,000 cases took the same time per case within the
#: noise of a shared machine; measured 2026-12-02).
MAX_CHUNK = 5_000


@dataclass(frozen=True)
class SweepTable:
    """The tidy result: one row per case.

    Attributes
    ----------
    columns : tuple of str
        Input columns (the variable paths with SI unit), then output columns, then ``converged`` and
        ``reason``.
    rows : tuple of tuple
    model : str
    """

    columns: tuple
    rows: tuple
    model: str

    def column(self, name) -> np.ndarray:
        i = self.columns.index(name)
        return np.array([r[i] for r in self.rows], dtype=object if name == "reason" else float)

    def csv_text(self) -> str:
        import csv
        import io
        buf = io.StringIO()
        w = csv.writer(buf, lineterminator="\n")
        w.writerow(self.columns)
        isfinite = math.isfinite
        for r in self.rows:
            w.writerow([(f"{v:.10g}" if isfinite(v) else "") if type(v) is float else v
                        for v in r])
        return buf.getvalue()


def sweep(fs: SheetSpec, variables, *, mode: str = "grid", model: str | None = None,
          outputs=None, executor=None, show_progress: bool = False,
          basis: str = "volume", given=None) -> SweepTable:
    """Solve ``fs`` for every case of the swept variables.

    Parameters
    ----------
    fs : SheetSpec
    variables : sequence of Variable
    mode : {"grid", "zip"}
        Every combination, or the variables' values taken together (equal lengths).
    model : str, optional
        Overrides the file's model.
    outputs : sequence of str, optional
        Output paths: any stream or block quantity of the JSON result by its key without the unit
        suffix (``network.hydrate_margin``, ``network.gross_cv``, ``preheat.fuel``,
        ``meoh.inhibitor_rate``) or with it (``network.hydrate_margin_K``), and ``@goal<k>``
        (the value of the parameter the goal varies);
        default (:func:`default_outputs`): every stream's T, P, vapour fraction and hydrate
        margin, every block's duty, fuel and power, every goal's value. The freezing margins are
        computed in every case whenever an output needs them (the default does).
    executor : optional
        A :mod:`letdown.study.executors` executor; the cases are split into one chunk per worker.
    basis : {"volume", "energy"}
        What a composition change (a blend) keeps: the feeds' standard flow (``volume``), or the
        energy they deliver (``energy``, :func:`energy_basis`): each feed's flow is scaled so that
        gross calorific value times standard flow stays at the base case's, and the table shows
        both flows and the energy.
    given : mapping, optional
        Further per-case arrays passed to the solver as they are, of the sweep's length (a
        sampled composition ``"<feed>.zs"``, shape (n, nc), from :mod:`.uncertainty`); they make
        no input column of their own.

    Returns
    -------
    SweepTable
    """
    variables = list(variables)
    given = {k: np.asarray(v, float) for k, v in (given or {}).items()}
    if not variables and not given:
        raise InputError("nothing to sweep: give at least one variable", field="vary")
    if mode == "grid":
        combos = list(itertools.product(*[range(v.values.size) for v in variables]))
        cols = {v.path: np.array([v.values[c[j]] for c in combos]) for j, v in enumerate(variables)}
    elif mode == "zip":
        sizes = {v.values.size for v in variables} | {len(a) for a in given.values()}
        if len(sizes) != 1:
            raise InputError(f"zip sweep needs variables of equal length (got {sorted(sizes)})",
                             field="vary")
        cols = {v.path: v.values.copy() for v in variables}
    else:
        raise InputError(f"unknown sweep mode '{mode}' (grid or zip)", field="mode")
    if given and mode != "zip":
        raise InputError("per-case arrays go with a zip sweep", field="vary")
    n = next(iter(cols.values())).size if cols else len(next(iter(given.values())))
    axes = {v.path: study_axis(fs, v.path) for v in variables}
    fs2 = _with_blend_components(fs, [blend_gas(fs, a[1]) for a in axes.values()
                                      if a is not None and a[0] == "blend"])
    cases, goal_targets = _cases(fs2, cols, n, axes)
    cases.update(given)
    if basis not in BASES:
        raise InputError(f"unknown basis '{basis}' (known: {', '.join(BASES)})", field="--basis")
    extra, by_energy = energy_basis(fs2, cases, n, basis)
    if by_energy:
        # each feed whose flow follows from its energy shows its flow and calorific value
        outputs = list(outputs or [DEFAULT]) + [f"{f}.{q}" for f in by_energy
                                                for q in ("flow", "gross_cv")]
    out_rows = [None] * n
    columns = None
    # one vectorised solve per distinct set of goal targets, split into chunks for the executor
    from .executors import Serial, chunks
    executor = executor or Serial()
    keys = [tuple(goal_targets[k][i] for k in sorted(goal_targets)) for i in range(n)]
    tasks, owners = [], []
    for key in sorted(set(keys)):
        group = np.array([i for i in range(n) if keys[i] == key])
        fsk = fs2
        if goal_targets:
            goals = list(fs2.goals)
            for k, target in zip(sorted(goal_targets), key):
                goals[k] = dataclasses.replace(goals[k], target=float(target))
            fsk = dataclasses.replace(fs2, goals=tuple(goals))
        parts = max(executor.workers, int(np.ceil(group.size / MAX_CHUNK)))
        if show_progress:
            parts = max(parts, min(int(np.ceil(group.size / PROGRESS_CHUNK)), 20))
        for part in chunks(group.size, parts):
            idx = group[part]
            tasks.append((fsk, {k: v[idx] for k, v in cases.items()}, model, outputs, idx.size))
            owners.append(idx)
    inputs = tuple(f"{v.path} [{v.unit}]" for v in variables)
    out_rows = [None] * n
    columns = None
    model_name = None
    results = executor.map(_sweep_chunk, tasks, show_progress=show_progress)
    for idx, (names, values, converged, reasons, model_name) in zip(owners, results):
        keep = [c for c, nm in enumerate(names) if nm not in inputs]
        names = [names[c] for c in keep]
        values = [values[c] for c in keep]
        if columns is None:
            columns = inputs + tuple(names) + tuple(extra) + ("converged", "reason")
        ok = np.asarray(converged, dtype=bool)
        # one block of numbers per chunk, turned into Python floats at once (tolist)
        outs = (np.column_stack(values) if values else np.zeros((idx.size, 0))).astype(float)
        outs[~ok] = np.nan
        block = np.column_stack([cols[v.path][idx] for v in variables] + [outs]
                                + [a[idx] for a in extra.values()]).tolist()
        for j, i in enumerate(idx.tolist()):
            good = bool(ok[j])
            out_rows[i] = tuple(block[j]) + (good, "" if good else reasons[j])
    return SweepTable(columns, tuple(out_rows), model_name)


#: What a composition change keeps (see :func:`sweep`).
BASES = ("volume", "energy")


def energy_basis(fs, cases, n, basis: str = "energy") -> tuple:
    """Set the flows of the feeds that deliver a given energy.

    A feed's flow follows from its energy E, gross calorific value Hs times standard flow, as
    flow = E / Hs(z) (Hs the ideal gross molar value of ISO 6976:2016, 15 degC combustion,
    :mod:`letdown.fluid.quality`, and z each case's composition). On a molar basis E is the ideal
    molar gross value times the molar flow: the real volumetric value is that molar value over
    the real molar volume at 15 degC and 101.325 kPa, and the real standard volume is the molar
    flow times the same molar volume. This applies to

    * a feed whose energy the sweep varies (``<feed>.energy``);
    * a feed the file gives by its energy (``energy: 250 MW``), when the case changes its
      composition (a blend, a sampled composition): the energy stays the file's;
    * with ``basis="energy"``, every other feed whose composition the case changes: its energy
      stays the base case's, Hs(base) times the case's flow, Hs(base) that of the file's
      composition.

    Changes ``cases`` in place (``<feed>.energy`` is taken out, ``<feed>.flow`` set). Returns
    (extra columns {name: ndarray (n,)}, names of the feeds so set): for each feed whose
    composition changed, its flow on the volume basis [mol/s] (what it would be at the same
    standard volume, E / Hs(base)) and its energy [W] (unless swept: then it is an input column).

    Raises
    ------
    InputError
        A component without ISO 6976 data in such a feed, or a gas without calorific value (an
        inert feed: no flow delivers an energy).
    """
    from ..fluid.quality import quality
    names = list(fs.gas.composition)
    base_all = np.array([fs.gas.composition[c] for c in names], dtype=float)
    extra, by_energy = {}, []
    for feed_name, feed in fs.feeds.items():
        key = f"{feed_name}.zs"
        swept = cases.pop(f"{feed_name}.energy", None)
        given = getattr(feed, "energy", None)
        changed = key in cases
        if swept is None and not (changed and (given is not None or basis == "energy")):
            continue
        z = base_all if feed.composition is None else np.array(
            [feed.composition.get(c, 0.0) for c in names], dtype=float)
        z = z / z.sum()
        try:
            hs_base = float(np.asarray(quality(names, z).gross_molar).reshape(-1)[0])
            hs = (np.asarray(quality(names, cases[key]).gross_molar, dtype=float).reshape(-1)
                  if changed else np.full(n, hs_base))
        except InputError as exc:
            raise InputError(f"the energy of feed '{feed_name}' needs its calorific value: "
                             f"{exc.message}", field="--basis") from None
        if not (hs_base > 0.0 and np.all(hs > 0.0)):
            raise InputError(f"feed '{feed_name}' has a gas without calorific value (in the file "
                             f"or in a case), so no flow delivers an energy; sweep it on the "
                             f"volume basis", field="--basis")
        if swept is not None or given is not None:
            energy = (np.broadcast_to(np.asarray(swept, float), (n,)).copy()
                      if swept is not None else np.full(n, given))
            flow = energy / hs_base
        else:
            flow = np.broadcast_to(np.asarray(cases.get(f"{feed_name}.flow", feed.flow), float),
                                   (n,)).copy()
            energy = hs_base * flow
        cases[f"{feed_name}.flow"] = flow * (hs_base / hs)
        by_energy.append(feed_name)
        if changed:
            extra[f"{feed_name}.flow_volume_basis [mol/s]"] = flow
            if swept is None:
                extra[f"{feed_name}.energy [W]"] = energy
    return extra, by_energy


def _sweep_chunk(task):
    """Solve one chunk of cases (top level, so process pools and Dask can ship it)."""
    fs, cases, model, outputs, m = task
    res = solve_cases(fs, cases or None, model=model, strict=False,
                      margins=needs_margins(outputs))
    names, values = _outputs(res, fs, outputs, m)
    return names, [np.asarray(v) for v in values], np.asarray(res.converged), _reasons(res, m), res.model


def _with_blend_components(fs, gases):
    """The flowsheet with the components of the blended gases ({component: fraction} each)
    added to the gas at zero where missing."""
    comps = list(dict.fromkeys(c for g in gases for c in g))
    missing = [c for c in comps if c not in fs.gas.composition]
    if not missing:
        return fs
    composition = dict(fs.gas.composition)
    for c in missing:
        composition[c] = 0.0
    return dataclasses.replace(fs, gas=dataclasses.replace(fs.gas, composition=composition))


def _cases(fs, cols, n, axes):
    """The solver's case arrays of the swept columns, and the goals' targets {goal index:
    values}; the blend axes make each feed's composition z = (1 - sum x) z_feed + sum x z_gas."""
    cases, goal_targets = {}, {}
    names = list(fs.gas.composition)
    base = np.array([fs.gas.composition[c] for c in names], dtype=float)
    base = base / base.sum()
    blend = np.zeros((n, len(names)))
    x_total = np.zeros(n)
    for path, values in cols.items():
        axis = axes.get(path)
        if axis is not None and axis[0] == "blend":
            gas = blend_gas(fs, axis[1])
            z_gas = np.array([gas.get(c, 0.0) for c in names], dtype=float)
            blend += values[:, None] * (z_gas / z_gas.sum())[None, :]
            x_total += values
        elif axis is not None:
            goal_targets[axis[1] - 1] = values
        else:
            cases[path] = values
    if np.any(x_total > 0):
        if np.any(x_total >= 1):
            raise InputError("blend fractions add up to 1 or more", field="vary")
        for feed_name, feed in fs.feeds.items():
            z = base
            if feed.composition is not None:
                z = np.array([feed.composition.get(c, 0.0) for c in names], dtype=float)
                z = z / z.sum()
            cases[f"{feed_name}.zs"] = (1.0 - x_total)[:, None] * z[None, :] + blend
    return cases, goal_targets


#: Unit suffixes of the JSON contract's keys (longest first) and the unit they name: an output path
#: is the key without its suffix (``hydrate_margin_K`` -> ``hydrate_margin [K]``).
UNIT_SUFFIXES = (("_J_molK", "J/(mol K)"), ("_J_mol", "J/mol"), ("_kg_m3", "kg/m3"),
                 ("_kg_mol", "kg/mol"), ("_J_m3", "J/m3"), ("_mg_Sm3", "mg/Sm3"),
                 ("_mol_s", "mol/s"), ("_kg_s", "kg/s"), ("_m3_s", "m3/s"), ("_W_K", "W/K"),
                 ("_wt_pct", "wt %"), ("_pct", "%"), ("_Pa", "Pa"), ("_W", "W"), ("_K", "K"),
                 ("_m3", "m3"), ("_m", "m"))
#: Stream quantities of the JSON contract that need the freezing margins (solved with margins on).
FREEZING_KEYS = ("water_mg_Sm3", "water_mole_fraction", "water_dew_T_K", "hydrate_T_K",
                 "hydrate_margin_K", "water_dew_margin_K", "ice_T_K", "ice_margin_K",
                 "min_T_margin_K", "outlet_min_T_margin_K", "inhibitor_wt_pct", "water_activity",
                 "inhibitor_flow_kg_s", "water_flow_mol_s", "water_flow_kg_s")
#: Stream quantities from the composition by ISO 6976:2016 (15 degC / 15 degC).
QUALITY_KEYS = ("gross_cv_J_m3", "wobbe_gross_J_m3", "relative_density")
#: Stream quantities read from the stream batch itself: JSON key -> attribute.
STREAM_KEYS = {"T_K": "T", "P_Pa": "P", "flow_mol_s": "flow", "mass_flow_kg_s": "mass_flow",
               "vapour_fraction": "vapour_fraction", "h_J_mol": "h", "s_J_molK": "s", "Z": "Z",
               "density_kg_m3": "density", "molar_mass_kg_mol": "molar_mass"}


def split_unit(key: str) -> tuple[str, str]:
    """A JSON key into its output name and unit: ``"hydrate_margin_K"`` -> ``("hydrate_margin",
    "K")``; a key without a unit suffix is dimensionless (``"Z"`` -> ``("Z", "-")``).

    >>> split_unit("gross_cv_J_m3"), split_unit("inhibitor_rate_kg_s"), split_unit("Z")
    (('gross_cv', 'J/m3'), ('inhibitor_rate', 'kg/s'), ('Z', '-'))
    """
    for suffix, unit in UNIT_SUFFIXES:
        if key.endswith(suffix) and len(key) > len(suffix):
            return key[: -len(suffix)], unit
    return key, "-"


#: An output entry that stands for the default set (:func:`default_outputs`).
DEFAULT = "*"


def needs_margins(outputs) -> bool:
    """Whether the outputs asked for (None: the default set) need the freezing margins."""
    if not outputs or DEFAULT in outputs:
        return True
    names = {split_unit(k)[0] for k in FREEZING_KEYS} | set(FREEZING_KEYS)
    return any(str(o).partition(".")[2] in names for o in outputs)


def _stream_quantities(res, name, st, m):
    """{JSON key: callable -> ndarray (m,)} of one stream (lazy: quality and margins cost)."""
    out = {key: (lambda a=attr: getattr(st, a)) for key, attr in STREAM_KEYS.items()}
    # NGL and condensate: the volume of an all-liquid stream at its state (the JSON's key)
    out["liquid_volume_flow_m3_s"] = lambda: liquid_volume_flow(st.flow, st.mass_flow,
                                                               st.vapour_fraction, st.density)
    # blank where the margins were not computed (every case of the chunk failed)
    out.update({key: (lambda: np.full(m, np.nan)) for key in FREEZING_KEYS})
    fz = (res.freezing or {}).get(name)
    if fz is not None:
        T = np.asarray(st.T, float)

        def opt(x):
            return (lambda: np.full(m, np.nan)) if x is None else (lambda: np.asarray(x, float))
        out.update({"water_mg_Sm3": lambda: fz.water_mg_Sm3,
                    "water_mole_fraction": lambda: fz.water_mole_fraction,
                    "water_dew_T_K": lambda: fz.water_dew_T, "hydrate_T_K": lambda: fz.hydrate_T,
                    "hydrate_margin_K": lambda: T - fz.hydrate_T,
                    "water_dew_margin_K": lambda: T - fz.water_dew_T,
                    "ice_T_K": opt(fz.ice_T),
                    "ice_margin_K": lambda: T - (np.full(m, np.nan) if fz.ice_T is None
                                                 else np.asarray(fz.ice_T, float)),
                    "min_T_margin_K": lambda: T - (np.nan if res.min_T is None else res.min_T),
                    "inhibitor_wt_pct": opt(fz.inhibitor_wt_pct),
                    "water_activity": opt(fz.water_activity),
                    "water_flow_mol_s": opt(fz.water_flow),
                    "water_flow_kg_s": lambda: (np.full(m, np.nan) if fz.water_flow is None
                                                else np.asarray(fz.water_flow) * M_WATER)})
        if fz.outlet_min_T is not None:
            out["outlet_min_T_margin_K"] = lambda: T - fz.outlet_min_T

    def quality_of(key):
        def get():
            from ..fluid.quality import quality
            zs = np.asarray(st.zs, float)
            ok = np.all(np.isfinite(zs), axis=1) & (np.asarray(st.flow) > 0.0)
            vals = np.full(m, np.nan)
            if ok.any():
                try:
                    q = quality(list(res.components), zs[ok], 288.15, 288.15)
                except InputError:
                    return vals             # a component without ISO 6976 data: no figure
                vals[ok] = {"gross_cv_J_m3": q.gross_volumetric, "wobbe_gross_J_m3": q.wobbe_gross,
                            "relative_density": q.relative_density}[key]
            return vals
        return get
    out.update({key: quality_of(key) for key in QUALITY_KEYS})
    return out


def _block_quantities(res, eq):
    out = {}
    if eq.duty is not None:
        out["duty_W"] = lambda: eq.duty
    if eq.power is not None:
        out["power_W"] = lambda: eq.power
    if eq.dP is not None:
        out["dP_Pa"] = lambda: eq.dP
    for key, values in eq.details.items():
        if isinstance(values, np.ndarray) and values.dtype.kind in "fiub":
            out[key] = (lambda v=values: v)
    return out


def goal_column(fs, k: int) -> str:
    """Column name of the k-th goal's (1-based) value: the parameter it varies, then which goal
    and what it holds, then the unit (``preheat.T_out (goal1 holds network.T) [K]``)."""
    goal = fs.goals[k - 1]
    try:
        unit = SI_UNITS.get(variable_kind(fs, goal.by), "SI")
    except InputError:
        unit = "SI"
    return f"{goal.by} (goal{k} holds {goal.hold}) [{unit}]"


def _available(res, fs=None):
    """{path: (column name, callable)} of every stream and block quantity of the JSON contract,
    by its path (``network.hydrate_margin``) and by its full key (``network.hydrate_margin_K``);
    each goal's value by ``@goal<k>`` (and ``goal<k>``)."""
    m = res.n_cases
    avail = {}

    def add(owner, key, get):
        short, unit = split_unit(key)
        col = f"{owner}.{short} [{unit}]"
        for path in (f"{owner}.{short}", f"{owner}.{key}"):
            avail.setdefault(path, (col, get))
    for name, st in res.streams.items():
        for key, get in _stream_quantities(res, name, st, m).items():
            add(name, key, get)
    for name, eq in res.equipment.items():
        for key, get in _block_quantities(res, eq).items():
            add(name, key, get)
    for k, g in enumerate(res.goals):
        value = g["value"] if isinstance(g, dict) else getattr(g, "value")
        col = goal_column(fs, k + 1) if fs is not None else f"goal{k + 1} [SI]"
        for path in (f"{AXIS_PREFIX}goal{k + 1}", f"goal{k + 1}"):
            avail[path] = (col, lambda v=value: v)
        if fs is not None:          # and by the parameter it varies (preheat.T_out)
            avail.setdefault(fs.goals[k].by, (col, lambda v=value: v))
    return avail


def default_outputs(res, margins: bool = True) -> list:
    """The default output paths: every stream's T, P, vapour fraction and (when computed) hydrate
    margin, every block's duty, power and fuel, every goal's value."""
    paths = []
    for name in res.streams:
        paths += [f"{name}.T", f"{name}.P", f"{name}.vapour_fraction"]
        if margins:
            paths.append(f"{name}.hydrate_margin")
    for name, eq in res.equipment.items():
        if eq.duty is not None:
            paths.append(f"{name}.duty")
        if "fuel_W" in eq.details:
            paths.append(f"{name}.fuel")
        if eq.power is not None:
            paths.append(f"{name}.power")
    paths += [f"{AXIS_PREFIX}goal{k + 1}" for k in range(len(res.goals))]
    return paths


def _outputs(res, fs, outputs, m):
    avail = _available(res, fs)
    paths = []
    for o in (outputs or [DEFAULT]):
        paths += default_outputs(res) if o == DEFAULT else [o]
    names, getters = [], []
    for o in paths:
        if o not in avail:
            known = sorted({col.split(" [")[0] for col, _ in avail.values() if " (goal" not in col}
                           | {p for p in avail if p.startswith(AXIS_PREFIX)})
            raise InputError(f"unknown output '{o}' (known: {', '.join(known)})", field="outputs")
        col, get = avail[o]
        if col not in names:
            names.append(col)
            getters.append(get)
    values = [np.broadcast_to(np.asarray(get(), dtype=float), (m,)) for get in getters]
    return names, values


def _reasons(res, m):
    """Why each case failed ("" for a solved case): the batch result's own per-case reasons
    (a block's refusal, a loop or goal that did not converge, a failed flash or balance)."""
    failures = getattr(res, "failures", None)
    if failures is None:
        return ["" if ok else "did not converge" for ok in np.asarray(res.converged)[:m]]
    return [str(f) if not ok else "" for f, ok in zip(failures[:m], np.asarray(res.converged))]
