"""Uncertainty studies: a flowsheet over samples of uncertain inputs, with the statistics of every
output.

An uncertain input is written ``PATH=DIST(ARGS)`` with the paths of :mod:`letdown.study.sweep`
and the units of the file:

* ``normal(mean, sigma)`` -- ``supply.T=normal(5degC,2K)``; sigma a difference (K, bar) > 0;
* ``uniform(a, b)`` -- ``supply.flow=uniform(60000Sm3/h,90000Sm3/h)``, a < b;
* ``triangular(a, m, b)`` -- lower limit, mode, upper limit, a <= m <= b, a < b;
* ``<feed>.composition=dirichlet(c)`` -- the feed's composition from a Dirichlet distribution
  whose mean is the file's composition and whose concentration is ``c`` (> 0): each mole fraction
  then has the variance z (1 - z) / (c + 1) (Kotz, Balakrishnan and Johnson 2000, *Continuous
  Multivariate Distributions* vol. 1, ch. 49). Components at zero in the file stay at zero.

The samples of the unit hypercube come from ``scipy.stats.qmc``: Latin hypercube (``lhs``, McKay,
Beckman and Conover 1979), scrambled Sobol points (``sobol``, Sobol' 1967 with Owen scrambling;
N a power of two) or plain pseudo-random numbers (``random``), one dimension per scalar input
and one per component of a Dirichlet composition; the inverse distribution functions turn them
into values (a Dirichlet through normalised Gamma variates of shapes c z_i). All samples are
solved as one zip sweep (:func:`letdown.study.sweep.sweep`), on any executor.

Statistics per output over the solved samples: mean, standard deviation, P10/P50/P90 (the values
below which 10, 50 and 90 % of the samples lie), the probability that any stream's hydrate margin
is below zero and below the file's wanted margin (``limits.hydrate_margin``), with their standard
errors, and first-order sensitivity indices.

**Sensitivity index.** For each input (a Dirichlet composition counts as one group) the index is
the coefficient of determination of a least-squares regression of the output on that input alone
(on the group's fractions, one left out, for a composition). With independent inputs this is the
first-order index Var(E[Y | X_i]) / Var(Y) when E[Y | X_i] is linear in X_i, and a lower bound of
it otherwise (Saltelli et al. 2008, *Global Sensitivity Analysis. The Primer*, Wiley, section 1.2.5
and ch. 4: for a linear model the squared standardised regression coefficients are the first-order
indices and sum to R^2). The same estimator serves every sampler. A sum of the indices well below
1 says the output is not additive-linear in the inputs (interactions or curvature), and the
indices are then only a ranking.
"""
from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np

from ..errors import InputError
from ..quantities import MassFlow, parse_quantity
from ..sheet.spec import SheetSpec
from .paths import (MAX_CASES, Variable, _check_values, _feed_molar_mass, study_axis,
                    variable_kind)
from .sweep import split_unit, sweep

#: The distributions and their argument names.
DISTRIBUTIONS = {"normal": ("mean", "sigma"), "uniform": ("a", "b"),
                 "triangular": ("a", "m", "b"), "dirichlet": ("concentration",)}
SAMPLERS = ("lhs", "sobol", "random")
#: The kind of a spread (sigma) for each quantity kind: a temperature's sigma is a difference.
SPREAD_KIND = {"temperature": "temperature_difference", "pressure": "pressure_difference"}
#: Uniform numbers are kept inside (U_EDGE, 1 - U_EDGE) before an inverse distribution function,
#: so a normal never gets an infinite value (scrambled Sobol and LHS points are never 0 or 1
#: anyway; our guard).
U_EDGE = 1e-12


@dataclass(frozen=True)
class Distribution:
    """One uncertain input: path, distribution name, parameters in SI, quantity kind, the text
    as given, and (for a Dirichlet) the mean composition in the gas's component order."""

    path: str
    name: str
    params: tuple
    kind: str
    text: str
    mean_composition: tuple | None = None

    @property
    def dims(self) -> int:
        return len(self.mean_composition) if self.name == "dirichlet" else 1

    @property
    def feed(self) -> str:
        return self.path.partition(".")[0]

    def values(self, u: np.ndarray) -> np.ndarray:
        """Inverse distribution function: uniforms (n, dims) into values, (n,) or (n, nc)."""
        from scipy import stats
        u = np.clip(np.asarray(u, float), U_EDGE, 1.0 - U_EDGE)
        p = self.params
        if self.name == "normal":
            return stats.norm.ppf(u[:, 0], loc=p[0], scale=p[1])
        if self.name == "uniform":
            return p[0] + u[:, 0] * (p[1] - p[0])
        if self.name == "triangular":
            a, m, b = p
            return stats.triang.ppf(u[:, 0], (m - a) / (b - a), loc=a, scale=b - a)
        from scipy.special import gammaln
        z = np.asarray(self.mean_composition, float)
        live = z > 0.0
        shape = p[0] * z[live]
        # log Gamma variates: where the inverse underflows (a small shape), the lower tail
        # F(x) ~ x^a / Gamma(a + 1) gives log x = (log u + ln Gamma(a + 1)) / a
        with np.errstate(divide="ignore"):
            logg = np.log(stats.gamma.ppf(u[:, live], shape))
        tail = (np.log(u[:, live]) + gammaln(shape + 1.0)) / shape
        logg = np.where(np.isfinite(logg), logg, tail)
        g = np.exp(logg - logg.max(axis=1, keepdims=True))
        x = np.zeros_like(u)
        x[:, live] = g / g.sum(axis=1, keepdims=True)
        return x

    def mean(self):
        """The analytic mean (SI; a composition's mean is the file's composition)."""
        p = self.params
        return {"normal": lambda: p[0], "uniform": lambda: 0.5 * (p[0] + p[1]),
                "triangular": lambda: sum(p) / 3.0,
                "dirichlet": lambda: np.asarray(self.mean_composition)}[self.name]()

    def variance(self):
        """The analytic variance (SI^2; per component for a composition)."""
        p = self.params
        if self.name == "normal":
            return p[1] ** 2
        if self.name == "uniform":
            return (p[1] - p[0]) ** 2 / 12.0
        if self.name == "triangular":
            a, m, b = p
            return (a * a + m * m + b * b - a * m - a * b - m * b) / 18.0
        z = np.asarray(self.mean_composition)
        return z * (1.0 - z) / (p[0] + 1.0)


_SPEC = re.compile(r"^\s*([A-Za-z_][A-Za-z_0-9]*)\s*\((.*)\)\s*$", re.S)


def is_distribution(spec: str) -> bool:
    """Whether a ``--vary`` value names a distribution (``normal(...)``) rather than values."""
    return bool(_SPEC.match(str(spec).partition("=")[2]))


def parse_distribution(fs: SheetSpec, spec: str) -> Distribution:
    """``PATH=DIST(ARGS)`` into a :class:`Distribution`.

    Raises
    ------
    InputError
        (field ``--vary``) A malformed spec, an unknown distribution or path, the wrong number of
        arguments, a unit of the wrong kind, sigma <= 0, a >= b, a mode outside [a, b], a
        concentration <= 0, or a range outside what the path accepts (a negative pressure or
        flow, a fraction outside [0, 1)).
    """
    path, sep, text = str(spec).partition("=")
    path, text = path.strip(), text.strip()
    m = _SPEC.match(text)
    if not sep or not path or m is None:
        raise InputError(f"uncertain input '{spec}' must read PATH=DIST(ARGS), e.g. "
                         f"supply.T=normal(5degC,2K)", field="--vary")
    name = m.group(1).lower()
    args = [a.strip() for a in m.group(2).split(",")]
    if name not in DISTRIBUTIONS:
        known = ", ".join(f"{k}({','.join(v)})" for k, v in DISTRIBUTIONS.items())
        raise InputError(f"unknown distribution '{m.group(1)}' in '{spec}' (known: {known})",
                         field="--vary")
    want = DISTRIBUTIONS[name]
    if len(args) != len(want) or not all(args):
        raise InputError(f"{name} takes {len(want)} argument(s) ({', '.join(want)}), got "
                         f"'{m.group(2)}' in '{spec}'", field="--vary")
    head, _, attr = path.partition(".")
    if name == "dirichlet" or attr == "composition":
        return _dirichlet(fs, path, name, args, spec)
    try:
        kind = variable_kind(fs, path)
    except InputError as exc:
        raise InputError(exc.message, field="--vary") from None
    atm = fs.extra.get("atmosphere") if fs.extra else None
    kw = {"atmosphere": atm} if atm else {}

    def q(t, k):
        value = parse_quantity(t, k, field="--vary", **kw)
        if isinstance(value, MassFlow):
            value = value.to_molar(_feed_molar_mass(fs, head))
        return float(value)
    if name == "normal":
        params = (q(args[0], kind), q(args[1], SPREAD_KIND.get(kind, kind)))
        if not params[1] > 0.0:
            raise InputError(f"normal: sigma must be above zero, got '{args[1]}' in '{spec}'",
                             field="--vary")
    else:
        params = tuple(q(a, kind) for a in args)
        a, b = params[0], params[-1]
        if not a < b:
            raise InputError(f"{name}: the lower limit a must be below the upper limit b, got "
                             f"a = '{args[0]}', b = '{args[-1]}' in '{spec}'", field="--vary")
        if name == "triangular" and not a <= params[1] <= b:
            raise InputError(f"triangular: the mode m must lie in [a, b], got '{args[1]}' in "
                             f"'{spec}'", field="--vary")
        # the limits are values the path must accept (positive pressure, fraction in [0, 1))
        _check_range(fs, path, np.array([a, b]), spec)
    if not all(np.isfinite(params)):
        raise InputError(f"{name}: the arguments must be finite numbers in '{spec}'",
                         field="--vary")
    return Distribution(path, name, params, kind, text)


def _check_range(fs, path, values, spec):
    try:
        if (study_axis(fs, path) or ("",))[0] == "blend" and (np.any(values < 0)
                                                              or np.any(values >= 1)):
            raise InputError(f"blend fractions must lie in [0, 1) (got {values.min():g}.."
                             f"{values.max():g})", field="--vary")
        _check_values(fs, path, spec, values, "--vary")
    except InputError as exc:
        raise InputError(f"'{spec}': {exc.message}", field="--vary") from None


def _dirichlet(fs, path, name, args, spec):
    feed_name, _, attr = path.partition(".")
    if name != "dirichlet" or attr != "composition" or feed_name not in fs.feeds:
        raise InputError(f"'{spec}': a composition takes dirichlet(concentration) on "
                         f"<feed>.composition (feeds: {', '.join(fs.feeds)}); dirichlet applies "
                         f"only to a composition", field="--vary")
    try:
        c = float(args[0])
    except ValueError:
        raise InputError(f"dirichlet: the concentration '{args[0]}' is not a number in "
                         f"'{spec}'", field="--vary") from None
    if not (np.isfinite(c) and c > 0.0):
        raise InputError(f"dirichlet: the concentration must be above zero, got '{args[0]}' "
                         f"in '{spec}'", field="--vary")
    feed = fs.feeds[feed_name]
    names = list(fs.gas.composition)
    comp = feed.composition or fs.gas.composition
    z = np.array([comp.get(k, 0.0) for k in names], float)
    z = z / z.sum()
    return Distribution(path, "dirichlet", (c,), "fraction", spec.partition("=")[2].strip(),
                        tuple(z))


def unit_samples(dims: int, n: int, sampler: str = "lhs", seed: int = 0) -> np.ndarray:
    """``n`` points of the unit hypercube of ``dims`` dimensions, shape (n, dims).

    Raises
    ------
    InputError
        An unknown sampler, n outside 2..MAX_CASES, a Sobol n that is not a power of two, or a
        negative seed.
    """
    from scipy.stats import qmc
    if sampler not in SAMPLERS:
        raise InputError(f"unknown sampler '{sampler}' (known: {', '.join(SAMPLERS)})",
                         field="--sampler")
    if not 2 <= int(n) <= MAX_CASES:
        raise InputError(f"--sample must be between 2 and {MAX_CASES:,}, got {n}",
                         field="--sample")
    n = int(n)
    if isinstance(seed, bool) or not isinstance(seed, (int, np.integer)) or seed < 0:
        raise InputError(f"--seed must be a whole number 0 or above, got {seed}", field="--seed")
    rng = np.random.default_rng(seed)
    if sampler == "random":
        return rng.random((n, dims))
    if sampler == "lhs":
        return qmc.LatinHypercube(d=dims, rng=rng).random(n)
    if n & (n - 1):
        lo = 1 << (n.bit_length() - 1)
        raise InputError(f"Sobol points keep their balance only for a power of two: --sample "
                         f"{lo} or {2 * lo}, not {n}", field="--sample")
    return qmc.Sobol(d=dims, scramble=True, rng=rng).random_base2(int(np.log2(n)))


@dataclass(frozen=True)
class OutputStats:
    """Statistics of one output over the solved samples (SI, in the output's unit)."""

    column: str
    n: int
    mean: float
    std: float
    p10: float
    p50: float
    p90: float

    @property
    def mean_error(self) -> float:
        """Standard error of the mean, std / sqrt(n)."""
        return self.std / np.sqrt(self.n) if self.n else float("nan")


@dataclass(frozen=True)
class UncertaintyResult:
    """An uncertainty study.

    Attributes
    ----------
    distributions : tuple of Distribution
    sampler : str
    seed : int
    table : SweepTable
        One row per sample: the scalar inputs, each Dirichlet composition's fractions
        (``<feed>.composition.<component> [-]``), the outputs, ``converged``, ``reason``.
    stats : tuple of OutputStats
    hydrate : dict
        ``columns`` (the hydrate-margin columns), ``below_zero`` and ``below_wanted`` (fraction of
        solved samples where any of them is below 0 K / below ``wanted``), their standard errors
        ``below_zero_error``, ``below_wanted_error``, and ``wanted`` [K] (None where the file
        sets no ``limits.hydrate_margin``), ``per_stream`` {column: (share below 0, share below
        wanted or None)}; empty where no margin was an output. A NaN margin (no water) counts as
        not below.
    inputs : tuple of str
        The sensitivity inputs (paths; a composition is one group).
    sensitivity : dict
        {output column: tuple of first-order indices, one per input}.
    """

    distributions: tuple
    sampler: str
    seed: int
    table: object
    stats: tuple
    hydrate: dict
    inputs: tuple
    sensitivity: dict

    @property
    def model(self) -> str:
        return self.table.model

    @property
    def n(self) -> int:
        return len(self.table.rows)

    @property
    def failed(self) -> int:
        return sum(1 for r in self.table.rows if not r[-2])


def uncertainty(fs: SheetSpec, distributions, n: int, *, sampler: str = "lhs", seed: int = 0,
                model: str | None = None, outputs=None, executor=None,
                show_progress: bool = False, basis: str = "volume") -> UncertaintyResult:
    """Sample the uncertain inputs ``n`` times, solve every sample (one zip sweep) and take the
    statistics (see the module docstring).

    Raises
    ------
    InputError
        No distributions, one path given twice, a Dirichlet composition beside a blend, a sampled
        value the path refuses (a normal pressure reaching zero), or see :func:`unit_samples` and
        :func:`letdown.study.sweep.sweep`.
    """
    dists = tuple(distributions)
    if not dists:
        raise InputError("nothing is uncertain: give at least one --vary PATH=DIST(ARGS)",
                         field="--vary")
    paths = [d.path for d in dists]
    twice = sorted({p for p in paths if paths.count(p) > 1})
    if twice:
        raise InputError(f"'{twice[0]}' is given two distributions", field="--vary")
    axes = {p: study_axis(fs, p) for p in paths}
    if any(d.name == "dirichlet" for d in dists) and any(a is not None and a[0] == "blend"
                                                         for a in axes.values()):
        raise InputError("a sampled composition (dirichlet) and a blend cannot be combined",
                         field="--vary")
    u = unit_samples(sum(d.dims for d in dists), n, sampler, seed)
    variables, given, inputs_extra = [], {}, {}
    j = 0
    names = list(fs.gas.composition)
    for d in dists:
        values = d.values(u[:, j:j + d.dims])
        j += d.dims
        if d.name == "dirichlet":
            given[f"{d.feed}.zs"] = values
            for k, comp in enumerate(names):
                inputs_extra[f"{d.path}.{comp} [-]"] = values[:, k]
        elif axes[d.path] is not None and axes[d.path][0] == "goal":
            # a goal's target per case goes straight to the batch solver (a sweep would make
            # each distinct target a solve of its own)
            _check_values(fs, d.path, d.text, values, "--vary")
            given[f"@goal{axes[d.path][1]}.at"] = values
            inputs_extra[f"{d.path} [{Variable(d.path, d.kind, values).unit}]"] = values
        else:
            try:
                if d.kind == "temperature" and np.any(values <= 0.0):
                    raise InputError(f"a temperature at or below absolute zero "
                                     f"({values.min():.4g} K)", field="--vary")
                _check_values(fs, d.path, f"{d.name}({', '.join(map(str, d.params))})",
                              values, "--vary")
            except InputError as exc:
                raise InputError(f"'{d.path}={d.text}' draws values the path refuses: "
                                 f"{exc.message}", field="--vary") from None
            variables.append(Variable(d.path, d.kind, values))
    table = sweep(fs, variables, mode="zip", model=model, outputs=outputs, executor=executor,
                  show_progress=show_progress, basis=basis, given=given)
    if inputs_extra:
        table = _with_inputs(table, len(variables), inputs_extra)
        table = _in_order(table, dists, n_inputs=len(variables) + len(inputs_extra))
    return _statistics(fs, dists, sampler, seed, table)


def _with_inputs(table, after: int, extra: dict):
    """The table with the composition columns inserted after the first ``after`` columns."""
    import dataclasses
    cols = table.columns[:after] + tuple(extra) + table.columns[after:]
    arrays = list(extra.values())
    rows = tuple(r[:after] + tuple(float(a[i]) for a in arrays) + r[after:]
                 for i, r in enumerate(table.rows))
    return dataclasses.replace(table, columns=cols, rows=rows)


def _in_order(table, dists, n_inputs):
    """The input columns in the order the distributions were given."""
    import dataclasses
    head = list(table.columns[:n_inputs])
    order = []
    for d in dists:
        order += [j for j, c in enumerate(head) if c.startswith(d.path + " [")
                  or c.startswith(d.path + ".")]
    order += [j for j in range(n_inputs) if j not in order]
    perm = order + list(range(n_inputs, len(table.columns)))
    return dataclasses.replace(table, columns=tuple(table.columns[j] for j in perm),
                               rows=tuple(tuple(r[j] for j in perm) for r in table.rows))


def _statistics(fs, dists, sampler, seed, table) -> UncertaintyResult:
    ok = table.column("converged").astype(bool)
    n_in = sum(d.dims for d in dists)
    out_cols = [c for c in table.columns[n_in:] if c not in ("converged", "reason")]
    stats = []
    for c in out_cols:
        y = table.column(c)[ok]
        y = y[np.isfinite(y)]
        if y.size == 0:
            stats.append(OutputStats(c, 0, *[float("nan")] * 5))
            continue
        p10, p50, p90 = np.percentile(y, [10.0, 50.0, 90.0])
        stats.append(OutputStats(c, int(y.size), float(y.mean()),
                                 float(y.std(ddof=1)) if y.size > 1 else 0.0,
                                 float(p10), float(p50), float(p90)))
    hydrate = {}
    margin_cols = [c for c in out_cols if split_unit(c.split(" [")[0])[0].endswith(
        ".hydrate_margin")]
    m_ok = int(ok.sum())
    if margin_cols and m_ok:
        margins = np.column_stack([table.column(c)[ok] for c in margin_cols])
        low = np.nanmin(np.where(np.isfinite(margins), margins, np.inf), axis=1)
        wanted = (fs.limits or {}).get("hydrate_margin")

        def share(mask):
            p = float(mask.mean())
            return p, float(np.sqrt(p * (1.0 - p) / m_ok))
        hydrate = {"columns": tuple(margin_cols), "wanted": wanted, "n": m_ok}
        hydrate["below_zero"], hydrate["below_zero_error"] = share(low < 0.0)
        if wanted is not None:
            hydrate["below_wanted"], hydrate["below_wanted_error"] = share(low < wanted)
        # per stream: the share of solved samples below zero (and below the wanted margin)
        hydrate["per_stream"] = {
            c: (float((margins[:, k] < 0.0).mean()),
                None if wanted is None else float((margins[:, k] < wanted).mean()))
            for k, c in enumerate(margin_cols)}
    inputs, groups = [], []
    for d in dists:
        inputs.append(d.path)
        if d.name == "dirichlet":
            cols = [f"{d.path}.{c} [-]" for c in fs.gas.composition]
            z = np.asarray(d.mean_composition)
            live = [c for c, zz in zip(cols, z) if zz > 0.0]
            drop = cols[int(np.argmax(z))]          # the fractions sum to 1: leave one out
            groups.append([c for c in live if c != drop])
        else:
            groups.append([next(c for c in table.columns if c.startswith(d.path + " ["))])
    sens = {}
    for c in out_cols:
        y = table.column(c)
        keep = ok & np.isfinite(y)
        sens[c] = tuple(first_order_index(np.column_stack([table.column(g)[keep] for g in grp])
                                          if grp else np.zeros((int(keep.sum()), 0)), y[keep])
                        for grp in groups)
    return UncertaintyResult(dists, sampler, int(seed), table, tuple(stats), hydrate,
                             tuple(inputs), sens)


def first_order_index(x: np.ndarray, y: np.ndarray) -> float:
    """Coefficient of determination of the least-squares regression of ``y`` on the columns of
    ``x`` (with an intercept): the linear estimate of the first-order index of the input (group)
    ``x`` (module docstring). NaN where y does not vary or too few samples.

    >>> rng = np.random.default_rng(0)
    >>> a, b = rng.normal(size=4000), rng.normal(size=4000)
    >>> y = 3.0 * a + 1.0 * b          # first-order indices 9/10 and 1/10
    >>> round(first_order_index(a[:, None], y), 2), round(first_order_index(b[:, None], y), 2)
    (0.9, 0.1)
    """
    x = np.asarray(x, float).reshape(len(y), -1)
    y = np.asarray(y, float)
    if y.size < x.shape[1] + 3:
        return float("nan")
    yc = y - y.mean()
    ss = float(yc @ yc)
    if not ss > 1e-30 * max(1.0, float(y @ y)):
        return float("nan")
    if x.shape[1] == 0:
        return 0.0
    xc = x - x.mean(axis=0)
    coef, *_ = np.linalg.lstsq(xc, yc, rcond=None)
    r = yc - xc @ coef
    return float(max(0.0, 1.0 - float(r @ r) / ss))
