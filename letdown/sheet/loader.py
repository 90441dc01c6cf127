"""Read a flowsheet file (YAML) into a :class:`letdown.sheet.spec.SheetSpec`, keeping line numbers.

Three passes, each raising :class:`letdown.errors.InputError` with ``file:line: field: message``:

0. **Text** -- the file is UTF-8 (a byte that is not, or a UTF-16 file, is named with its line) and
   holds no control characters (a NUL, an escape, a form feed: each named with its line and
   column); YAML itself refuses them, but without a line.
1. **YAML** -- parsed with PyYAML's node API so every mapping key keeps its line; broken YAML reports
   the line the parser gives; a key written twice in one mapping is an error (plain YAML loaders keep
   the last one silently).
2. **Schema** -- the published JSON Schema ``flowsheet.schema.json`` (beside this module; editors can
   use it for completion) checks the shape: known sections, required fields, block kinds and their
   parameters, ports. jsonschema's errors are mapped back to the file's lines.
3. **Meaning** -- components are known (nearest names suggested), fractions sum to 1 within
   :data:`SUM_TOLERANCE` unless ``gas.normalise`` is true, quantities parse with their units
   (:mod:`letdown.quantities`), flows and pressures are positive, each block has exactly one of its
   alternative specifications, goals name existing streams and block parameters, measurements
   name measurable quantities of existing streams and blocks (:mod:`letdown.sheet.measurements`).
   Every number is finite and within the plausibility bounds of its kind
   (:data:`letdown.quantities.PLAUSIBLE`), so ``1e30 degC`` or ``nan`` is refused where it was
   written, before any solver sees it; the model covers the gas (GERG-2008 has no parameters for
   some components), else the ``gas.model`` line is named.

The graph checks (a stream produced twice, never produced, a feed nobody takes) follow in
:func:`letdown.sheet.graph.build_graph`, which :func:`read_spec` runs before returning.

The loader is four modules along these passes: :mod:`letdown.sheet.yamldoc` (passes 0-2 and the
located readers of values), :mod:`letdown.sheet.blocksection` (the ``equipment`` section),
:mod:`letdown.sheet.goalslimits` (``goals``, ``solver``, ``limits``) and this one (the gas, the
feeds, the cases and measurements, and :func:`parse_spec` that runs them in order).
"""
from __future__ import annotations

import math
from pathlib import Path

from ..errors import InputError
from ..quantities import STANDARD_ATMOSPHERE, MassFlow
from .blocksection import _blocks, _check_parameter
from .goalslimits import _goal_targets, _goals, _limits, _solver
from .gases import energy_flow, feed_energy, named_gases
from .inputtext import read_text
from .kinds import EXACTLY_ONE, PARAMETERS
from .spec import BlockSpec, CaseSpec, FeedSpec, GasSpec, SheetSpec, WaterSpec
from .yamldoc import (_Doc, _Quantities, _dotted, _nearest, _number, _read_yaml, _validate_schema,
                      _where)

# re-exported: the loader is where the rest of letdown and the docs find these
from .blocksection import parameter_problem  # noqa: F401
from .kinds import MASS_RATE  # noqa: F401
from .yamldoc import KINDS, MODELS, schema, schema_path  # noqa: F401

#: Mole fractions must sum to 1 within this, unless ``normalise: true`` [-] (allows fractions
#: copied with six decimals; common practice).
SUM_TOLERANCE = 1e-6

#: An interaction parameter outside [-KIJ_MAX, KIJ_MAX] is refused [-]: published binary
#: parameters of natural-gas pairs lie well inside +-0.5 (common practice), so a larger one is a slip.
KIJ_MAX = 1.0

#: The atmosphere of a station lies in this range [Pa]: from about the summit of Everest (34 kPa)
#: to a little above sea-level standard (common practice).
ATMOSPHERE_RANGE = (30e3, 120e3)


# ---------------------------------------------------------------------------------------------
# Pass 3: meaning (the gas and feeds here; blocks: blocksection.py; goals, solver, limits:
# goalslimits.py)
# ---------------------------------------------------------------------------------------------

def _composition(doc: _Doc, comp: dict, path, normalise: bool, allowed=None) -> dict:
    from ..fluid.components import canonical_name  # the fluid layer owns component names
    out: dict = {}
    first: dict = {}
    for name, frac in comp.items():
        try:
            canon = canonical_name(name)
        except InputError as exc:
            raise doc.err(exc.message, path + (name,)) from None
        if canon in out:
            raise doc.err(f"'{name}' is the same component as '{first[canon]}'", path + (name,))
        if allowed is not None and canon not in allowed:
            raise doc.err(f"component '{name}' is not listed under gas.composition (list it there, "
                          f"a zero fraction is fine)", path + (name,))
        first[canon] = name
        x = _number(doc, frac, path + (name,), "a mole fraction")
        if x < 0.0:
            raise doc.err(f"a mole fraction must not be negative, got {frac!r}", path + (name,),
                          key=False)
        if x > 1.0 and not normalise:
            raise doc.err(f"a mole fraction lies in [0, 1], got {frac!r} (for percentages set "
                          f"gas.normalise: true)", path + (name,), key=False)
        out[canon] = x
    total = math.fsum(out.values())
    if not math.isfinite(total):
        raise doc.err("the mole fractions are too large to add up", path)
    if total <= 0.0:
        raise doc.err("the mole fractions are all zero", path)
    if abs(total - 1.0) > SUM_TOLERANCE:
        if not normalise:
            raise doc.err(f"mole fractions sum to {total:.9g}, not 1 (within {SUM_TOLERANCE:g}); "
                          f"correct them or set gas.normalise: true", path)
    out = {k: v / total for k, v in out.items()}
    if allowed is not None:
        out = {k: out.get(k, 0.0) for k in allowed}
    return out


def _molar_mass(composition: dict) -> float:
    from ..fluid.components import COMPONENTS
    return math.fsum(x * COMPONENTS[c].M for c, x in composition.items())


def _kij(doc: _Doc, raw, components) -> object:
    from ..fluid.components import canonical_name
    if raw is None or raw == "zero":
        return raw
    out = {}
    for a, row in raw.items():
        for b, value in row.items():
            path = ("gas", "kij", a, b)
            try:
                ca, cb = canonical_name(a), canonical_name(b)
            except InputError as exc:
                raise doc.err(exc.message, path) from None
            for c, name in ((ca, a), (cb, b)):
                if c not in components:
                    raise doc.err(f"component '{name}' is not listed under gas.composition", path)
            if ca == cb:
                raise doc.err("an interaction parameter needs two different components", path)
            pair = tuple(sorted((ca, cb)))
            if pair in out:
                raise doc.err(f"the pair {pair[0]}/{pair[1]} is given twice", path)
            kij = _number(doc, value, path, "an interaction parameter")
            if abs(kij) > KIJ_MAX:
                raise doc.err(f"an interaction parameter lies in [-{KIJ_MAX:g}, {KIJ_MAX:g}], got "
                              f"{value!r}", path, key=False)
            out[pair] = kij
    return out


def _feeds(doc: _Doc, q: _Quantities, gas: GasSpec, normalise: bool,
           section: str = "feeds") -> dict:
    feeds = {}
    for name, raw in (doc.data.get(section) or {}).items():
        path = (section, name)
        T = q(raw["T"], "temperature", path + ("T",))
        P = q(raw["P"], "pressure", path + ("P",))
        composition = None
        if "composition" in raw:
            composition = _composition(doc, raw["composition"], path + ("composition",),
                                       normalise, allowed=tuple(gas.composition))
        energy = feed_energy(doc, q, raw, path)     # exactly one of flow and energy (gases.py)
        flow = q(raw["flow"], "flow", path + ("flow",)) if energy is None else \
            energy_flow(doc, energy, composition or gas.composition, path)
        if isinstance(flow, MassFlow):
            value, flow = flow.kg_s, flow.to_molar(_molar_mass(composition or gas.composition))
        else:
            value = flow
        if value < 0.0:
            raise doc.err(f"negative flow {raw['flow']!r}; a flow must be positive",
                          path + ("flow",), key=False)
        if value == 0.0:
            raise doc.err("zero flow; a flow must be positive", path + ("flow",), key=False)
        feeds[name] = FeedSpec(name=name, T=T, P=P, flow=flow, composition=composition,
                               where=_where(doc, path), energy=energy)
    return feeds


def _model_covers(doc: _Doc, gas: GasSpec, path) -> None:
    """Refuse a model that has no parameters for a component of the gas, at the model's line."""
    if gas.model != "gerg-2008":
        return
    from ..fluid.eos.gerg import GERG_NAMES
    missing = [c for c in gas.composition if c not in GERG_NAMES]
    if missing:
        raise doc.err(f"GERG-2008 has no parameters for {', '.join(missing)}; use a cubic model "
                      f"(peng-robinson, soave-redlich-kwong) for this gas", path, key=False)


#: Units of a water content written as a string (``gas.water``), per standard volume of dry gas.
WATER_UNITS = {"mg/sm3": "mg_Sm3", "lb/mmscf": "lb_MMscf"}
#: A water mole fraction above this is refused: pipeline gas holds well under 1 % water at any
#: let-down condition (about 0.13 % saturated at 38 degC, 69 bar; Bukacek 1955), so a larger number
#: is a unit slip (common practice).
WATER_FRACTION_MAX = 0.05


def _water(doc: _Doc, q: "_Quantities", raw, composition: dict):
    """The ``gas.water`` entry as a :class:`WaterSpec` (None when absent)."""
    if raw is None:
        return None
    path = ("gas", "water")
    where = _where(doc, path)
    if composition.get("water", 0.0) > 0.0:
        raise doc.err("water is given twice: gas.composition lists water and gas.water is set; "
                      "keep one (gas.water keeps the hydrocarbon flash water-free)", path)
    if isinstance(raw, bool):
        raise doc.err(f"expected a water content, got {raw!r}", path, key=False)
    if isinstance(raw, (int, float)):
        y = float(raw)
        if not (0.0 < y <= WATER_FRACTION_MAX):
            raise doc.err(f"a water mole fraction lies in (0, {WATER_FRACTION_MAX:g}], got {raw!r}"
                          " (for mg/Sm3 or lb/MMscf write the unit: '80 mg/Sm3')", path, key=False)
        return WaterSpec("mole_fraction", value=y, where=where)
    if isinstance(raw, str):
        text = raw.strip()
        number, _, unit = text.partition(" ")
        kind = WATER_UNITS.get(unit.strip().lower().replace(" ", ""))
        try:
            value = float(number)
        except ValueError:
            value = float("nan")
        if kind is None or not math.isfinite(value):
            raise doc.err(f"cannot read water content {raw!r}: write a number and mg/Sm3 or "
                          "lb/MMscf ('80 mg/Sm3', '5 lb/MMscf'), a plain mole fraction, or "
                          "{saturated: {T, P}} / {dew_point: {T, P}}", path, key=False)
        if value <= 0.0:
            raise doc.err(f"a water content must be positive, got {raw!r}", path, key=False)
        return WaterSpec(kind, value=value, where=where)
    (kind, state), = raw.items()
    T = q(state["T"], "temperature", path + (kind, "T"))
    P = q(state["P"], "pressure", path + (kind, "P"))
    if P <= 0.0:
        raise doc.err(f"the pressure must be positive, got {state['P']!r}", path + (kind, "P"),
                      key=False)
    if not 200.0 <= T <= 450.0:
        raise doc.err(f"a water {'dew point' if kind == 'dew_point' else 'saturation'} "
                      f"temperature lies in 200-450 K here, got {state['T']!r}",
                      path + (kind, "T"), key=False)
    return WaterSpec(kind, T=T, P=P, where=where)


#: What a case may set on a feed (and the quantity kind of each).
CASE_FEED_FIELDS = {"T": "temperature", "P": "pressure", "flow": "flow"}


def _cases(doc: _Doc, q: "_Quantities", feeds: dict, blocks: dict, goals: tuple,
           composition: dict) -> tuple:
    """The ``cases`` section as :class:`CaseSpec` values (SI)."""
    out = []
    names: dict = {}
    varied = {g.by for g in goals}
    for i, raw in enumerate(doc.data.get("cases") or ()):
        path = ("cases", i)
        name = raw["name"]
        if name in names:
            raise doc.err(f"case name '{name}' is already used by case {names[name] + 1}",
                          path + ("name",), key=False)
        names[name] = i
        values = {}
        for obj, settings in raw.items():
            if obj in ("name", "note"):
                continue
            if obj in feeds:
                table = CASE_FEED_FIELDS
            elif obj in blocks:
                table = PARAMETERS[blocks[obj].kind]
            else:
                raise doc.err(f"'{obj}' is neither a feed nor a block"
                              f"{_nearest(obj, set(feeds) | set(blocks))}", path + (obj,))
            for attr, text in settings.items():
                p = path + (obj, attr)
                if attr not in table:
                    what = "feed" if obj in feeds else f"{blocks[obj].kind}"
                    raise doc.err(f"a case cannot set '{attr}' of {what} '{obj}' (it can set: "
                                  f"{', '.join(table) or 'nothing'})", p)
                key = f"{obj}.{attr}"
                if key in varied:
                    raise doc.err(f"{key} is varied by a goal; a case cannot set it", p)
                value = q(text, table[attr], p)
                if isinstance(value, MassFlow):
                    value = value.to_molar(_molar_mass(feeds[obj].composition
                                                       or composition))
                if obj in feeds and attr in ("P", "flow") and not value > 0.0:
                    raise doc.err(f"{attr} must be positive, got {text!r}", p, key=False)
                if obj in blocks:
                    _check_parameter(doc, blocks[obj].kind, attr, value, text, p)
                    _check_case_alternative(doc, blocks[obj], attr, varied, p)
                values[key] = float(value)
        if not values:
            raise doc.err(f"case '{name}' changes nothing (give a feed's T, P or flow or a block "
                          "parameter)", path)
        out.append(CaseSpec(name=name, values=values, where=_where(doc, path)))
    return tuple(out)


def _check_case_alternative(doc: _Doc, block: BlockSpec, attr: str, varied: set, path) -> None:
    """A case may only change a block's specification that the block already uses."""
    for group in EXACTLY_ONE.get(block.kind, ()):
        if attr in group:
            used = [k for k in group if k in block.params or f"{block.name}.{k}" in varied]
            if used and attr not in used:
                raise doc.err(f"{block.name} is specified by {used[0]}; a case cannot switch it "
                              f"to {attr}", path)


def _measurements(doc: _Doc, fs_parts, atmosphere: float) -> tuple:
    from .measurements import parse_measurement
    out = []
    for i, raw in enumerate(doc.data.get("measurements") or ()):
        path = ("measurements", i)
        lines = {"": doc.line(path)}
        lines.update({k: doc.line(path + (k,), key=False) for k in raw})
        out.append(parse_measurement(raw, fs_parts, file=doc.file, lines=lines,
                                     field=_dotted(path), atmosphere=atmosphere))
    return tuple(out)


def parse_spec(text: str, source: str = "<text>") -> SheetSpec:
    """Parse flowsheet YAML text.

    Parameters
    ----------
    text : str
        The YAML document.
    source : str
        Name used in error messages (the file path).

    Returns
    -------
    SheetSpec
        Everything in SI; ``extra`` holds ``atmosphere`` [Pa] and ``normalise`` (bool).

    Raises
    ------
    InputError
        Broken YAML, a field the schema refuses, an unknown component, unit or block kind,
        fractions that do not sum to 1, a negative flow, ... (with file, line and field).
    TopologyError
        A stream produced twice, consumed twice or never produced, a feed nobody takes.
    """
    doc = _read_yaml(text, source)
    _validate_schema(doc)
    data = doc.data
    atmosphere = STANDARD_ATMOSPHERE
    if "atmosphere" in data:
        raw_atm = data["atmosphere"]
        if isinstance(raw_atm, str) and raw_atm.strip().lower().endswith(
                ("barg", "psig", "kpag", "mpag")):
            raise doc.err("the atmosphere must be an absolute pressure", ("atmosphere",),
                          key=False)
        atmosphere = _Quantities(doc, STANDARD_ATMOSPHERE)(raw_atm, "pressure", ("atmosphere",))
        lo, hi = ATMOSPHERE_RANGE
        if not lo <= atmosphere <= hi:
            raise doc.err(f"an atmosphere lies in {lo / 1e3:g}-{hi / 1e3:g} kPa, got {raw_atm!r}",
                          ("atmosphere",), key=False)
    q = _Quantities(doc, atmosphere)

    gas_raw = data["gas"]
    normalise = bool(gas_raw.get("normalise", False))
    composition = _composition(doc, gas_raw["composition"], ("gas", "composition"), normalise)
    model_path = ("gas", "model") if "model" in gas_raw else ("gas",)
    gas = GasSpec(model=gas_raw.get("model", "peng-robinson"), composition=composition,
                  kij=_kij(doc, gas_raw.get("kij"), composition),
                  water=_water(doc, q, gas_raw.get("water"), composition),
                  water_method=gas_raw.get("water_method", "bukacek"),
                  model_given="model" in gas_raw,
                  model_where=_where(doc, model_path))
    _model_covers(doc, gas, model_path)
    feeds = _feeds(doc, q, gas, normalise)
    goal_params = _goal_targets(doc)
    blocks = _blocks(doc, q, goal_params)
    goals = _goals(doc, q, blocks, feeds)
    guesses = _feeds(doc, q, gas, normalise, section="guesses")
    solver = _solver(doc, data.get("solver") or {})
    title = data.get("title") or Path(source).stem
    streams = set(feeds)
    for b in blocks.values():
        streams.update(b.outlets.values())
    measurements = _measurements(doc, (streams, blocks), atmosphere)
    cases = _cases(doc, q, feeds, blocks, goals, gas.composition)
    limits = _limits(doc, q)
    for k, name in enumerate(limits.get("outlet_streams", ())):
        if name not in streams:
            raise doc.err(f"no stream named {name!r} (streams: {', '.join(sorted(streams))})",
                          ("limits", "outlet_min_T", "streams", k), key=False)
    if "max_velocity" in limits:
        # every pipe judges its own velocity against the limit (flag velocity_high)
        for b in blocks.values():
            if b.kind == "pipe":
                b.params["max_velocity"] = limits["max_velocity"]
    fs = SheetSpec(title=title, gas=gas, feeds=feeds, blocks=blocks, goals=goals,
                   limits=limits, solver=solver, source=source,
                   extra={"atmosphere": atmosphere, "normalise": normalise}, guesses=guesses,
                   measurements=measurements, cases=cases,
                   gases=named_gases(doc, normalise, _composition))
    from .graph import build_graph
    build_graph(fs)     # raises TopologyError with file:line
    return fs


def read_spec(path) -> SheetSpec:
    """Read a flowsheet file.

    Parameters
    ----------
    path : str or os.PathLike
        The YAML file.

    Returns
    -------
    SheetSpec

    Raises
    ------
    InputError
        If the file cannot be read or is not a valid flowsheet (see :func:`parse_spec`).
    """
    return parse_spec(read_text(path), source=str(path))
