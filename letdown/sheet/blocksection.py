"""The ``equipment`` section of a flowsheet file: each block's ports, parameters with their units,
and the options beyond plain quantities (a throttle's valve rating and protection, a pipe's
surroundings, an inject block's inhibitor and words, a splitter's fractions), checked where they
are written; and :func:`parameter_problem`, the range check of a block parameter that a file, its
cases and a sweep share. Part of the loader (:mod:`letdown.sheet.loader`).
"""
from __future__ import annotations

import math

from ..equipment.inject import MAX_DEPRESSION, options as inject_options
from ..equipment.registry import port_paths, ports
from ..equipment.throttle import valve_problem
from ..equipment.pipe import MAX_ELEVATION
from ..errors import InputError
from ..fluid.aqueous.inhibitor import inhibitor
from .kinds import EXACTLY_ONE, PARAMETERS
from .spec import BlockSpec
from .yamldoc import _Doc, _Quantities, _nearest, _where

#: Splitter fractions without a ``rest`` must sum to 1 within this [-] (decimal rounding only; the
#: same limit as the splitter block, :data:`letdown.equipment.splitter.SUM_TOLERANCE`).
SPLIT_SUM_TOLERANCE = 1e-9

#: An efficiency below this is refused as a slip (0.75 written 0.00075, or 75 without '%'):
#: water-bath heaters run about 0.5-0.8 and compressors and expanders 0.6-0.9 (common practice); a
#: compressor at 0.00075 would heat its gas past any model's range [-] (our choice).
EFFICIENCY_MIN = 0.1


def _port_where(doc: _Doc, kind: str, path) -> dict:
    """Where each port was written: keys ``in:PORT`` and ``out:PORT`` (port names as in the spec)."""
    raw = doc.data["equipment"][path[-1]]
    return {key: _where(doc, path + sub) for key, sub in port_paths(kind, raw).items()}


def _blocks(doc: _Doc, q: _Quantities, goal_params: dict) -> dict:
    blocks = {}
    for name, raw in doc.data["equipment"].items():
        path = ("equipment", name)
        kind = raw["kind"]
        inlets, outlets = ports(kind, raw)
        params: dict = {}
        field_where: dict = _port_where(doc, kind, path)
        for key, qkind in PARAMETERS[kind].items():
            if key in raw:
                value = q(raw[key], qkind, path + (key,))
                params[key] = value
                field_where[key] = _where(doc, path + (key,))
                _check_parameter(doc, kind, key, value, raw[key], path + (key,))
        if "fuel" in params and "efficiency" not in params:
            raise doc.err("a heater given its fuel needs its efficiency (heat into the gas over "
                          "heat of the fuel burnt)", path + ("fuel",))
        if kind == "compressor":
            params["efficiency_kind"] = raw.get("efficiency_kind", "isentropic")
        if kind == "inject":
            params["inhibitor"] = _inhibitor(doc, raw.get("inhibitor"), path + ("inhibitor",))
            field_where["inhibitor"] = _where(doc, path + ("inhibitor",))
            _inject_options(doc, name, raw, params, field_where, path)
        if kind == "throttle" and raw.get("valve") is not None:
            params["valve"] = _valve(doc, q, raw["valve"], path + ("valve",))
            field_where["valve"] = _where(doc, path + ("valve",))
        if kind == "throttle" and raw.get("protection") is not None:
            prot = raw["protection"]
            if "valve" not in params:
                raise doc.err("the fail-open flow into the protection needs the valve's rating "
                              "(valve: {Kv: ...})", path + ("protection",))
            if not isinstance(prot, dict) or "set_pressure" not in prot:
                raise doc.err("protection is {set_pressure: ...}, the pressure at which the "
                              "downstream protection acts", path + ("protection",))
            params["protection"] = {"set_pressure": q(prot["set_pressure"], "pressure",
                                                      path + ("protection", "set_pressure"))}
            field_where["protection"] = _where(doc, path + ("protection",))
        if kind == "separator":
            params["water_port"] = "water" in raw["to"]
        if kind == "splitter":
            params["fractions"] = _fractions(doc, q, raw["to"], path + ("to",))
            field_where["fractions"] = _where(doc, path + ("to",))
        if kind == "pipe":
            _pipe_options(doc, q, raw, params, field_where, path)
        for group in EXACTLY_ONE.get(kind, ()):
            given = [k for k in group if k in params]
            varied = [k for k in group if (name, k) in goal_params and k not in params]
            if len(given) + len(varied) > 1:
                both = " and ".join(f"'{k}'" + (" (varied by a goal)" if k in varied else "")
                                    for k in given + varied)
                raise doc.err(f"{_a(kind)} takes exactly one of {', '.join(group)}; this one has "
                              f"{both}", path)
            if not given and not varied:
                raise doc.err(f"{_a(kind)} needs one of {', '.join(group)}", path)
        blocks[name] = BlockSpec(name=name, kind=kind, inlets=inlets, outlets=outlets,
                                 params=params, where=_where(doc, path), field_where=field_where)
    return blocks


#: Entries of a throttle's ``valve`` rating given as lengths (with a unit: '154 mm', '6 in').
VALVE_LENGTHS = ("size", "inlet_pipe", "outlet_pipe", "wall_thickness")


def _valve(doc: _Doc, q: _Quantities, raw, path) -> dict:
    """A throttle's ``valve`` rating in SI, checked (:func:`letdown.equipment.throttle.valve_problem`).
    Kv [m3/h], Cv [US gal/min at 1 psi], xT, FL, Fd, An and the rangeability are plain numbers."""
    if not isinstance(raw, dict):
        raise doc.err("valve is a mapping (Kv or Cv, xT, characteristic, ...)", path, key=False)
    out: dict = {}
    for key, text in raw.items():
        if key in VALVE_LENGTHS:
            out[key] = q(text, "length", path + (key,))
        elif key == "characteristic":
            out[key] = text
        elif isinstance(text, bool) or not isinstance(text, (int, float)):
            raise doc.err(f"{key} is a plain number, got {text!r}", path + (key,), key=False)
        else:
            out[key] = float(text)
    problem = valve_problem(out)
    if problem is not None:
        key, message = problem
        raise doc.err(message, path + (key,) if key in raw else path, key=key not in raw)
    return out
#: A pipe's ``surroundings``: each form and its entries with their quantity kinds.
PIPE_SURROUNDINGS = {
    "buried": {"depth": "length", "soil_conductivity": "thermal_conductivity",
               "ground_T": "temperature"},
    "air": {"T": "temperature", "U": "heat_transfer_coefficient"},
    "U": {"U": "heat_transfer_coefficient", "T": "temperature"},
}


def _pipe_options(doc, q, raw, params, field_where, path):
    """A pipe's ``steps`` and ``surroundings`` (SI, kind named), checked where they are written:
    ``{buried: {depth, soil_conductivity, ground_T}}``, ``{air: {T, U}}`` or ``{U: .., T: ..}``."""
    if "steps" in raw:
        params["steps"] = raw["steps"]
        field_where["steps"] = _where(doc, path + ("steps",))
    if "elevation_change" in params and "length" in params \
            and abs(params["elevation_change"]) > min(params["length"], MAX_ELEVATION):
        raise doc.err(f"elevation_change {raw['elevation_change']!r} exceeds the length "
                      f"{raw['length']!r} or {MAX_ELEVATION:g} m", path + ("elevation_change",),
                      key=False)
    if "surroundings" not in raw:
        return
    sur = raw["surroundings"]
    spath = path + ("surroundings",)
    field_where["surroundings"] = _where(doc, spath)
    forms = [k for k in ("buried", "air") if k in sur]
    if forms:
        extra = [k for k in sur if k not in forms]
        if len(forms) > 1 or extra:
            bad = (forms[1:] + extra)[0]
            raise doc.err(f"give one form of surroundings (buried, air, or U with T), not "
                          f"'{forms[0]}' with '{bad}'", spath + (bad,))
        form, entries, epath = forms[0], sur[forms[0]], spath + (forms[0],)
    else:
        form, entries, epath = "U", sur, spath
    table = PIPE_SURROUNDINGS[form]
    for k in entries:
        if k not in table:
            known = "buried, air, or U with T" if form == "U" else ", ".join(table)
            near = _nearest(k, list(table) + ["buried", "air"])
            raise doc.err(f"unknown surroundings entry '{k}'{near} (known: {known})", epath + (k,))
    out = {"kind": form}
    for k, qkind in table.items():
        if k not in entries:
            raise doc.err(f"{form} surroundings need '{k}'", epath)
        out[k] = q(entries[k], qkind, epath + (k,))
    if form == "buried":
        if not out["soil_conductivity"] > 0.0:
            raise doc.err("soil_conductivity must be positive", epath + ("soil_conductivity",),
                          key=False)
        D = params.get("diameter")
        if D is not None and not out["depth"] > D / 2.0:
            raise doc.err(f"depth {entries['depth']!r} (to the pipe's centre line) is less than "
                          f"half the diameter {raw['diameter']!r}: the pipe would stick out of "
                          "the ground", epath + ("depth",), key=False)
    elif out["U"] < 0.0:
        raise doc.err("U must not be negative", epath + ("U",), key=False)
    params["surroundings"] = out


def _a(kind: str) -> str:
    """``a heater``, ``an inject``."""
    return f"{'an' if kind[0] in 'aeiou' else 'a'} {kind}"


def _inhibitor(doc, text, path) -> str:
    """The canonical name of an inject block's inhibitor (schema: a string, required)."""
    try:
        return inhibitor(text).name
    except InputError:
        raise doc.err(f"unknown inhibitor {text!r} (known: methanol, MEG)", path,
                      key=False) from None


def _inject_options(doc, name, raw, params, field_where, path):
    """An inject block's ``sized_by`` and ``losses`` words, checked and kept in ``params``."""
    for key in ("sized_by", "losses"):
        if key in raw:
            try:
                sized_by, losses = inject_options(name, {key: raw[key]})
            except InputError as exc:
                raise doc.err(exc.message, path + (key,), key=False) from None
            params[key] = sized_by if key == "sized_by" else losses
            field_where[key] = _where(doc, path + (key,))
    if "sized_by" in raw and "rate" in raw:
        raise doc.err("sized_by applies to a depression; this block is given its rate",
                      path + ("sized_by",))


def _check_parameter(doc, kind, key, value, text, path):
    problem = parameter_problem(kind, key, value, text)
    if problem is not None:
        raise doc.err(problem, path, key=False)


def parameter_problem(kind: str, key: str, value: float, text) -> str | None:
    """What is wrong with a block parameter's value (None if nothing), for every place that sets
    one: the file, its cases and a sweep.

    Parameters
    ----------
    kind : str
        The block kind.
    key : str
        The parameter (``dP``, ``duty``, ``efficiency``, ...).
    value : float
        Its value in SI (already within :data:`letdown.quantities.PLAUSIBLE`).
    text : object
        The value as written, for the message.
    """
    if kind == "inject" and key == "depression" and value > MAX_DEPRESSION:
        return (f"a hydrate depression of {text!r} is outside the inhibitor rules (at most "
                f"{MAX_DEPRESSION:g} K here; Hammerschmidt holds to about 20 K)")
    if key in ("dP", "hot_dP", "cold_dP", "duty", "fuel", "UA", "min_approach", "rate",
               "depression") and value < 0.0:
        extra = ""
        if key == "duty" and kind in ("heater", "cooler"):
            extra = f" (a {kind} duty is the heat {'added' if kind == 'heater' else 'removed'}; "\
                    f"use a {'cooler' if kind == 'heater' else 'heater'} for the other way)"
        return f"{key} must not be negative, got {text!r}{extra}"
    if kind == "pipe" and key in ("length", "diameter") and not value > 0.0:
        return f"{key} must be positive, got {text!r}"
    if kind == "pipe" and key == "roughness" and value < 0.0:
        return f"roughness must not be negative, got {text!r}"
    if key in ("UA", "min_approach") and value == 0.0:
        return f"{key} must be positive, got {text!r}"
    if key == "efficiency" and not 0.0 < value <= 1.0:
        return f"efficiency must lie in (0, 1], got {text!r}"
    if key == "efficiency" and value < EFFICIENCY_MIN:
        return (f"an efficiency of {text!r} is below any real {kind}'s ({EFFICIENCY_MIN:g}); "
                f"a slip of digits?")
    return None


def _fractions(doc: _Doc, q: _Quantities, raw: dict, path) -> dict:
    out = {}
    rest = [k for k, v in raw.items() if v == "rest"]
    if len(rest) > 1:
        raise doc.err(f"only one outlet may take the 'rest' ({', '.join(rest)} do)",
                      path + (rest[1],), key=False)
    for stream, text in raw.items():
        if text == "rest":
            out[stream] = "rest"
            continue
        value = q(text, "fraction", path + (stream,))
        if not 0.0 <= value <= 1.0:
            raise doc.err(f"a split fraction lies in [0, 1], got {text!r}", path + (stream,),
                          key=False)
        out[stream] = value
    total = math.fsum(v for v in out.values() if v != "rest")
    if rest and total > 1.0 + SPLIT_SUM_TOLERANCE:
        raise doc.err(f"split fractions sum to {total:.9g}, leaving nothing for the rest", path)
    if not rest and abs(total - 1.0) > SPLIT_SUM_TOLERANCE:
        raise doc.err(f"split fractions sum to {total:.9g}, not 1 (or let one outlet take "
                      f"'rest')", path)
    return out

