"""Hydrate formation temperature of a sweet natural gas from its gravity: two closed-form screening
correlations, a quick second opinion beside the van der Waals-Platteeuw model of
:mod:`letdown.fluid.aqueous.hydrate` (split from it, issue 12: module size; they share no terms with
it, and :mod:`letdown.fluid.aqueous.hydrate` re-exports :func:`hydrate_T_correlation` and :data:`PSI`).

Towler & Mokhatab, Hydrocarbon Processing 84(4) (2005) 61; Motiee, Hydrocarbon Processing 70(7)
(1991) 98 (forms and check values in REFERENCE_DATA.md section 2, status V). Both are screening
methods for sweet natural gas; Towler-Mokhatab drifts above ~10 MPa.
"""
from __future__ import annotations

import numpy as np

from ...constants import PSI
from ...errors import InputError



def _degF_to_K(t):
    return (np.asarray(t, dtype=float) - 32.0) / 1.8 + 273.15


def hydrate_T_correlation(P, gas_gravity, method="towler-mokhatab"):
    """Hydrate formation temperature of a sweet natural gas from its gravity (screening only).

    ``towler-mokhatab`` (Towler & Mokhatab, Hydrocarbon Processing 84(4), 2005):
    T[degF] = 13.47 ln P + 34.27 ln SG - 1.675 ln P ln SG - 20.35, P in psia.
    ``motiee`` (Motiee, Hydrocarbon Processing 70, 1991): T[degF] = -238.24469 + 78.99667 log P
    - 5.352544 (log P)^2 + 349.473877 SG - 150.854675 SG^2 - 27.604065 SG log P, log base 10.

    Parameters
    ----------
    P : float or ndarray
        Pressure [Pa].
    gas_gravity : float or ndarray
        Gas specific gravity relative to air [-].
    method : str
        ``towler-mokhatab`` or ``motiee``.

    Returns
    -------
    float or ndarray
        Formation temperature [K].

    Raises
    ------
    InputError
        Unknown method, non-positive pressure or gravity.

    Examples
    --------
    >>> round(float(hydrate_T_correlation(1000 * PSI, 0.69)), 4)   # REFERENCE_DATA.md check value
    291.0803
    """
    key = str(method).strip().lower().replace("_", "-").replace(" ", "-")
    P = np.asarray(P, dtype=float)
    SG = np.asarray(gas_gravity, dtype=float)
    if np.any(P <= 0.0) or np.any(SG <= 0.0):
        raise InputError("hydrate correlation needs positive pressure and gas gravity")
    p_psia = P / PSI
    if key in ("towler-mokhatab", "towler"):
        lp, ls = np.log(p_psia), np.log(SG)
        t_F = 13.47 * lp + 34.27 * ls - 1.675 * lp * ls - 20.35
    elif key == "motiee":
        lp = np.log10(p_psia)
        t_F = (-238.24469 + 78.99667 * lp - 5.352544 * lp * lp + 349.473877 * SG
               - 150.854675 * SG * SG - 27.604065 * SG * lp)
    else:
        raise InputError(f"unknown hydrate correlation '{method}' (known: towler-mokhatab, motiee)")
    T = _degF_to_K(t_F)
    return float(T) if np.ndim(T) == 0 else T
