"""Small quantities derived from a stream's own numbers, with no thermodynamics and no units: a
leaf module that the sheet (the JSON result), the studies (sweep outputs) and the report (its
tables, which may not import the sheet layer) all import, so each figure has one formula.
"""
from __future__ import annotations

import numpy as np


def liquid_volume_flow(flow, mass_flow, vapour_fraction, density):
    """Volume flow of an all-liquid stream at its own temperature and pressure [m3/s] (an NGL or
    condensate line: mass flow over density), NaN for a stream with vapour or no flow.

    Takes numbers or arrays of one shape (the cases); a number gives a float.

    >>> liquid_volume_flow(1.0, 0.5, 0.0, 500.0)
    0.001
    """
    flow, mass_flow, vf, rho = (np.asarray(v, dtype=float) for v in
                                (flow, mass_flow, vapour_fraction, density))
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        out = np.where((vf == 0.0) & (flow > 0.0) & (rho > 0.0), mass_flow / rho, np.nan)
    return float(out) if out.ndim == 0 else out
