"""Streams as batches: the state of one flowsheet stream over a leading axis of cases.

A :class:`StreamBatch` carries, for ``n`` cases at once, the molar flow and the flashed state of one
stream: temperature, pressure, overall composition and the properties the shared
:class:`letdown.fluid.Fluid` returns from its batch flash. It is a value: frozen, its arrays read-only;
a change makes a new one.

Every block of :mod:`letdown.equipment` takes and returns stream batches, so that a single solve is
simply a batch of one and a study of thousands of cases runs the same code.

**The water and inhibitor beside the gas.** The hydrocarbon flash is water-free; a stream may also
carry a :class:`Carry` (``StreamBatch.carry``): the water and the hydrate inhibitors (methanol,
MEG) per mole of dry gas, and the free water and its inhibitor with no gas to carry them (a
separator's ``water`` outlet), over the same cases. The solver attaches it to the feeds when the
freezing figures are wanted or an ``inject`` block doses (:mod:`letdown.sheet.solve`), and each
block passes it on in its own ``run``: :func:`letdown.equipment.common.finish` gives every outlet
the flow-weighted blend of the inlets' (a one-inlet block keeps it, a mixer blends), an exchanger
keeps each side's own, a separator splits it (:mod:`letdown.equipment.watersplit`), an ``inject``
block adds its dose. ``carry`` is None where nothing is carried (studies without margins or
doses). With water a component of the gas each stream's water is its own (``zs``) and the carry's
water is NaN (not carried); its inhibitor is carried all the same.
"""
from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np

from ..fluid.aqueous.inhibitor import INHIBITORS

#: The inhibitors a :class:`Carry` holds, in the column order of its inhibitor arrays.
INHIBITOR_NAMES = tuple(INHIBITORS)

#: Properties copied from the fluid's batch ``StateBatch`` into a stream (all SI, molar).
STATE_FIELDS = ("T", "P", "h", "s", "Z", "density", "molar_mass", "vapour_fraction")


def _frozen(a, shape=None) -> np.ndarray:
    """A float array that cannot be written to (a copy when the input is writable elsewhere)."""
    out = np.array(a, dtype=float, copy=True)
    if shape is not None:
        out = np.broadcast_to(out, shape).copy()
    out.setflags(write=False)
    return out


@dataclass(frozen=True, eq=False)
class Carry:
    """The water a stream carries beside its water-free gas, over ``n`` cases.

    Attributes
    ----------
    water_ratio : ndarray (n,)
        Water per mole of dry gas [mol/mol] (a stream below its water dew point keeps its
        condensed water in this count: it is the free water that can freeze or form hydrate).
    free_water : ndarray (n,)
        Free water with no gas to carry it [mol/s]: a separator's ``water`` outlet (or its
        ``liquid`` outlet when it has no ``water`` port and no hydrocarbon liquid); zero elsewhere.
    inhibitor_ratio : ndarray (n, k)
        Inhibitor per mole of dry gas [mol/mol], k over :data:`INHIBITOR_NAMES` (default none).
    free_inhibitor : ndarray (n, k)
        Inhibitor sent with a separator's free water [mol/s] (default none).
    """

    water_ratio: np.ndarray
    free_water: np.ndarray
    inhibitor_ratio: np.ndarray | None = None
    free_inhibitor: np.ndarray | None = None

    def __post_init__(self):
        n = np.shape(self.water_ratio)[0]
        for f in fields(self):
            a = getattr(self, f.name)
            a = (np.zeros((n, len(INHIBITOR_NAMES))) if a is None
                 else np.array(a, dtype=float, copy=True))
            a.setflags(write=False)
            object.__setattr__(self, f.name, a)

    @classmethod
    def blank(cls, n: int) -> "Carry":
        """``n`` cases of no number (NaN): the carry of failed cases."""
        k = len(INHIBITOR_NAMES)
        return cls(np.full(n, np.nan), np.full(n, np.nan), np.full((n, k), np.nan),
                   np.full((n, k), np.nan))

    @classmethod
    def zeros(cls, n: int) -> "Carry":
        """``n`` cases of no water and no inhibitor."""
        return cls(np.zeros(n), np.zeros(n))

    def kept(self) -> "Carry":
        """The water and inhibitor per dry gas kept, nothing free (what a block passes from one
        inlet to its outlet: free water that leaves a separator ends at a product or another
        separator)."""
        return Carry(self.water_ratio, np.zeros(self.water_ratio.shape), self.inhibitor_ratio)

    def take(self, index) -> "Carry":
        return Carry(*(np.asarray(getattr(self, f.name))[index] for f in fields(self)))

    def put(self, index, other: "Carry | None") -> "Carry":
        other = Carry.blank(np.asarray(self.water_ratio)[index].shape[0]) if other is None \
            else other
        values = []
        for f in fields(self):
            a = np.array(getattr(self, f.name), copy=True)
            a[index] = getattr(other, f.name)
            values.append(a)
        return Carry(*values)


def blend(flows, carries) -> Carry:
    """The flow-weighted mean water and inhibitor per dry gas of several inlets (a mixer's outlet;
    one inlet: its own), nothing free carried on; where no inlet flows, the first inlet's ratios.

    Parameters
    ----------
    flows : sequence of ndarray (n,)
        Molar flows of the inlets [mol/s].
    carries : sequence of Carry
    """
    flows = [np.asarray(f, float) for f in flows]
    total = np.sum(flows, axis=0)
    out = []
    for name in ("water_ratio", "inhibitor_ratio"):
        ratios = [np.asarray(getattr(c, name), float) for c in carries]
        shape = total.shape + (1,) * (ratios[0].ndim - 1)
        f = [x.reshape(shape) for x in flows]
        t = total.reshape(shape)
        mixed = np.sum([a * x for a, x in zip(f, ratios)], axis=0)
        out.append(np.where(t > 0.0, mixed / np.where(t > 0.0, t, 1.0),
                            np.broadcast_to(ratios[0], mixed.shape)))
    return Carry(out[0], np.zeros(total.shape), out[1])


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
    carry : Carry or None
        The water carried beside the gas (module docstring); None where none is carried.
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
    carry: Carry | None = None

    def __post_init__(self):
        # States are values: every array is stored read-only (copied when the caller's is writable).
        for f in fields(self):
            if f.name == "carry":
                continue
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
        states : letdown.fluid StateBatch
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

    def with_carry(self, carry: Carry | None) -> "StreamBatch":
        """The same states carrying ``carry`` (the water beside the gas)."""
        return _replace(self, carry=carry)

    def take(self, index) -> "StreamBatch":
        """The cases selected by ``index`` (integer array or boolean mask)."""
        values = {f.name: _sub(getattr(self, f.name), index) for f in fields(self)
                  if f.name != "carry"}
        return _replace(self, carry=None if self.carry is None else self.carry.take(index),
                        **values)

    def put(self, index, other: "StreamBatch") -> "StreamBatch":
        """A copy with the cases at ``index`` replaced by those of ``other`` (same components)."""
        values = {}
        for f in fields(self):
            if f.name == "carry":
                continue
            a = np.array(getattr(self, f.name), copy=True)
            a[index] = getattr(other, f.name)
            a.setflags(write=False)
            values[f.name] = a
        carry = self.carry
        if carry is not None or other.carry is not None:
            carry = (Carry.blank(self.n_cases) if carry is None else carry).put(index, other.carry)
        return _replace(self, carry=carry, **values)

    @staticmethod
    def concatenate(batches) -> "StreamBatch":
        """Stack several batches of the same components along the case axis."""
        batches = list(batches)
        values = {}
        for f in fields(StreamBatch):
            if f.name == "carry":
                continue
            a = np.concatenate([getattr(b, f.name) for b in batches], axis=0)
            a.setflags(write=False)
            values[f.name] = a
        if any(b.carry is not None for b in batches):
            carries = [Carry.blank(b.n_cases) if b.carry is None else b.carry for b in batches]
            values["carry"] = Carry(*(np.concatenate([getattr(c, f.name) for c in carries])
                                      for f in fields(Carry)))
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
