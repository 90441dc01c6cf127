"""The doses of the ``inject`` blocks sized by ``depression``: the protected point of each block (the
coldest gas-carrying stream downstream of it, a search over the graph that only the sheet can
make: :func:`protected_point`), the dose there by the block's own arithmetic
(:func:`letdown.equipment.inject.dose`), and the checks that refuse a dose that failed or is
absurd (:func:`_check_dose`, :data:`MAX_DOSE_TO_GAS`). The solver finds the doses from a solve
(:func:`find_doses`) and runs the blocks again with the rates found (:mod:`letdown.sheet.solve`,
Doses); :func:`dose_details` are the figures each block reports.

Engineering estimates; designs must follow local codes and be checked by qualified, licensed staff.
"""
from __future__ import annotations

import numpy as np

from ..equipment.inject import PARAM_DETAILS, ProtectedPoint, dose
from ..equipment.watersplit import dry_flow
from ..errors import ConvergenceError, InputError
from ..fluid.aqueous.water import M_WATER
from .carried import gas_carrying, water_flows
from .graph import downstream_streams
from .result import WarningRecord



#: Streams within this of the coldest count as equally cold for the protected point [K].
PROTECTED_T_TIE = 1e-6


def protected_point(fs, fluid, streams, water, block) -> ProtectedPoint:
    """The coldest gas-carrying stream downstream of an ``inject`` block, per case (the point its
    dose must protect; :class:`letdown.equipment.inject.ProtectedPoint`). Only streams that carry
    gas count (:func:`gas_carrying`): never a separator's water outlet (free water only: sized
    there, a dose per mole of gas became a dose per mole of water, 1e8 kg/h and more) nor its
    hydrocarbon-liquid outlet. Of streams equally cold (to :data:`PROTECTED_T_TIE` K; a
    separator's inlet and its vapour), the one carrying the most water per dry gas: the drum's
    inlet with all the free water, not its saturated vapour. Cases with no gas-carrying stream
    downstream get a NaN point (nothing to protect; the dose refuses them)."""
    names = [s for s in downstream_streams(fs, block) if s in streams]
    carries = np.stack([gas_carrying(fs, streams, s) for s in names])
    T = np.stack([np.where(carries[k], np.asarray(streams[s].T, float), np.inf)
                  for k, s in enumerate(names)])
    n = T.shape[1]
    W = np.stack([np.broadcast_to(np.asarray(water[s], float), (n,)) for s in names])
    coldest = T <= T.min(axis=0) + PROTECTED_T_TIE
    k = np.argmax(np.where(coldest & carries, np.nan_to_num(W, nan=-1.0), -np.inf), axis=0)
    rows = np.arange(n)
    none = ~carries.any(axis=0)
    pick = lambda get: np.where(none, np.nan, np.stack([np.asarray(get(streams[s]), float)
                                                        for s in names])[k, rows])
    zs = np.stack([np.asarray(streams[s].zs, float) for s in names])[k, rows]
    w = np.where(none, np.nan, W[k, rows])
    inlet = fs.blocks[block].inlets["in"]
    return ProtectedPoint(fluid, np.array(["" if none[i] else names[j] for i, j in enumerate(k)],
                                          dtype=object),
                          pick(lambda st: st.T), pick(lambda st: st.P), zs, w,
                          dry_flow(fluid, streams[inlet]))


#: An inhibitor dose above this fraction of the mass of the gas it is injected into is refused as
#: not a hydrate-inhibitor dose [kg/kg]. Methanol doses at let-down stations and chilling trains
#: are of the order of a kilogram per thousand standard cubic metres (about 0.1 % of the gas
#: mass; from memory), aqueous need plus vapour losses; 2 % is our own bound, well above any
#: design seen, far below the 1e8 kg/h that a dose sized on a water-only stream gave (issue 10).
MAX_DOSE_TO_GAS = 0.02


def _check_dose(block, d, inlet, water_kg_s, why=None) -> list:
    """Refuse the cases of a dose that failed or is absurd against the gas and water it treats:
    their rate becomes NaN (so no number is printed as if converged) and a hazard record
    ``inhibitor_dose`` names them (the sheet marks those cases not converged). Returns the
    records (empty when the dose is sound)."""
    rate = np.asarray(d["rate_kg_s"], float)
    gas_kg_s = np.asarray(inlet.mass_flow, float)
    no_point = np.asarray([not s for s in d["protected_stream"]], bool)
    # a rate the file gives is an input (checked where inputs are); a rate found is checked here
    absurd = np.isfinite(rate) & (rate > MAX_DOSE_TO_GAS * gas_kg_s) & (d.get("spec") != "rate")
    failed = ~np.isfinite(rate) & ~no_point if why is None else np.ones(rate.shape, bool)
    out = []
    for mask, text in (
            (failed, why or "the dose is not a number (the inhibitor split at the protected "
                            "point failed)"),
            (no_point & ~failed & ~np.isfinite(rate), "no stream downstream carries gas to protect (only free water or "
                                 "hydrocarbon liquid): a dose sized by depression has no point to "
                                 "hold at"),
            (absurd, "the dose found, {r:.4g} kg/h, is more than {lim:g} % of the "
                     "{g:.4g} kg/h of gas it is injected into (water carried {w:.4g} kg/h): not "
                     "a hydrate-inhibitor dose; check the water and the protected point")):
        if not mask.any():
            continue
        i = int(np.flatnonzero(mask)[0])
        out.append(WarningRecord(block, "inhibitor dose refused: " + text.format(
            r=rate[i] * 3600.0, lim=100 * MAX_DOSE_TO_GAS, g=gas_kg_s[i] * 3600.0,
            w=water_kg_s[i] * 3600.0), tuple(np.flatnonzero(mask).tolist()),
            kind="inhibitor_dose", severity="hazard",
            numbers={"rate_kg_s": rate.copy(), "gas_mass_flow_kg_s": gas_kg_s,
                     "water_kg_s": np.asarray(water_kg_s, float),
                     "max_dose_to_gas": MAX_DOSE_TO_GAS}))
    bad = failed | absurd | (no_point & ~np.isfinite(rate))
    if bad.any():
        for key in ("rate_kg_s", "wt_pct", "aqueous_kg_s", "vapour_kg_s", "hc_liquid_kg_s",
                    "depression_K", "depression_nielsen_bucklin_K", "depression_hydrate_model_K"):
            d[key] = np.where(bad, np.nan, np.asarray(d[key], float))
    return out


def find_doses(fs, fluid, streams, steps, params=None, outcomes=None) -> tuple[dict, list]:
    """The dose of every ``inject`` block: its protected point found downstream of it
    (:func:`protected_point`, a search over the graph: it stays in the sheet layer), its dose by
    the block's own arithmetic (:func:`letdown.equipment.inject.dose`), and the checks
    (:func:`_check_dose`). The inhibitor changes neither the gas nor the water, so the streams of
    any pass of the blocks serve; the solver then runs the blocks with the rates found, and each
    ``inject`` block adds its dose in its own run (:mod:`letdown.sheet.solve`, Doses).

    Parameters
    ----------
    fs, fluid, streams, steps
        As for :func:`letdown.sheet.carried.water_flows`; ``steps`` gives the order of the blocks.
    params : Mapping[str, Mapping], optional
        ``inject`` block name -> its parameters over the cases (SI; :func:`inject_params`);
        default the file's.
    outcomes : Mapping[str, BlockOutcome], optional
        As for :func:`letdown.sheet.carried.water_flows`.

    Returns
    -------
    doses : dict
        ``inject`` block name -> the :func:`letdown.equipment.inject.dose` dict (a refused rate
        NaN).
    notes : list of WarningRecord
        Refused doses (``inhibitor_dose``) and large losses to the hydrocarbon liquid
        (``inhibitor_hc_loss``).
    """
    n = next(iter(streams.values())).n_cases
    doses: dict = {}
    notes: list = []
    water = water_flows(fs, fluid, streams, steps, outcomes)
    order = [b for step in steps for b in step.blocks]
    for block in order:
        spec = fs.blocks[block]
        if spec.kind != "inject":
            continue
        inlet = spec.inlets["in"]
        try:
            given = (params or {}).get(block, spec.params)
            point = protected_point(fs, fluid, streams, water.ratios, block)
            water_kg_s = water.flow(inlet, streams[inlet]) * M_WATER
            try:
                doses[block] = dose(block, given, water_kg_s, point)
                why = None
            except ConvergenceError as exc:
                # refused below in every case: no number comes out of a failed search
                doses[block] = dose(block, given, water_kg_s, ProtectedPoint(
                    fluid, point.stream, np.full(n, np.nan), point.P, point.zs,
                    point.water_ratio, point.flow))
                why = f"the dose search did not converge ({exc.message})"
        except InputError as exc:
            w = spec.field_where.get(exc.field.rpartition(".")[2] if exc.field else "")
            raise exc.located(file=(w.file if w else None) or fs.source,
                              line=w.line if w else spec.where.line) from None
        notes.extend(_check_dose(block, doses[block], streams[inlet], water_kg_s, why))
        d = doses[block]
        if d["losses"] == "equilibrium":
            aq = np.asarray(d["aqueous_kg_s"], float)
            lost = np.nan_to_num(np.asarray(d["hc_liquid_kg_s"], float))
            if np.any(lost > aq):
                notes.append(WarningRecord(block, "more inhibitor is lost to the hydrocarbon liquid "
                                                  "than stays in the water: the equation's figure "
                                                  "for that loss is likely high (no published "
                                                  "methanol-hydrocarbon kij; README, closing "
                                                  "limits); check the rate against field data",
                                           kind="inhibitor_hc_loss", severity="check"))
    return doses, notes


def inject_params(fs, outcomes) -> dict:
    """The parameters each ``inject`` block ran with over the cases (cases and goals included),
    from the values its outcome reports (:data:`letdown.equipment.inject.PARAM_DETAILS`)."""
    out = {}
    for name, outcome in outcomes.items():
        spec = fs.blocks[name]
        if spec.kind != "inject":
            continue
        p = {"inhibitor": spec.params.get("inhibitor", "methanol")}
        p.update({k: spec.params[k] for k in ("sized_by", "losses") if k in spec.params})
        for key, detail in PARAM_DETAILS.items():
            if detail in outcome.details:
                p[key] = outcome.details[detail]
        out[name] = p
    return out


def inject_doses(fs, fluid, streams, steps, params=None, outcomes=None, found=None) -> dict:
    """The ``inject`` blocks' details without the hydrate solves (for a solve without margins):
    ``inhibitor_rate_kg_s``, ``inhibitor_wt_pct``, ``hydrate_depression_K`` (see
    :func:`letdown.sheet.freezing.stream_freezing`), and the records of any dose refused (kind ``inhibitor_dose``);
    ``found`` as for :func:`letdown.sheet.freezing.stream_freezing`."""
    if not any(b.kind == "inject" for b in fs.blocks.values()):
        return {}, []
    block_doses, notes = found if found is not None else find_doses(fs, fluid, streams, steps,
                                                                    params, outcomes)
    return ({b: dose_details(d) for b, d in block_doses.items()},
            [w for w in notes if w.kind == "inhibitor_dose"])


def dose_details(d) -> dict:
    """An ``inject`` block's details from its :func:`letdown.equipment.inject.dose` dict: the
    rate, the aqueous wt % and the losses at the protected point, and the depression there by
    each rule (keys as listed in :func:`letdown.sheet.freezing.stream_freezing`)."""
    n = np.asarray(d["rate_kg_s"]).shape[0]
    text = lambda v: np.full(n, v, dtype=object)
    return {"inhibitor_rate_kg_s": d["rate_kg_s"], "inhibitor_wt_pct": d["wt_pct"],
            "inhibitor_aqueous_kg_s": d["aqueous_kg_s"],
            "inhibitor_to_vapour_kg_s": d["vapour_kg_s"],
            "inhibitor_to_hc_liquid_kg_s": d["hc_liquid_kg_s"],
            "hydrate_depression_K": d["depression_K"],
            "hydrate_depression_nielsen_bucklin_K": d["depression_nielsen_bucklin_K"],
            "hydrate_depression_hydrate_model_K": d["depression_hydrate_model_K"],
            "sized_by": text(d["sized_by"]), "losses": text(d["losses"]),
            "protected_stream": d["protected_stream"], "protected_T_K": d["protected_T_K"],
            "protected_P_Pa": d["protected_P_Pa"]}


