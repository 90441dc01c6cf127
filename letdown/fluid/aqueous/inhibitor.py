"""Thermodynamic hydrate inhibitors (methanol, MEG): depression, concentration needed, injection rate.

Three ways to the hydrate temperature depression dT of an aqueous phase holding W wt % inhibitor:

* **Hammerschmidt** (Ind. Eng. Chem. 26 (1934) 851): dT = K W / (M (100 - W)), M the inhibitor's
  molar mass [g/mol], K = 2335 degF g/mol for methanol and 2700 for MEG (REFERENCE_DATA.md section 3,
  V, field units), here K / 1.8 in kelvin (1297.2 and 1500.0). Valid to about 20 K depression
  (and about 20-25 wt % methanol; common practice).
* **Nielsen & Bucklin** (Oil Gas J. 81 (1983); form as in REFERENCE_DATA.md section 3, status M):
  dT = -72 ln x_w [K], x_w the mole fraction of water in the inhibitor-water phase (salt-free,
  gas-free). Derived for methanol; applied to MEG here as well (common practice, less accurate).
* **van der Waals-Platteeuw with the inhibited water activity**: the hydrate model of
  :mod:`letdown.fluid.aqueous.hydrate` with a_w = gamma_w x_w (:func:`water_activity`), gamma_w from
  ln gamma_w = x_i^2 (A + B x_i) + x_i^2 (C + D x_i)(T0/T - 1) (:data:`ACTIVITY`, x_i the inhibitor
  mole fraction), fitted by ``bench/fit_inhibitor_activity.py`` to the **freezing points** of the
  solutions (Melinder, *Properties of Secondary Working Fluids for Indirect Systems*, 2nd ed., IIR
  2010, as fitted in CoolProp's incompressible mixtures; at the freezing point the solution is in
  equilibrium with ice, which fixes a_w at 218-272 K, the temperatures of hydrate inhibition) and,
  for methanol's temperature dependence, to NRTL with the DECHEMA water-methanol parameters
  (Gmehling & Onken, DECHEMA Chemistry Data Series Vol. I/1, 1977, p. 61; VLE at 337-373 K) at
  313-373 K. MEG has no verified VLE set here (C = D = 0). The data reach 40 wt % methanol and
  50 wt % MEG: beyond, gamma_w is held at its value there (:data:`ACTIVITY_X_MAX`) and
  :func:`vdwp_wt_pct` refuses a dose.

  Both solutions are slightly **non-ideal on the negative side** where hydrates are inhibited:
  gamma_w = 0.965 at 30 wt % methanol (247 K) and 0.906 at 50 wt % MEG (237 K) from the freezing
  points, so the ideal a_w = x_w of earlier versions understated the depression (conservative
  doses). The DECHEMA NRTL, extrapolated 70-120 K below its data, gives the opposite sign
  (gamma_w 1.06 at 30 wt %, 255 K) and would overstate a_w; it is not used below 313 K. In a phase
  holding both inhibitors the two binary terms are added (no ternary term; common practice).

Rates: for W wt % in the aqueous phase and a lean inhibitor solution of W_lean wt %, the lean
injection rate per free-water rate is W / (W_lean - W) (mass balance, common practice;
:func:`injection_rate`, the aqueous part only). **Losses** (:func:`partition`,
:func:`dose_with_losses`): methanol split between vapour, hydrocarbon liquid and aqueous liquid
by the three-phase flash of the gas with its water and methanol on the fluid's cubic model; MEG by
Raoult's law against the aqueous liquid of that flash with the vapour pressure of Perry's
Handbook (:data:`MEG_PSAT_PERRY`), none in a hydrocarbon liquid. The cubic with van der Waals
mixing is crude for methanol-water (its pure methanol vapour pressure is 8-17 % low at 298-268 K,
its activity coefficient of methanol in water at infinite dilution about 3.3; methane-methanol
has no published kij here); the losses are estimates to about a factor of two (docs/models.md, known
limits).

Every output that judges freezing carries the caution: engineering estimates; designs must follow
local codes and be checked by qualified, licensed staff.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ...errors import ConvergenceError, InputError
from ..components import COMPONENTS
from ..flash.twophase import SolveReport
from ...numerics.rootfind import bracketed_root


#: Nielsen & Bucklin (1983) coefficient [K] (REFERENCE_DATA.md section 3, status M)
NIELSEN_BUCKLIN_K = 72.0
M_WATER_G = COMPONENTS["water"].M * 1000.0   # [g/mol]

#: vdW-P concentration search: ln a_w bracket and tolerance on the formation temperature [K]
LN_AW_MIN = np.log(0.2)
T_TARGET_TOL = 1e-5
MAX_ITER = 60


@dataclass(frozen=True)
class Inhibitor:
    """A thermodynamic hydrate inhibitor.

    Attributes
    ----------
    name : str
        Canonical component name.
    M : float
        Molar mass [g/mol] (the component table).
    K_hammerschmidt : float
        Hammerschmidt constant [K g/mol].
    """

    name: str
    M: float
    K_hammerschmidt: float


INHIBITORS = {
    "methanol": Inhibitor("methanol", COMPONENTS["methanol"].M * 1000.0, 2335.0 / 1.8),
    "ethylene-glycol": Inhibitor("ethylene-glycol", COMPONENTS["ethylene-glycol"].M * 1000.0,
                                 2700.0 / 1.8),
}
_ALIASES = {"meoh": "methanol", "meg": "ethylene-glycol", "glycol": "ethylene-glycol",
            "monoethylene-glycol": "ethylene-glycol"}


def inhibitor(name) -> Inhibitor:
    """The :class:`Inhibitor` named ``name`` (methanol, MeOH, MEG, ethylene-glycol).

    Raises
    ------
    InputError
        An unknown inhibitor.
    """
    if isinstance(name, Inhibitor):
        return name
    key = str(name).strip().lower().replace("_", "-").replace(" ", "-")
    key = _ALIASES.get(key, key)
    if key not in INHIBITORS:
        raise InputError(f"unknown hydrate inhibitor '{name}' (known: methanol, MEG)")
    return INHIBITORS[key]


def _wt(W):
    W = np.asarray(W, dtype=float)
    if np.any(~np.isfinite(W)) or np.any(W < 0.0) or np.any(W >= 100.0):
        raise InputError(f"inhibitor concentration must be in [0, 100) wt % (got {W!r})")
    return W


def _dT(dT):
    dT = np.asarray(dT, dtype=float)
    if np.any(~np.isfinite(dT)) or np.any(dT < 0.0):
        raise InputError(f"hydrate depression must be zero or positive (got {dT!r})")
    return dT


def _out(x):
    return float(x) if np.ndim(x) == 0 else x


# ------------------------------------------------------------------ composition
def water_mole_fraction(W, name="methanol"):
    """Mole fraction of water in a water-inhibitor solution of W wt % inhibitor [-]."""
    inh = inhibitor(name)
    W = _wt(W)
    nw = (100.0 - W) / M_WATER_G
    ni = W / inh.M
    return _out(nw / (nw + ni))


def wt_pct_from_water_mole_fraction(x_w, name="methanol"):
    """wt % inhibitor of a water-inhibitor solution whose water mole fraction is x_w [wt %]."""
    inh = inhibitor(name)
    x = np.asarray(x_w, dtype=float)
    if np.any(~np.isfinite(x)) or np.any(x <= 0.0) or np.any(x > 1.0):
        raise InputError(f"water mole fraction must be in (0, 1] (got {x_w!r})")
    mi = (1.0 - x) * inh.M
    return _out(100.0 * mi / (mi + x * M_WATER_G))


# ------------------------------------------------------------------ water activity
#: ln gamma_w = x_i^2 (A + B x_i) + x_i^2 (C + D x_i)(T0/T - 1) per inhibitor: (A, B, C, D) [-]
#: (module docstring; ``bench/fit_inhibitor_activity.py``). Fit quality: the freezing points of
#: 5-40 wt % methanol within 0.25 K and of 5-50 wt % MEG within 0.28 K; the DECHEMA NRTL at
#: 313-373 K (up to 40 wt % methanol) within 0.038 in ln gamma_w.
ACTIVITY = {"methanol": (-0.91617, 3.34376, -10.2599, 19.69926),
            "ethylene-glycol": (-2.19356, 0.81892, 0.0, 0.0)}
#: Largest inhibitor mole fraction of the data behind :data:`ACTIVITY` (40 wt % methanol, 50 wt %
#: MEG: the freezing points) [-]. Beyond it the polynomial is not used (for methanol it turns
#: upward and a_w stops rising with the water fraction): gamma_w is held at its value there, and
#: :func:`vdwp_wt_pct` refuses a dose beyond it.
ACTIVITY_X_MAX = {"methanol": 0.27264, "ethylene-glycol": 0.22496}
#: Reference temperature of the temperature term [K].
ACTIVITY_T0 = 273.15
#: The range the activity model is used in [K]: outside it gamma_w is taken at the nearer end (the
#: freezing-point data reach down to 218 K, the NRTL points up to 373 K).
ACTIVITY_T_RANGE = (218.0, 373.15)


def water_activity_coefficient(x_water, x_methanol, T):
    """Activity coefficient of water in a water-methanol-MEG liquid [-] (:data:`ACTIVITY`).

    Parameters
    ----------
    x_water, x_methanol : float or ndarray
        Mole fractions of water and methanol in the liquid; the rest is MEG [-].
    T : float or ndarray
        Temperature [K] (clipped to :data:`ACTIVITY_T_RANGE`).
    """
    xw = np.asarray(x_water, float)
    xm = np.clip(np.asarray(x_methanol, float), 0.0, None)
    xg = np.clip(1.0 - xw - xm, 0.0, None)
    tau = ACTIVITY_T0 / np.clip(np.asarray(T, float), *ACTIVITY_T_RANGE) - 1.0
    ln_g = 0.0
    for name, x in (("methanol", xm), ("ethylene-glycol", xg)):
        A, B, C, D = ACTIVITY[name]
        x = np.minimum(x, ACTIVITY_X_MAX[name])          # held at the edge of the data beyond
        ln_g = ln_g + x * x * (A + B * x) + x * x * (C + D * x) * tau
    return _out(np.exp(ln_g))


def _x_methanol(name, x_w):
    return 1.0 - x_w if inhibitor(name).name == "methanol" else np.zeros_like(x_w)


def water_activity(W, name="methanol", T=273.15):
    """Water activity a_w = gamma_w x_w of a water-inhibitor solution of W wt % inhibitor at T [-]
    (:func:`water_activity_coefficient`)."""
    inh = inhibitor(name)
    x_w = np.asarray(water_mole_fraction(W, inh.name), float)
    return _out(x_w * np.asarray(water_activity_coefficient(x_w, _x_methanol(inh.name, x_w), T),
                                 float))


def wt_pct_from_water_activity(a_w, name="methanol", T=273.15):
    """wt % inhibitor of a water-inhibitor solution whose water activity at T is a_w [wt %]: the
    inverse of :func:`water_activity` (a_w rises with x_w over 0-60 wt %, where the model is fitted;
    bisection on x_w, all cases together, to 1e-15 in x_w).

    Raises
    ------
    InputError
        a_w outside (0, 1], or below what neat inhibitor gives.
    """
    inh = inhibitor(name)
    a = np.asarray(a_w, float)
    if np.any(~np.isfinite(a)) or np.any(a <= 0.0) or np.any(a > 1.0):
        raise InputError(f"water activity must be in (0, 1] (got {a_w!r})")
    a, T = np.broadcast_arrays(a, np.asarray(T, float))
    lo = np.full(a.shape, 1e-9)
    hi = np.ones(a.shape)

    def activity(x):
        return x * np.asarray(water_activity_coefficient(x, _x_methanol(inh.name, x), T), float)

    if np.any(activity(lo) > a):
        raise InputError("water activity below that of the neat inhibitor")
    for _ in range(60):          # bisection: 2^-60 of the unit interval is below 1e-17
        mid = 0.5 * (lo + hi)
        f = activity(mid) - a
        lo = np.where(f < 0.0, mid, lo)
        hi = np.where(f < 0.0, hi, mid)
    x = np.where(a >= 1.0, 1.0, 0.5 * (lo + hi))       # pure water: no inhibitor, exactly
    return wt_pct_from_water_mole_fraction(x, inh.name)


# ------------------------------------------------------------------ Hammerschmidt
def hammerschmidt_depression(W, name="methanol", K=None):
    """Hammerschmidt (1934) hydrate depression dT = K W / (M (100 - W)) [K].

    Parameters
    ----------
    W : float or ndarray
        Inhibitor in the aqueous phase [wt %].
    name : str
        ``methanol`` or ``MEG``.
    K : float, optional
        Override of the constant [K g/mol].

    Examples
    --------
    >>> round(hammerschmidt_depression(20.0, "methanol", K=1297.0), 2)   # REFERENCE_DATA.md s. 3
    10.12
    """
    inh = inhibitor(name)
    W = _wt(W)
    K = inh.K_hammerschmidt if K is None else float(K)
    return _out(K * W / (inh.M * (100.0 - W)))


def hammerschmidt_wt_pct(dT, name="methanol", K=None):
    """Inhibitor needed in the aqueous phase for a depression dT [K], inverse Hammerschmidt:
    W = 100 dT M / (K + dT M) [wt %]."""
    inh = inhibitor(name)
    dT = _dT(dT)
    K = inh.K_hammerschmidt if K is None else float(K)
    return _out(100.0 * dT * inh.M / (K + dT * inh.M))


# ------------------------------------------------------------------ Nielsen-Bucklin
def nielsen_bucklin_depression(W, name="methanol"):
    """Nielsen & Bucklin (1983) depression dT = -72 ln x_w [K] at W wt % inhibitor."""
    return _out(-NIELSEN_BUCKLIN_K * np.log(water_mole_fraction(W, name)))


def nielsen_bucklin_wt_pct(dT, name="methanol"):
    """Inhibitor needed for a depression dT [K] by Nielsen-Bucklin: x_w = exp(-dT / 72) [wt %]."""
    dT = _dT(dT)
    return wt_pct_from_water_mole_fraction(np.exp(-dT / NIELSEN_BUCKLIN_K), name)


# ------------------------------------------------------------------ vdW-P
#: Fixed point on the temperature at which gamma_w is taken (it moves the hydrate temperature by
#: about 0.01 K per K): stop when the hydrate temperature changes by less than this [K] ...
ACTIVITY_T_TOL = 1e-7
#: ... or after this many passes (3-4 are needed; measured).
ACTIVITY_MAX_PASSES = 20


def _solution_hydrate_T(fluid, P, x_water, x_methanol, zs=None):
    """vdW-P hydrate temperature [K] over an aqueous liquid of water and methanol mole fractions
    x_water, x_methanol (the rest MEG): a_w = gamma_w(T) x_w with gamma_w taken at the hydrate
    temperature itself (fixed point, :data:`ACTIVITY_T_TOL`; NaN where no hydrate forms)."""
    P = np.atleast_1d(np.asarray(P, float))
    xw, xm = np.broadcast_arrays(np.asarray(x_water, float), np.asarray(x_methanol, float))
    xw = np.broadcast_to(xw, P.shape) if xw.ndim == 0 else xw
    xm = np.broadcast_to(xm, xw.shape)
    T = np.full(xw.shape, 273.15)
    T_new = T
    for _ in range(ACTIVITY_MAX_PASSES):
        aw = np.minimum(xw * np.asarray(water_activity_coefficient(xw, xm, T), float), 1.0)
        T_new = np.asarray(fluid.hydrate_T(P, water_activity=aw, zs=zs), float).reshape(xw.shape)
        done = np.all(np.abs(np.nan_to_num(T_new - T, nan=0.0)) < ACTIVITY_T_TOL)
        T = np.where(np.isfinite(T_new), T_new, T)
        if done:
            break
    else:
        raise ConvergenceError("hydrate temperature with the water activity model: the fixed point "
                               "on the temperature did not settle")
    return T_new


def inhibited_hydrate_T(fluid, P, W, name="methanol"):
    """Hydrate formation temperature with W wt % inhibitor in the free water [K]: vdW-P with
    a_w = gamma_w x_w (:func:`water_activity`, gamma_w at the hydrate temperature; module
    docstring)."""
    inh = inhibitor(name)
    x = np.asarray(water_mole_fraction(W, inh.name), float)
    T = _solution_hydrate_T(fluid, P, x, _x_methanol(inh.name, x))
    return float(T[0]) if np.ndim(P) == 0 and np.ndim(W) == 0 else T


def vdwp_wt_pct(fluid, P, T_target, name="methanol", zs=None):
    """Inhibitor needed in the aqueous phase so that the vdW-P hydrate temperature at P falls to
    T_target [wt %] (0 where the uninhibited hydrate temperature is already at or below it). The
    water activity is solved for, then turned into wt % by the activity model at T_target
    (:func:`wt_pct_from_water_activity`).

    Parameters
    ----------
    fluid : Fluid
    P : float or ndarray (n,)
        [Pa].
    T_target : float or ndarray (n,)
        Highest acceptable hydrate formation temperature [K].
    name : str
        ``methanol`` or ``MEG``.
    zs : ndarray (nc,) or (n, nc), optional
        Gas composition override (``fluid``'s component order).

    Raises
    ------
    InputError
        A target below 230 K, or one that needs a water activity below 0.2 (far outside the data
        of either rule).
    ConvergenceError
        The bracketed solve on ln a_w did not converge.
    """
    P_in = P
    P = np.atleast_1d(np.asarray(P, dtype=float))
    Tt = np.atleast_1d(np.asarray(T_target, dtype=float))
    n = max(P.shape[0], Tt.shape[0])
    P = np.broadcast_to(P, (n,)).copy()
    Tt = np.broadcast_to(Tt, (n,)).copy()
    from .hydrate import T_SCAN
    if np.any(~np.isfinite(Tt)) or np.any(Tt < T_SCAN[0]):
        raise InputError(f"target hydrate temperature below {T_SCAN[0]:.0f} K, the lower end of "
                         f"the hydrate model's search")
    Z = None if zs is None else np.broadcast_to(np.asarray(zs, float),
                                                (n, np.shape(zs)[-1])).copy()

    def hT(rows, aw=1.0):
        return np.asarray(fluid.hydrate_T(P[rows], water_activity=aw,
                                          zs=None if Z is None else Z[rows]), float).reshape(-1)

    T_free = hT(np.arange(n))
    need = T_free > Tt
    lna = np.zeros(n)
    if need.any():
        i = np.nonzero(need)[0]
        lo = np.full(i.size, LN_AW_MIN)    # ln a_w: hydrate T below target here ...
        hi = np.zeros(i.size)             # ... and above it here
        f_lo = hT(i, np.exp(lo)) - Tt[i]
        # NaN: no hydrate above the search's lower end, i.e. below any accepted target
        f_lo = np.where(np.isnan(f_lo), T_SCAN[0] - Tt[i] - 1.0, f_lo)
        if np.any(f_lo > 0.0):
            raise InputError("the target hydrate temperature needs a water activity below 0.2: "
                             "outside what the inhibitor rules cover")
        f_hi = T_free[i] - Tt[i]
        rep = bracketed_root(lambda c, rows: hT(i[rows], np.exp(c)) - Tt[i][rows], lo, hi,
                             f_lo, f_hi, ftol=T_TARGET_TOL, max_iterations=MAX_ITER)
        if not rep.converged.all():
            raise ConvergenceError("inhibitor concentration (vdW-P) did not converge",
                                   result=SolveReport(rep.converged, rep.iterations,
                                                      np.abs(rep.fx), "ln a_w, Illinois"))
        lna[i] = rep.x
    # at the answer the hydrate temperature is T_target: gamma_w is taken there
    W = wt_pct_from_water_activity(np.exp(lna), name, np.where(need, Tt, 273.15))
    W = np.atleast_1d(W)
    inh = inhibitor(name)
    W_max = float(wt_pct_from_water_mole_fraction(1.0 - ACTIVITY_X_MAX[inh.name], inh.name))
    if np.any(W > W_max + 1e-9):
        raise InputError(f"the target hydrate temperature needs {np.max(W):.1f} wt % {inh.name} in "
                         f"the water, beyond the {W_max:.0f} wt % the water activity model has data "
                         f"for (size by hammerschmidt or nielsen-bucklin, or a smaller depression)",
                         cases=W > W_max + 1e-9)
    scalar = np.ndim(T_target) == 0 and np.ndim(P_in) == 0 and (zs is None or np.ndim(zs) == 1)
    return float(W[0]) if scalar else W


# ------------------------------------------------------------------ rates
def injection_rate(water_rate, W, lean_wt_pct=100.0):
    """Lean inhibitor solution to inject so that the aqueous phase holds W wt % [kg/s].

    m_lean = m_water W / (W_lean - W), the aqueous phase only (losses to vapour and hydrocarbon
    liquid omitted -- module docstring).

    Parameters
    ----------
    water_rate : float or ndarray
        Free (condensed or produced) water reaching the cold point [kg/s].
    W : float or ndarray
        Inhibitor needed in the aqueous phase [wt %].
    lean_wt_pct : float
        Inhibitor in the injected solution [wt %] (100 for neat methanol, about 80-90 for lean
        MEG, common practice).

    Raises
    ------
    InputError
        Negative water rate, W outside [0, 100), W at or above the lean concentration.

    Examples
    --------
    >>> round(injection_rate(1.0, 20.0), 4)    # 1 kg/s water, 20 wt %, neat methanol
    0.25
    """
    m = np.asarray(water_rate, dtype=float)
    if np.any(~np.isfinite(m)) or np.any(m < 0.0):
        raise InputError("free-water rate must be zero or positive")
    W = _wt(W)
    lean = float(lean_wt_pct)
    if not 0.0 < lean <= 100.0 or np.any(W >= lean):
        raise InputError(f"the lean inhibitor ({lean} wt %) must be stronger than the aqueous "
                         f"phase needs ({np.max(W)} wt %)")
    return _out(m * W / (lean - W))


def free_water_rate(gas_rate, y_water_in, T, P, fluid=None, method="bukacek"):
    """Water that condenses from a gas cooled to (T, P) [kg/s]: gas_rate (y_in - y_sat) M_water,
    zero where the gas stays below saturation.

    Parameters
    ----------
    gas_rate : float or ndarray
        Molar flow of the gas [mol/s].
    y_water_in : float or ndarray
        Water mole fraction entering [-].
    T, P : float or ndarray
        Cold point [K], [Pa].
    fluid, method
        As for :func:`letdown.fluid.aqueous.water.water_content`.
    """
    from .water import M_WATER, water_content
    y_sat = water_content(fluid, T, P, method=method)
    y_in = np.asarray(y_water_in, dtype=float)
    n = np.asarray(gas_rate, dtype=float)
    # moles condensed per mole of wet feed: (y_in - y_sat) / (1 - y_sat)
    cond = np.maximum(y_in - y_sat, 0.0) / (1.0 - y_sat)
    return _out(n * cond * M_WATER)


# ------------------------------------------------------------------ losses (three-phase flash)
#: Components the partition flash adds to the gas: water and both inhibitors (in this order).
PARTITION_EXTRA = ("water", "methanol", "ethylene-glycol")
#: Dose search: relative tolerance on the aqueous wt % reached [-] and iteration cap (an Illinois
#: step on ln n converges superlinearly; 80 steps cover any bracket the doubling finds).
DOSE_WT_RTOL = 1e-9
DOSE_MAX_ITER = 80
#: The upper end of the dose bracket is doubled at most this many times from the aqueous need.
DOSE_MAX_DOUBLINGS = 60
#: Vapour pressure of ethylene glycol, ln(P/Pa) = C1 + C2/T + C3 ln T + C4 T^C5 (DIPPR equation
#: 101): Green & Perry, Perry's Chemical Engineers' Handbook, 8th ed. (2008), Table 2-8, as
#: transcribed in the data of the ``chemicals`` package (stated range 260.15-720 K).
MEG_PSAT_PERRY = (84.09, -10411.0, -8.1976, 1.6536e-18, 6.0)


def meg_vapour_pressure(T):
    """Vapour pressure of ethylene glycol [Pa] (:data:`MEG_PSAT_PERRY`; about 2 Pa at 5 degC)."""
    c1, c2, c3, c4, c5 = MEG_PSAT_PERRY
    T = np.asarray(T, float)
    return _out(np.exp(c1 + c2 / T + c3 * np.log(T) + c4 * T ** c5))


def _meg_split(g, liquid, V, T, P):
    """MEG of ``g`` mol split between an aqueous liquid holding ``liquid`` mol of other matter and
    ``V`` mol of vapour by Raoult's law, y P = x P_sat (ideal solution, ideal gas):
    n_aq (1 + k / (n_aq + liquid)) = g, k = V P_sat / P, solved as a quadratic. Returns the
    aqueous and vapour amounts [mol]."""
    k = V * np.asarray(meg_vapour_pressure(T), float) / P
    b = liquid + k - g
    aq = 0.5 * (-b + np.sqrt(b * b + 4.0 * g * liquid))
    aq = np.where(liquid > 0.0, aq, g)      # no aqueous liquid: the glycol is the liquid itself
    return aq, g - aq


@dataclass(frozen=True)
class Partition:
    """Where the inhibitor goes at one state: vapour, hydrocarbon liquid, aqueous liquid.

    All amounts per mole of dry gas fed [mol/mol]; arrays (n,) over cases, (n, 2) for the two
    inhibitors in the order of :data:`INHIBITORS` (methanol, MEG).

    Attributes
    ----------
    injected, aqueous, vapour, hc_liquid : ndarray (n, 2)
        Inhibitor fed, and in the aqueous liquid, the vapour and the hydrocarbon liquid [mol/mol].
    water_aqueous : ndarray (n,)
        Water in the aqueous liquid [mol/mol] (0 where there is none).
    wt_pct : ndarray (n,)
        Inhibitor in the aqueous liquid, salt- and gas-free basis (water + inhibitors) [wt %]
        (NaN where there is no aqueous liquid).
    water_mole_fraction : ndarray (n,)
        x_w of the aqueous liquid on the same basis (the a_w used with the hydrate model) [-].
    beta_V, beta_L, beta_W : ndarray (n,)
        Phase fractions of the flash [-].
    report : SolveReport
        The flash's convergence, or the dose search's.
    water_activity : ndarray (n,) or None
        a_w = gamma_w x_w of the aqueous liquid at its T (:func:`water_activity_coefficient`) [-]
        (NaN where there is no aqueous liquid).
    """

    injected: np.ndarray
    aqueous: np.ndarray
    vapour: np.ndarray
    hc_liquid: np.ndarray
    water_aqueous: np.ndarray
    wt_pct: np.ndarray
    water_mole_fraction: np.ndarray
    beta_V: np.ndarray
    beta_L: np.ndarray
    beta_W: np.ndarray
    report: SolveReport
    water_activity: np.ndarray | None = None

    @property
    def balance_closure(self) -> np.ndarray:
        """max |injected - aqueous - vapour - hc_liquid| / injected over the inhibitors (n,) [-]."""
        inj = self.injected
        miss = np.abs(inj - self.aqueous - self.vapour - self.hc_liquid)
        return np.max(np.where(inj > 0.0, miss / np.where(inj > 0.0, inj, 1.0), miss), axis=1)


def partition_fluid(fluid):
    """The fluid of the partition flash: ``fluid``'s components plus water, methanol and MEG, on
    its cubic model (Peng-Robinson for GERG-2008, which has no three-phase flash here) with its
    interaction-parameter choice. Pairs with no published kij (methane-methanol, every MEG pair
    but none listed) are zero and listed in ``missing_kij``."""
    from ..fluid import Fluid
    names = list(fluid.components) + [c for c in PARTITION_EXTRA if c not in fluid.components]
    comp = {c: (1.0 if k == 0 else 0.0) for k, c in enumerate(names)}
    model = "peng-robinson" if fluid.model == "gerg-2008" else fluid.model
    return Fluid(comp, model=model, kij=getattr(fluid, "_kij_spec", None))


def _feed(pf, fluid, zs_dry, water_ratio, inh_ratio):
    """Feed compositions (n, nc) of the partition fluid for 1 mol dry gas + water + inhibitors,
    and the total moles per mole of dry gas (n,)."""
    zs_dry = np.asarray(zs_dry, float)
    n = zs_dry.shape[0]
    names = list(pf.components)
    Z = np.zeros((n, len(names)))
    dry = zs_dry.copy()
    if "water" in fluid.components:
        dry[:, fluid.components.index("water")] = 0.0
    for k in (INHIBITORS):
        if k in fluid.components:
            dry[:, fluid.components.index(k)] = 0.0
    dry /= dry.sum(axis=1, keepdims=True)
    for j, c in enumerate(fluid.components):
        Z[:, names.index(c)] = dry[:, j]
    Z[:, names.index("water")] += water_ratio
    for j, c in enumerate(INHIBITORS):
        Z[:, names.index(c)] += inh_ratio[:, j]
    total = Z.sum(axis=1)
    return Z / total[:, None], total


def partition(fluid, T, P, zs_dry, water_ratio, inhibitor_ratio, pf=None) -> Partition:
    """Split water and inhibitor between vapour, hydrocarbon liquid and aqueous liquid by the
    three-phase flash (:meth:`letdown.fluid.Fluid.flash_three_phase`) of the gas with its water and inhibitor.

    Parameters
    ----------
    fluid : Fluid
        The gas (its model and kij; see :func:`partition_fluid`).
    T, P : ndarray (n,)
        The state [K], [Pa].
    zs_dry : ndarray (n, nc)
        Gas composition in ``fluid``'s component order (water and inhibitor in it are ignored) [-].
    water_ratio : ndarray (n,)
        Water per dry gas [mol/mol].
    inhibitor_ratio : ndarray (n, 2)
        Methanol and MEG per dry gas [mol/mol].
    pf : Fluid, optional
        A ready :func:`partition_fluid` (saves building it).

    Returns
    -------
    Partition

    Raises
    ------
    ConvergenceError
        The three-phase flash did not converge for some case.

    Notes
    -----
    The model's limits for these mixtures (a cubic with van der Waals one-fluid mixing and
    constant kij; docs/models.md, known limits): methanol's vapour pressure and its activity in water
    are both off (tests/sheet/test_inhibitor_loss.py measures them), and methanol-methane and all MEG
    pairs have no published kij here (zero), so the losses are estimates to a factor of about
    two, not design figures.
    """
    pf = partition_fluid(fluid) if pf is None else pf
    T = np.atleast_1d(np.asarray(T, float))
    P = np.atleast_1d(np.asarray(P, float))
    zs_dry = np.atleast_2d(np.asarray(zs_dry, float))
    n = zs_dry.shape[0]
    w_in = np.broadcast_to(np.asarray(water_ratio, float), (n,))
    inh = np.broadcast_to(np.asarray(inhibitor_ratio, float), (n, len(INHIBITORS)))
    j_meg = list(INHIBITORS).index("ethylene-glycol")
    meg = inh[:, j_meg].copy()
    flash_inh = np.array(inh, float)
    flash_inh[:, j_meg] = 0.0
    Z, total = _feed(pf, fluid, zs_dry, w_in, flash_inh)
    r = pf.flash_three_phase(np.broadcast_to(T, (n,)), np.broadcast_to(P, (n,)), Z)
    names = list(pf.components)
    cols = [names.index(c) for c in INHIBITORS]
    iw = names.index("water")

    def amount(beta, X, j):
        return np.where(beta > 0.0, beta * np.nan_to_num(X[:, j]), 0.0) * total

    aq = np.stack([amount(r.beta_W, r.w, j) for j in cols], axis=1)
    vap = np.stack([amount(r.beta_V, r.y, j) for j in cols], axis=1)
    hcl = np.stack([amount(r.beta_L, r.x, j) for j in cols], axis=1)
    water_aq = amount(r.beta_W, r.w, iw)
    g_aq, g_vap = _meg_split(meg, water_aq + aq.sum(axis=1), r.beta_V * total,
                             np.broadcast_to(T, (n,)), np.broadcast_to(P, (n,)))
    aq[:, j_meg], vap[:, j_meg] = g_aq, g_vap
    M = np.array([INHIBITORS[c].M for c in INHIBITORS])
    m_inh = aq @ M
    m_w = water_aq * M_WATER_G
    wet = water_aq > 0.0
    wt = np.where(wet, 100.0 * m_inh / np.where(wet, m_inh + m_w, 1.0), np.nan)
    tot_aq = np.where(wet, water_aq + aq.sum(axis=1), 1.0)
    xw = np.where(wet, water_aq / tot_aq, np.nan)
    xm = np.where(wet, aq[:, list(INHIBITORS).index("methanol")] / tot_aq, np.nan)
    gam = np.asarray(water_activity_coefficient(np.nan_to_num(xw, nan=1.0),
                                                np.nan_to_num(xm, nan=0.0),
                                                np.broadcast_to(T, (n,))), float)
    aw = np.where(wet, np.minimum(xw * gam, 1.0), np.nan)
    return Partition(np.array(inh, float), aq, vap, hcl, water_aq, wt, xw, r.beta_V, r.beta_L,
                     r.beta_W, r.report, aw)


def dose_with_losses(fluid, T, P, zs_dry, water_ratio, W, name="methanol", pf=None) -> Partition:
    """The inhibitor to feed per mole of dry gas so that the aqueous liquid at (T, P) holds W wt %
    after what the vapour and a hydrocarbon liquid take (:func:`partition`).

    The aqueous wt % rises with the dose; the dose n (mol inhibitor per mol dry gas) is bracketed
    from the aqueous need with all the water condensed (a lower end of 1e-3 of it, an upper end
    doubled until the wt % is reached) and found by the Illinois method on ln n, all cases
    together, to a relative :data:`DOSE_WT_RTOL` in wt %.

    Parameters
    ----------
    fluid, T, P, zs_dry, water_ratio, pf
        As for :func:`partition`.
    W : float or ndarray (n,)
        Inhibitor wanted in the aqueous liquid [wt %].
    name : str
        ``methanol`` or ``MEG``.

    Returns
    -------
    Partition
        At the dose found (``injected`` holds it); zero dose and NaN wt % where W is 0 or where
        the flash finds no aqueous liquid without inhibitor (no free water at (T, P): nothing to
        protect).

    Raises
    ------
    ConvergenceError
        The wt % is not reached within the bracket, or the search did not converge.
    """
    inh = inhibitor(name)
    j = list(INHIBITORS).index(inh.name)
    pf = partition_fluid(fluid) if pf is None else pf
    zs_dry = np.atleast_2d(np.asarray(zs_dry, float))
    n = zs_dry.shape[0]
    T = np.broadcast_to(np.asarray(T, float), (n,))
    P = np.broadcast_to(np.asarray(P, float), (n,))
    rw = np.broadcast_to(np.asarray(water_ratio, float), (n,))
    W = np.broadcast_to(_wt(W), (n,))
    k = len(INHIBITORS)

    def ratios(x, rows):
        out = np.zeros((rows.size, k))
        out[:, j] = x
        return out

    def wt_at(x, rows):
        p = partition(fluid, T[rows], P[rows], zs_dry[rows], rw[rows], ratios(x, rows), pf)
        return np.nan_to_num(p.wt_pct, nan=0.0) - W[rows]

    dose = np.zeros(n)
    free = partition(fluid, T, P, zs_dry, rw, np.zeros((n, k)), pf)
    need = (W > 0.0) & (free.beta_W > 0.0)
    its = np.zeros(n, dtype=int)
    conv = ~need
    res = np.zeros(n)
    if need.any() and inh.name == "ethylene-glycol":
        # Raoult's law for the glycol (see partition): closed form from the free water
        i = np.flatnonzero(need)
        x = W[i] / inh.M / (W[i] / inh.M + (100.0 - W[i]) / M_WATER_G)
        n_aq = free.water_aqueous[i] * x / (1.0 - x)
        V = free.beta_V[i] * (1.0 + rw[i])    # the glycol does not change the flash here
        n_vap = x * V * np.asarray(meg_vapour_pressure(T[i]), float) / P[i]
        dose[i] = n_aq + n_vap
        conv[i] = True
    elif need.any():
        i = np.flatnonzero(need)
        n_aq = rw[i] * M_WATER_G * W[i] / ((100.0 - W[i]) * inh.M)
        lo = np.log(1e-3 * n_aq)
        hi = np.log(n_aq)
        f_lo = wt_at(np.exp(lo), i)
        f_hi = wt_at(np.exp(hi), i)
        if np.any(f_lo > 0.0):
            raise ConvergenceError("inhibitor dose: the aqueous liquid is already above the "
                                   "wanted wt % at the lower end of the bracket",
                                   result=SolveReport(conv, its, res, "dose, bracket"))
        for _ in range(DOSE_MAX_DOUBLINGS):
            low = f_hi <= 0.0
            if not low.any():
                break
            lo = np.where(low, hi, lo)
            f_lo = np.where(low, f_hi, f_lo)
            hi = np.where(low, hi + np.log(2.0), hi)
            f_hi[low] = wt_at(np.exp(hi[low]), i[low])
        if np.any(f_hi <= 0.0):
            raise ConvergenceError("inhibitor dose: the wanted aqueous wt % is not reached "
                                   "by any dose the search tried",
                                   result=SolveReport(conv, its, res, "dose, bracket"))
        rep = bracketed_root(lambda c, rows: wt_at(np.exp(c), i[rows]), lo, hi, f_lo, f_hi,
                             ftol=DOSE_WT_RTOL * W[i], max_iterations=DOSE_MAX_ITER)
        its[i], res[i], conv[i] = rep.iterations, np.abs(rep.fx), rep.converged
        if not rep.converged.all():
            raise ConvergenceError("inhibitor dose with losses did not converge",
                                   result=SolveReport(conv, its, res, "dose, Illinois on ln n"))
        dose[i] = np.exp(rep.x)
    out = partition(fluid, T, P, zs_dry, rw, ratios(dose, np.arange(n)), pf)
    return Partition(out.injected, out.aqueous, out.vapour, out.hc_liquid, out.water_aqueous,
                     np.where(need, out.wt_pct, np.nan), out.water_mole_fraction, out.beta_V,
                     out.beta_L, out.beta_W, SolveReport(conv, its, res, "dose, Illinois on ln n"),
                     out.water_activity)


def hydrate_model_depression(fluid, P, x_w, zs=None, name=None):
    """Depression of the vdW-P hydrate temperature at P by an aqueous liquid of water mole
    fraction x_w [K]: hydrate_T(a_w = 1) - hydrate_T(a_w).

    ``name`` is the inhibitor of the water-inhibitor liquid: a_w = gamma_w x_w
    (:func:`water_activity_coefficient`, gamma_w at the inhibited hydrate temperature); None keeps
    the ideal a_w = x_w of earlier versions for callers that do not name the inhibitor (it
    understates the depression, module docstring)."""
    P = np.atleast_1d(np.asarray(P, float))
    xw = np.broadcast_to(np.asarray(x_w, float), P.shape)
    free = np.asarray(fluid.hydrate_T(P, zs=zs))
    if name is not None:
        return free - _solution_hydrate_T(fluid, P, xw, _x_methanol(name, xw), zs=zs)
    return free - np.asarray(fluid.hydrate_T(P, water_activity=xw, zs=zs))
