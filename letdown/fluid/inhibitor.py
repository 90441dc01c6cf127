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
  :mod:`letdown.fluid.hydrate` with a_w = x_w, the ideal-solution relation ln a_w = ln x_w that
  underlies Nielsen-Bucklin. The real activity coefficient of water in methanol and MEG solutions
  is near 1 on the water-rich side (common practice), so this is a first model, not a fit.

Rates: the aqueous phase only. For W wt % in the aqueous phase and a lean inhibitor solution of
W_lean wt %, the lean injection rate per free-water rate is W / (W_lean - W) (mass balance,
common practice). **Omitted**: inhibitor lost to the vapour and to a hydrocarbon liquid (for
methanol often comparable to or larger than the aqueous requirement at pipeline conditions --
common practice); the rate returned is the aqueous part only and must be increased for those
losses.

Every output that judges freezing carries the caution: engineering estimates; designs must follow
local codes and be checked by qualified, licensed staff.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import ConvergenceError, InputError
from .components import COMPONENTS
from .flash import SolveReport

CAUTION = ("Engineering estimates; designs must follow local codes and be checked by qualified, "
           "licensed staff.")

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
def inhibited_hydrate_T(fluid, P, W, name="methanol"):
    """Hydrate formation temperature with W wt % inhibitor in the free water [K]: vdW-P with
    a_w = x_w (module docstring)."""
    x = water_mole_fraction(W, name)
    return fluid.hydrate_T(P, water_activity=x)


def vdwp_wt_pct(fluid, P, T_target, name="methanol"):
    """Inhibitor needed in the aqueous phase so that the vdW-P hydrate temperature at P falls to
    T_target [wt %] (0 where the uninhibited hydrate temperature is already at or below it).

    Parameters
    ----------
    fluid : Fluid
    P : float or ndarray (n,)
        [Pa].
    T_target : float or ndarray (n,)
        Highest acceptable hydrate formation temperature [K].
    name : str
        ``methanol`` or ``MEG``.

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
    T_free = fluid.hydrate_T(P)
    need = T_free > Tt
    lna = np.zeros(n)
    if need.any():
        i = np.nonzero(need)[0]
        lo = np.full(i.size, LN_AW_MIN)    # ln a_w: hydrate T below target here ...
        hi = np.zeros(i.size)             # ... and above it here
        f_lo = fluid.hydrate_T(P[i], water_activity=np.exp(lo)) - Tt[i]
        # NaN: no hydrate above the search's lower end, i.e. below any accepted target
        f_lo = np.where(np.isnan(f_lo), T_SCAN[0] - Tt[i] - 1.0, f_lo)
        if np.any(f_lo > 0.0):
            raise InputError("the target hydrate temperature needs a water activity below 0.2: "
                             "outside what the inhibitor rules cover")
        f_hi = T_free[i] - Tt[i]
        x = np.zeros(i.size)
        conv = np.zeros(i.size, dtype=bool)
        its = np.zeros(i.size, dtype=int)
        res = np.full(i.size, np.inf)
        kept = np.zeros(i.size, dtype=int)
        for _ in range(MAX_ITER):
            a = ~conv
            if not a.any():
                break
            c = (lo * f_hi - hi * f_lo) / (f_hi - f_lo)
            c = np.where(np.isfinite(c) & (c > lo) & (c < hi), c, 0.5 * (lo + hi))
            fc = np.zeros(i.size)
            fc[a] = fluid.hydrate_T(P[i][a], water_activity=np.exp(c[a])) - Tt[i][a]
            up = fc > 0.0
            # Illinois on a bracket [lo, hi] with f(lo) < 0 < f(hi)
            new_flo = np.where(up, np.where(kept == 1, 0.5 * f_lo, f_lo), fc)
            new_fhi = np.where(up, fc, np.where(kept == -1, 0.5 * f_hi, f_hi))
            lo = np.where(a & ~up, c, lo)
            hi = np.where(a & up, c, hi)
            f_lo = np.where(a, new_flo, f_lo)
            f_hi = np.where(a, new_fhi, f_hi)
            kept = np.where(a, np.where(up, 1, -1), kept)
            its += a
            res = np.where(a, np.abs(fc), res)
            x = np.where(a, c, x)
            conv |= a & (np.abs(fc) < T_TARGET_TOL)
        if not conv.all():
            raise ConvergenceError("inhibitor concentration (vdW-P) did not converge",
                                   result=SolveReport(conv, its, res, "ln a_w, Illinois"))
        lna[i] = x
    W = wt_pct_from_water_mole_fraction(np.exp(lna), name)
    W = np.atleast_1d(W)
    return float(W[0]) if np.ndim(T_target) == 0 and np.ndim(P_in) == 0 else W


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
        As for :func:`letdown.fluid.water.water_content`.
    """
    from .water import M_WATER, water_content
    y_sat = water_content(fluid, T, P, method=method)
    y_in = np.asarray(y_water_in, dtype=float)
    n = np.asarray(gas_rate, dtype=float)
    # moles condensed per mole of wet feed: (y_in - y_sat) / (1 - y_sat)
    cond = np.maximum(y_in - y_sat, 0.0) / (1.0 - y_sat)
    return _out(n * cond * M_WATER)
