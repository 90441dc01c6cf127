"""Check a flowsheet against plant measurements, with every applicable model, and fit one parameter.

Residuals and score
    For each model (the models of :func:`letdown.study.crosscheck.applicable_models`) the flowsheet
    is solved as written and each measurement ``i`` (value ``y_i``, standard uncertainty ``u_i``) is
    compared with the model's value ``m_i``::

        r_i = m_i - y_i                         residual (model minus measured) [SI]
        z_i = r_i / u_i                         normalised residual [-]
        chi2 = sum z_i^2,  nu = N - p           p = 0 (no fit) or 1 (one fitted parameter)
        score = chi2 / nu,  rms = sqrt(mean z_i^2)

    If the model and the stated uncertainties are right (independent, normally distributed errors),
    chi2 follows a chi-square distribution with ``nu`` degrees of freedom; the comparison is called
    consistent when chi2 lies below its 95th percentile (``scipy.stats.chi2.ppf(0.95, nu)``).
Fitting one parameter
    One free block parameter ``theta`` (a heater's efficiency, fuel or duty, a throttle's outlet
    pressure, a compressor's efficiency, ...) is fitted per model by weighted least squares: minimise
    ``sum z_i(theta)^2`` inside the bracket ``[lo, hi]`` with ``scipy.optimize.least_squares``
    (trust-region reflective, bounded). The derivatives ``J_i = dz_i/dtheta`` come from central
    differences with step :data:`STEP_FRACTION` of the bracket (one-sided at a bracket end); the
    three solves of each step are one batch of cases (:func:`letdown.sheet.solve.solve_cases`).

    The standard uncertainty of the fitted value is the linearised one from the Jacobian at the
    optimum, taking the measurement uncertainties as stated (not rescaled by the scatter)::

        u(theta) = (J^T J)^(-1/2)

    and the 95 % interval is ``theta +- k u(theta)`` with ``k = 1.96`` (the normal distribution's
    97.5 % quantile), as for a known-variance estimate (JCGM 100:2008 (GUM), sections 6.2-6.3 and
    annex G). It is a linear approximation: it is less reliable when the fit ends at a bracket end
    (``at_bound``) or when the model is strongly non-linear in ``theta`` over the interval. When the
    fit is not consistent (chi2 above its 95th percentile) the stated uncertainties do not explain
    the scatter and the interval is too narrow.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from scipy import optimize, stats

from ..errors import ConvergenceError, InputError, ModelError
from ..quantities import SI_UNITS
from ..sheet.loader import EXACTLY_ONE, PARAMETERS
from ..sheet.measurements import UNITS
from ..sheet.solve import solve_cases
from ..sheet.spec import SheetSpec
from .crosscheck import applicable_models, solve_each

#: Step of the finite-difference derivative, as a fraction of the fit bracket [-]. The flash solves
#: to about 1e-10 relative and goals to 1e-6 K, so a step of 1e-4 of the bracket keeps the
#: derivative's rounding error below about 1e-3 relative for the quantities a station measures
#: (our choice).
STEP_FRACTION = 1e-4

#: Cap on least-squares function evaluations (each one a batched solve). A one-parameter fit of a
#: smooth model converges in under ten; the cap stops a pathological case.
MAX_EVALUATIONS = 60

#: Relative tolerance on the fitted parameter (``xtol``) and on the chi-square (``ftol``) of the
#: least-squares solver: well below any uncertainty a fit from plant data can reach.
X_TOLERANCE = 1e-8
F_TOLERANCE = 1e-10

#: Coverage factor for the 95 % interval (normal distribution, 97.5 % quantile).
COVERAGE_95 = float(stats.norm.ppf(0.975))

#: SI unit of a parameter, by its quantity kind (:data:`letdown.sheet.loader.PARAMETERS`).

#: Probability for the consistency check of chi-square.
CONSISTENCY_PROBABILITY = 0.95


@dataclass(frozen=True)
class Residual:
    """One measurement against one model.

    Attributes
    ----------
    at : str
        What was measured (``network.T``).
    unit : str
        SI unit of ``measured``, ``uncertainty``, ``model`` and ``residual``.
    measured, uncertainty, model : float
        Measured value, its standard uncertainty, the model's value [SI].
    residual : float
        ``model - measured`` [SI].
    normalised : float
        ``residual / uncertainty`` [-].
    """

    at: str
    unit: str
    measured: float
    uncertainty: float
    model: float
    residual: float
    normalised: float


@dataclass(frozen=True)
class Score:
    """How well a set of residuals agrees with the measurements.

    Attributes
    ----------
    chi2 : float
        Sum of squared normalised residuals [-].
    dof : int
        Degrees of freedom, measurements minus fitted parameters.
    chi2_per_dof : float
        ``chi2 / dof`` (NaN when ``dof`` is 0) [-].
    rms : float
        Root mean square of the normalised residuals [-].
    consistent : bool or None
        chi2 below its 95th percentile for ``dof`` (None when ``dof`` is 0).
    """

    chi2: float
    dof: int
    chi2_per_dof: float
    rms: float
    consistent: bool | None

    @classmethod
    def of(cls, z, n_fitted: int = 0) -> "Score":
        """The score of normalised residuals ``z`` with ``n_fitted`` fitted parameters."""
        z = np.asarray(z, dtype=float)
        chi2 = float(np.sum(z * z))
        dof = int(z.size - n_fitted)
        per = chi2 / dof if dof > 0 else math.nan
        consistent = bool(chi2 <= stats.chi2.ppf(CONSISTENCY_PROBABILITY, dof)) if dof > 0 else None
        return cls(chi2, dof, per, float(np.sqrt(np.mean(z * z))), consistent)


@dataclass(frozen=True)
class Fit:
    """One parameter fitted to the measurements with one model.

    Attributes
    ----------
    parameter : str
        ``block.parameter``.
    unit : str
        Its SI unit.
    start : float
        Starting value [SI].
    within : tuple of float
        Bracket searched [SI].
    value : float
        Fitted value [SI].
    standard_uncertainty : float
        ``(J^T J)^(-1/2)`` [SI] (see the module docstring).
    interval : tuple of float
        95 % interval ``value -+ 1.96 u`` [SI].
    coverage_factor : float
        The 1.96 used [-].
    score : Score
        Of the residuals at the fitted value (one parameter fitted).
    residuals : tuple of Residual
        At the fitted value.
    sensitivities : tuple of float
        ``dz_i/dtheta`` at the fitted value [1/SI unit of the parameter].
    evaluations : int
        Batched solves used.
    converged : bool
    message : str
        The least-squares solver's message.
    at_bound : bool
        The fitted value lies at an end of ``within``.
    """

    parameter: str
    unit: str
    start: float
    within: tuple
    value: float
    standard_uncertainty: float
    interval: tuple
    coverage_factor: float
    score: Score
    residuals: tuple
    sensitivities: tuple
    evaluations: int
    converged: bool
    message: str
    at_bound: bool


@dataclass(frozen=True)
class ModelComparison:
    """The measurements against one model.

    Attributes
    ----------
    model : str
    residuals : tuple of Residual
        With the flowsheet as written.
    score : Score
    fit : Fit or None
    fit_failure : str or None
        Why the fit failed with this model.
    warnings : tuple of (where, what)
        The solve's warnings.
    """

    model: str
    residuals: tuple
    score: Score
    fit: Fit | None = None
    fit_failure: str | None = None
    warnings: tuple = ()


@dataclass(frozen=True)
class Comparison:
    """A flowsheet checked against its measurements with each applicable model.

    Attributes
    ----------
    title : str
    models : tuple of str
        Models tried.
    results : dict
        model -> :class:`ModelComparison` for the models that solved.
    failures : dict
        model -> why it could not solve the flowsheet.
    skipped : dict
        model -> why it was not tried.
    fit_parameter : str or None
    """

    title: str
    models: tuple
    results: dict
    failures: dict = field(default_factory=dict)
    skipped: dict = field(default_factory=dict)
    fit_parameter: str | None = None

    def to_dict(self) -> dict:
        """JSON-ready form (SI values with the unit named; NaN as None)."""
        def num(x):
            return None if x is None or not np.isfinite(x) else float(x)

        def residuals(rs):
            return [{"at": r.at, "unit": r.unit, "measured": num(r.measured),
                     "uncertainty": num(r.uncertainty), "model": num(r.model),
                     "residual": num(r.residual), "normalised": num(r.normalised)} for r in rs]

        def score(s):
            return {"chi2": num(s.chi2), "dof": s.dof, "chi2_per_dof": num(s.chi2_per_dof),
                    "rms_normalised": num(s.rms), "consistent": s.consistent}

        out = {"title": self.title, "models": list(self.models), "fit_parameter": self.fit_parameter,
               "results": {}, "failures": dict(self.failures), "skipped": dict(self.skipped)}
        for m, c in self.results.items():
            entry = {"residuals": residuals(c.residuals), "score": score(c.score),
                     "warnings": [{"where": w, "what": t} for w, t in c.warnings]}
            if c.fit is not None:
                f = c.fit
                entry["fit"] = {
                    "parameter": f.parameter, "unit": f.unit, "start": num(f.start),
                    "within": [num(v) for v in f.within], "value": num(f.value),
                    "standard_uncertainty": num(f.standard_uncertainty),
                    "interval_95": [num(v) for v in f.interval],
                    "coverage_factor": f.coverage_factor, "score": score(f.score),
                    "residuals": residuals(f.residuals),
                    "sensitivities": [num(v) for v in f.sensitivities],
                    "evaluations": f.evaluations, "converged": f.converged, "message": f.message,
                    "at_bound": f.at_bound}
            if c.fit_failure is not None:
                entry["fit_failure"] = c.fit_failure
            out["results"][m] = entry
        return out


# ------------------------------------------------------------------------------------------------
def model_values(batch, measurements) -> np.ndarray:
    """The solved flowsheet's value of each measured quantity.

    Parameters
    ----------
    batch : letdown.sheet.result.BatchResult
    measurements : sequence of MeasurementSpec

    Returns
    -------
    ndarray (n_cases, n_measurements)
        In SI (the unit of each measurement's attribute).
    """
    cols = []
    for m in measurements:
        if m.target in batch.equipment:
            eq = batch.equipment[m.target]
            if m.attribute == "fuel":
                v = eq.details["fuel_W"]
            else:
                v = getattr(eq, m.attribute)
        else:
            v = getattr(batch.streams[m.target], m.attribute)
        cols.append(np.asarray(v, dtype=float))
    return np.column_stack(cols)


def residuals_of(measurements, values) -> tuple:
    """:class:`Residual` of each measurement given the model's ``values`` (one case) [SI]."""
    out = []
    for m, v in zip(measurements, values):
        r = float(v) - m.value
        out.append(Residual(m.at, UNITS[m.attribute], m.value, m.uncertainty, float(v), r,
                            r / m.uncertainty))
    return tuple(out)


def check_fit_parameter(fs: SheetSpec, parameter: str, within) -> tuple[str, tuple]:
    """Check that ``block.parameter`` can be fitted inside ``within`` = (lo, hi) [SI].

    Raises
    ------
    InputError
        (field ``--fit`` or ``--within``) An unknown block or parameter, a parameter a goal varies,
        one of a block's alternative specifications other than the one it is given, or a bracket
        that is not low to high.
    """
    block, _, name = parameter.partition(".")
    if block not in fs.blocks or not name:
        raise InputError(f"'{parameter}' should name a block parameter, block.parameter (blocks: "
                         f"{', '.join(fs.blocks)})", field="--fit")
    spec = fs.blocks[block]
    kinds = PARAMETERS[spec.kind]
    if name not in kinds:
        raise InputError(f"a {spec.kind} has no parameter '{name}' to fit (it has: "
                         f"{', '.join(kinds) or 'none'})", field="--fit")
    for i, goal in enumerate(fs.goals):
        if goal.by == parameter:
            raise InputError(f"{parameter} is varied by goal {i + 1}; a fitted parameter must be "
                             "free (remove the goal or fit another parameter)", field="--fit")
    for group in EXACTLY_ONE.get(spec.kind, ()):
        if name in group and name not in spec.params:
            given = [k for k in group if k in spec.params]
            raise InputError(f"{block} is specified by {', '.join(given)}, not {name}; fit one of "
                             "its parameters in effect", field="--fit")
    lo, hi = (float(v) for v in within)
    if not (math.isfinite(lo) and math.isfinite(hi) and lo < hi):
        raise InputError(f"the bracket [{lo:g}, {hi:g}] must go from low to high",
                         field="--within")
    if name == "efficiency" and not (lo > 0.0 and hi <= 1.0):
        raise InputError(f"an efficiency lies in (0, 1]; the bracket [{lo:g}, {hi:g}] leaves it",
                         field="--within")
    return parameter, (lo, hi)


def compare(fs: SheetSpec, measurements=None, models=None, fit: str | None = None,
            within=None) -> Comparison:
    """Compare a flowsheet with measurements, per model, and optionally fit one parameter.

    Parameters
    ----------
    fs : SheetSpec
    measurements : sequence of MeasurementSpec, optional
        Default ``fs.measurements``.
    models : sequence of str, optional
        Default: :func:`letdown.study.crosscheck.applicable_models`.
    fit : str, optional
        ``block.parameter`` to fit (see the module docstring).
    within : (float, float)
        The bracket of the fitted parameter [SI]; required with ``fit``.

    Returns
    -------
    Comparison

    Raises
    ------
    InputError
        No measurements; a parameter that cannot be fitted (see :func:`check_fit_parameter`); a
        parameter none of the measurements depends on.
    """
    measurements = tuple(fs.measurements if measurements is None else measurements)
    if not measurements:
        raise InputError("no measurements to compare with: add a 'measurements' section to the "
                         "file or give --data FILE.csv", file=fs.source, field="measurements")
    if fit is not None:
        if within is None:
            raise InputError(f"fitting {fit} needs a bracket (--within LO HI)", field="--within")
        fit, within = check_fit_parameter(fs, fit, within)
    skipped = {}
    if models is None:
        models, skipped = applicable_models(fs)
    batches, failures = solve_each(fs, models,
                                   lambda fs_, model: solve_cases(fs_, None, model=model))
    results = {}
    for m, batch in batches.items():
        res = residuals_of(measurements, model_values(batch, measurements)[0])
        warnings = tuple((w.where, w.what) for w in batch.warnings)
        fitted, failure = None, None
        if fit is not None:
            try:
                fitted = fit_parameter(fs, measurements, m, fit, within)
            except (ModelError, ConvergenceError) as exc:
                failure = str(exc)
            except InputError as exc:
                if exc.field in ("--fit", "--within"):
                    raise
                # a state this model refuses somewhere inside the bracket (GERG-2008 in two
                # phases, a throttle asked to raise pressure): this model's fit fails
                failure = str(exc)
        results[m] = ModelComparison(m, res, Score.of([r.normalised for r in res]), fitted,
                                     failure, warnings)
    return Comparison(fs.title, tuple(models), results, failures, skipped, fit)


def fit_parameter(fs: SheetSpec, measurements, model: str, parameter: str, within) -> Fit:
    """Fit one block parameter to the measurements with one model (weighted least squares).

    Parameters
    ----------
    fs : SheetSpec
    measurements : sequence of MeasurementSpec
    model : str
    parameter : str
        ``block.parameter`` (checked by :func:`check_fit_parameter`).
    within : (float, float)
        Bracket [SI].

    Returns
    -------
    Fit

    Raises
    ------
    InputError
        If no measurement depends on the parameter (its sensitivities are all zero).
    ConvergenceError
        If a solve fails during the fit.
    """
    lo, hi = within
    block, _, name = parameter.partition(".")
    y = np.array([m.value for m in measurements])
    u = np.array([m.uncertainty for m in measurements])
    h = STEP_FRACTION * (hi - lo)
    cache: dict = {}
    count = [0]

    def evaluate(x):
        x = float(min(max(x, lo), hi))
        if x not in cache:
            down, up = max(x - h, lo), min(x + h, hi)
            batch = solve_cases(fs, {parameter: np.array([x, down, up])}, model=model)
            count[0] += 1
            v = model_values(batch, measurements)
            z = (v - y) / u
            cache[x] = (z[0], (z[2] - z[1]) / (up - down), v[0])
        return cache[x]

    start = spec_start = fs.blocks[block].params.get(name)
    if spec_start is None or not lo <= spec_start <= hi:
        start = 0.5 * (lo + hi)
    start = float(start)
    J0 = evaluate(start)[1]
    if not np.any(np.abs(J0) * (hi - lo) > 1e-9):
        raise InputError(f"no measurement depends on {parameter}: changing it across "
                         f"[{lo:g}, {hi:g}] changes none of the model's measured quantities",
                         field="--fit")
    sol = optimize.least_squares(lambda p: evaluate(p[0])[0], [start],
                                 jac=lambda p: evaluate(p[0])[1][:, None], bounds=([lo], [hi]),
                                 method="trf", x_scale=[hi - lo], xtol=X_TOLERANCE,
                                 ftol=F_TOLERANCE, gtol=F_TOLERANCE, max_nfev=MAX_EVALUATIONS)
    x = float(min(max(sol.x[0], lo), hi))
    z, J, values = evaluate(x)
    info = float(np.sum(J * J))
    su = 1.0 / math.sqrt(info) if info > 0 else math.inf
    at_bound = bool(min(x - lo, hi - x) <= 1e-6 * (hi - lo))
    unit = SI_UNITS.get(PARAMETERS[fs.blocks[block].kind][name], "")
    return Fit(parameter=parameter, unit=unit, start=start,
               within=(lo, hi), value=x, standard_uncertainty=su,
               interval=(x - COVERAGE_95 * su, x + COVERAGE_95 * su),
               coverage_factor=COVERAGE_95, score=Score.of(z, 1),
               residuals=residuals_of(measurements, values), sensitivities=tuple(map(float, J)),
               evaluations=count[0], converged=bool(sol.success), message=str(sol.message),
               at_bound=at_bound)
