"""The flowsheet file as YAML with the line of every key, checked against the JSON Schema: the
first passes of the loader (:mod:`letdown.sheet.loader`), and the readers of located values the
later passes share.

* :func:`_read_yaml` -- the text (UTF-8, no control characters: :mod:`letdown.sheet.inputtext`)
  parsed with PyYAML's node API so that every mapping key keeps its line, a key written twice
  refused, nesting and alias blow-ups bounded (:data:`MAX_DEPTH`, :data:`MAX_NODES`);
* :func:`_validate_schema` -- the published JSON Schema ``flowsheet.schema.json`` (beside this
  module), jsonschema's first error in file order mapped back to its line and worded for people
  (:func:`_schema_error_message`);
* :class:`_Doc` (the plain data with the line of every path), :class:`_Quantities` (a quantity
  with its unit, located), :func:`_number`, :func:`_where`, :func:`_dotted`, :func:`_nearest` (the
  "did you mean" of a misspelt name), which the loader's section readers use.
"""
from __future__ import annotations

import difflib
import json
import math
from dataclasses import dataclass
from importlib import resources
from pathlib import Path

import jsonschema
import yaml

from ..errors import InputError
from ..quantities import MassFlow, parse_quantity
from .inputtext import _check_characters, _line_column
from .kinds import MASS_RATE, PARAMETERS
from .spec import Where

#: A file nesting deeper than this, or building more values than :data:`MAX_NODES` (YAML aliases
#: can multiply a small file a billion times), is refused (no flowsheet comes near either).
MAX_DEPTH = 64
MAX_NODES = 200_000

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
# Located values (used by the passes of meaning)
# ---------------------------------------------------------------------------------------------

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


