"""The aqueous phase beside the gas: its freezing point and its density.

**Freezing point**: where free water (with its inhibitor) turns to ice.

For an aqueous solution in equilibrium with pure ice, the ideal-solution freezing-point equation
(the cryoscopic relation of any physical-chemistry text, e.g. Atkins, *Physical Chemistry*, the
chapter on colligative properties)

    ln a_w = -(dH_fus / R) (1/T_f - 1/T_m)    so    T_f = 1 / (1/T_m - R ln a_w / dH_fus)

with the water activity ``a_w`` of the aqueous phase (here x_w, the ideal solution that the
inhibitor rules of :mod:`letdown.fluid.aqueous.inhibitor` use), ``T_m`` = 273.15 K the ice point of pure
water at about 1 atm, and ``dH_fus`` = 6.01 kJ/mol the enthalpy of fusion of ice at 0 degC (CRC
Handbook of Chemistry and Physics; from memory). dH_fus is taken constant (its fall with
temperature, about 38 J/mol per K, is neglected); pressure lowers the ice point by only
0.0073 K/bar (common practice: within any margin).

Against measured freezing points of methanol-water and MEG-water (Melinder 2010, as tabulated in
CoolProp's incompressible-solution data; tests/fluid/test_aqueous.py) the ideal solution puts the freezing
point **warmer** than measured -- by 0.4 K at 10 wt % methanol, 2.1 K at 20 wt %, 5.1 K at
30 wt %; 0.1 K at 10 wt % MEG, 3.0 K at 30 wt % -- the solutions are less ideal than x_w says, and the error is on the safe side for an ice
check. In the dilute limit the equation gives the cryoscopic constant of water,
R T_m^2 M_w / dH_fus = 1.859 K kg/mol (1.86 in the textbooks).

**Density** of water with methanol or MEG (:func:`density`): pure water by Kell (1975), J. Chem.
Eng. Data 20, 97 (his eq. for 0-150 degC at 1 atm, extended a few kelvin into supercooled water),
the inhibitors as pure liquids at 20 degC (methanol 791.4, MEG 1113.5 kg/m3; CRC Handbook, from
memory), volumes added (ideal mixing). Methanol-water shrinks on mixing, so the ideal volume
puts the density low against Melinder (2010) (tests/fluid/test_aqueous.py): by 2.1 % at 20 wt %
methanol and 3.8 % at 40 wt %, by 1.3 % at 40 wt % MEG. Pressure (0.45 % per 100 bar) is
neglected. An estimate for the report, not a design figure.

>>> round(float(freezing_point(1.0)), 2)
273.15
>>> round(float(freezing_point(0.9)) - 273.15, 2)
-10.46
"""
from __future__ import annotations

import numpy as np

from ...constants import R, ZERO_CELSIUS

#: Densities of the pure inhibitors as liquids at 20 degC [kg/m3] (CRC Handbook; from memory).
INHIBITOR_DENSITY = {"methanol": 791.4, "ethylene-glycol": 1113.5}
#: Ice point of pure water at about 1 atm [K].
T_MELT = ZERO_CELSIUS
#: Enthalpy of fusion of ice at 0 degC [J/mol] (CRC Handbook; from memory).
DH_FUSION = 6010.0


def freezing_point(water_activity):
    """Temperature at which ice forms from an aqueous phase of water activity ``a_w`` [K].

    Parameters
    ----------
    water_activity : float or ndarray
        a_w of the aqueous phase, 0 < a_w <= 1 [-] (1: pure water).

    Returns
    -------
    ndarray
        T_f = 1 / (1/T_m - R ln a_w / dH_fus) [K]; NaN where a_w is not in (0, 1].
    """
    a = np.asarray(water_activity, dtype=float)
    ok = (a > 0.0) & (a <= 1.0)
    inv = 1.0 / T_MELT - R * np.log(np.where(ok, a, 1.0)) / DH_FUSION
    return np.where(ok, 1.0 / inv, np.nan)


def water_density(T):
    """Density of liquid water at about 1 atm, Kell (1975) [kg/m3].

    Parameters
    ----------
    T : float or ndarray
        Temperature [K] (Kell: 0-150 degC; used a few kelvin below 0 degC for supercooled water).

    >>> round(float(water_density(283.15)), 2)
    999.7
    """
    t = np.asarray(T, dtype=float) - 273.15
    return ((999.83952 + 16.945176 * t - 7.9870401e-3 * t**2 - 46.170461e-6 * t**3
             + 105.56302e-9 * t**4 - 280.54253e-12 * t**5) / (1.0 + 16.879850e-3 * t))


def density(T, water_kg, inhibitor_kg):
    """Density of an aqueous phase of water and inhibitors, volumes added [kg/m3].

    Parameters
    ----------
    T : ndarray (n,)
        Temperature [K].
    water_kg : ndarray (n,)
        Water (any mass unit, or a mass flow).
    inhibitor_kg : Mapping[str, ndarray (n,)]
        Inhibitor name (``methanol``, ``ethylene-glycol``) -> its mass, in the same unit.

    Returns
    -------
    ndarray (n,)
        NaN where there is nothing.
    """
    w = np.asarray(water_kg, dtype=float)
    mass = w.copy()
    volume = w / water_density(T)
    for name, m in inhibitor_kg.items():
        m = np.asarray(m, dtype=float)
        mass = mass + m
        volume = volume + m / INHIBITOR_DENSITY[name]
    return np.where(volume > 0.0, mass / np.where(volume > 0.0, volume, 1.0), np.nan)
