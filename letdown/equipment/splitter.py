"""Splitter (tee): one stream divided by fractions; every outlet has the inlet's state.

``fractions`` maps each outlet stream to a fraction of the inlet flow, one of them may be ``"rest"``
(one minus the others). Without a ``"rest"`` the fractions must sum to one.
"""
from __future__ import annotations

import numpy as np

from ..errors import InputError
from .common import array_param, case_text, field_name, finish

#: Fractions without a "rest" must sum to one within this [-] (rounding of decimal input).
SUM_TOLERANCE = 1e-9


def run(fluid, name: str, inlets, params):
    """Split a batch.

    Parameters
    ----------
    fluid : letdown.fluid.Fluid
        Not used (no flash: the outlets share the inlet's state); kept for the common signature.
    name : str
        Block name (for error messages).
    inlets : Mapping[str, StreamBatch]
        ``{"in": stream}``.
    params : Mapping
        ``fractions``: {outlet stream: fraction [-] (number or array over cases) or ``"rest"``}.

    Returns
    -------
    BlockOutcome
        One outlet per key of ``fractions``; details ``fraction_<outlet>`` [-].

    Raises
    ------
    InputError
        If a fraction is outside [0, 1], more than one is ``"rest"``, the given fractions exceed one,
        or (without ``"rest"``) they do not sum to one.
    """
    inlet = inlets["in"]
    n = inlet.n_cases
    spec = params.get("fractions") or {}
    if not spec:
        raise InputError("give the outlet fractions", field=field_name(name, "fractions"))
    rest = [k for k, v in spec.items() if isinstance(v, str)]
    bad_words = [k for k in rest if spec[k].strip().lower() != "rest"]
    if bad_words:
        raise InputError(f"fraction {spec[bad_words[0]]!r} is neither a number nor 'rest'",
                         field=field_name(name, f"to.{bad_words[0]}"))
    if len(rest) > 1:
        raise InputError(f"only one outlet may take the rest (given: {', '.join(rest)})",
                         field=field_name(name, f"to.{rest[1]}"))
    fractions = {}
    for key, value in spec.items():
        if key in rest:
            continue
        frac = array_param({key: value}, key, n, name)
        bad = ~((frac >= 0.0) & (frac <= 1.0))
        if np.any(bad):
            i = int(np.flatnonzero(bad)[0])
            raise InputError(f"fraction {frac[i]:.6g} is outside [0, 1]{case_text(i, n)}",
                             field=field_name(name, f"to.{key}"))
        fractions[key] = frac
    total = sum(fractions.values()) if fractions else np.zeros(n)
    if rest:
        over = total > 1.0 + SUM_TOLERANCE
        if np.any(over):
            i = int(np.flatnonzero(over)[0])
            raise InputError(f"fractions sum to {total[i]:.9g} > 1, nothing left for "
                             f"'{rest[0]}'{case_text(i, n)}", field=field_name(name, "to"))
    else:
        off = np.abs(total - 1.0) > SUM_TOLERANCE
        if np.any(off):
            i = int(np.flatnonzero(off)[0])
            raise InputError(f"fractions sum to {total[i]:.9g}, not 1 (or name one outlet 'rest')"
                             f"{case_text(i, n)}", field=field_name(name, "to"))
    outlets = {k: inlet.with_flow(inlet.flow * f) for k, f in fractions.items()}
    if rest:
        given = sum(o.flow for o in outlets.values()) if outlets else np.zeros(n)
        outlets[rest[0]] = inlet.with_flow(np.maximum(inlet.flow - given, 0.0))
    # keep the outlets in the order the file gave them
    outlets = {k: outlets[k] for k in spec}
    details = {f"fraction_{k}": outlets[k].flow / np.where(inlet.flow > 0, inlet.flow, 1.0)
               for k in spec}
    return finish(inlets, outlets, 0.0, dP=np.zeros(n), details=details)
