"""Thermodynamic states as immutable values: one :class:`State`, or a batch :class:`States`.

A state is named by the pair that fixed it (T and P, P and h, P and s); every property carries its
unit in the docstring. Batches hold arrays over cases (axis 0); ``States[i]`` is a :class:`State`.
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


@dataclass(frozen=True)
class States:
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

    def __len__(self) -> int:
        return int(self.T.shape[0])

    def __getitem__(self, i) -> "State":
        if isinstance(i, slice) or np.ndim(i) > 0:
            return self.take(i)
        vals = {k: (bool(getattr(self, k)[i]) if k == "converged" else float(getattr(self, k)[i]))
                for k in _SCALARS}
        phases = []
        beta = vals["vapour_fraction"]
        if self.n_phases[i] == 2 or beta >= 1.0:
            phases.append(Phase("vapour", beta, self.ys[i].copy(),
                                *(float(self.vapour[k][i]) for k in ("Z", "density", "h", "s",
                                                                     "molar_mass"))))
        if self.n_phases[i] == 2 or beta <= 0.0:
            phases.append(Phase("liquid", 1.0 - beta, self.xs[i].copy(),
                                *(float(self.liquid[k][i]) for k in ("Z", "density", "h", "s",
                                                                     "molar_mass"))))
        return State(**vals, zs=self.zs[i].copy(), ys=self.ys[i].copy(), xs=self.xs[i].copy(),
                     phases=tuple(phases), components=self.components, model=self.model)

    def take(self, idx) -> "States":
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
        return States(**out)


@dataclass(frozen=True)
class State:
    """One equilibrium state; attributes as in :class:`States` but scalar.

    ``phases`` holds one :class:`Phase` per phase present, vapour first.
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

    @property
    def n_phases(self) -> int:
        return len(self.phases)

    def composition(self) -> dict:
        """Overall composition as {component: mole fraction}."""
        return dict(zip(self.components, map(float, self.zs)))

    def __repr__(self) -> str:
        return (f"State(T={self.T:.3f} K, P={self.P:.6g} Pa, h={self.h:.3f} J/mol, "
                f"vapour_fraction={self.vapour_fraction:.6g}, Z={self.Z:.5f}, model={self.model})")
