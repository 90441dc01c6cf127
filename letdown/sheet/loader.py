"""Read a flowsheet file (YAML) into a :class:`letdown.sheet.spec.Flowsheet`, keeping line numbers.

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
:func:`letdown.sheet.graph.build_graph`, which :func:`load` runs before returning.
"""
from __future__ import annotations

import difflib
import json
import math
import re
from dataclasses import dataclass
from importlib import resources
from pathlib import Path

import jsonschema
import yaml

from ..equipment.inject import MAX_DEPRESSION, options as inject_options
from ..equipment.registry import port_paths, ports
from ..equipment.throttle import valve_problem
from ..equipment.pipe import MAX_ELEVATION
from ..errors import InputError
from ..fluid.aqueous.inhibitor import inhibitor
from ..quantities import STANDARD_ATMOSPHERE, MassFlow, parse_quantity
from .gases import energy_flow, feed_energy, named_gases
from .inputtext import _check_characters, _line_column, read_text
from .kinds import EXACTLY_ONE, MASS_RATE, PARAMETERS  # noqa: F401 (re-exported)
from .spec import (BlockSpec, CaseSpec, FeedSpec, Flowsheet, GasSpec, GoalSpec, SolverSpec,
                   WaterSpec, Where)

#: Mole fractions must sum to 1 within this, unless ``normalise: true`` [-] (allows fractions
#: copied with six decimals; common practice).
SUM_TOLERANCE = 1e-6

#: Splitter fractions without a ``rest`` must sum to 1 within this [-] (decimal rounding only; the
#: same limit as the splitter block, :data:`letdown.equipment.splitter.SUM_TOLERANCE`).
SPLIT_SUM_TOLERANCE = 1e-9

#: Quantities a goal may hold: on a stream, and on a block.
STREAM_GOAL_ATTRIBUTES = {"T": "temperature", "P": "pressure", "vapour_fraction": "fraction",
                          "flow": "flow"}
BLOCK_GOAL_ATTRIBUTES = {"duty": "power", "power": "power", "min_approach": "temperature_difference"}

#: An interaction parameter outside [-KIJ_MAX, KIJ_MAX] is refused [-]: published binary
#: parameters of natural-gas pairs lie well inside +-0.5 (common practice), so a larger one is a slip.
KIJ_MAX = 1.0

#: The atmosphere of a station lies in this range [Pa]: from about the summit of Everest (34 kPa)
#: to a little above sea-level standard (common practice).
ATMOSPHERE_RANGE = (30e3, 120e3)

#: Iteration caps above this are refused: a solve that needs more has another problem, and a cap of
#: 1e9 would hang the command (our choice).
MAX_ITERATIONS = 10_000
#: A relative loop tolerance above this is no convergence test at all [-] (our choice).
MAX_LOOP_TOLERANCE = 0.1

#: A file nesting deeper than this, or building more values than :data:`MAX_NODES` (YAML aliases
#: can multiply a small file a billion times), is refused (no flowsheet comes near either).
MAX_DEPTH = 64
MAX_NODES = 200_000

#: An efficiency below this is refused as a slip (0.75 written 0.00075, or 75 without '%'):
#: water-bath heaters run about 0.5-0.8 and compressors and expanders 0.6-0.9 (common practice); a
#: compressor at 0.00075 would heat its gas past any model's range [-] (our choice).
EFFICIENCY_MIN = 0.1

KINDS = tuple(PARAMETERS)
MODELS = ("peng-robinson", "peng-robinson-1978", "soave-redlich-kwong", "gerg-2008")


def schema() -> dict:
    """The flowsheet JSON Schema (draft 2020-12) as a dict."""
    text = resources.files(__package__).joinpath("flowsheet.schema.json").read_text("utf-8")
    return json.loads(text)


def schema_path() -> Path:
    """Path of the published schema file."""
    return Path(__file__).with_name("flowsheet.schema.json")


# ---------------------------------------------------------------------------------------------
# Pass 1: YAML with positions
# ---------------------------------------------------------------------------------------------

@dataclass
class _Doc:
    """Plain data of the file plus the line of every path (key line; value line)."""

    data: object
    key_lines: dict
    value_lines: dict
    file: str

    def line(self, path, key=True):
        """Line of ``path`` (tuple of keys/indices), falling back to the nearest parent."""
        path = tuple(path)
        table = self.key_lines if key else self.value_lines
        while path:
            if path in table:
                return table[path]
            if path in self.key_lines:
                return self.key_lines[path]
            path = path[:-1]
        return 1

    def err(self, message, path, key=True):
        return InputError(message, file=self.file, line=self.line(path, key), field=_dotted(path))


def _dotted(path) -> str | None:
    out = ""
    for p in path:
        out += f"[{p}]" if isinstance(p, int) else (f".{p}" if out else str(p))
    return out or None


def _read_yaml(text: str, file: str) -> _Doc:
    _check_characters(text, file)
    loader = yaml.SafeLoader(text)
    try:
        try:
            node = loader.get_single_node()
        except RecursionError:
            raise InputError(f"the file nests deeper than a flowsheet can ({MAX_DEPTH} levels)",
                             file=file) from None
        except yaml.reader.ReaderError as exc:    # a character YAML refuses (after our check)
            line, column = _line_column(text, exc.position)
            raise InputError(f"broken YAML: {exc.reason} at column {column}", file=file,
                             line=line) from None
        except yaml.MarkedYAMLError as exc:
            mark = exc.problem_mark or exc.context_mark
            line = mark.line + 1 if mark is not None else None
            what = " ".join(p for p in (exc.context, exc.problem) if p)
            ctx = exc.context_mark
            if ctx is not None and mark is not None and ctx.line != mark.line:
                what += f" (it began on line {ctx.line + 1})"
            raise InputError(f"broken YAML: {what or exc}", file=file, line=line) from None
        except yaml.YAMLError as exc:
            raise InputError(f"broken YAML: {exc}", file=file) from None
        if node is None:
            raise InputError("the file is empty", file=file, line=1)
        key_lines: dict = {}
        value_lines: dict = {}
        count = [0]

        def build(n, path):
            count[0] += 1
            if len(path) > MAX_DEPTH or count[0] > MAX_NODES:
                raise InputError(f"the file nests deeper ({MAX_DEPTH} levels) or holds more values "
                                 f"({MAX_NODES:,}) than a flowsheet can (aliases repeating "
                                 f"themselves?)", file=file, line=n.start_mark.line + 1,
                                 field=_dotted(path))
            value_lines[path] = n.start_mark.line + 1
            if isinstance(n, yaml.MappingNode):
                loader.flatten_mapping(n)
                out = {}
                for k_node, v_node in n.value:
                    if not isinstance(k_node, yaml.ScalarNode):
                        raise InputError("a mapping key must be a plain name", file=file,
                                         line=k_node.start_mark.line + 1, field=_dotted(path))
                    key = k_node.value
                    if key in out:
                        raise InputError(f"key '{key}' is written twice (first on line "
                                         f"{key_lines[path + (key,)]})", file=file,
                                         line=k_node.start_mark.line + 1,
                                         field=_dotted(path + (key,)))
                    key_lines[path + (key,)] = k_node.start_mark.line + 1
                    out[key] = build(v_node, path + (key,))
                return out
            if isinstance(n, yaml.SequenceNode):
                out = []
                for i, item in enumerate(n.value):
                    key_lines[path + (i,)] = item.start_mark.line + 1
                    out.append(build(item, path + (i,)))
                return out
            try:
                return loader.construct_object(n, deep=True)
            except yaml.YAMLError as exc:
                raise InputError(f"broken YAML value: {exc}", file=file,
                                 line=n.start_mark.line + 1, field=_dotted(path)) from None
            except (ValueError, OverflowError):     # an integer of thousands of digits, ...
                raise InputError(f"cannot read the value {n.value[:40]!r}...", file=file,
                                 line=n.start_mark.line + 1, field=_dotted(path)) from None

        data = build(node, ())
    finally:
        loader.dispose()
    if not isinstance(data, dict):
        raise InputError("a flowsheet file is a mapping (title:, gas:, feeds:, equipment:, ...)",
                         file=file, line=1)
    return _Doc(data, key_lines, value_lines, file)


# ---------------------------------------------------------------------------------------------
# Pass 2: schema
# ---------------------------------------------------------------------------------------------

def _nearest(word, choices):
    near = difflib.get_close_matches(str(word), list(choices), n=2, cutoff=0.6)
    return f"; did you mean {' or '.join(repr(n) for n in near)}?" if near else ""


def _schema_error_message(error, doc: _Doc) -> InputError:
    path = tuple(error.absolute_path)
    v = error.validator
    inst = error.instance
    if v == "additionalProperties" and isinstance(inst, dict):
        allowed = error.schema.get("properties", {})
        extras = [k for k in inst if k not in allowed]
        if extras:
            k = extras[0]
            known = ", ".join(allowed)
            return doc.err(f"unknown field '{k}'{_nearest(k, allowed)} (known here: {known})",
                           path + (k,))
    if v == "required":
        missing = error.message.split("'")[1] if "'" in error.message else error.message
        what = "port" if missing in ("from", "to", "hot", "cold", "vapour", "liquid") else "field"
        return doc.err(f"missing {what} '{missing}'", path)
    if v == "enum" and path and path[-1] == "kind":
        return doc.err(f"unknown block kind '{inst}'{_nearest(inst, KINDS)} "
                       f"(known: {', '.join(KINDS)})", path, key=False)
    if v == "enum" and path and path[-1] == "model":
        return doc.err(f"unknown model '{inst}'{_nearest(inst, MODELS)} "
                       f"(known: {', '.join(MODELS)})", path, key=False)
    if v == "pattern" and isinstance(inst, str):
        if path and path[-1] in ("hold", "by", "at"):
            example = "network.T, preheat.duty" if path[-1] == "at" else "network.T, preheat.T_out"
            return doc.err(f"'{inst}' should read name.attribute (e.g. {example})", path,
                           key=False)
        return doc.err(f"'{inst}' is not a valid name (letters, digits, '_' and '-', starting "
                       f"with a letter)", path, key=False)
    if v == "propertyNames":
        return doc.err(f"invalid name: {error.message}", path)
    if v == "type":
        want = error.validator_value
        want = " or ".join(want) if isinstance(want, list) else want
        word = {"object": "a mapping", "array": "a list", "string": "a text value"}.get(want, want)
        return doc.err(f"expected {word}, got {inst!r}", path, key=False)
    if v in ("minProperties", "minItems"):
        return doc.err(f"needs at least {error.validator_value} entries", path)
    if v == "maxItems":
        return doc.err(f"takes at most {error.validator_value} entries", path)
    if v == "const" and path and path[-1] != "kind":
        return doc.err(f"expected {error.validator_value!r}, got {inst!r}", path, key=False)
    return doc.err(error.message, path, key=False)


def _validate_schema(doc: _Doc) -> None:
    validator = jsonschema.Draft202012Validator(schema())
    errors = list(validator.iter_errors(doc.data))
    if not errors:
        return
    # the first problem in file order; among equals the deepest (most specific) one
    errors.sort(key=lambda e: (doc.line(tuple(e.absolute_path)), -len(e.absolute_path)))
    raise _schema_error_message(errors[0], doc)


# ---------------------------------------------------------------------------------------------
# Pass 3: meaning
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


def _number(doc: _Doc, raw, path, what: str) -> float:
    """A plain finite number of the file (the schema has seen it is a number)."""
    try:
        x = float(raw)
    except (OverflowError, TypeError, ValueError):
        x = float("nan")
    if isinstance(raw, bool) or not math.isfinite(x):
        raise doc.err(f"{what} must be a finite number, got {raw!r}"
                      if isinstance(raw, bool) else f"{raw!r} is not a finite number",
                      path, key=False)
    return x


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


class _Quantities:
    """Parse quantities of one document with its atmosphere, raising located errors."""

    def __init__(self, doc: _Doc, atmosphere: float):
        self.doc = doc
        self.atmosphere = atmosphere

    def __call__(self, text, kind, path, *, bare=None):
        if kind == MASS_RATE:
            value = self(text, "flow", path, bare=bare)
            if not isinstance(value, MassFlow):
                raise self.doc.err(f"give this rate as a mass flow (such as '25 kg/h'), got "
                                   f"{text!r}", path, key=False)
            return value.kg_s
        return parse_quantity(text, kind, atmosphere=self.atmosphere, bare=bare,
                              field=_dotted(path), file=self.doc.file,
                              line=self.doc.line(path, key=False))


def _where(doc: _Doc, path) -> Where:
    return Where(doc.file, doc.line(path))


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


def _split_ref(text):
    name, _, attribute = text.partition(".")
    return name, attribute


def _goal_targets(doc: _Doc) -> dict:
    """(block, parameter) -> goal index, for the exactly-one checks."""
    out = {}
    for i, g in enumerate(doc.data.get("goals") or ()):
        block, param = _split_ref(g["by"])
        if (block, param) in out:
            raise doc.err(f"{g['by']} is already varied by goal {out[(block, param)] + 1}",
                          ("goals", i, "by"), key=False)
        out[(block, param)] = i
    return out


def _goals(doc: _Doc, q: _Quantities, blocks: dict, feeds: dict) -> tuple:
    streams = set(feeds)
    for b in blocks.values():
        streams.update(b.outlets.values())
    goals = []
    held = {}
    for i, g in enumerate(doc.data.get("goals") or ()):
        path = ("goals", i)
        obj, attr = _split_ref(g["hold"])
        if obj in blocks:
            table = BLOCK_GOAL_ATTRIBUTES
        elif obj in streams:
            table = STREAM_GOAL_ATTRIBUTES
        else:
            raise doc.err(f"'{obj}' is neither a stream nor a block{_nearest(obj, streams | set(blocks))}",
                          path + ("hold",), key=False)
        if attr not in table:
            raise doc.err(f"cannot hold '{attr}' of '{obj}' (can hold: {', '.join(table)})",
                          path + ("hold",), key=False)
        if g["hold"] in held:
            raise doc.err(f"{g['hold']} is already held by goal {held[g['hold']] + 1}",
                          path + ("hold",), key=False)
        held[g["hold"]] = i
        target = q(g["at"], table[attr], path + ("at",))
        if isinstance(target, MassFlow):
            raise doc.err("hold a flow as a molar or standard-volume flow, not a mass flow",
                          path + ("at",), key=False)
        if attr == "vapour_fraction" and not 0.0 <= target <= 1.0:
            raise doc.err(f"a vapour fraction lies in [0, 1], got {g['at']!r}", path + ("at",),
                          key=False)
        if attr in ("P", "flow") and not target > 0.0:
            raise doc.err(f"{attr} must be positive, got {g['at']!r}", path + ("at",), key=False)
        bname, param = _split_ref(g["by"])
        if bname not in blocks:
            raise doc.err(f"unknown block '{bname}'{_nearest(bname, blocks)}", path + ("by",),
                          key=False)
        block = blocks[bname]
        kinds = PARAMETERS[block.kind]
        if param not in kinds:
            raise doc.err(f"a {block.kind} has no parameter '{param}' to vary "
                          f"(it has: {', '.join(kinds) or 'none'})", path + ("by",), key=False)
        lo = q(g["within"][0], kinds[param], path + ("within", 0))
        hi = q(g["within"][1], kinds[param], path + ("within", 1))
        if not lo < hi:
            raise doc.err(f"the bracket [{g['within'][0]}, {g['within'][1]}] must go from low to "
                          f"high", path + ("within",), key=False)
        goals.append(GoalSpec(hold=g["hold"], target=target, by=g["by"], within=(lo, hi),
                              where=_where(doc, path)))
        if param not in block.params:
            # the varied parameter starts in the middle of its bracket
            params = dict(block.params)
            params[param] = 0.5 * (lo + hi)
            fw = dict(block.field_where)
            fw[param] = _where(doc, path + ("by",))
            blocks[bname] = BlockSpec(block.name, block.kind, block.inlets, block.outlets, params,
                                      block.where, fw)
    return tuple(goals)


def _model_covers(doc: _Doc, gas: GasSpec, path) -> None:
    """Refuse a model that has no parameters for a component of the gas, at the model's line."""
    if gas.model != "gerg-2008":
        return
    from ..fluid.eos.gerg import GERG_NAMES
    missing = [c for c in gas.composition if c not in GERG_NAMES]
    if missing:
        raise doc.err(f"GERG-2008 has no parameters for {', '.join(missing)}; use a cubic model "
                      f"(peng-robinson, soave-redlich-kwong) for this gas", path, key=False)


def _solver(doc: _Doc, raw: dict) -> SolverSpec:
    """The ``solver`` section, its numbers finite and its caps ones a solve can reach."""
    for key in ("loop_max_iterations", "goal_max_iterations"):
        if key in raw and raw[key] > MAX_ITERATIONS:
            raise doc.err(f"{key} takes at most {MAX_ITERATIONS:,}, got {raw[key]!r}",
                          ("solver", key), key=False)
    for key in ("loop_tolerance", "goal_tolerance"):
        if key in raw:
            _number(doc, raw[key], ("solver", key), key)
    if raw.get("loop_tolerance", 0.0) > MAX_LOOP_TOLERANCE:
        raise doc.err(f"a relative loop tolerance above {MAX_LOOP_TOLERANCE:g} tests nothing, got "
                      f"{raw['loop_tolerance']!r}", ("solver", "loop_tolerance"), key=False)
    return SolverSpec(**raw)


def _limits(doc: _Doc, q: _Quantities) -> dict:
    raw = doc.data.get("limits") or {}
    out = {}
    if "min_T" in raw:
        out["min_T"] = q(raw["min_T"], "temperature", ("limits", "min_T"))
    if "hydrate_margin" in raw:
        out["hydrate_margin"] = q(raw["hydrate_margin"], "temperature_difference",
                                  ("limits", "hydrate_margin"))
        if out["hydrate_margin"] < 0.0:
            raise doc.err(f"a hydrate margin must not be negative, got {raw['hydrate_margin']!r}",
                          ("limits", "hydrate_margin"), key=False)
    if "max_velocity" in raw:
        # the fastest gas allowed in a pipe (erosion, noise, vibration): a warning above it
        out["max_velocity"] = q(raw["max_velocity"], "velocity", ("limits", "max_velocity"))
        if not out["max_velocity"] > 0.0:
            raise doc.err(f"max_velocity must be positive, got {raw['max_velocity']!r}",
                          ("limits", "max_velocity"), key=False)
    if "outlet_min_T" in raw:
        # the coldest gas allowed into the pipe downstream of the station (buried pipe: frost
        # heave; exposed pipe and coatings): a temperature for every gas outlet, or {T, streams}
        rule = raw["outlet_min_T"]
        if isinstance(rule, dict):
            if "T" not in rule:
                raise doc.err("give the rule's temperature as T (and the streams it applies to "
                              "as streams)", ("limits", "outlet_min_T"))
            out["outlet_min_T"] = q(rule["T"], "temperature", ("limits", "outlet_min_T", "T"))
            streams = rule.get("streams")
            if streams is not None:
                if not isinstance(streams, list) or not all(isinstance(x, str) for x in streams):
                    raise doc.err("streams must be a list of stream names",
                                  ("limits", "outlet_min_T", "streams"), key=False)
                out["outlet_streams"] = tuple(streams)
        else:
            out["outlet_min_T"] = q(rule, "temperature", ("limits", "outlet_min_T"))
    # limits on the hydraulic numbers of the blocks (letdown.sheet.blockflags.limit_warnings)
    if "max_velocity" in raw:
        out["max_velocity"] = q(raw["max_velocity"], "velocity", ("limits", "max_velocity"))
        if not out["max_velocity"] > 0.0:
            raise doc.err(f"max_velocity must be positive, got {raw['max_velocity']!r}",
                          ("limits", "max_velocity"), key=False)
    if "max_opening" in raw:
        out["max_opening"] = q(raw["max_opening"], "fraction", ("limits", "max_opening"))
        if not 0.0 < out["max_opening"] <= 1.0:
            raise doc.err(f"max_opening is a fraction of travel in (0, 1], got "
                          f"{raw['max_opening']!r}", ("limits", "max_opening"), key=False)
    if "max_noise" in raw:
        out["max_noise"] = _decibels(doc, raw["max_noise"], ("limits", "max_noise"))
    return out


#: A sound level limit outside this range [dB(A)] is a slip (hearing damage begins near 85 dB(A);
#: no limit is set below the quiet of a room; common practice).
NOISE_LIMIT_RANGE = (20.0, 200.0)


def _decibels(doc: _Doc, text, path) -> float:
    """A sound pressure level in dB(A): a number, or text such as '85 dBA' or '85 dB(A)'."""
    value = None
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        value = float(text)
    elif isinstance(text, str):
        m = re.fullmatch(r"\s*([-+]?\d+(?:\.\d*)?)\s*(dBA|dB\(A\)|dB)?\s*", text)
        value = float(m.group(1)) if m else None
    if value is None or not (math.isfinite(value)
                             and NOISE_LIMIT_RANGE[0] <= value <= NOISE_LIMIT_RANGE[1]):
        raise doc.err(f"max_noise is a sound level such as '85 dBA' (between "
                      f"{NOISE_LIMIT_RANGE[0]:g} and {NOISE_LIMIT_RANGE[1]:g}), got {text!r}",
                      path, key=False)
    return value


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


def loads(text: str, source: str = "<text>") -> Flowsheet:
    """Parse flowsheet YAML text.

    Parameters
    ----------
    text : str
        The YAML document.
    source : str
        Name used in error messages (the file path).

    Returns
    -------
    Flowsheet
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
    fs = Flowsheet(title=title, gas=gas, feeds=feeds, blocks=blocks, goals=goals,
                   limits=limits, solver=solver, source=source,
                   extra={"atmosphere": atmosphere, "normalise": normalise}, guesses=guesses,
                   measurements=measurements, cases=cases,
                   gases=named_gases(doc, normalise, _composition))
    from .graph import build_graph
    build_graph(fs)     # raises TopologyError with file:line
    return fs


def load(path) -> Flowsheet:
    """Read a flowsheet file.

    Parameters
    ----------
    path : str or os.PathLike
        The YAML file.

    Returns
    -------
    Flowsheet

    Raises
    ------
    InputError
        If the file cannot be read or is not a valid flowsheet (see :func:`loads`).
    """
    return loads(read_text(path), source=str(path))
