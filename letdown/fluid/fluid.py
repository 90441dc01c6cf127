"""The public :class:`Fluid`: one composition, one model, flashes by any two of T, P, h, s."""
from __future__ import annotations

import csv
import warnings
from functools import lru_cache
from importlib import resources

import numpy as np

from ..errors import ConvergenceError, InputError, LetdownError, ModelError
from .components import ComponentSet, canonical_name
from .eos.cubic import KINDS, CubicEOS
from .flash.engine import CubicEngine


#: Accepted model names (and spellings) -> canonical model name.
MODEL_NAMES = {
    "peng-robinson": "peng-robinson", "pr": "peng-robinson", "pr76": "peng-robinson",
    "peng-robinson-1978": "peng-robinson-1978", "pr78": "peng-robinson-1978",
    "soave-redlich-kwong": "soave-redlich-kwong", "srk": "soave-redlich-kwong",
    "gerg-2008": "gerg-2008", "gerg2008": "gerg-2008", "gerg": "gerg-2008",
}

#: Tolerance on the sum of mole fractions before normalising is refused.
SUM_TOLERANCE = 1e-6


@lru_cache(maxsize=1)
def _kij_table():
    """{(a, b): (kij, source)} from the packaged table (see ``data/kij_pr.csv`` header)."""
    table = {}
    text = resources.files("letdown.fluid").joinpath("data/kij_pr.csv").read_text()
    rows = csv.reader(line for line in text.splitlines() if not line.startswith("#"))
    next(rows)
    for a, b, k, src in rows:
        table[(a, b)] = (float(k), src)
        table[(b, a)] = (float(k), src)
    return table


def canonical_model(model: str) -> str:
    """Canonical model name; raises InputError for an unknown model."""
    key = str(model).strip().lower().replace("_", "-").replace(" ", "-")
    if key not in MODEL_NAMES:
        raise InputError(f"unknown model '{model}' (known: peng-robinson, peng-robinson-1978, "
                         f"soave-redlich-kwong, gerg-2008)")
    return MODEL_NAMES[key]


class Fluid:
    """A gas or liquid of fixed components, its default composition and one thermodynamic model.

    Parameters
    ----------
    composition : dict
        {component: mole fraction}. Names may be aliases (C1, nC4, CO2, MeOH, ...).
    model : str
        ``peng-robinson`` (1976), ``peng-robinson-1978``, ``soave-redlich-kwong`` or ``gerg-2008``
        (optional extra ``letdown[gerg]``; single-phase states of mixtures, both phases of pure
        fluids).
    kij : None, "zero" or dict
        Interaction parameters: None uses the library table (Peng-Robinson values, also used for
        SRK -- see docs/models.md); "zero" switches them off; a dict {(a, b): k} overrides pairs.
    normalise : bool
        Scale fractions that do not sum to 1; otherwise a sum off by more than 1e-6 is an error.
    volume_shift : bool
        Report volumes and densities with the Peneloux translation (phase equilibrium and
        enthalpies unchanged).

    Raises
    ------
    InputError
        Unknown component or model, negative fractions, fractions that do not sum to 1.

    Examples
    --------
    >>> gas = Fluid({"methane": 0.9, "ethane": 0.1})
    >>> s = gas.flash(T=283.15, P=70e5)
    >>> round(s.Z, 4)
    0.7998
    """

    def __init__(self, composition, model="peng-robinson", kij=None, normalise=False,
                 volume_shift=False):
        if not isinstance(composition, dict) or not composition:
            raise InputError("composition must be a non-empty mapping of component to mole fraction")
        names = []
        fracs = []
        for k, v in composition.items():
            name = canonical_name(k)
            if name in names:
                raise InputError(f"component '{k}' is listed twice (as '{name}')")
            try:
                x = float(v)
            except (TypeError, ValueError):
                raise InputError(f"mole fraction of '{k}' is not a number: {v!r}") from None
            if not np.isfinite(x) or x < 0:
                raise InputError(f"mole fraction of '{k}' must be zero or positive (got {v!r})")
            names.append(name)
            fracs.append(x)
        zs = np.array(fracs)
        total = zs.sum()
        if total <= 0:
            raise InputError("mole fractions sum to zero")
        if abs(total - 1.0) > SUM_TOLERANCE and not normalise:
            raise InputError(f"mole fractions sum to {total:.6g}, not 1 (set normalise: true to "
                             f"scale them)")
        self._zs = zs / total
        self.components = tuple(names)
        self.model = canonical_model(model)
        self._kij_spec = kij
        self.volume_shift = bool(volume_shift)
        self._comps = ComponentSet(names)
        self.kijs, self.kij_sources, self.missing_kij = self._build_kij(kij)
        self._engine = self._make_engine()

    # ----------------------------------------------------------------- construction helpers
    def _build_kij(self, kij):
        nc = len(self.components)
        K = np.zeros((nc, nc))
        src = {}
        missing = []
        table = _kij_table()
        if isinstance(kij, str):
            if kij.strip().lower() != "zero":
                raise InputError(f"kij must be 'zero', a mapping of pairs, or omitted (got '{kij}')")
            return K, {}, []
        for i in range(nc):
            for j in range(i + 1, nc):
                a, b = self.components[i], self.components[j]
                if (a, b) in table:
                    K[i, j] = K[j, i] = table[(a, b)][0]
                    src[(a, b)] = table[(a, b)][1]
                else:
                    missing.append((a, b))
        if kij:
            items = kij.items() if isinstance(kij, dict) else kij
            for pair, value in items:
                if isinstance(pair, str):
                    parts = [p for p in pair.replace(",", " ").replace("/", " ").split() if p]
                    if len(parts) != 2:
                        raise InputError(f"interaction-parameter pair '{pair}' must name two components")
                    pair = parts
                a, b = (canonical_name(p) for p in pair)
                if a not in self.components or b not in self.components:
                    raise InputError(f"interaction parameter for {a}-{b}: component not in the gas")
                i, j = self.components.index(a), self.components.index(b)
                K[i, j] = K[j, i] = float(value)
                src[(a, b)] = "user"
                missing = [m for m in missing if set(m) != {a, b}]
        return K, src, missing

    def _make_engine(self):
        if self.model == "gerg-2008":
            from .eos.gerg import GergEngine
            return GergEngine(self._comps, self.kijs)
        eos = CubicEOS(self._comps, KINDS[self.model], self.kijs)
        return CubicEngine(self._comps, eos, self.volume_shift)

    # ----------------------------------------------------------------- attributes
    @property
    def zs(self) -> np.ndarray:
        """Default composition in component order [-]."""
        return self._zs.copy()

    @property
    def n_components(self) -> int:
        return len(self.components)

    @property
    def molar_masses(self) -> np.ndarray:
        """Molar mass of each component [kg/mol]."""
        return self._comps.Ms.copy()

    @property
    def molar_mass(self) -> float:
        """Molar mass of the default composition [kg/mol]."""
        return float(self._zs @ self._comps.Ms)

    @property
    def engine(self):
        """The model engine (batch kernels; for studies and tests)."""
        return self._engine

    def composition(self) -> dict:
        """The default composition as {component: mole fraction}."""
        return dict(zip(self.components, map(float, self._zs)))

    def with_model(self, model: str) -> "Fluid":
        """The same gas (components, composition, interaction parameters) on another model."""
        return Fluid(self.composition(), model=model, kij=self._kij_spec,
                     volume_shift=self.volume_shift)

    def with_composition(self, zs) -> "Fluid":
        """The same components and model with another default composition (component order)."""
        zs = np.asarray(zs, dtype=float)
        return Fluid(dict(zip(self.components, zs)), model=self.model, kij=self._kij_spec,
                     normalise=True, volume_shift=self.volume_shift)

    def __repr__(self) -> str:
        comp = ", ".join(f"{n}: {x:.4g}" for n, x in zip(self.components, self._zs))
        return f"Fluid({{{comp}}}, model='{self.model}')"

    # ----------------------------------------------------------------- flashes
    def flash(self, T=None, P=None, h=None, s=None, zs=None, T_guess=None):
        """Equilibrium state from any two of T [K], P [Pa], h [J/mol], s [J/(mol K)].

        Scalars give a :class:`State`; arrays of shape (n,) (or ``zs`` of shape (n, nc)) give a
        :class:`StateBatch` batch computed in one vectorised pass.

        On the cubic models, a fluid with water among its components gets the three-phase
        equilibrium where it applies (vapour, hydrocarbon liquid, aqueous liquid; see
        :mod:`letdown.fluid.flash.threephase`): the two liquids are lumped as the state's liquid and
        ``aqueous_fraction`` gives the aqueous one's share. Other fluids flash in two phases.

        Parameters
        ----------
        T, P, h, s : float or ndarray
            Exactly two of them. Supported pairs: (T, P), (P, h), (P, s).
        zs : ndarray, optional
            Composition override, (nc,) or (n, nc), component order of :attr:`components`.
        T_guess : float or ndarray, optional
            Starting temperature for P-h and P-s flashes [K].

        Raises
        ------
        InputError
            Not exactly two specifications, an unsupported pair, a non-positive T or P.
        ConvergenceError
            A scalar flash did not converge (a batch marks such cases ``converged=False``).
        ModelError
            The model cannot represent the state (GERG-2008 asked for two phases of a mixture).
        """
        given = {k: v for k, v in (("T", T), ("P", P), ("h", h), ("s", s)) if v is not None}
        if len(given) != 2:
            raise InputError(f"flash needs exactly two of T, P, h, s (got {sorted(given) or 'none'})")
        scalar = all(np.ndim(v) == 0 for v in given.values()) and (zs is None or np.ndim(zs) == 1)
        if scalar and zs is None:
            # one state of the fluid's own composition (checked when the fluid was made): the
            # common call, without the broadcasting and the composition check of a batch
            arrays = [np.array([float(v)]) for v in given.values()]
            Zb = self._zs[None, :].copy()
        else:
            arrays = [np.atleast_1d(np.asarray(v, dtype=float)) for v in given.values()]
            Z = self._zs if zs is None else np.asarray(zs, dtype=float)
            n = max([a.shape[0] for a in arrays] + [Z.shape[0] if Z.ndim == 2 else 1])
            arrays = [np.broadcast_to(a, (n,)).copy() for a in arrays]
            Zb = np.broadcast_to(Z, (n, self.n_components)).copy()
            if zs is not None:
                _check_composition(Zb, self.n_components)
        n = Zb.shape[0]
        spec = dict(zip(given, arrays))
        eng = self._engine
        Tg = None if T_guess is None else np.broadcast_to(np.asarray(T_guess, float), (n,)).copy()
        if set(spec) == {"T", "P"}:
            st = eng.flash_TP(spec["T"], spec["P"], Zb)
        elif set(spec) == {"P", "h"}:
            st = eng.flash_PH(spec["P"], spec["h"], Zb, Tg)
        elif set(spec) == {"P", "s"}:
            st = eng.flash_PS(spec["P"], spec["s"], Zb, Tg)
        else:
            raise InputError(f"the pair ({', '.join(sorted(spec))}) is not supported; give P with "
                             f"T, h or s")
        if scalar:
            one = st[0]
            if not one.converged:
                raise ConvergenceError(
                    f"flash at {', '.join(f'{k}={float(v):.6g}' for k, v in given.items())} did not "
                    f"converge ({self.model})", result=st)
            return one
        return st

    def flash_three_phase(self, T, P, zs=None):
        """Three-phase PT flash: vapour, hydrocarbon liquid and aqueous liquid (see
        :mod:`letdown.fluid.flash.threephase` for the method and the model's limits for water).

        Parameters
        ----------
        T, P : float or ndarray (n,)
            [K], [Pa].
        zs : ndarray, optional
            Composition override, (nc,) or (n, nc), component order of :attr:`components`.

        Returns
        -------
        letdown.fluid.flash.threephase.ThreePhaseResult
            Phase fractions ``beta_V``, ``beta_L``, ``beta_W`` (0 where absent) and compositions
            ``y``, ``x``, ``w`` (NaN where absent), always as batch arrays (n,) and (n, nc).

        Raises
        ------
        InputError
            Non-positive T or P, a bad composition.
        ModelError
            The fluid is on GERG-2008 (single-phase states only here).
        ConvergenceError
            Some case did not converge (the result is attached).
        """
        if self.model == "gerg-2008":
            raise ModelError("GERG-2008 is used for single-phase states only here; use a cubic "
                             "model for the three-phase flash")
        from .flash.threephase import flash_TP_three
        Ta = np.atleast_1d(np.asarray(T, dtype=float))
        Pa = np.atleast_1d(np.asarray(P, dtype=float))
        Z = self._zs if zs is None else np.asarray(zs, dtype=float)
        n = max(Ta.shape[0], Pa.shape[0], Z.shape[0] if Z.ndim == 2 else 1)
        Ta = np.broadcast_to(Ta, (n,)).copy()
        Pa = np.broadcast_to(Pa, (n,)).copy()
        if np.any(~np.isfinite(Ta)) or np.any(Ta <= 0) or np.any(~np.isfinite(Pa)) or np.any(Pa <= 0):
            raise InputError("flash_three_phase needs positive, finite temperatures and pressures")
        Zb = np.broadcast_to(Z, (n, self.n_components)).copy()
        _check_composition(Zb, self.n_components)
        res = flash_TP_three(self._engine.eos, Ta, Pa, Zb)
        if not res.report.all_converged:
            raise ConvergenceError(f"three-phase flash did not converge ({res.report!r})",
                                   result=res)
        return res

    def quality(self, combustion_T: float = 288.15, metering_T: float = 288.15, zs=None):
        """Gas quality by ISO 6976:2016: calorific values, Wobbe indices, relative density, density
        and compression factor at the reference conditions (see :mod:`letdown.fluid.quality`).

        Parameters
        ----------
        combustion_T, metering_T : float
            Reference temperatures [K] (defaults 15 degC / 15 degC; metering at 101.325 kPa).
        zs : ndarray, optional
            Compositions (nc,) or (n, nc) instead of the fluid's.

        Returns
        -------
        letdown.fluid.quality.GasQuality
        """
        from .quality import quality
        return quality(self.components, self._zs if zs is None else zs, combustion_T, metering_T)

    def dew_temperature(self, P, zs=None, branch="upper"):
        """Dew temperature [K] at pressure P [Pa]: where the first drop of liquid forms on an isobar.

        Parameters
        ----------
        P : float or ndarray (n,)
            Pressure [Pa].
        zs : ndarray, optional
            Composition override, (nc,) or (n, nc), component order of :attr:`components` [-].
        branch : {"upper", "lower", "both"}
            ``"upper"`` (default): the upper dew point, the highest temperature at which liquid
            exists (the one a sales-gas specification means). ``"lower"``: the lower (retrograde)
            dew point, which exists only between the critical pressure and the cricondenbar.
            ``"both"``: the pair (upper, lower).

        Returns
        -------
        float or ndarray, or a pair of them for ``branch="both"``
            [K]. NaN where no liquid forms on that isobar: above the cricondenbar for the upper
            branch, and outside the critical pressure to cricondenbar band for the lower one (a
            pure fluid has no lower dew point). Mixtures on the cubic models are solved as
            verified boundaries (see :mod:`letdown.fluid.flash.saturation`); a pure fluid's dew
            point is its saturation temperature.

        Raises
        ------
        InputError
            A non-positive or non-finite pressure, a bad composition, an unknown branch.
        ConvergenceError
            A boundary that could not be confirmed by flashes either side.
        ModelError
            A mixture on GERG-2008 (no phase equilibrium of mixtures on it here).
        """
        if branch == "both":
            return (self._saturation("dew", P, None, zs, "upper"),
                    self._saturation("dew", P, None, zs, "lower"))
        return self._saturation("dew", P, None, zs, branch)

    def dew_pressure(self, T, zs=None):
        """Dew pressure [Pa] at temperature T [K]: the lowest pressure at which liquid exists on
        the isotherm.

        Parameters
        ----------
        T : float or ndarray (n,)
            Temperature [K].
        zs : ndarray, optional
            Composition override, (nc,) or (n, nc) [-].

        Returns
        -------
        float or ndarray
            [Pa]. NaN where no liquid forms on that isotherm (above the cricondentherm).

        Raises
        ------
        InputError
            A non-positive or non-finite temperature, a bad composition.
        ConvergenceError
            A boundary that could not be confirmed by flashes either side.
        ModelError
            A mixture on GERG-2008.
        """
        return self._saturation("dew", None, T, zs, "upper")

    def bubble_temperature(self, P, zs=None):
        """Bubble temperature [K] at pressure P [Pa]: the lowest temperature at which vapour exists
        on the isobar.

        Parameters
        ----------
        P : float or ndarray (n,)
            Pressure [Pa].
        zs : ndarray, optional
            Composition override, (nc,) or (n, nc) [-].

        Returns
        -------
        float or ndarray
            [K]. NaN where no vapour forms on that isobar above the search floor (above the
            critical pressure of a pure fluid, say, or a wet gas whose water never boils off).

        Raises
        ------
        InputError
            A non-positive or non-finite pressure, a bad composition.
        ConvergenceError
            A boundary that could not be confirmed by flashes either side.
        ModelError
            A mixture on GERG-2008.
        """
        return self._saturation("bubble", P, None, zs, "upper")

    def bubble_pressure(self, T, zs=None):
        """Bubble pressure [Pa] at temperature T [K]: the highest pressure at which vapour exists
        on the isotherm (above the critical temperature this is the upper, retrograde dew
        pressure).

        Parameters
        ----------
        T : float or ndarray (n,)
            Temperature [K].
        zs : ndarray, optional
            Composition override, (nc,) or (n, nc) [-].

        Returns
        -------
        float or ndarray
            [Pa]. NaN where no two-phase state exists on that isotherm (above the
            cricondentherm).

        Raises
        ------
        InputError
            A non-positive or non-finite temperature, a bad composition.
        ConvergenceError
            A boundary that could not be confirmed by flashes either side.
        ModelError
            A mixture on GERG-2008.
        """
        return self._saturation("bubble", None, T, zs, "upper")

    def dew_point(self, P=None, T=None, zs=None, branch="upper"):
        """Deprecated: use :meth:`dew_temperature` (at P) or :meth:`dew_pressure` (at T)."""
        if (P is None) == (T is None):
            raise InputError("dew point needs exactly one of P or T")
        if P is not None:
            _deprecated("dew_point(P=...)", "dew_temperature(P)")
            return self.dew_temperature(P, zs=zs, branch=branch)
        _deprecated("dew_point(T=...)", "dew_pressure(T)")
        if branch not in ("upper", "lower", "both"):
            raise InputError(f"branch must be 'upper', 'lower' or 'both' (got {branch!r})")
        if branch != "upper":
            raise InputError("the lower dew point is asked for at a pressure (P=...)")
        return self.dew_pressure(T, zs=zs)

    def bubble_point(self, P=None, T=None, zs=None):
        """Deprecated: use :meth:`bubble_temperature` (at P) or :meth:`bubble_pressure` (at T)."""
        if (P is None) == (T is None):
            raise InputError("bubble point needs exactly one of P or T")
        if P is not None:
            _deprecated("bubble_point(P=...)", "bubble_temperature(P)")
            return self.bubble_temperature(P, zs=zs)
        _deprecated("bubble_point(T=...)", "bubble_pressure(T)")
        return self.bubble_pressure(T, zs=zs)

    def envelope(self, zs=None, betas=()):
        """Phase envelope: dew and bubble curves traced through the critical point.

        Parameters
        ----------
        zs : ndarray (nc,), optional
            Composition in component order [-]; the fluid's own by default.
        betas : sequence of float
            Vapour fractions (strictly between 0 and 1) of the lines of constant vapour fraction
            to trace as well [-].

        Returns
        -------
        letdown.fluid.flash.envelope.Envelope
            ``dew`` and ``bubble`` (``.T`` [K], ``.P`` [Pa]), ``critical``, ``cricondentherm``,
            ``cricondenbar`` (``.T``, ``.P``, or None where the curve has none), ``lines``
            {vapour fraction: (T, P)}, ``converged`` and per-trace ``reports``.

        Raises
        ------
        ModelError
            The fluid is on GERG-2008 (used here for single-phase states only).
        InputError
            A bad composition, a single component, vapour fractions outside (0, 1).
        ConvergenceError
            No first dew point at 1 bar, or the dew branch could not be traced.
        """
        if self.model == "gerg-2008":
            raise ModelError("GERG-2008 is used for single-phase states only here; use a cubic "
                             "model (peng-robinson, soave-redlich-kwong) for the phase envelope")
        from .flash.envelope import phase_envelope
        Z = self._zs if zs is None else np.asarray(zs, dtype=float)
        if Z.ndim != 1:
            raise InputError("envelope takes one composition (a 1-D array)")
        _check_composition(Z[None, :], self.n_components)
        return phase_envelope(self._engine, Z, betas)

    def _saturation(self, kind, P, T, zs, branch="upper"):
        if (P is None) == (T is None):
            raise InputError(f"{kind} point needs exactly one of P or T")
        if branch not in ("upper", "lower"):
            raise InputError(f"branch must be 'upper', 'lower' or 'both' (got {branch!r})")
        if branch == "lower" and T is not None:
            raise InputError("the lower dew point is asked for at a pressure (P=...)")
        x = P if T is None else T
        scalar = np.ndim(x) == 0 and (zs is None or np.ndim(zs) == 1)
        xa = np.atleast_1d(np.asarray(x, dtype=float))
        if np.any(~np.isfinite(xa)) or np.any(xa <= 0):
            raise InputError(f"{kind} point needs a positive, finite "
                             f"{'pressure' if T is None else 'temperature'}")
        Z = self._zs if zs is None else np.asarray(zs, dtype=float)
        n = max(xa.shape[0], Z.shape[0] if Z.ndim == 2 else 1)
        xa = np.broadcast_to(xa, (n,)).copy()
        Zb = np.broadcast_to(Z, (n, self.n_components)).copy()
        _check_composition(Zb, self.n_components)
        axis = "T" if T is None else "P"
        pure = np.count_nonzero(Zb > 0.0, axis=1) == 1
        out = np.full(n, np.nan)
        if pure.any():
            i = np.nonzero(pure)[0]
            if axis == "T":
                out[i] = self._engine.saturation_T(xa[i], Zb[i], kind)
            else:
                out[i] = self._engine.saturation_P(xa[i], Zb[i], kind)
            if branch == "lower":
                out[i] = np.nan          # a pure fluid has one saturation point
        if (~pure).any():
            if self.model == "gerg-2008":
                raise ModelError("GERG-2008 is used here for the phase equilibrium of pure "
                                 "fluids and single-phase states of mixtures only; use a cubic "
                                 "model (peng-robinson, soave-redlich-kwong) for dew and bubble "
                                 "points")
            from .flash.saturation import boundary
            i = np.nonzero(~pure)[0]
            out[i] = boundary(self, self._engine, xa[i], Zb[i], kind, axis, branch)
        return float(out[0]) if scalar else out

    def _envelope_cached(self, z):
        """Phase envelope of composition z (cached per composition; may raise LetdownError)."""
        cache = self.__dict__.setdefault("_env_cache", {})
        key = np.asarray(z, dtype=float).tobytes()
        if key not in cache:
            if len(cache) > 64:
                cache.clear()
            from .flash.envelope import phase_envelope
            try:
                cache[key] = phase_envelope(self._engine, np.asarray(z, dtype=float))
            except (ValueError, ArithmeticError, FloatingPointError) as exc:
                # the trace failing is not an answer; the caller falls back to its grid
                cache[key] = exc if isinstance(exc, LetdownError) else ConvergenceError(str(exc))
        got = cache[key]
        if isinstance(got, Exception):
            raise got
        return got

    # ----------------------------------------------------------------- water and hydrates
    def hydrate_T(self, P, water_activity=1.0, zs=None):
        """Hydrate formation temperature at pressure P [K] (van der Waals-Platteeuw, Munck et al.
        1988; structures I and II, the one forming at the higher temperature). See
        :mod:`letdown.fluid.aqueous.hydrate` for the model statements.

        Parameters
        ----------
        P : float or ndarray (n,)
            Pressure [Pa].
        water_activity : float or ndarray
            Activity of water in the aqueous phase before dissolved gas (1 for pure water; below 1
            with an inhibitor, see :mod:`letdown.fluid.aqueous.inhibitor`) [-].
        zs : ndarray, optional
            Composition override (component order); water in it is ignored.

        Returns
        -------
        float or ndarray
            [K]; NaN where no hydrate forms between 230 K and 320 K.

        Raises
        ------
        InputError
            Non-positive pressure, water activity outside (0, 1], no hydrate former in the gas.
        """
        from .aqueous.hydrate import hydrate_curve
        scalar = np.ndim(P) == 0 and np.ndim(water_activity) == 0 and (zs is None or np.ndim(zs) == 1)
        T = hydrate_curve(self, P, zs=zs, water_activity=water_activity).T
        return float(T[0]) if scalar else T

    def hydrate_curve(self, P, water_activity=1.0, zs=None):
        """Hydrate formation temperatures over pressures P [Pa]: a
        :class:`letdown.fluid.aqueous.hydrate.HydrateCurve` (P, T, structure, T_sI, T_sII, report)."""
        from .aqueous.hydrate import hydrate_curve
        return hydrate_curve(self, P, zs=zs, water_activity=water_activity)

    def water_content(self, T, P, method="bukacek"):
        """Water content of this gas saturated with liquid water, as a mole fraction [-].

        ``method="bukacek"`` (default): Bukacek (1955), sweet gas, composition ignored;
        ``method="eos"``: fugacity balance with pure liquid water on this fluid's cubic model
        (Peng-Robinson for GERG-2008) with a Poynting factor. See :mod:`letdown.fluid.aqueous.water` for
        the models, the unit helpers (mg/Sm3, lb/MMscf) and their limits.

        Parameters
        ----------
        T, P : float or ndarray
            [K], [Pa].

        Raises
        ------
        InputError
            Unknown method, non-positive T or P.
        """
        from .aqueous.water import water_content
        return water_content(self, T, P, method=method)

    def water_dew_point(self, y_water, P, method="bukacek"):
        """Water dew point [K] at pressure P [Pa] of this gas holding water mole fraction
        ``y_water`` [-] (over liquid water, supercooled below 0 degC); see
        :func:`letdown.fluid.aqueous.water.water_dew_point`."""
        from .aqueous.water import water_dew_point
        return water_dew_point(y_water, P, fluid=self, method=method)


def _deprecated(old, new):
    warnings.warn(f"Fluid.{old} is deprecated; use Fluid.{new}", DeprecationWarning, stacklevel=3)


def _check_composition(zs, nc):
    if zs.shape[-1] != nc:
        raise InputError(f"composition has {zs.shape[-1]} entries, the fluid has {nc} components")
    if np.any(~np.isfinite(zs)) or np.any(zs < 0):
        raise InputError("compositions must be finite and non-negative")
    tot = zs.sum(axis=1)
    if np.any(np.abs(tot - 1.0) > SUM_TOLERANCE):
        raise InputError(f"compositions must sum to 1 (got {tot[np.abs(tot - 1) > SUM_TOLERANCE][:3]})")
