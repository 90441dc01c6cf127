"""Second opinion: the same flowsheet solved with every applicable model, side by side.

For each key result -- every stream's temperature and vapour fraction, every block's duty or power,
every goal's value -- the value per model and the spread (largest minus smallest) are reported, and a
spread above its threshold is flagged. A model that cannot solve the flowsheet (GERG-2008 where a
state splits into two phases, a component it lacks) is listed with its reason instead of a value.
Each model's warnings (states outside its tested range, such as hydrogen-rich gas on a cubic model)
are carried along.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..errors import ConvergenceError, InputError, ModelError
from ..fluid.components import COMPONENTS
from ..fluid.eos.gerg import GERG_NAMES
from ..fluid.models import MODELS
from ..sheet.solve import solve
from ..sheet.spec import SheetSpec

#: Spread thresholds above which a result is flagged (common practice: a kelvin is the resolution
#: of station instruments and the margin engineers argue about; 5 % of duty or power is the usual
#: sizing margin; a vapour fraction differing by 0.01 changes a separator's liquid noticeably).
SPREAD_T_K = 1.0
SPREAD_VAPOUR_FRACTION = 0.01
SPREAD_RELATIVE = 0.05
#: Acentric factor above which the 1978 Peng-Robinson alpha differs from the 1976 one.
PR78_OMEGA = 0.491


@dataclass(frozen=True)
class Row:
    """One compared quantity.

    Attributes
    ----------
    what : str
        ``stream.T``, ``block.duty``, ``goal:block.parameter``, ...
    unit : str
        SI unit of the values.
    kind : str
        ``T`` (temperature), ``vapour_fraction``, ``energy`` (duty or power) or ``other``.
    values : dict
        model -> value (NaN where the model gave none).
    spread : float
        Largest minus smallest over the models that gave a value.
    flagged : bool
    """

    what: str
    unit: str
    kind: str
    values: dict
    spread: float
    flagged: bool


@dataclass(frozen=True)
class CrossCheck:
    """The comparison of one flowsheet across models."""

    title: str
    models: tuple
    rows: tuple
    failures: dict = field(default_factory=dict)      # model -> reason
    warnings: dict = field(default_factory=dict)      # model -> [(where, what)]
    skipped: dict = field(default_factory=dict)       # model -> why not applicable
    assumptions: dict = field(default_factory=dict)   # model -> statement (fluid.models)

    @property
    def flagged(self) -> tuple:
        return tuple(r for r in self.rows if r.flagged)

    def to_dict(self) -> dict:
        """JSON-ready form (SI values; NaN as None)."""
        def num(x):
            return None if x is None or not np.isfinite(x) else float(x)
        return {
            "title": self.title, "models": list(self.models),
            "assumptions": dict(self.assumptions),
            "rows": [{"what": r.what, "unit": r.unit, "values": {m: num(v) for m, v in r.values.items()},
                      "spread": num(r.spread), "flagged": r.flagged} for r in self.rows],
            "failures": dict(self.failures), "skipped": dict(self.skipped),
            "warnings": {m: [{"where": w, "what": t} for w, t in ws] for m, ws in self.warnings.items()},
        }


def applicable_models(fs: SheetSpec) -> tuple[list, dict]:
    """The models worth comparing for this flowsheet, and why others are left out."""
    names = list(fs.gas.composition)
    models = ["peng-robinson", "soave-redlich-kwong"]
    skipped = {}
    if any(COMPONENTS[n].omega > PR78_OMEGA for n in names):
        models.insert(1, "peng-robinson-1978")
    else:
        skipped["peng-robinson-1978"] = ("identical to peng-robinson here (no component with an "
                                         f"acentric factor above {PR78_OMEGA})")
    missing = [n for n in names if n not in GERG_NAMES]
    if missing:
        skipped["gerg-2008"] = f"no GERG-2008 parameters for {', '.join(missing)}"
    else:
        models.append("gerg-2008")
    return models, skipped


def solve_each(fs: SheetSpec, models, solver):
    """Solve ``fs`` with each model through ``solver(fs, model=...)``.

    Returns
    -------
    results : dict
        model -> what the solver returned, in the order of ``models``.
    failures : dict
        model -> reason, for the models that refused (GERG-2008 where a state splits, a
        non-converging loop, a state the model cannot represent).
    """
    results, failures = {}, {}
    for m in models:
        try:
            results[m] = solver(fs, model=m)
        except (ModelError, ConvergenceError) as exc:
            failures[m] = str(exc)
        except InputError as exc:
            # a state the model refuses for this flowsheet (not a problem of the file itself)
            failures[m] = exc.message
    return results, failures


def crosscheck(fs: SheetSpec, models=None) -> CrossCheck:
    """Solve ``fs`` with each model and compare the key results.

    Parameters
    ----------
    fs : SheetSpec
    models : sequence of str, optional
        Models to compare (default: :func:`applicable_models`).

    Returns
    -------
    CrossCheck
    """
    skipped = {}
    if models is None:
        models, skipped = applicable_models(fs)
    results, failures = solve_each(fs, models, solve)
    warnings = {m: [(w["where"], w["what"]) for w in res.warnings] for m, res in results.items()}
    return CrossCheck(fs.title, tuple(models), tuple(_rows(fs, results, models)), failures,
                      warnings, skipped, {m: MODELS[m].assumptions for m in models})


def _rows(fs, results, models):
    if not results:
        return []
    first = next(iter(results.values()))
    rows = []

    def add(what, unit, kind, getter):
        values = {}
        for m in models:
            res = results.get(m)
            try:
                values[m] = float(getter(res)) if res is not None else np.nan
            except (KeyError, TypeError, IndexError):
                values[m] = np.nan
        have = np.array([v for v in values.values() if np.isfinite(v)])
        spread = float(have.max() - have.min()) if have.size > 1 else np.nan
        rows.append(Row(what, unit, kind, values, spread, bool(_flag(kind, spread, have))))

    for name in first.streams:
        add(f"{name}.T", "K", "T", lambda r, n=name: r.streams[n].T)
        add(f"{name}.vapour_fraction", "-", "vapour_fraction",
            lambda r, n=name: r.streams[n].vapour_fraction)
    for name, eq in first.equipment.items():
        for key, label in (("duty_W", "duty"), ("power_W", "power")):
            if eq.get(key) is not None:
                add(f"{name}.{label}", "W", "energy", lambda r, n=name, k=key: r.equipment[n][k])
    for i, goal in enumerate(fs.goals):
        kind = "T" if goal.by.endswith(("T_out", "_T_out")) else "other"
        add(f"goal {i + 1}: {goal.by}", "K" if kind == "T" else "SI", kind,
            lambda r, i=i: r.goals[i]["value"])
    return rows


def _flag(kind, spread, values) -> bool:
    if not np.isfinite(spread):
        return False
    if kind == "T":
        return spread > SPREAD_T_K
    if kind == "vapour_fraction":
        return spread > SPREAD_VAPOUR_FRACTION
    scale = np.max(np.abs(values))
    return scale > 0 and spread > SPREAD_RELATIVE * scale
