"""Hydrocarbon dew points of the product gases of a solved flowsheet (on request).

For each product stream (made by a block and taken by none) that leaves as a single vapour: its
hydrocarbon dew point at its own pressure (``Fluid.dew_temperature``, the highest temperature with a
liquid) and its cricondentherm (``Fluid.envelope``, the highest dew temperature at any pressure).
A few tenths of a second per stream, so it is asked for (``letdown solve --dew-points``).

Where there is no dew point, ``hc_dew_T_K`` is None and ``hc_dew_reason`` says why in words:
``"above the cricondenbar"`` (with ``cricondenbar_Pa`` beside it), ``"no two-phase state on this
isobar"`` (the envelope could not be traced, so no cricondenbar to compare with), or the refusal
of the model or the solver (``"not computed: ..."``). The report puts them in display units.
"""
from __future__ import annotations

import dataclasses

import numpy as np

from ..errors import ConvergenceError, LetdownError, ModelError
from ..fluid import Fluid
from ..fluid.models import DEW_POINT_BIAS


def product_gases(result, fs) -> list:
    """Names of the product streams of ``result`` that are a single vapour."""
    consumed = {s for b in fs.blocks.values() for s in b.inlets.values()}
    made = {s for b in fs.blocks.values() for s in b.outlets.values()}
    return [n for n, s in result.streams.items()
            if n in made and n not in consumed and s.vapour_fraction >= 1.0 and s.flow > 0]


def with_dew_points(result, fs):
    """``result`` with ``hc_dew_T_K``, ``cricondentherm_K``, ``cricondenbar_Pa`` and
    ``hc_dew_reason`` on each product gas (a new result; None where a model cannot give them, with
    the reason for a missing dew point in ``hc_dew_reason``), and a
    ``dew_point_bias`` check stating the cubic model's known bias (:data:`DEW_POINT_BIAS`)."""
    model = result.model if result.model != "gerg-2008" else "peng-robinson"
    streams = dict(result.streams)
    noted = False
    for name in product_gases(result, fs):
        s = streams[name]
        gas = Fluid(dict(s.zs), model=model, kij=fs.gas.kij, normalise=True)
        extra = {"hc_dew_T_K": None, "cricondentherm_K": None, "cricondenbar_Pa": None,
                 "hc_dew_reason": None, "dew_point_model": model}
        try:
            dew = gas.dew_temperature(P=s.P)
            extra["hc_dew_T_K"] = float(dew) if np.isfinite(dew) else None
        except (ConvergenceError, ModelError, LetdownError) as exc:
            extra["hc_dew_reason"] = f"not computed: {exc}"
        try:
            env = gas.envelope()
            if env.cricondentherm is not None:
                extra["cricondentherm_K"] = float(env.cricondentherm.T)
            if env.cricondenbar is not None:
                extra["cricondenbar_Pa"] = float(env.cricondenbar.P)
        except (ConvergenceError, ModelError, LetdownError):
            pass
        if extra["hc_dew_T_K"] is None and extra["hc_dew_reason"] is None:
            above = extra["cricondenbar_Pa"] is not None and s.P > extra["cricondenbar_Pa"]
            extra["hc_dew_reason"] = ("above the cricondenbar" if above
                                      else "no two-phase state on this isobar")
        streams[name] = dataclasses.replace(s, dew=extra)
        if extra["hc_dew_T_K"] is not None or extra["cricondentherm_K"] is not None:
            noted = True
    warnings = list(result.warnings)
    if noted and model in DEW_POINT_BIAS:
        warnings.append({"where": "dew points", "what": DEW_POINT_BIAS[model],
                         "kind": "dew_point_bias", "severity": "check", "numbers": {}})
    return dataclasses.replace(result, streams=streams, warnings=warnings)
