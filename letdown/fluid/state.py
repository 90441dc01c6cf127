"""Thermodynamic states as immutable values: one :class:`State`, or a batch :class:`StateBatch`.

A state is named by the pair that fixed it (T and P, P and h, P and s); every property carries its
unit in the docstring. Batches hold arrays over cases (axis 0); ``StateBatch[i]`` is a :class:`State`.
"""
from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np


@dataclass(frozen=True)
class Phase:
    """One phase of a state.

    Attributes
    ----------
    name : str
        ``"vapour"`` or ``"liquid"``.
    fraction : float
        Molar phase fraction [-].
    zs : ndarray (nc,)
        Phase composition (mole fractions) [-].
    Z : float
        Compressibility factor [-].
    density : float
        Mass density [kg/m3].
    h : float
        Molar enthalpy [J/mol].
    s : float
        Molar entropy [J/(mol K)].
    molar_mass : float
        [kg/mol].
    """

    name: str
    fraction: float
    zs: np.ndarray
    Z: float
    density: float
    h: float
    s: float
    molar_mass: float


_SCALARS = ("T", "P", "h", "s", "Z", "cp", "cv", "jt", "w", "density", "molar_mass",
            "vapour_fraction", "converged")
_FLOATS = _SCALARS[:-1]
_PER_PHASE = ("Z", "density", "h", "s", "molar_mass")


@dataclass(frozen=True)
class StateBatch:
    """A batch of equilibrium states (arrays over cases, axis 0).

    Attributes
    ----------
    T : ndarray (n,)  temperature [K]
    P : ndarray (n,)  pressure [Pa]
    h : ndarray (n,)  molar enthalpy [J/mol] (ideal gas at 298.15 K is zero)
    s : ndarray (n,)  molar entropy [J/(mol K)] (ideal gas at 298.15 K, 101325 Pa is zero)
    Z : ndarray (n,)  compressibility factor P v / (R T) of the whole [-]
    cp, cv : ndarray (n,)  molar heat capacities [J/(mol K)]; for two phases cp is the effective
        (dh/dT)_P along equilibrium and cv is NaN
    jt : ndarray (n,)  Joule-Thomson coefficient (dT/dP)_h [K/Pa]
    w : ndarray (n,)  speed of sound [m/s] (NaN for two phases)
    density : ndarray (n,)  mass density of the whole [kg/m3]
    molar_mass : ndarray (n,)  [kg/mol]
    vapour_fraction : ndarray (n,)  molar vapour fraction [-]
    zs, ys, xs : ndarray (n, nc)  overall, vapour and liquid compositions [-] (ys = xs = zs where a
        phase is absent)
    n_phases : ndarray of int (n,)
    converged : ndarray of bool (n,)  False marks a case whose numbers are NaN
    vapour, liquid : dict of ndarray  per-phase Z, density, h, s, molar_mass (NaN where absent)
    components : tuple of str
    model : str
    K : ndarray (n, nc) or None  K-values of a two-phase split, where a solver keeps them
    aqueous_fraction : ndarray (n,) or None  molar fraction of the aqueous liquid [-] (the liquid
        with water as its largest component; 0 where there is none); None for a fluid without
        water among its components. Where the liquid is two liquids (hydrocarbon and aqueous,
        ``n_phases`` 3), ``xs`` and ``liquid`` describe them lumped: the mole-weighted overall
        composition, h and s mole-weighted, volumes added.
    two_liquids : dict of ndarray or None  the two liquids of a vapour-liquid-liquid state apart,
        where neither is aqueous (two hydrocarbon-rich liquids, e.g. a CO2- or H2S-rich liquid
        beside a methane-rich one below about 230 K): ``light_fraction``, ``heavy_fraction``
        (molar phase fractions [-], 0 where the state has not two such liquids), ``light_zs``,
        ``heavy_zs`` (n, nc) and ``light_``/``heavy_`` ``Z``, ``density``, ``h``, ``s``,
        ``molar_mass`` (NaN where absent); light and heavy by mass density. ``xs`` and
        ``liquid`` describe the two lumped, as the whole liquid a separator's liquid outlet
        carries. None where no state of the batch has them.
    """

    T: np.ndarray
    P: np.ndarray
    h: np.ndarray
    s: np.ndarray
    Z: np.ndarray
    cp: np.ndarray
    cv: np.ndarray
    jt: np.ndarray
    w: np.ndarray
    density: np.ndarray
    molar_mass: np.ndarray
    vapour_fraction: np.ndarray
    zs: np.ndarray
    ys: np.ndarray
    xs: np.ndarray
    n_phases: np.ndarray
    converged: np.ndarray
    vapour: dict
    liquid: dict
    components: tuple
    model: str
    K: np.ndarray | None = None
    aqueous_fraction: np.ndarray | None = None
    two_liquids: dict | None = None

    def __len__(self) -> int:
        return int(self.T.shape[0])

    def __getitem__(self, i) -> "State":
        if not isinstance(i, (int, np.integer)) and (isinstance(i, slice) or np.ndim(i) > 0):
            return self.take(i)
        # float(a.item(i)): the same value as float(a[i]), without the numpy scalar between
        vals = {k: float(getattr(self, k).item(i)) for k in _FLOATS}
        vals["converged"] = bool(self.converged.item(i))
        phases = []
        beta = vals["vapour_fraction"]
        # vapour and liquid where their fractions say so (two liquids, hydrocarbon and aqueous
        # or two hydrocarbon liquids, have vapour fraction 0; a pure fluid's or a two-phase
        # split's fractions lie strictly between 0 and 1)
        many = self.n_phases.item(i) >= 2
        has_v = (many and beta > 0.0) or beta >= 1.0
        has_l = (many and beta < 1.0) or beta <= 0.0
        if has_v:
            v = self.vapour
            phases.append(Phase("vapour", beta, self.ys[i].copy(),
                                *[float(v[k].item(i)) for k in _PER_PHASE]))
        if has_l:
            v = self.liquid
            phases.append(Phase("liquid", 1.0 - beta, self.xs[i].copy(),
                                *[float(v[k].item(i)) for k in _PER_PHASE]))
        wet = {} if self.aqueous_fraction is None else {
            "aqueous_fraction": float(self.aqueous_fraction[i]),
            "phase_count": int(self.n_phases[i])}
        tl = self.two_liquids
        if tl is not None and tl["heavy_fraction"][i] > 0.0:
            wet["phase_count"] = int(self.n_phases[i])
            wet["liquid_phases"] = tuple(
                Phase(f"{side} liquid", float(tl[f"{side}_fraction"][i]),
                      tl[f"{side}_zs"][i].copy(),
                      *(float(tl[f"{side}_{k}"][i]) for k in ("Z", "density", "h", "s",
                                                              "molar_mass")))
                for side in ("light", "heavy"))
        return State(**vals, zs=self.zs[i].copy(), ys=self.ys[i].copy(), xs=self.xs[i].copy(),
                     phases=tuple(phases), components=self.components, model=self.model, **wet)

    # -- transport properties (Chung et al. 1988; letdown.fluid.transport) ---------------------
    def phase_transport(self) -> dict:
        """Viscosity [Pa s] and thermal conductivity [W/(m K)] of each phase.

        Returns
        -------
        dict
            ``{"vapour": (mu, k), "liquid": (mu, k)}``, arrays (n,), NaN where the phase is
            absent (:func:`letdown.fluid.transport.phase_transport`; ranges stated there).
        """
        from .transport import phase_transport
        return phase_transport(self)

    def _whole(self, j: int) -> np.ndarray:
        per = self.phase_transport()
        beta = np.asarray(self.vapour_fraction, dtype=float)
        single = np.asarray(self.n_phases) <= 1
        return np.where(single & (beta >= 0.5), per["vapour"][j],
                        np.where(single, per["liquid"][j], np.nan))

    @property
    def viscosity(self) -> np.ndarray:
        """Dynamic viscosity of a single-phase state [Pa s], (n,).

        NaN for two (or three) phases: a mixture of gas and liquid has no one viscosity (a flow
        model chooses how to combine the phases' values, :meth:`phase_transport`).
        """
        return self._whole(0)

    @property
    def thermal_conductivity(self) -> np.ndarray:
        """Thermal conductivity of a single-phase state [W/(m K)], (n,); NaN for two phases (see
        :attr:`viscosity`)."""
        return self._whole(1)

    def take(self, idx) -> "StateBatch":
        """A sub-batch of the cases ``idx`` (indices, slice or boolean mask)."""
        out = {}
        for f in fields(self):
            v = getattr(self, f.name)
            if isinstance(v, np.ndarray):
                out[f.name] = v[idx]
            elif isinstance(v, dict):
                out[f.name] = {k: a[idx] for k, a in v.items()}
            else:
                out[f.name] = v
        return StateBatch(**out)

    def put(self, idx, other: "StateBatch") -> "StateBatch":
        """A new batch: these states with the cases ``idx`` (indices) replaced by ``other``'s.

        An optional field (``K``, ``aqueous_fraction``, ``two_liquids``) that only one of the two
        carries is filled with NaN (``K``), 0 (``aqueous_fraction``) or no second liquid
        (``two_liquids``: fractions 0, the rest NaN) for the cases of the other.
        """
        n = len(self)
        out = {}
        for f in fields(self):
            v, w = getattr(self, f.name), getattr(other, f.name)
            if f.name == "two_liquids" and (v is None) != (w is None):
                v = empty_two_liquids(n, len(self.components)) if v is None else v
                w = empty_two_liquids(len(other), len(self.components)) if w is None else w
            if isinstance(v, dict):
                merged = {}
                for k, a in v.items():
                    a = np.array(a, copy=True)
                    a[idx] = w[k]
                    merged[k] = a
                out[f.name] = merged
            elif isinstance(v, np.ndarray) or isinstance(w, np.ndarray):
                if v is None or w is None:
                    fill = 0.0 if f.name == "aqueous_fraction" else np.nan
                    shape = (n,) + (w.shape[1:] if v is None else v.shape[1:])
                    v = np.full(shape, fill) if v is None else v
                    w = np.full((len(other),) + shape[1:], fill) if w is None else w
                a = np.array(v, copy=True)
                a[idx] = w
                out[f.name] = a
            else:
                out[f.name] = v
        return StateBatch(**out)


def empty_two_liquids(n: int, nc: int) -> dict:
    """The ``two_liquids`` of n states without two hydrocarbon liquids (fractions 0, NaN else)."""
    out = {}
    for side in ("light", "heavy"):
        out[f"{side}_fraction"] = np.zeros(n)
        out[f"{side}_zs"] = np.full((n, nc), np.nan)
        for k in ("Z", "density", "h", "s", "molar_mass"):
            out[f"{side}_{k}"] = np.full(n, np.nan)
    return out


@dataclass(frozen=True)
class State:
    """One equilibrium state; attributes as in :class:`StateBatch` but scalar.

    ``phases`` holds one :class:`Phase` per phase present, vapour first; a hydrocarbon liquid
    beside an aqueous one is one lumped ``liquid`` phase there (as in :class:`StateBatch`), and
    ``n_phases`` counts them apart. ``aqueous_fraction`` is the aqueous liquid's molar fraction
    [-] (0 where there is none or the fluid has no water). Where the liquid is two hydrocarbon
    liquids (vapour-liquid-liquid), ``phases`` holds their lump as ``liquid`` and
    ``liquid_phases`` the two apart (``light liquid``, ``heavy liquid``, by mass density);
    elsewhere ``liquid_phases`` is empty.
    """

    T: float
    P: float
    h: float
    s: float
    Z: float
    cp: float
    cv: float
    jt: float
    w: float
    density: float
    molar_mass: float
    vapour_fraction: float
    converged: bool
    zs: np.ndarray
    ys: np.ndarray
    xs: np.ndarray
    phases: tuple
    components: tuple
    model: str
    aqueous_fraction: float = 0.0
    phase_count: int | None = None
    liquid_phases: tuple = ()

    @property
    def n_phases(self) -> int:
        """Number of phases [-] (a lumped liquid of two liquids counts two)."""
        return len(self.phases) if self.phase_count is None else self.phase_count

    def phase_transport(self) -> dict:
        """Viscosity [Pa s] and thermal conductivity [W/(m K)] of each phase present:
        ``{phase name: (mu, k)}`` (Chung et al. 1988, :mod:`letdown.fluid.transport`)."""
        from .transport import transport
        out = {}
        for ph in self.phases:
            mu, k = transport([self.T], [ph.density / ph.molar_mass], ph.zs[None, :],
                              self.components)
            out[ph.name] = (float(mu[0]), float(k[0]))
        return out

    @property
    def viscosity(self) -> float:
        """Dynamic viscosity [Pa s] of a single-phase state; NaN for two phases (a mixture of gas
        and liquid has no one viscosity: see :meth:`phase_transport`)."""
        per = self.phase_transport()
        return next(iter(per.values()))[0] if len(per) == 1 else float("nan")

    @property
    def thermal_conductivity(self) -> float:
        """Thermal conductivity [W/(m K)] of a single-phase state; NaN for two phases."""
        per = self.phase_transport()
        return next(iter(per.values()))[1] if len(per) == 1 else float("nan")

    def composition(self) -> dict:
        """Overall composition as {component: mole fraction}."""
        return dict(zip(self.components, map(float, self.zs)))

    def __repr__(self) -> str:
        return (f"State(T={self.T:.3f} K, P={self.P:.6g} Pa, h={self.h:.3f} J/mol, "
                f"vapour_fraction={self.vapour_fraction:.6g}, Z={self.Z:.5f}, model={self.model})")
