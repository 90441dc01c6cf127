"""The HTML calculation record (`letdown solve FILE --html PATH`, issue 15).

Structure checks on every shipped example: every stream and block named in the drawing, every
warning present, the input's SHA-256 right, nothing fetched from outside, the drawing valid XML
with no two stream labels overlapping.
"""
from __future__ import annotations

import hashlib
import html
import json
import re
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest

from letdown.cli import main
from letdown.report.drawing import flowsheet_svg

EXAMPLES = Path(__file__).resolve().parents[2] / "flowsheets"
FILES = sorted(EXAMPLES.glob("*.yaml"))


@pytest.fixture(scope="module")
def records(tmp_path_factory):
    out = {}
    for f in FILES:
        path = tmp_path_factory.mktemp("html") / f"{f.stem}.html"
        assert main(["solve", str(f), "--html", str(path)]) == 0
        assert main(["solve", str(f), "--json"]) == 0
        out[f.stem] = path
    return out


def _svg(text: str) -> ET.Element:
    m = re.search(r"<svg class=\"flowsheet\".*?</svg>", text, re.S)
    assert m, "no flowsheet drawing"
    return ET.fromstring(m.group(0))


def _boxes(svg: ET.Element) -> dict:
    out = {}
    for g in svg.iter("g"):
        if "data-label" in g.attrib:
            r = g.find("rect")
            x, y, w, h = (float(r.attrib[k]) for k in ("x", "y", "width", "height"))
            out[g.attrib["data-label"]] = (x, y, x + w, y + h)
    return out


@pytest.mark.parametrize("name", [f.stem for f in FILES])
def test_record_names_every_stream_block_and_warning(records, name, capsys):
    capsys.readouterr()
    main(["solve", str(EXAMPLES / f"{name}.yaml"), "--json"])
    result = json.loads(capsys.readouterr().out)
    text = records[name].read_text(encoding="utf-8")
    svg = _svg(text)
    drawn_streams = {p.attrib["data-stream"] for p in svg.iter("path") if "data-stream" in p.attrib}
    drawn_blocks = {g.attrib["data-block"] for g in svg.iter("g") if "data-block" in g.attrib}
    assert drawn_streams == set(result["streams"])
    assert drawn_blocks == set(result["equipment"])
    for w in result["warnings"]:
        assert html.escape(w["what"]) in text
    raw = (EXAMPLES / f"{name}.yaml").read_bytes()
    assert hashlib.sha256(raw).hexdigest() in text
    assert html.escape(raw.decode("utf-8")) in text          # the input echoed whole
    assert "Engineering estimates" in text or "engineering estimates" in text


@pytest.mark.parametrize("name", [f.stem for f in FILES])
def test_record_is_self_contained(records, name):
    text = records[name].read_text(encoding="utf-8")
    assert not re.search(r"(https?:)?//[a-z0-9.-]+\.[a-z]{2,}", text.replace(
        html.escape((EXAMPLES / f"{name}.yaml").read_text()), ""), re.I)
    assert "<script" not in text and "<link" not in text and "@import" not in text
    assert "src=" not in text


@pytest.mark.parametrize("name", [f.stem for f in FILES])
def test_stream_labels_do_not_overlap(records, name):
    boxes = list(_boxes(_svg(records[name].read_text(encoding="utf-8"))).values())
    for i, a in enumerate(boxes):
        for b in boxes[i + 1:]:
            assert a[2] <= b[0] or b[2] <= a[0] or a[3] <= b[1] or b[3] <= a[1], (a, b)


def test_recycle_and_hazard_are_drawn_as_such():
    equipment = {"mix": {"kind": "mixer", "inlets": {"a": "feed", "b": "back"},
                         "outlets": {"out": "mixed"}},
                 "split": {"kind": "splitter", "inlets": {"in": "mixed"},
                           "outlets": {"a": "back", "b": "product"}}}
    labels = {s: [s] for s in ("feed", "mixed", "back", "product")}
    svg = ET.fromstring(flowsheet_svg(equipment, labels, tears=["back"],
                                      hazards={"product": "hydrate"}))
    classes = {p.attrib["data-stream"]: p.attrib["class"] for p in svg.iter("path")
               if "data-stream" in p.attrib}
    assert "recycle" in classes["back"] and "recycle" not in classes["mixed"]
    assert "hazard" in classes["product"] and "hazard" not in classes["feed"]
    legend = "".join(svg.itertext())
    assert "product: hydrate" in legend


def test_unwritable_record_is_refused_without_a_partial_file(tmp_path, capsys):
    target = tmp_path / "missing-dir" / "r.html"
    code = main(["solve", str(EXAMPLES / "gate-station.yaml"), "--html", str(target)])
    assert code == 2
    assert "--html" in capsys.readouterr().err
    assert not target.parent.exists()
