"""Small things people expect (issue 15): ``letdown new station|train`` writes a commented starter
that ``check`` accepts and ``solve`` solves; ``--help`` lists the models and the unit spellings,
and every spelling it lists is one the unit parser accepts; ``--quiet`` is accepted."""
from __future__ import annotations

import re

import pytest

from letdown.cli import HELP_EPILOG, main
from letdown.errors import InputError
from letdown.fluid.fluid import MODEL_NAMES
from letdown.quantities import parse_quantity


@pytest.mark.parametrize("kind", ["station", "train"])
def test_starter_is_checked_and_solved(kind, tmp_path, capsys):
    path = tmp_path / f"{kind}.yaml"
    assert main(["new", kind, str(path)]) == 0
    text = path.read_text()
    assert text.count("#") >= 10 and "fictional" in text            # commented, invented names
    assert main(["check", str(path)]) == 0
    assert "ok --" in capsys.readouterr().out
    assert main(["solve", str(path)]) == 0
    out = capsys.readouterr().out
    assert "Streams" in out and "licensed staff" in out
    if kind == "station":
        assert re.search(r"outlet\.T = 5\.0+ degC .*: met", out)      # its goal is held
    else:
        assert "tear cold-gas" in out                                # its loop converged
    # printed without a file name; an existing file is never overwritten
    assert main(["new", kind]) == 0
    assert capsys.readouterr().out == text
    assert main(["new", kind, str(path)]) == 2
    assert "exists" in capsys.readouterr().err


def test_help_lists_every_model_and_accepted_units(capsys):
    assert main(["--help"]) == 0
    out = capsys.readouterr().out
    for canonical in set(MODEL_NAMES.values()):
        assert canonical in out
    for alias in MODEL_NAMES:
        assert alias in out
    assert "new" in out and "barg" in out and "MMscfd" in out
    kinds = {"temperature": "temperature", "difference": "temperature_difference",
             "pressure": "pressure", "pressure drop": "pressure_difference", "flow": "flow",
             "power, duty": "power"}
    checked = 0
    head = None
    for line in HELP_EPILOG.split("unit spellings")[1].split("display units")[0].splitlines():
        head = line[:14].strip() or head                # a continuation line keeps its kind
        if head not in kinds:
            continue
        body = line[14:].split("UA")[0]
        for unit in re.split(r"[,;]\s*", re.sub(r"\([^)]*\)|gauge ", "", body)):
            unit = unit.strip()
            if unit:
                try:                           # understood: a value, or refused as implausible
                    parse_quantity(f"5 {unit}", kinds[head])
                except InputError as exc:
                    assert "plausible" in str(exc), (unit, str(exc))
                checked += 1
    assert checked >= 30


def test_quiet_turns_the_progress_bar_off(capsys, monkeypatch):
    pytest.importorskip("tqdm")
    import sys
    from pathlib import Path

    from letdown.study import executors
    gate = Path(__file__).resolve().parents[2] / "flowsheets" / "gate-station.yaml"
    monkeypatch.setattr(executors, "PROGRESS_DELAY", 0.0)     # show it at once, for the test
    monkeypatch.setattr(sys.stderr, "isatty", lambda: True, raising=False)
    args = ["sweep", str(gate), "--vary", "supply.T=0degC,5degC"]
    assert main(args) == 0
    assert "solving" in capsys.readouterr().err                # a terminal: the bar
    assert main(args + ["--quiet"]) == 0
    out = capsys.readouterr()
    assert "solving" not in out.err and out.out.startswith("supply.T [K]")
    assert executors.PROGRESS_DELAY == 0.0                     # restored after the run
