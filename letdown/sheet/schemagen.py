"""The block kinds' part of the flowsheet file's JSON Schema, generated from their declarations
(:data:`letdown.equipment.registry.REGISTRY`).

The shipped ``flowsheet.schema.json`` holds the whole format; its ``$defs/block`` (the kind switch)
and ``$defs/<kind>`` of every kind are this module's output, and ``tests/sheet/test_registry.py`` fails
if they differ. After declaring or changing a kind, write the file again::

    python -m letdown.sheet.schemagen

(the rest of the schema -- gas, feeds, goals, limits, cases -- is edited in the file itself).
"""
from __future__ import annotations

import json
import sys
from pathlib import Path

from ..equipment.registry import PORT_SCHEMAS, REGISTRY

SCHEMA_PATH = Path(__file__).with_name("flowsheet.schema.json")

#: Every kind's free-text entry.
NOTE = {"type": "string", "description": "Free text for people; ignored by the solver."}


def kind_schema(name: str) -> dict:
    """``$defs/<name>``: the entries of one kind (ports, parameters, options), nothing else allowed."""
    kind = REGISTRY[name]
    props = {"kind": {"const": name}, "note": dict(NOTE)}
    props.update(json.loads(json.dumps(PORT_SCHEMAS[kind.ports])))
    for key, p in kind.parameters.items():
        props[key] = {"type": ["string", "number"], "description": p.description,
                      "x-letdown-quantity": p.quantity}
    props.update(json.loads(json.dumps(dict(kind.options))))
    ports = ["hot", "cold"] if kind.ports == "exchanger" else ["from", "to"]
    return {"type": "object", "description": kind.description, "properties": props,
            "required": ["kind"] + ports + list(kind.required), "additionalProperties": False}


def block_schema() -> dict:
    """``$defs/block``: the kind switch."""
    return {"type": "object", "required": ["kind"],
            "properties": {"kind": {"enum": list(REGISTRY)}},
            "allOf": [{"if": {"properties": {"kind": {"const": name}}, "required": ["kind"]},
                       "then": {"$ref": f"#/$defs/{name}"}} for name in REGISTRY]}


def generated(shipped: dict) -> dict:
    """``shipped`` with its block part replaced by the generated one (a new dict)."""
    out = json.loads(json.dumps(shipped))
    defs = out["$defs"]
    for name in list(defs.get("block", {}).get("properties", {}).get("kind", {}).get("enum", ())):
        if name not in REGISTRY:
            defs.pop(name, None)          # a kind no longer declared
    defs["block"] = block_schema()
    for name in REGISTRY:
        defs[name] = kind_schema(name)
    return out


def text(schema: dict) -> str:
    """The file's text: JSON indented by one space, non-ASCII kept, a final newline."""
    return json.dumps(schema, indent=1, ensure_ascii=False) + "\n"


def main() -> int:  # pragma: no cover - a maintainer's command
    shipped = json.loads(SCHEMA_PATH.read_text(encoding="utf-8"))
    SCHEMA_PATH.write_text(text(generated(shipped)), encoding="utf-8")
    print(f"wrote {SCHEMA_PATH}", file=sys.stderr)
    return 0


if __name__ == "__main__":  # pragma: no cover
    raise SystemExit(main())
