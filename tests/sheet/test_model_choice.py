"""A file without ``gas.model`` is solved with the model a practitioner would choose.

GERG-2008 (ISO 20765-2) for single-phase gas it covers, Peng-Robinson for anything that condenses or
holds a component GERG-2008 lacks; the result says which and why (issue 10, "The default model a
practitioner would choose"). The flowsheets are the shipped examples with their ``model`` line removed.
"""
from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

import letdown
from letdown.sheet.loader import parse_spec
from letdown.sheet.solve import Sheet

EXAMPLES = Path(__file__).resolve().parents[2] / "flowsheets"


def _without_model(name: str):
    text = (EXAMPLES / f"{name}.yaml").read_text()
    lines = [ln for ln in text.splitlines() if ln.strip() != "model: peng-robinson"]
    assert len(lines) == len(text.splitlines()) - 1     # the example named its model once
    return parse_spec("\n".join(lines) + "\n", source=f"{name}-no-model.yaml")


def _choice(result) -> dict:
    notes = [w for w in result.warnings if w["kind"] == "model_choice"]
    assert len(notes) == 1
    return notes[0]


def test_single_phase_station_without_model_is_solved_with_gerg_2008():
    pytest.importorskip("pyaga8")
    fs = _without_model("gate-station")
    assert not fs.gas.model_given
    result = Sheet(fs).solve()
    assert result.model == "gerg-2008"
    note = _choice(result)
    assert note["severity"] == "note" and "single-phase" in note["what"]
    # the same numbers as naming the model
    named = Sheet(fs).solve(model="gerg-2008")
    for s in named.streams:
        assert result.streams[s].T == pytest.approx(named.streams[s].T, abs=1e-9)
    assert result.equipment["preheat"]["duty_W"] == pytest.approx(
        named.equipment["preheat"]["duty_W"], rel=1e-12)


def test_refrigerant_loop_without_model_is_solved_with_peng_robinson():
    result = Sheet(_without_model("propane-chiller")).solve()
    assert result.model == "peng-robinson"
    note = _choice(result)
    assert "liquid phase" in note["what"]


def test_condensing_train_without_model_is_solved_with_peng_robinson():
    result = Sheet(_without_model("cold-separation")).solve()
    assert result.model == "peng-robinson"
    assert "field-gas" in _choice(result)["what"]


def test_component_outside_gerg_2008_keeps_the_cubic():
    text = (EXAMPLES / "gate-station.yaml").read_text()
    assert "nitrogen: 0.015" in text
    text = text.replace("nitrogen: 0.015", "nitrogen: 0.014, neopentane: 0.001")
    text = "\n".join(ln for ln in text.splitlines() if ln.strip() != "model: peng-robinson")
    result = Sheet(parse_spec(text + "\n", source="neo.yaml")).solve()
    assert result.model == "peng-robinson"
    assert "neopentane" in _choice(result)["what"]


def test_named_model_is_kept_and_not_annotated():
    result = letdown.load(EXAMPLES / "gate-station.yaml").solve()
    assert result.model == "peng-robinson"
    assert not [w for w in result.warnings if w["kind"] == "model_choice"]


def test_batch_chooses_one_model_for_all_cases():
    pytest.importorskip("pyaga8")
    fs = _without_model("gate-station")
    batch = Sheet(fs).solve_cases({"supply.T": np.array([275.0, 279.15, 285.0])})
    assert batch.model == "gerg-2008" and bool(np.all(batch.converged))
