"""Streams as batches: the state of one flowsheet stream over a leading axis of cases.

A :class:`StreamBatch` carries, for ``n`` cases at once, the molar flow and the flashed state of one
stream: temperature, pressure, overall composition and the properties the shared
:class:`letdown.fluid.Fluid` returns from its batch flash. It is a value: frozen, its arrays read-only;
a change makes a new one.

Every block of :mod:`letdown.equipment` takes and returns stream batches, so that a single solve is
simply a batch of one and a study of thousands of cases runs the same code.
"""
from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np

#: Properties copied from the fluid's batch ``States`` into a stream (all SI, molar).
STATE_FIELDS = ("T", "P", "h", "s", "Z", "density", "molar_mass", "vapour_fraction")


def _frozen(a, shape=None) -> np.ndarray:
    """A float array that cannot be written to (a copy when the input is writable elsewhere)."""
    out = np.array(a, dtype=float, copy=True)
    if shape is not None:
        out = np.broadcast_to(out, shape).copy()
    out.setflags(write=False)
    return out


@dataclass(frozen=True, eq=False)
class StreamBatch:
    """One stream over ``n`` cases.

    Attributes
    ----------
    flow : ndarray (n,)
        Molar flow [mol/s].
    T : ndarray (n,)
        Temperature [K].
    P : ndarray (n,)
        Pressure [Pa].
    zs : ndarray (n, nc)
        Overall mole fractions [-], in the fluid's component order.
    h : ndarray (n,)
        Molar enthalpy [J/mol] (ideal gas at 298.15 K is zero).
    s : ndarray (n,)
        Molar entropy [J/(mol K)].
    Z : ndarray (n,)
        Compressibility factor [-] (of the mixture as flashed).
    density : ndarray (n,)
        Mass density [kg/m3].
    molar_mass : ndarray (n,)
        Molar mass [kg/mol].
    vapour_fraction : ndarray (n,)
        Molar vapour fraction [-], 0..1.
    ys, xs : ndarray (n, nc)
        Vapour and liquid mole fractions [-] (equal to ``zs`` where that phase is absent).
    converged : ndarray (n,) of bool
        Whether the flash that made each case converged.
    """

    flow: np.ndarray
    T: np.ndarray
    P: np.ndarray
    zs: np.ndarray
    h: np.ndarray
    s: np.ndarray
    Z: np.ndarray
    density: np.ndarray
    molar_mass: np.ndarray
    vapour_fraction: np.ndarray
    ys: np.ndarray
    xs: np.ndarray
    converged: np.ndarray

    def __post_init__(self):
        # States are values: every array is stored read-only (copied when the caller's is writable).
        for f in fields(self):
            a = getattr(self, f.name)
            dtype = bool if f.name == "converged" else float
            if not (isinstance(a, np.ndarray) and a.dtype == dtype and not a.flags.writeable):
                a = np.array(a, dtype=dtype, copy=True)
                a.setflags(write=False)
                object.__setattr__(self, f.name, a)

    # -- construction ---------------------------------------------------------------------------
    @classmethod
    def from_states(cls, states, flow) -> "StreamBatch":
        """Wrap a batch of flashed states with a molar flow.

        Parameters
        ----------
        states : letdown.fluid States
            Result of a batch ``Fluid.flash`` (attributes of shape (n,) and (n, nc)).
        flow : array_like (n,) or float
            Molar flow [mol/s].
        """
        T = np.atleast_1d(np.asarray(states.T, dtype=float))
        n = T.shape[0]
        zs = np.asarray(states.zs, dtype=float)
        if zs.ndim == 1:
            zs = np.broadcast_to(zs, (n, zs.shape[0]))
        nc = zs.shape[1]
        values = {}
        for name in STATE_FIELDS:
            values[name] = _frozen(np.atleast_1d(getattr(states, name)), (n,))
        values["zs"] = _frozen(zs, (n, nc))
        values["ys"] = _frozen(np.asarray(states.ys, dtype=float), (n, nc))
        values["xs"] = _frozen(np.asarray(states.xs, dtype=float), (n, nc))
        conv = np.array(np.broadcast_to(np.atleast_1d(states.converged), (n,)), dtype=bool)
        conv.setflags(write=False)
        values["converged"] = conv
        values["flow"] = _frozen(flow, (n,))
        return cls(**values)

    # -- shape ----------------------------------------------------------------------------------
    @property
    def n_cases(self) -> int:
        """Number of cases in the batch."""
        return self.T.shape[0]

    @property
    def n_components(self) -> int:
        """Number of components."""
        return self.zs.shape[1]

    def __len__(self) -> int:
        return self.n_cases

    # -- derived quantities ---------------------------------------------------------------------
    @property
    def mass_flow(self) -> np.ndarray:
        """Mass flow [kg/s]."""
        return self.flow * self.molar_mass

    @property
    def component_flows(self) -> np.ndarray:
        """Molar flow of each component, (n, nc) [mol/s]."""
        return self.flow[:, None] * self.zs

    @property
    def enthalpy_flow(self) -> np.ndarray:
        """Enthalpy flow ``flow * h`` [W]."""
        return self.flow * self.h

    # -- new batches from this one --------------------------------------------------------------
    def with_flow(self, flow) -> "StreamBatch":
        """The same states with another molar flow [mol/s] (a splitter's outlet)."""
        return _replace(self, flow=_frozen(flow, (self.n_cases,)))

    def take(self, index) -> "StreamBatch":
        """The cases selected by ``index`` (integer array or boolean mask)."""
        return _replace(self, **{f.name: _sub(getattr(self, f.name), index) for f in fields(self)})

    def put(self, index, other: "StreamBatch") -> "StreamBatch":
        """A copy with the cases at ``index`` replaced by those of ``other`` (same components)."""
        values = {}
        for f in fields(self):
            a = np.array(getattr(self, f.name), copy=True)
            a[index] = getattr(other, f.name)
            a.setflags(write=False)
            values[f.name] = a
        return _replace(self, **values)

    @staticmethod
    def concatenate(batches) -> "StreamBatch":
        """Stack several batches of the same components along the case axis."""
        batches = list(batches)
        values = {}
        for f in fields(StreamBatch):
            a = np.concatenate([getattr(b, f.name) for b in batches], axis=0)
            a.setflags(write=False)
            values[f.name] = a
        return StreamBatch(**values)


def _sub(a: np.ndarray, index) -> np.ndarray:
    out = np.array(a[index], copy=True)
    out.setflags(write=False)
    return out


def _replace(stream: StreamBatch, **changes) -> StreamBatch:
    values = {f.name: getattr(stream, f.name) for f in fields(stream)}
    values.update(changes)
    return StreamBatch(**values)


def flash_stream(fluid, flow, zs, T_guess=None, **spec) -> StreamBatch:
    """Flash a batch and wrap it as a stream.

    Parameters
    ----------
    fluid : letdown.fluid.Fluid
        The shared fluid.
    flow : array_like (n,)
        Molar flow [mol/s].
    zs : array_like (n, nc)
        Overall mole fractions [-].
    T_guess : array_like (n,), optional
        Starting temperature of a P-h or P-s flash [K] (a close guess saves most of its work).
    **spec
        Two of ``T`` [K], ``P`` [Pa], ``h`` [J/mol], ``s`` [J/(mol K)], each of shape (n,).

    Returns
    -------
    StreamBatch
    """
    zs = np.atleast_2d(np.asarray(zs, dtype=float))
    n = zs.shape[0]
    arrays = {k: np.broadcast_to(np.asarray(v, dtype=float), (n,)).copy() for k, v in spec.items()}
    if T_guess is not None and "T" not in arrays:
        arrays["T_guess"] = np.broadcast_to(np.asarray(T_guess, dtype=float), (n,)).copy()
    states = fluid.flash(zs=zs, **arrays)
    return StreamBatch.from_states(states, flow)
