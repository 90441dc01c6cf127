"""Gas hydrate formation temperature: van der Waals-Platteeuw with the Munck (1988) parameters, and
two gas-gravity correlations for a quick second opinion.

The model (van der Waals & Platteeuw, Adv. Chem. Phys. 2 (1959) 1; in the form and with the
parameters of Munck, Skjold-Jorgensen & Rasmussen, Chem. Eng. Sci. 43 (1988) 2661): hydrate forms
where the chemical potential of water in the filled lattice falls below that of the water phase,

    dmu_H / RT = sum_m nu_m ln(1 + sum_j C_mj f_j)                       (filling of the cavities)
    dmu_W / RT = dmu0 / (R T0) - int_T0^T dh / (R T^2) dT + dV P / (R Tbar) - ln a_w
    dh(T) = dh0 + dcp (T - T0),      Tbar = (T + T0) / 2

and the formation temperature at pressure P is the T where dmu_H = dmu_W (hydrate stable below
it). ``C_mj = (A_mj / T) exp(B_mj / T)`` is the Langmuir constant of guest j in cavity m (A in
K/atm, B in K: fugacities f_j in atm), nu_m the cavities of kind m per water molecule. The water
phase is liquid water (reference "liquid") or ice (reference "ice", a_w = 1): the stable one is
the one with the lower chemical potential, i.e. the larger dmu_W, which puts the ice point of
pure water at 273.15 K (less 0.0073 K/bar from the two dV values) without a switch. Both
structures are solved; the one that forms at the higher temperature is reported.

Parameters (Munck et al. 1988, as transcribed in ``../shared/REFERENCE_DATA.md`` section 2, status V):
Langmuir A, B of :data:`LANGMUIR`; T0 = 273.15 K; dmu0 = 1264 (sI) and 883 (sII) J/mol;
dh0 = 1151 / 808 J/mol relative to ice, 1151 - 6009.5 / 808 - 6009.5 relative to liquid water;
dV = 3.0 / 3.4 cm3/mol relative to ice, 4.6 / 5.0 relative to liquid; dcp = 39.16 J/(mol K)
relative to liquid water, zero relative to ice.

Sign of dcp: the tabulated 39.16 J/(mol K) is applied as ``dh(T) = dh0 + 39.16 (T - T0)`` with
dh = h(empty lattice) - h(liquid water). (That is the sign under which open-source implementations
that cite Munck use it; physically cp of liquid water exceeds that of ice by about 38 J/(mol K), which
would suggest the opposite sign for a lattice that resembles ice. The tests measure both against
methane data -- see tests/fluid/test_hydrate.py -- and the constant :data:`DCP_SIGN` records the choice.)

Near the ice point (:data:`LANGMUIR_CORRECTION`): with Munck's constants as published the model
was 1.3 K low for methane, 1.1 K for H2S and 2.5 K for nitrogen at their lower quadruple points
(Sloan & Koh 2008, Table 4.1) and 2-8.6 K low on the nitrogen ice branch, i.e. non-conservative.
The empty-lattice reference terms are shared by every guest of a structure and the misses differ
in sign between sI guests (methane -1.3 K, CO2 +0.2 K), so each guest's Langmuir constants get a
factor exp(a + b (T0/T - 1)) fitted on 262-303 K (``bench/fit_hydrate_langmuir.py``); it is held at
its end values outside each guest's fitted range. Measured after the fit (tests/fluid/test_hydrate_ice.py):
lower quadruple points within 0.33 K (methane, propane, CO2, H2S, nitrogen); ethane follows the
measured 273.68 K at 0.499 MPa (+0.10 K) instead of a remembered quadruple point that contradicts it.

Model statements (say them in reports):

* Gas fugacities come from the fluid's cubic equation of state for the **water-free gas** at (T, P)
  (water removed and the rest renormalised; a two-phase dry gas gives the fugacities of its
  equilibrium vapour). Water in the gas is ignored (it is a trace and does not enter the cages).
* Gas dissolved in the water lowers its activity: x_j = f_j / H_j(T) by Henry's law (:data:`HENRY`),
  a_w = 1 - sum x_j (ideal solution), on by default (``dissolved_gas=True``). It matters for CO2:
  without it pure-CO2 hydrate temperatures come out 0.8-3 K above the Carroll (2014) correlation
  over 274-283 K, with it within 0.6 K (tests/fluid/test_hydrate.py); for methane it moves T by
  0.1-0.45 K.
* For the GERG-2008 model, the fugacities come from Peng-Robinson for the same gas (GERG-2008 is
  used for single-phase properties only here).
* Components without Langmuir constants (hexane and heavier, hydrogen, helium, argon, oxygen,
  CO, methanol, glycol) are treated as non-formers: they dilute the gas only. Munck's set has no
  structure H and no hydrogen or argon cage occupancy.
* An inhibitor enters through ``water_activity`` (see :mod:`letdown.fluid.aqueous.inhibitor`). With a
  water activity below 1 the aqueous phase is taken as liquid (supercooled) below 273.15 K unless
  ice is more stable; the ice-liquid equilibrium of the inhibited solution is not modelled.

Correlations (Towler & Mokhatab 2005; Motiee 1991): :mod:`letdown.fluid.aqueous.correlations`,
re-exported here as :func:`hydrate_T_correlation`.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ...errors import ConvergenceError, InputError
from ...constants import R, STANDARD_ATMOSPHERE, ZERO_CELSIUS
from ...numerics.report import SolveReport
from .correlations import PSI, hydrate_T_correlation  # noqa: F401  (re-exported: the gas-gravity room)

T0 = ZERO_CELSIUS      # reference temperature of the empty-lattice properties [K] (Munck 1988)
ATM = STANDARD_ATMOSPHERE  # [Pa]; Munck's A is in K/atm
H_FUSION = 6009.5      # ice -> liquid water at T0 as used by Munck (1988) for the liquid reference [J/mol]
DCP_SIGN = +1.0        # see the module docstring ("Sign of dcp")

#: Temperature grid on which the bracket is located [K]: from well inside the ice region to above any
#: natural-gas hydrate (about 305 K at 100 MPa for methane), step small enough that the hydrate line
#: of one structure crosses it once per interval.
T_SCAN = np.arange(230.0, 320.0 + 1e-9, 2.0)
#: Scan points evaluated together, from the top of :data:`T_SCAN` down, until a case has found its
#: highest sign change (8 x 2 K: natural-gas hydrate lines lie 10-40 K below the top).
SCAN_BLOCK = 8
#: Bracketed (Illinois) refinement: stop when the bracket is narrower than this [K] ...
T_TOL = 1e-8
#: ... or when |dmu_H - dmu_W| / RT is below this (round-off of the terms is ~1e-15) ...
G_TOL = 1e-13
#: ... or after this many steps (Illinois converges superlinearly; 60 is far beyond need).
MAX_ITER = 60


@dataclass(frozen=True)
class Structure:
    """Empty-lattice reference properties of one hydrate structure (Munck et al. 1988).

    Attributes
    ----------
    name : str
    nus : tuple of float
        Cavities per water molecule (small, large) [-].
    dmu0 : float
        mu(empty lattice) - mu(water) at T0 and zero pressure [J/mol].
    dh0_ice : float
        h(empty lattice) - h(ice) at T0 [J/mol].
    dV_ice, dV_liq : float
        v(empty lattice) - v(ice), - v(liquid water) [m3/mol].
    dcp_liq : float
        cp(empty lattice) - cp(liquid water) as applied (see DCP_SIGN) [J/(mol K)].
    """

    name: str
    nus: tuple
    dmu0: float
    dh0_ice: float
    dV_ice: float
    dV_liq: float
    dcp_liq: float


SI = Structure("sI", (1.0 / 23.0, 3.0 / 23.0), 1264.0, 1151.0, 3.0e-6, 4.6e-6, DCP_SIGN * 39.16)
SII = Structure("sII", (2.0 / 17.0, 1.0 / 17.0), 883.0, 808.0, 3.4e-6, 5.0e-6, DCP_SIGN * 39.16)
STRUCTURES = {"sI": SI, "sII": SII}

#: Langmuir constants of Munck et al. (1988): {component: {structure: ((A_small, B_small),
#: (A_large, B_large))}}, A [K/atm], B [K]; A = 0 where the guest does not enter the cavity.
LANGMUIR = {
    "methane": {"sI": ((0.7228e-3, 3187.0), (23.35e-3, 2653.0)),
                "sII": ((0.2207e-3, 3453.0), (100.0e-3, 1916.0))},
    "ethane": {"sI": ((0.0, 0.0), (3.039e-3, 3861.0)),
               "sII": ((0.0, 0.0), (240.0e-3, 2967.0))},
    "propane": {"sI": ((0.0, 0.0), (0.0, 0.0)),
                "sII": ((0.0, 0.0), (5.455e-3, 4638.0))},
    "isobutane": {"sI": ((0.0, 0.0), (0.0, 0.0)),
                  "sII": ((0.0, 0.0), (189.3e-3, 3800.0))},
    "n-butane": {"sI": ((0.0, 0.0), (0.0, 0.0)),
                 "sII": ((0.0, 0.0), (30.51e-3, 3699.0))},
    "nitrogen": {"sI": ((1.617e-3, 2905.0), (6.078e-3, 2431.0)),
                 "sII": ((0.1742e-3, 3082.0), (18.0e-3, 1728.0))},
    "carbon-dioxide": {"sI": ((0.2474e-3, 3410.0), (42.46e-3, 2813.0)),
                       "sII": ((0.0845e-3, 3615.0), (851.0e-3, 2025.0))},
    "hydrogen-sulfide": {"sI": ((0.025e-3, 4568.0), (16.34e-3, 3737.0)),
                         "sII": ((0.0298e-3, 4878.0), (87.2e-3, 2633.0))},
}

#: Correction of Munck's Langmuir constants per guest, fitted to the hydrate line near the ice
#: point (see the module docstring, "Near the ice point"): C_j -> C_j exp(a_j + b_j (T0 / T - 1)),
#: the same factor in both cavities of both structures. {component: (a, b, T_max)} [-, -, K],
#: T_max the highest temperature of the guest's fitted data. Fitted by
#: ``bench/fit_hydrate_langmuir.py`` (least squares on the formation temperature) to the lower
#: quadruple points of Sloan & Koh (2008) Table 4.1 and the pure-gas points of the Colorado School
#: of Mines hydrate data files between 262 and 303 K; isobutane and n-butane keep Munck's values.
LANGMUIR_CORRECTION = {"methane": (0.0369, 0.4364, 294.7), "ethane": (0.0694, 1.3254, 287.8),
                       "propane": (0.0004, 4.401, 278.8),
                       "carbon-dioxide": (-0.0131, 1.1853, 283.0),
                       "hydrogen-sulfide": (0.0429, 1.1126, 302.7),
                       "nitrogen": (0.0744, 5.5896, 281.2)}
#: Lower end of the fitted range [K]: below it (and above each guest's upper end, the third number
#: of :data:`LANGMUIR_CORRECTION`) the correction keeps its value at the end, not extrapolated.
CORRECTION_T_MIN = 262.0

#: Henry's-law constants of the gases in water, ln(H / Pa) = A + B / T with x_j = f_j / H_j:
#: Sander, "Compilation of Henry's law constants (version 4.0) for water as solvent", Atmos. Chem.
#: Phys. 15 (2015) 4399, in the mole-fraction form distributed with the thermo package 0.6.1 (data
#: file ``Sander_henry_T_dep.json``; transcribed, status V for the transcription). They give the gas
#: dissolved in the water, which lowers its activity (a_w = 1 - sum x_j, ideal solution); the
#: Krichevsky-Kasarnovsky pressure correction is omitted (it lowers the CO2 solubility by a few
#: per cent at 4 MPa, common practice).
HENRY = {
    "methane": (28.007050169351437, -1730.7202544017841),
    "ethane": (29.93500616379458, -2438.206665395767),
    "propane": (31.304585953952426, -2767.1349074608966),
    "isobutane": (36.47118144303553, -4328.883651319278),
    "n-butane": (31.058911139843413, -2639.1967108268614),
    "nitrogen": (27.668590414916586, -1427.4427449955385),
    "carbon-dioxide": (26.809303730298204, -2357.427583678173),
    "hydrogen-sulfide": (24.506356083664105, -1975.8218110342955),
}

#: Components removed from the gas before its fugacities are computed (the water-free gas).
WATER = "water"


def dissolved_gas_ln_aw(T, fs, names):
    """ln of the water activity lowered by dissolved gas, ln(1 - sum_j f_j / H_j(T)) [-].

    Parameters
    ----------
    T : ndarray (n,) [K]
    fs : ndarray (n, nc)
        Gas fugacities [Pa]; components without a Henry's constant (:data:`HENRY`) are taken as
        insoluble.
    names : sequence of str
    """
    T = np.asarray(T, dtype=float)
    AB = np.array([HENRY.get(nm, (np.inf, 0.0)) for nm in names])
    lnH = AB[:, 0][None, :] + AB[:, 1][None, :] / T[:, None]
    x = np.asarray(fs, dtype=float) * np.exp(-lnH)
    return np.log1p(-np.minimum(x.sum(axis=1), 0.5))


# ------------------------------------------------------------------------------------------------
def langmuir_constants(T, names, structure: Structure):
    """Langmuir constants C = (A / T) exp(B / T) of every component in both cavities.

    Parameters
    ----------
    T : ndarray (n,)
        Temperature [K].
    names : sequence of str
        Canonical component names; non-formers get zeros.
    structure : Structure

    Returns
    -------
    ndarray (n, 2, nc)
        Langmuir constants, small cavity first [1/Pa].
    """
    T = np.asarray(T, dtype=float)
    AB = np.zeros((2, len(names), 2))
    for j, name in enumerate(names):
        if name in LANGMUIR:
            AB[:, j, :] = LANGMUIR[name][structure.name]
    A = AB[:, :, 0]
    B = AB[:, :, 1]
    ab = np.array([LANGMUIR_CORRECTION.get(name, (0.0, 0.0, T0)) for name in names], float)
    ab = ab.reshape(len(names), 3)
    Tb = T[:, None, None]
    # the fitted temperature term is held constant outside the range it was fitted on
    Tc = np.clip(Tb, CORRECTION_T_MIN, ab[:, 2][None, None, :])
    corr = np.exp(ab[:, 0][None, None, :] + ab[:, 1][None, None, :] * (T0 / Tc - 1.0))
    return np.where(A > 0, A / Tb * np.exp(B / Tb), 0.0) * corr / ATM


def delta_mu_hydrate_RT(T, fs, names, structure: Structure):
    """mu(empty lattice) - mu(filled hydrate) over RT: sum_m nu_m ln(1 + sum_j C_mj f_j) [-].

    Parameters
    ----------
    T : ndarray (n,) [K]
    fs : ndarray (n, nc)
        Fugacities of the gas components [Pa].
    """
    C = langmuir_constants(T, names, structure)
    s = np.einsum("imj,ij->im", C, fs)
    return structure.nus[0] * np.log1p(s[:, 0]) + structure.nus[1] * np.log1p(s[:, 1])


def cavity_occupancies(T, fs, names, structure: Structure):
    """Fraction of small and large cavities filled by each guest, shape (n, 2, nc) [-]."""
    C = langmuir_constants(T, names, structure)
    Cf = C * np.asarray(fs, dtype=float)[:, None, :]
    return Cf / (1.0 + Cf.sum(axis=2, keepdims=True))


def delta_mu_water_RT(T, P, structure: Structure, ln_aw=0.0):
    """mu(empty lattice) - mu(water phase) over RT [-], the water phase being the more stable of ice
    and the (inhibited) liquid.

    Parameters
    ----------
    T, P : ndarray (n,)
        [K], [Pa].
    structure : Structure
    ln_aw : float or ndarray (n,)
        Natural log of the water activity in the liquid [-] (0 for pure water).
    """
    T = np.asarray(T, dtype=float)
    P = np.asarray(P, dtype=float)
    Tbar = 0.5 * (T + T0)
    base = structure.dmu0 / (R * T0)
    inv = 1.0 / T - 1.0 / T0
    # ice reference, dcp = 0: int dh/(R T^2) dT = -dh0 (1/T - 1/T0) / R
    ice = base + structure.dh0_ice * inv / R + structure.dV_ice * P / (R * Tbar)
    dh0_liq = structure.dh0_ice - H_FUSION
    dcp = structure.dcp_liq
    enthalpy = -dh0_liq * inv / R + dcp / R * (np.log(T / T0) + T0 / T - 1.0)
    liq = base - enthalpy + structure.dV_liq * P / (R * Tbar) - ln_aw
    return np.maximum(ice, liq)


# ------------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class HydrateCurve:
    """Hydrate formation temperatures along pressures (vdW-P, Munck 1988).

    Attributes
    ----------
    P : ndarray (n,)
        Pressure [Pa].
    T : ndarray (n,)
        Formation temperature, the higher of the two structures [K]; NaN where no hydrate forms
        between the ends of :data:`T_SCAN` (or the gas has no hydrate former).
    structure : ndarray of str (n,)
        ``"sI"``, ``"sII"`` or ``""`` where T is NaN.
    T_sI, T_sII : ndarray (n,)
        Formation temperature of each structure alone [K] (NaN where it does not form).
    water_activity : ndarray (n,)
        Water activity used [-].
    report : SolveReport
        Convergence of the temperature solve (residual: |dmu_H - dmu_W| / RT at the answer).
    """

    P: np.ndarray
    T: np.ndarray
    structure: np.ndarray
    T_sI: np.ndarray
    T_sII: np.ndarray
    water_activity: np.ndarray
    report: SolveReport


def dry_gas(names, zs):
    """The water-free gas: water removed, the rest renormalised, shape (n, nc) [-].

    Raises
    ------
    InputError
        A composition that is all water.
    """
    zs = np.array(zs, dtype=float, ndmin=2)
    if WATER in names:
        zs[:, names.index(WATER)] = 0.0
    tot = zs.sum(axis=1)
    if np.any(tot <= 0.0):
        raise InputError("hydrate temperature needs a gas: the composition is all water")
    return zs / tot[:, None]


def eos_fugacities(fluid, T, P, zs):
    """Fugacities of a water-free gas at (T, P) from the fluid's cubic model [Pa], shape (n, nc).

    The gas is flashed first: where it splits, the equilibrium vapour's fugacities are returned
    (equal to the liquid's). Cases whose flash did not converge give NaN.
    """
    f = fluid if fluid.model != "gerg-2008" else fluid.with_model("peng-robinson")
    st = f.flash(T=T, P=P, zs=zs)
    two = st.n_phases == 2
    xs = np.where(two[:, None], st.ys, st.zs)
    code = np.where(two, 1, 0)
    lnphis, _ = f.engine.eos.lnphi(st.T, st.P, xs, code)
    out = xs * np.exp(lnphis) * st.P[:, None]
    out[~st.converged] = np.nan
    return out


def _refine(G, k, has, g):
    """The highest crossing of each row refined by the Illinois method (vectorised over rows).

    ``G`` (rows, scan points) holds g on :data:`T_SCAN`; row r brackets its root between
    ``T_SCAN[k[r]]`` and ``T_SCAN[k[r] + 1]`` where ``has[r]``; ``g(c, i)`` gives g at the
    temperatures ``c`` of rows ``i``. Returns (T, iterations, residual, still active) per row.

    Not :func:`letdown.numerics.rootfind.bracketed_root` (issue 12): that solver keeps the other
    Illinois bookkeeping (it halves the kept end's value each time the new point falls on the
    side of the last one; this halves it when the same end survives twice running). With the same
    stopping rule (an absolute bracket below :data:`T_TOL` or |g| below :data:`G_TOL`) the two
    stop at different points inside the last bracket: measured on 4 gases x 200 pressures x 2
    water activities, batch and scan paths (``bench/hydrate_refine_compare.py``), the answers
    moved by up to 4.6e-9 K (each within 4.8e-9 K of the root solved to 1e-11 K), above the
    1e-9 K the change was allowed. Kept as it is.
    """
    n = G.shape[0]
    rows = np.arange(n)
    a = T_SCAN[k].astype(float)
    b = T_SCAN[k + 1].astype(float)
    ga = G[rows, k].copy()
    gb = G[rows, k + 1].copy()
    T = np.full(n, np.nan)
    iters = np.zeros(n, dtype=int)
    resid = np.where(has, np.minimum(np.abs(ga), np.abs(gb)), np.nan)
    active = has.copy()
    kept = np.zeros(n, dtype=int)      # +1: the lower end a was replaced last, -1: the upper end b
    for _ in range(MAX_ITER):
        if not active.any():
            break
        i = np.nonzero(active)[0]
        c = (a[i] * gb[i] - b[i] * ga[i]) / (gb[i] - ga[i])
        c = np.where(np.isfinite(c) & (c > a[i]) & (c < b[i]), c, 0.5 * (a[i] + b[i]))
        gc = g(c, i)
        pos = gc > 0.0
        # Illinois: halve the value kept at the end that survives twice running
        ga[i] = np.where(pos, gc, np.where(kept[i] == -1, 0.5 * ga[i], ga[i]))
        gb[i] = np.where(pos, np.where(kept[i] == 1, 0.5 * gb[i], gb[i]), gc)
        a[i] = np.where(pos, c, a[i])
        b[i] = np.where(pos, b[i], c)
        kept[i] = np.where(pos, 1, -1)
        iters[i] += 1
        resid[i] = np.abs(gc)
        done = (b[i] - a[i] < T_TOL) | (np.abs(gc) < G_TOL)
        T[i[done]] = c[done]
        active[i[done]] = False
    return T, iters, resid, active


def formation_T(fugacity, P, names, structure: Structure, ln_aw=0.0, dissolved_gas=True):
    """Hydrate formation temperature of one structure at each pressure.

    Parameters
    ----------
    fugacity : callable
        ``fugacity(T, P, idx)`` -> gas fugacities [Pa], shape (len(idx), nc), for the cases ``idx``.
    P : ndarray (n,)
        [Pa].
    names : sequence of str
        Canonical component names.
    structure : Structure
    ln_aw : ndarray (n,)
        ln of the water activity without dissolved gas (inhibitor, salt) [-].
    dissolved_gas : bool
        Add the lowering of the water activity by the gas dissolved in it (Henry's law).

    Returns
    -------
    T : ndarray (n,)
        [K]; NaN where g = dmu_H - dmu_W does not change sign on :data:`T_SCAN`.
    report : SolveReport
    """
    P = np.asarray(P, dtype=float)
    n = P.shape[0]
    ln_aw = np.broadcast_to(np.asarray(ln_aw, dtype=float), (n,))

    def g(T, idx):
        fs = fugacity(T, P[idx], idx)
        lna = ln_aw[idx] + (dissolved_gas_ln_aw(T, fs, names) if dissolved_gas else 0.0)
        return (delta_mu_hydrate_RT(T, fs, names, structure)
                - delta_mu_water_RT(T, P[idx], structure, lna))

    m = T_SCAN.size
    idx = np.repeat(np.arange(n), m)
    Tg = np.tile(T_SCAN, n)
    G = g(Tg, idx).reshape(n, m)
    # hydrate is stable where g > 0 (low T); the formation temperature is the highest crossing
    cross = (G[:, :-1] > 0.0) & (G[:, 1:] <= 0.0)
    has = cross.any(axis=1)
    k = np.where(has, m - 2 - np.argmax(cross[:, ::-1], axis=1), 0)
    T, iters, resid, active = _refine(G, k, has, g)
    converged = ~active
    rep = SolveReport(converged=converged, iterations=iters, residual=np.where(has, resid, 0.0),
                      message=f"hydrate formation temperature, {structure.name} (residual: "
                              f"|dmu_H - dmu_W| / RT)")
    return T, rep


def _structure_rows(sidx):
    """Per-row reference properties of the structures ``sidx`` (0: sI, 1: sII), read at call time
    (so a structure replaced in the module is used): nus (k, 2), dmu0, dh0_ice, dV_ice, dV_liq,
    dcp_liq (k,)."""
    structs = (SI, SII)
    tab = np.array([[s.nus[0], s.nus[1], s.dmu0, s.dh0_ice, s.dV_ice, s.dV_liq, s.dcp_liq]
                    for s in structs])
    return tab[np.asarray(sidx, dtype=int)]


class _Terms:
    """The cavity and water terms of g = dmu_H/RT - dmu_W/RT for the components ``names``,
    evaluated row by row with a structure per row (the same formulae as
    :func:`delta_mu_hydrate_RT`, :func:`delta_mu_water_RT` and :func:`dissolved_gas_ln_aw`,
    restricted to the hydrate formers, whose Langmuir constants are the only non-zero ones)."""

    def __init__(self, names):
        self.names = list(names)
        self.formers = np.array([j for j, nm in enumerate(names) if nm in LANGMUIR], dtype=int)
        nf = self.formers.size
        AB = np.zeros((2, 2, nf, 2))           # structure, cavity, former, (A, B)
        for s, key in enumerate(("sI", "sII")):
            for k, j in enumerate(self.formers):
                AB[s, :, k, :] = LANGMUIR[names[j]][key]
        self.A, self.B = AB[..., 0], AB[..., 1]
        self.corr = np.array([LANGMUIR_CORRECTION.get(names[j], (0.0, 0.0, T0))
                              for j in self.formers], float).reshape(nf, 3)

    def langmuir(self, T, sidx):
        """Langmuir constants of the formers, shape (k, 2, nf) [1/Pa] (as
        :func:`langmuir_constants`; the correction factor folded into the exponential)."""
        A = self.A[sidx]
        B = self.B[sidx]
        Tb = np.asarray(T, dtype=float)[:, None, None]
        ab = self.corr
        Tc = np.clip(Tb, CORRECTION_T_MIN, ab[:, 2][None, None, :])
        expo = B / Tb + (ab[:, 0][None, None, :] + ab[:, 1][None, None, :] * (T0 / Tc - 1.0))
        return np.where(A > 0, (A / ATM) / Tb * np.exp(expo), 0.0)

    def inv_henry(self, T):
        """1 / H_j(T) of the soluble components (the others zero), shape (k, nc) [1/Pa]."""
        AB = np.array([HENRY.get(nm, (np.inf, 0.0)) for nm in self.names])
        T = np.asarray(T, dtype=float)
        return np.exp(-(AB[:, 0][None, :] + AB[:, 1][None, :] / T[:, None]))

    def g(self, T, P, fs, ln_aw, sidx, dissolved_gas, C=None, inv_h=None):
        """dmu_H/RT - dmu_W/RT of each row [-] (hydrate stable where positive). ``C`` and
        ``inv_h`` may be given precomputed (the scan grid)."""
        T = np.asarray(T, dtype=float)
        if np.ndim(sidx) == 0:                 # one structure for every row
            st = _structure_rows([sidx])[0][None, :]
            sidx = np.full(T.shape, int(sidx))
        else:
            st = _structure_rows(sidx)
        if C is None:
            C = self.langmuir(T, sidx)
        s = np.einsum("imj,ij->im", C, fs[:, self.formers])
        dmu_h = st[:, 0] * np.log1p(s[:, 0]) + st[:, 1] * np.log1p(s[:, 1])
        if dissolved_gas:
            if inv_h is None:
                inv_h = self.inv_henry(T)
            x = np.einsum("ij,ij->i", fs, inv_h)
            lna = ln_aw + np.log1p(-np.minimum(x, 0.5))
        else:
            lna = ln_aw
        # delta_mu_water_RT with the structure's constants per row
        Tbar = 0.5 * (T + T0)
        base = st[:, 2] / (R * T0)
        inv = 1.0 / T - 1.0 / T0
        ice = base + st[:, 3] * inv / R + st[:, 4] * P / (R * Tbar)
        dh0_liq = st[:, 3] - H_FUSION
        enthalpy = -dh0_liq * inv / R + st[:, 6] / R * (np.log(T / T0) + T0 / T - 1.0)
        liq = base - enthalpy + st[:, 5] * P / (R * Tbar) - lna
        return dmu_h - np.maximum(ice, liq)


def _single_phase_fugacities(eos, T, P, zs):
    """Fugacities of the gas as one phase (the root of lower Gibbs energy) [Pa], shape (n, nc):
    what :func:`eos_fugacities` returns wherever the flash finds one phase, without the stability
    test."""
    lnphis, _ = eos.lnphi(T, P, zs, np.zeros(np.shape(T), dtype=int))
    return zs * np.exp(lnphis) * np.asarray(P, dtype=float)[:, None]


def _solve_both(fugacity, terms, P, ln_aw, dissolved_gas):
    """Formation temperatures of sI and sII at every pressure (the method of :func:`formation_T`:
    the highest sign change of g on :data:`T_SCAN`, refined by Illinois), both structures in one
    batch and the scan's fugacities shared between them.

    Parameters
    ----------
    fugacity : callable ``fugacity(T, idx)`` -> fugacities [Pa] (len(idx), nc) of the cases idx.

    Returns
    -------
    T : ndarray (n, 2) [K] (NaN where no sign change); k : ndarray (n, 2) of int, the scan interval
    of the bracket (-1 where none); iterations, residual : ndarray (n, 2); converged : (n, 2).
    """
    n = P.shape[0]
    m = T_SCAN.size
    G = np.full((2 * n, m), np.nan)                   # rows: sI cases, then sII
    has = np.zeros(2 * n, dtype=bool)
    k = np.zeros(2 * n, dtype=int)
    C_grid = [terms.langmuir(T_SCAN, np.full(m, s)) for s in (0, 1)]
    inv_h_grid = terms.inv_henry(T_SCAN)
    hi = m
    # the scan from the top down, SCAN_BLOCK points at a time, for the cases still without a
    # sign change in either structure: the first sign change met is the highest one
    while hi > 0:
        pending = np.flatnonzero(~(has[:n] & has[n:]))
        if pending.size == 0:
            break
        lo = max(0, hi - SCAN_BLOCK)
        cols = np.arange(lo, hi)
        w = cols.size
        Tg = np.tile(T_SCAN[cols], pending.size)
        idx = np.repeat(pending, w)
        fs = fugacity(Tg, idx)
        for s in (0, 1):
            G[s * n + pending[:, None], cols[None, :]] = terms.g(
                Tg, P[idx], fs, ln_aw[idx], s, dissolved_gas,
                C=np.tile(C_grid[s][lo:hi], (pending.size, 1, 1)),
                inv_h=np.tile(inv_h_grid[lo:hi], (pending.size, 1))).reshape(-1, w)
        top = min(hi, m - 1)                          # pairs (j, j + 1) with j in [lo, top)
        rows = np.concatenate([pending, n + pending])
        rows = rows[~has[rows]]
        if top > lo and rows.size:
            Gr = G[rows, lo:top + 1]
            cross = (Gr[:, :-1] > 0.0) & (Gr[:, 1:] <= 0.0)
            got = cross.any(axis=1)
            k[rows[got]] = lo + (cross.shape[1] - 1 - np.argmax(cross[got][:, ::-1], axis=1))
            has[rows[got]] = True
        hi = lo
    rowcase = np.tile(np.arange(n), 2)
    rowstruct = np.repeat([0, 1], n)

    def g2(c, i):
        ci = rowcase[i]
        return terms.g(c, P[ci], fugacity(c, ci), ln_aw[ci], rowstruct[i], dissolved_gas)
    T, iters, resid, active = _refine(G, k, has, g2)
    conv = ~active
    shape = lambda x: x.reshape(2, n).T                      # noqa: E731  (n, 2): sI, sII
    return (shape(T), shape(np.where(has, k, -1)), shape(iters),
            shape(np.where(has, resid, 0.0)), shape(conv))


def hydrate_curve(fluid, P, zs=None, water_activity=1.0, dissolved_gas=True) -> HydrateCurve:
    """Hydrate formation temperatures of a gas at pressures P, structures I and II.

    One vectorised pass over all cases (compositions may differ case by case). The gas fugacities
    of the scan and the refinement are those of the gas as one phase (:func:`_single_phase_fugacities`,
    no stability test), and **one batch flash** per case then checks that the dry gas is one
    vapour-like phase at the lowest temperature the answer depends on (the lower end of the lower
    of the two brackets, or the bottom of :data:`T_SCAN` where a structure has no sign change):
    at a fixed pressure a gas splits only below its upper dew point, so the gas is then one phase
    over every temperature the answer used and the fugacities equal the flash's
    (:func:`eos_fugacities`). Cases that fail the check (a gas inside its two-phase region or
    liquid-like there) are solved again with a flash at every temperature, as in
    :func:`formation_T`. (A dense gas below a retrograde lower dew point, whose isobar re-enters the
    two-phase region on heating, would pass the check; that lies outside the model's tested
    range.)

    Parameters
    ----------
    fluid : Fluid
        Its cubic model supplies the gas fugacities (Peng-Robinson for a GERG-2008 fluid).
    P : float or ndarray (n,)
        Pressure [Pa].
    zs : ndarray (nc,) or (n, nc), optional
        Composition (default the fluid's); water is removed before the fugacities are computed.
    water_activity : float or ndarray (n,)
        Activity of water in the aqueous phase before dissolved gas, 0 < a_w <= 1 [-].
    dissolved_gas : bool
        Lower the water activity further by the gas dissolved in the water (Henry's law).

    Raises
    ------
    InputError
        A non-positive pressure, a water activity outside (0, 1], a gas with no hydrate former.
    ConvergenceError
        A bracketed solve did not converge (not expected: the report is attached).
    """
    P = np.atleast_1d(np.asarray(P, dtype=float))
    if np.any(~np.isfinite(P)) or np.any(P <= 0.0):
        raise InputError("hydrate temperature needs positive pressures")
    names = list(fluid.components)
    Z = fluid.zs if zs is None else np.asarray(zs, dtype=float)
    aw = np.atleast_1d(np.asarray(water_activity, dtype=float))
    n = max(P.shape[0], aw.shape[0], Z.shape[0] if Z.ndim == 2 else 1)
    try:
        P = np.broadcast_to(P, (n,)).copy()
        aw = np.broadcast_to(aw, (n,)).copy()
    except ValueError:
        raise InputError(f"pressures ({P.shape[0]}), water activities ({aw.shape[0]}) and "
                         f"compositions must have one length or length 1") from None
    if np.any(~np.isfinite(aw)) or np.any(aw <= 0.0) or np.any(aw > 1.0):
        raise InputError(f"water activity must be in (0, 1] (got {water_activity!r})")
    dry = np.broadcast_to(dry_gas(names, Z), (n, len(names))).copy()
    formers = [j for j, nm in enumerate(names) if nm in LANGMUIR]
    if not formers or np.all(dry[:, formers].sum(axis=1) <= 0.0):
        raise InputError(f"no hydrate former in the gas (formers: {', '.join(LANGMUIR)})")

    terms = _Terms(names)
    ln_aw = np.log(aw)
    eos_fluid = fluid if fluid.model != "gerg-2008" else fluid.with_model("peng-robinson")
    eos = eos_fluid.engine.eos
    T, k, iters, resid, conv = _solve_both(
        lambda Tq, idx: _single_phase_fugacities(eos, Tq, P[idx], dry[idx]),
        terms, P, ln_aw, dissolved_gas)
    # the one-phase check at the lowest temperature each answer depends on
    lowest = np.where((k < 0).any(axis=1), T_SCAN[0], T_SCAN[np.maximum(k, 0)].min(axis=1))
    st = eos_fluid.flash(T=lowest, P=P, zs=dry)
    one = st.converged & (st.n_phases == 1) & (st.vapour_fraction >= 1.0)
    redo = np.flatnonzero(~one)
    if redo.size:
        Pr, dr, lr = P[redo], dry[redo], ln_aw[redo]
        Tr, _, ir, rr, cr = _solve_both(lambda Tq, idx: eos_fugacities(fluid, Tq, Pr[idx], dr[idx]),
                                        terms, Pr, lr, dissolved_gas)
        T[redo], iters[redo], resid[redo], conv[redo] = Tr, ir, rr, cr
    T1, T2 = T[:, 0], T[:, 1]
    ok = conv.all(axis=1)
    rep = SolveReport(converged=ok, iterations=iters.max(axis=1),
                      residual=np.fmax(resid[:, 0], resid[:, 1]),
                      message="hydrate formation temperature, sI and sII (Illinois on a bracket)")
    if not ok.all():
        raise ConvergenceError("hydrate formation temperature did not converge", result=rep)
    T = np.fmax(T1, T2)
    structure = np.where(np.isnan(T), "", np.where(np.nan_to_num(T1, nan=-1.0)
                                                   >= np.nan_to_num(T2, nan=-1.0), "sI", "sII"))
    return HydrateCurve(P=P, T=T, structure=structure, T_sI=T1, T_sII=T2, water_activity=aw,
                        report=rep)
