"""Water content of natural gas saturated with liquid water, unit conversions and water dew point.

Two models:

* ``bukacek`` -- Bukacek (1955), Institute of Gas Technology Research Bulletin 8, for sweet gas
  (form as in REFERENCE_DATA.md section 3, status V in several transcriptions):

      W [lb/MMscf] = 47484 p_v / P + B,   log10 B = -3083.87 / (T[degF] + 459.6) + 6.69449,

  p_v the vapour pressure of water and P the pressure, both in psia. It ignores the gas composition
  (no CO2/H2S correction) and is an ideal-solution form with an empirical non-ideality term B.
* ``eos`` -- fugacity balance of water between the gas and pure liquid water:

      y_w phi_w(T, P, y) P = p_v phi_sat exp(v_L (P - p_v) / (R T)),

  phi_w from the fluid's cubic equation of state (with its water interaction parameters), p_v from
  :func:`water_vapour_pressure`, phi_sat the cubic's fugacity coefficient of saturated water
  vapour, v_L = 18.03e-6 m3/mol (liquid water near 15 degC, 999.1 kg/m3, common practice), held
  constant (the Poynting factor). Gas dissolved in the water is ignored (x_w = 1: it lowers the
  water content by well under 1 % for sweet gas, common practice).

Below the triple point both give the water content over **supercooled (metastable) liquid** water,
as water-content charts do; over ice the gas holds less water. A water dew point below 0 degC is
therefore the temperature at which liquid (not ice) would first appear.

Conversions use ideal-gas standard volumes: ``Sm3`` at 15 degC and 101.325 kPa (ISO 13443) and
``scf`` at 60 degF and 14.696 psia (as in DESIGN.md); the water is per standard volume of the whole
(wet) gas.

Water vapour pressure: Wagner & Pruss, J. Phys. Chem. Ref. Data 31 (2002) 387, eq. (2.5), the
auxiliary equation of IAPWS-95 (coefficients from memory, checked against CoolProp's IAPWS-95 in
tests/fluid/test_water.py to 1e-5 relative, status C).
"""
from __future__ import annotations

import numpy as np

from ...constants import MOL_PER_SCF, MOL_PER_SM3, POUND, PSI  # noqa: F401  (PSI re-exported)
from ...errors import ConvergenceError, InputError
from ..components import COMPONENTS, R
from ...numerics.report import SolveReport

M_WATER = COMPONENTS["water"].M   # [kg/mol]
#: MOL_PER_SM3 and MOL_PER_SCF (letdown.constants): moles of ideal gas in one standard cubic metre
#: (15 degC, 101.325 kPa, ISO 13443) and in one standard cubic foot (60 degF, 14.696 psia).
LB = POUND                    # [kg]

#: Wagner & Pruss (2002) eq. 2.5: critical point and coefficients a1..a6
TC_WATER = 647.096            # [K]
PC_WATER = 22.064e6           # [Pa]
_WP_A = (-7.85951783, 1.84408259, -11.7866497, 22.6807411, -15.9618719, 1.80122502)
_WP_E = (1.0, 1.5, 3.0, 3.5, 4.0, 7.5)

#: Molar volume of liquid water for the Poynting factor [m3/mol] (999.1 kg/m3, common practice)
V_LIQUID = M_WATER / 999.1

#: Successive substitution on y_w (EOS route): the vapour fugacity coefficient of water depends
#: weakly on y_w, so a few steps reach 1e-12; 50 is far beyond need.
EOS_TOL = 1e-12
EOS_MAX_ITER = 50
#: Dew point search bracket [K] and tolerance [K].
DEW_T_RANGE = (200.0, 450.0)
DEW_T_TOL = 1e-7


def water_vapour_pressure(T):
    """Vapour pressure of (liquid, also supercooled) water, Wagner & Pruss (2002) eq. 2.5 [Pa].

    Parameters
    ----------
    T : float or ndarray
        Temperature, below 647.096 K [K].

    Examples
    --------
    >>> round(float(water_vapour_pressure(373.124)) / 101325.0, 4)   # normal boiling point, IAPWS-95
    1.0
    """
    T = np.asarray(T, dtype=float)
    tau = 1.0 - T / TC_WATER
    s = sum(a * tau ** e for a, e in zip(_WP_A, _WP_E))
    return PC_WATER * np.exp(TC_WATER / T * s)


# ------------------------------------------------------------------ conversions
def lb_per_mmscf_to_mole_fraction(W):
    """Water content in lb per million standard cubic feet (60 degF, 14.696 psia) to mole fraction."""
    return np.asarray(W, dtype=float) * 1e-6 * LB / M_WATER / MOL_PER_SCF


def mole_fraction_to_lb_per_mmscf(y):
    """Mole fraction of water to lb per million standard cubic feet (60 degF, 14.696 psia)."""
    return np.asarray(y, dtype=float) * MOL_PER_SCF * M_WATER / LB * 1e6


def mg_per_sm3_to_mole_fraction(c):
    """Water content in mg per standard cubic metre (15 degC, 101.325 kPa) to mole fraction."""
    return np.asarray(c, dtype=float) * 1e-6 / M_WATER / MOL_PER_SM3


def mole_fraction_to_mg_per_sm3(y):
    """Mole fraction of water to mg per standard cubic metre (15 degC, 101.325 kPa)."""
    return np.asarray(y, dtype=float) * MOL_PER_SM3 * M_WATER * 1e6


# ------------------------------------------------------------------ models
def bukacek_lb_per_mmscf(T, P):
    """Bukacek (1955) water content of sweet gas over liquid water [lb/MMscf].

    Parameters
    ----------
    T : float or ndarray
        Temperature [K].
    P : float or ndarray
        Pressure [Pa].

    Examples
    --------
    >>> round(float(bukacek_lb_per_mmscf((100 - 32) / 1.8 + 273.15, 1000 * PSI)), 1)
    60.4
    """
    T = np.asarray(T, dtype=float)
    P = np.asarray(P, dtype=float)
    t_R = (T - 273.15) * 1.8 + 32.0 + 459.6
    B = 10.0 ** (-3083.87 / t_R + 6.69449)
    return 47484.0 * water_vapour_pressure(T) / P + B


def water_content_bukacek(T, P):
    """Bukacek (1955) water content of saturated sweet gas as a mole fraction [-]."""
    return lb_per_mmscf_to_mole_fraction(bukacek_lb_per_mmscf(T, P))


def _fluid_with_water(fluid):
    if "water" in fluid.components:
        return fluid
    comp = fluid.composition()
    comp["water"] = 0.0
    spec = fluid._kij_spec
    # The same class as the fluid given (a Fluid), built from its own constructor: no import of
    # the core's public class from this module, which that class itself imports.
    return type(fluid)(comp, model=fluid.model if fluid.model != "gerg-2008" else "peng-robinson",
                 kij=spec, volume_shift=fluid.volume_shift)


def water_content_eos(fluid, T, P, zs=None, phase="vapour"):
    """Water content of a gas (or of a hydrocarbon liquid) saturated with pure liquid water by the
    fugacity balance [-].

    Parameters
    ----------
    fluid : Fluid
        The gas (water is added as a component if absent; GERG-2008 fluids use Peng-Robinson).
    T, P : float or ndarray (n,)
        [K], [Pa].
    zs : ndarray, optional
        Composition of the gas (component order of ``fluid``); any water in it is replaced.
    phase : str
        ``vapour`` (a gas, the default) or ``liquid`` (a hydrocarbon liquid: the same balance on
        the cubic's liquid root, :func:`letdown.fluid.aqueous.water.water_in_liquid`).

    Returns
    -------
    ndarray (n,)
        Mole fraction of water in the saturated phase [-].

    Raises
    ------
    ConvergenceError
        The substitution did not settle (the report is attached).
    """
    f = _fluid_with_water(fluid)
    if f.model == "gerg-2008":
        f = f.with_model("peng-robinson")
    names = list(f.components)
    iw = names.index("water")
    T = np.atleast_1d(np.asarray(T, dtype=float))
    P = np.atleast_1d(np.asarray(P, dtype=float))
    if zs is None:
        Z = np.array([fluid.composition().get(nm, 0.0) for nm in names])
    else:
        zs = np.asarray(zs, dtype=float)
        Z = np.zeros(zs.shape[:-1] + (len(names),))
        for j, nm in enumerate(fluid.components):
            Z[..., names.index(nm)] = zs[..., j]
    n = max(T.shape[0], P.shape[0], Z.shape[0] if Z.ndim == 2 else 1)
    T = np.broadcast_to(T, (n,)).copy()
    P = np.broadcast_to(P, (n,)).copy()
    dry = np.broadcast_to(Z, (n, len(names))).copy()
    dry[:, iw] = 0.0
    dry /= dry.sum(axis=1, keepdims=True)
    eos = f.engine.eos
    pv = water_vapour_pressure(T)
    pure = np.zeros((n, len(names)))
    pure[:, iw] = 1.0
    lnphi_sat, _ = eos.lnphi(T, pv, pure, "vapour")
    f_liquid = pv * np.exp(lnphi_sat[:, iw]) * np.exp(V_LIQUID * (P - pv) / (R * T))
    # start: the ideal gas for a vapour, no water for a liquid (phi_w there is far from 1)
    y = f_liquid / P if phase == "vapour" else np.zeros(n)
    conv = np.zeros(n, dtype=bool)
    it = np.zeros(n, dtype=int)
    step = np.full(n, np.inf)
    for _ in range(EOS_MAX_ITER):
        ys = dry * (1.0 - y)[:, None]
        ys[:, iw] = y
        lnphi, _ = eos.lnphi(T, P, ys, phase)
        y_new = f_liquid / (np.exp(lnphi[:, iw]) * P)
        step = np.abs(y_new - y) / y_new
        it += ~conv
        y = np.where(conv, y, y_new)
        conv |= step < EOS_TOL
        if conv.all():
            break
    if not conv.all():
        what = ("water content (EOS route)" if phase == "vapour"
                else "water dissolved in the hydrocarbon liquid")
        raise ConvergenceError(f"{what} did not converge",
                               result=SolveReport(conv, it, step, f"{what}, substitution"))
    return y


def water_content(fluid, T, P, method="bukacek", zs=None):
    """Water content of the gas saturated with liquid water, mole fraction [-].

    Parameters
    ----------
    fluid : Fluid or None
        The gas (needed for ``eos``; ignored by ``bukacek``).
    T, P : float or ndarray
        [K], [Pa].
    method : str
        ``bukacek`` or ``eos`` (module docstring).

    Raises
    ------
    InputError
        Unknown method; non-positive T or P; T at or above water's critical temperature.
    """
    key = str(method).strip().lower()
    Ta = np.asarray(T, dtype=float)
    Pa = np.asarray(P, dtype=float)
    if np.any(~np.isfinite(Ta)) or np.any(Ta <= 0.0) or np.any(Ta >= TC_WATER):
        raise InputError("water content needs temperatures between 0 K and 647 K")
    if np.any(~np.isfinite(Pa)) or np.any(Pa <= 0.0):
        raise InputError("water content needs positive pressures")
    if key == "bukacek":
        return water_content_bukacek(Ta, Pa)
    if key == "eos":
        if fluid is None:
            raise InputError("the eos water content needs the gas (a Fluid)")
        out = water_content_eos(fluid, Ta, Pa, zs=zs)
        return float(out[0]) if np.ndim(T) == 0 and np.ndim(P) == 0 else out
    raise InputError(f"unknown water-content method '{method}' (known: bukacek, eos)")


def water_dew_point(y_water, P, fluid=None, method="bukacek", zs=None):
    """Water dew point: the temperature at which the gas with water mole fraction ``y_water`` is
    saturated at pressure P [K] (over liquid water; supercooled below 0 degC).

    Parameters
    ----------
    y_water : float or ndarray
        Water mole fraction [-] (see the conversion helpers for mg/Sm3 and lb/MMscf).
    P : float or ndarray
        [Pa].
    fluid : Fluid, optional
        Needed for ``method="eos"``.
    method : str
        ``bukacek`` or ``eos``.
    zs : ndarray (nc,) or (n, nc), optional
        Composition of the gas for ``eos`` (component order of ``fluid``; default the fluid's).

    Raises
    ------
    InputError
        Non-positive water content, or one outside the range the bracket 200-450 K covers.
    """
    y = np.atleast_1d(np.asarray(y_water, dtype=float))
    Pa = np.atleast_1d(np.asarray(P, dtype=float))
    n = max(y.shape[0], Pa.shape[0])
    y = np.broadcast_to(y, (n,)).copy()
    Pa = np.broadcast_to(Pa, (n,)).copy()
    if np.any(~np.isfinite(y)) or np.any(y <= 0.0):
        raise InputError("water dew point needs a positive water content")

    Z = None if zs is None else np.broadcast_to(np.asarray(zs, float), (n, np.shape(zs)[-1]))

    def W(T):
        return water_content(fluid, T, Pa, method=method, zs=Z)

    lo = np.full(n, DEW_T_RANGE[0])
    hi = np.full(n, DEW_T_RANGE[1])
    wlo, whi = W(lo), W(hi)
    bad = (y < wlo) | (y > whi)
    if bad.any():
        raise InputError(f"water content {y[bad][0]:.4g} (mole fraction) is outside what the gas "
                         f"holds between {DEW_T_RANGE[0]:.0f} K and {DEW_T_RANGE[1]:.0f} K at "
                         f"{Pa[bad][0]:.6g} Pa")
    # bisection on ln W (monotonic in T); ~32 steps take 250 K to 1e-7 K
    while np.any(hi - lo > DEW_T_TOL):
        mid = 0.5 * (lo + hi)
        up = W(mid) > y
        hi = np.where(up, mid, hi)
        lo = np.where(up, lo, mid)
    T = 0.5 * (lo + hi)
    return float(T[0]) if np.ndim(y_water) == 0 and np.ndim(P) == 0 else T


def water_in_liquid(fluid, T, P, xs):
    """Water dissolved in a hydrocarbon liquid saturated with pure liquid water, mole fraction [-].

    The liquid-phase twin of the EOS water-content route of :mod:`letdown.fluid.aqueous.water`: the
    fugacity of water in the hydrocarbon liquid equals that of pure liquid water,

        x_w phi_w^L(T, P, x) P = p_v phi_sat exp(v_L (P - p_v) / (R T)),

    phi_w^L from the fluid's cubic equation (liquid root, with its water interaction parameters),
    p_v, phi_sat and v_L as in :func:`letdown.fluid.aqueous.water.water_content_eos`, which solves it
    (``phase="liquid"``: successive substitution on x_w, its tolerances). Gas dissolved in the
    water is ignored (x_w of the aqueous phase = 1). With the constant water-hydrocarbon kij of
    data/kij_pr.csv this is an order-of-magnitude figure (module docstring).

    Parameters
    ----------
    fluid : Fluid
        The gas (water is added as a component if absent; GERG-2008 fluids use Peng-Robinson).
    T, P : ndarray (n,)
        [K], [Pa].
    xs : ndarray (n, nc)
        Composition of the hydrocarbon liquid in the component order of ``fluid`` [-]; any water
        in it is replaced.

    Returns
    -------
    ndarray (n,)
        Mole fraction of water in the water-saturated liquid [-].

    Raises
    ------
    ConvergenceError
        The substitution did not settle (the report is attached).
    """
    return water_content_eos(fluid, T, P, zs=xs, phase="liquid")
