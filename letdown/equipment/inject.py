"""Inject: methanol or MEG hydrate inhibitor added to a stream.

The inhibitor is **not** a component of the hydrocarbon flash. It is carried beside the gas like the
water (:mod:`letdown.sheet.freezing`), so the gas passes this block unchanged: the outlet is the
inlet (same T, P, flow, composition), no heat, no pressure drop, and the mole and energy balances
of the gas close exactly.

Parameters: ``inhibitor`` (``methanol`` or ``MEG``) and exactly one of

* ``rate`` -- mass flow of pure inhibitor [kg/s];
* ``depression`` -- the hydrate temperature depression to reach [K]. The rate is then sized by
  Hammerschmidt (1934) (:func:`letdown.fluid.inhibitor.hammerschmidt_wt_pct`) for the water the
  inlet stream carries, all of it assumed to condense as free water downstream (the most water
  there can be: a conservative dose for the aqueous phase), neat inhibitor injected
  (:func:`letdown.fluid.inhibitor.injection_rate` with 100 wt %). Inhibitor already carried by
  the inlet is not credited.

What this block computes needs the water the stream carries, which is known only once the sheet
has carried the water through (:func:`letdown.sheet.freezing.inhibitor_ratios`): :func:`dose` is
called from there with the values this block's run reported, and the sheet adds its numbers
(``inhibitor_rate_kg_s``, ``inhibitor_wt_pct``, ``hydrate_depression_K``,
``hydrate_depression_vdwp_K``) to this block's details.

**Not modelled**: inhibitor lost to the vapour and to a hydrocarbon liquid (for methanol often as
large as the aqueous need -- common practice); the rate is the aqueous part only.
Engineering estimates; designs must follow local codes and be checked by qualified, licensed staff.
"""
from __future__ import annotations

import numpy as np

from ..errors import InputError
from ..fluid.inhibitor import (
    hammerschmidt_depression,
    hammerschmidt_wt_pct,
    inhibitor,
    injection_rate,
)
from .common import array_param, case_text, field_name, finish, one_of

SPECS = ("rate", "depression")
#: The detail under which :func:`run` reports each specification's values over the batch.
PARAM_DETAILS = {"rate": "inhibitor_rate_kg_s", "depression": "depression_target_K"}
#: Hammerschmidt's form is used up to about 20 K (module docstring of
#: :mod:`letdown.fluid.inhibitor`); a depression above this is refused as outside any rule [K]
#: (our limit: twice the stated range).
MAX_DEPRESSION = 40.0


def checked(name: str, params, n: int):
    """The inhibitor and its one specification, checked.

    Returns
    -------
    inh : letdown.fluid.inhibitor.Inhibitor
    spec : str
        ``rate`` or ``depression``.
    value : ndarray (n,)
        The rate [kg/s] or depression [K] over the cases.

    Raises
    ------
    InputError
        Unknown inhibitor, not exactly one of rate and depression, a negative or non-finite value,
        or a depression above :data:`MAX_DEPRESSION`.
    """
    try:
        inh = inhibitor(params.get("inhibitor", "methanol"))
    except InputError as exc:
        raise InputError(exc.message, field=field_name(name, "inhibitor")) from None
    spec = one_of(params, SPECS, name)
    value = array_param(params, spec, n, name)
    bad = ~(np.isfinite(value) & (value >= 0.0))
    if np.any(bad):
        i = int(np.flatnonzero(bad)[0])
        raise InputError(f"{spec} must be zero or positive, got {value[i]:.6g}{case_text(i, n)}",
                         field=field_name(name, spec))
    if spec == "depression" and np.any(value > MAX_DEPRESSION):
        i = int(np.flatnonzero(value > MAX_DEPRESSION)[0])
        raise InputError(f"a hydrate depression of {value[i]:.6g} K is outside the inhibitor "
                         f"rules (at most {MAX_DEPRESSION:g} K here; Hammerschmidt holds to "
                         f"about 20 K){case_text(i, n)}", field=field_name(name, spec))
    return inh, spec, value


def dose(name: str, params, water_kg_s) -> dict:
    """The inhibitor this block injects, for the water the inlet carries.

    Parameters
    ----------
    name : str
        Block name (for error messages).
    params : Mapping
        ``inhibitor`` and ``rate`` [kg/s] or ``depression`` [K].
    water_kg_s : ndarray (n,)
        Water carried by the inlet, all taken as free water [kg/s].

    Returns
    -------
    dict
        ``inhibitor`` (canonical name), ``rate_kg_s`` (n,) [kg/s], ``wt_pct`` (n,) inhibitor of
        this block in the water-inhibitor phase [wt %] (NaN without water), ``depression_K`` (n,)
        Hammerschmidt depression at that wt % [K] (NaN without water).
    """
    water = np.asarray(water_kg_s, dtype=float)
    n = water.shape[0]
    inh, spec, value = checked(name, params, n)
    if spec == "depression":
        W = np.asarray(hammerschmidt_wt_pct(value, inh.name), dtype=float).reshape(n)
        rate = np.asarray(injection_rate(water, W, 100.0), dtype=float).reshape(n)
    else:
        rate = value
    total = water + rate
    wet = water > 0.0
    W = np.where(wet, 100.0 * rate / np.where(total > 0.0, total, 1.0), np.nan)
    dT = np.full(n, np.nan)
    if wet.any():
        dT[wet] = hammerschmidt_depression(W[wet], inh.name)
    return {"inhibitor": inh.name, "rate_kg_s": rate, "wt_pct": W, "depression_K": dT}


def run(fluid, name: str, inlets, params):
    """Pass a batch through an injection point (the gas is unchanged; see the module docstring).

    Parameters
    ----------
    fluid : letdown.fluid.Fluid
        Not used (no flash); kept for the common signature.
    name : str
        Block name (for error messages).
    inlets : Mapping[str, StreamBatch]
        ``{"in": stream}``.
    params : Mapping
        ``inhibitor`` (``methanol`` or ``MEG``) and one of ``rate`` [kg/s] or ``depression`` [K].

    Returns
    -------
    BlockOutcome
        ``outlets={"out": inlet}``, ``dP`` 0; details ``inhibitor_rate_kg_s`` [kg/s] (rate given)
        or ``depression_target_K`` [K] (depression given), the values of this batch (cases and
        goals included), from which the sheet computes the rest (module docstring).

    Raises
    ------
    InputError
        See :func:`checked`.
    """
    inlet = inlets["in"]
    n = inlet.n_cases
    _, spec, value = checked(name, params, n)
    details = {PARAM_DETAILS[spec]: value}
    return finish(inlets, {"out": inlet}, 0.0, dP=np.zeros(n), details=details)
