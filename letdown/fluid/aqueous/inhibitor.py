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
  313-373 K. MEG has no verified VLE set here: its temperature dependence is fitted to the water
  activity of the universal correlation of inhibited hydrate suppression temperatures of Hu, Sa,
  Lee & Sum (AIChE J. 2018, doi:10.1002/aic.16369; ln a_w = B1 x + B2 x^2, constants as
  transcribed in p2f_HydrateCalcLib 0.1.0.9, the paper not read here) at 253-293 K, where MEG
  solutions form hydrate. Without that term the freezing points alone, taken 30 K above them,
  left the hydrate model 1.0-1.3 K below the correlation at 50 wt % MEG (non-conservative); with
  it, -0.49 to +0.08 K at 5-60 wt % and 3-20 MPa, and methanol -0.18 to +1.54 K at 5-40 wt %
  (tests/fluid/test_hydrate_inhibited.py; no experimental inhibited point was available to this work).
  The data reach 40 wt % methanol and 60 wt % MEG: beyond, gamma_w is held at its value there
  (:data:`ACTIVITY_X_MAX`) and :func:`vdwp_wt_pct` refuses a dose.

  Both solutions are slightly **non-ideal on the negative side** where hydrates are inhibited:
  gamma_w = 0.965 at 30 wt % methanol (247 K) and 0.906 at 50 wt % MEG (237 K) from the freezing
  points (0.919 at 50 wt % MEG and 270 K with the temperature term), so the ideal a_w = x_w of
  earlier versions understated the depression (conservative doses). The DECHEMA NRTL, extrapolated 70-120 K below its data, gives the opposite sign
  (gamma_w 1.06 at 30 wt %, 255 K) and would overstate a_w; it is not used below 313 K. In a phase
  holding both inhibitors the two binary terms are added (no ternary term; common practice).

Rates: for W wt % in the aqueous phase and a lean inhibitor solution of W_lean wt %, the lean
injection rate per free-water rate is W / (W_lean - W) (mass balance, common practice;
:func:`injection_rate`, the aqueous part only). The **losses** to the vapour and a hydrocarbon
liquid, and the dose that allows for them, are in :mod:`letdown.fluid.aqueous.losses`.

Every output that judges freezing carries the caution: engineering estimates; designs must follow
local codes and be checked by qualified, licensed staff.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ...constants import ZERO_CELSIUS
from ...errors import ConvergenceError, InputError
from ..components import COMPONENTS
from ...numerics.report import SolveReport
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
#: 5-40 wt % methanol within 0.25 K and of 5-60 wt % MEG within 0.27 K; the DECHEMA NRTL at
#: 313-373 K (up to 40 wt % methanol) within 0.038 in ln gamma_w; the Hu-Lee-Sum a_w of MEG at
#: 253-293 K within 0.0096 in ln a_w.
ACTIVITY = {"methanol": (-0.91617, 3.34376, -10.2599, 19.69926),
            "ethylene-glycol": (-1.88235, 0.99822, -7.38137, 24.78495)}
#: Largest inhibitor mole fraction of the data behind :data:`ACTIVITY` (40 wt % methanol, 60 wt %
#: MEG: the freezing points) [-]. Beyond it the polynomial is not used (for methanol it turns
#: upward and a_w stops rising with the water fraction): gamma_w is held at its value there, and
#: :func:`vdwp_wt_pct` refuses a dose beyond it.
ACTIVITY_X_MAX = {"methanol": 0.27264, "ethylene-glycol": 0.30332}
#: Reference temperature of the temperature term [K].
ACTIVITY_T0 = ZERO_CELSIUS
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
