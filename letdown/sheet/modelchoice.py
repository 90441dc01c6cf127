"""The model a flowsheet without ``gas.model`` is solved with, and where a model does not cover a
solved flowsheet (:func:`model_warnings`).

A practitioner picks the reference equation for natural gas where it applies and a cubic equation
where it does not:

* **GERG-2008** (ISO 20765-2) when every component has GERG-2008 parameters and every stream of
  every case stays a single vapour-like phase -- a let-down station. GERG-2008 reproduces the
  densities and heat capacities of natural gas to within its stated uncertainties (Kunz & Wagner
  2012), which a cubic does not: on the shipped gate station Peng-Robinson overstates the preheat.
* **Peng-Robinson** otherwise -- a chilling train, a refrigerant loop, a stream that condenses, or a
  component GERG-2008 lacks -- since letdown's GERG-2008 engine solves single-phase states only.

The phases are judged from a Peng-Robinson solve of the same cases (a cheap first pass); the
GERG-2008 solve follows only where that pass finds one phase everywhere. If the GERG-2008 solve
then fails where the first pass did not, the Peng-Robinson result stands and a warning says why.
The result carries a ``model_choice`` note (severity ``note``) naming the model and the reason.
"""
from __future__ import annotations

from dataclasses import replace

import numpy as np

from ..errors import ConvergenceError, LetdownError, ModelError
from ..fluid.eos.gerg import GERG_NAMES
from ..fluid.eos.gerg import _import as gerg_import
from ..fluid.models import out_of_range
from .result import BatchResult, WarningRecord

#: The model for a file whose streams stay in one vapour-like phase and whose components GERG-2008
#: covers.
SINGLE_PHASE_MODEL = "gerg-2008"
#: The model for everything else (phase splits, liquids, components outside GERG-2008).
CUBIC_MODEL = "peng-robinson"
#: A stream whose molar vapour fraction is at least this counts as one vapour-like phase (flash
#: noise around 1 is not a second phase; the throttle's two-phase bound).
VAPOUR_LIKE = 1.0 - 1e-9


def _gerg_available() -> bool:
    """Whether the optional GERG-2008 engine (pyaga8) is installed (the engine's own import)."""
    try:
        gerg_import()
    except ModelError:
        return False
    return True


def single_phase_everywhere(result: BatchResult) -> tuple[bool, str]:
    """Whether every flowing stream of every case is one vapour-like phase, and if not, where."""
    for name, s in result.streams.items():
        flowing = np.asarray(s.flow, float) > 0.0
        vf = np.asarray(s.vapour_fraction, float)
        split = flowing & ~(vf >= VAPOUR_LIKE)
        if np.any(split & np.isfinite(vf)):
            i = int(np.flatnonzero(split & np.isfinite(vf))[0])
            case = f" in case {i}" if result.n_cases > 1 else ""
            return False, (f"stream '{name}' has a liquid phase (vapour fraction "
                           f"{vf[i]:.4g}{case})")
    return True, ""


def solve_default_model(fs, solve_with) -> BatchResult:
    """Solve with the model a practitioner would choose for ``fs`` (see the module docstring).

    Parameters
    ----------
    fs : letdown.sheet.spec.SheetSpec
        A flowsheet whose file names no ``gas.model``.
    solve_with : callable
        ``solve_with(model) -> BatchResult``: the same solve on a named model.

    Returns
    -------
    BatchResult
        With a ``model_choice`` note (and a ``model_fallback`` check where GERG-2008 was tried and
        failed).
    """
    missing = [c for c in fs.gas.composition if c not in GERG_NAMES]
    if missing:
        return _noted(solve_with(CUBIC_MODEL),
                      f"no gas.model given: {CUBIC_MODEL} chosen because GERG-2008 has no "
                      f"parameters for {', '.join(missing)}")
    if not _gerg_available():
        return _noted(solve_with(CUBIC_MODEL),
                      f"no gas.model given: {CUBIC_MODEL} chosen because the optional GERG-2008 "
                      "engine (pyaga8) is not installed")
    first = solve_with(CUBIC_MODEL)
    one_phase, where = single_phase_everywhere(first)
    if not one_phase:
        return _noted(first, f"no gas.model given: {CUBIC_MODEL} chosen because {where} "
                             f"(GERG-2008 is used here for single-phase gas only)")
    try:
        second = solve_with(SINGLE_PHASE_MODEL)
    except (LetdownError, ConvergenceError) as exc:
        reason = f"GERG-2008 failed ({exc})"
    else:
        lost = first.converged & ~second.converged
        if not np.any(lost):
            return _noted(second, f"no gas.model given: {SINGLE_PHASE_MODEL} chosen because every "
                                  "component is covered and every stream stays single-phase "
                                  f"(judged by a {CUBIC_MODEL} pass)")
        reason = f"GERG-2008 did not converge in {int(lost.sum())} case(s) that {CUBIC_MODEL} solved"
    out = _noted(first, f"no gas.model given: {CUBIC_MODEL} kept because {reason}")
    return replace(out, warnings=out.warnings + (WarningRecord(
        "gas", f"{reason}; the {CUBIC_MODEL} result is reported (name gas.model to choose)",
        tuple(range(out.n_cases)), kind="model_fallback", severity="check"),))


def _noted(result: BatchResult, what: str) -> BatchResult:
    note = WarningRecord("gas", what, tuple(range(result.n_cases)), kind="model_choice",
                         severity="note")
    return replace(result, warnings=result.warnings + (note,))


def model_warnings(fluid, streams) -> list:
    """Where the model's data or tested range does not cover the flowsheet: pairs without a
    published interaction parameter (``kij_missing``), and each flowing stream outside the model's
    tested range (``model_range``, :func:`letdown.fluid.models.out_of_range`)."""
    out = []
    if fluid.missing_kij and fluid.model != "gerg-2008":
        pairs = ", ".join(f"{a}-{b}" for a, b in fluid.missing_kij)
        out.append(WarningRecord("gas", f"no published interaction parameter for {pairs}; "
                                        "taken as zero (set gas.kij to override)",
                                  kind="kij_missing", severity="check"))
    components = tuple(fluid.components)
    for name, stream in streams.items():
        flowing = stream.flow > 0
        for reason, cases in out_of_range(fluid.model, stream.T, stream.P, stream.zs,
                                          components):
            cases = cases & flowing
            if cases.any():
                out.append(WarningRecord(name, reason, tuple(np.flatnonzero(cases).tolist()),
                                         kind="model_range", severity="check"))
    return out
