"""Second opinion across models (letdown crosscheck)."""
import json
import subprocess
import sys

import numpy as np
import pytest

import letdown
from letdown.sheet.loader import read_spec
from letdown.study.crosscheck import SPREAD_T_K, applicable_models, crosscheck

BLEND = """title: hydrogen blend at a fictional district station
gas:
  model: peng-robinson
  composition: {methane: 0.75, ethane: 0.04, propane: 0.01, nitrogen: 0.0, hydrogen: 0.20}
feeds:
  supply: {T: 8 degC, P: 40 barg, flow: 20000 Sm3/h}
equipment:
  preheat:   {kind: heater,   from: supply, to: warm, T_out: 25 degC}
  regulator: {kind: throttle, from: warm, to: district, P_out: 4 barg}
"""


@pytest.fixture(scope="module")
def gate():
    return crosscheck(read_spec("flowsheets/gate-station.yaml"))


def test_gate_station_shows_the_model_spread(gate):
    assert gate.models == ("peng-robinson", "soave-redlich-kwong", "gerg-2008")
    assert "peng-robinson-1978" in gate.skipped          # no component with omega > 0.491
    rows = {r.what: r for r in gate.rows}
    # each value is that model's own solve of the file
    for model in gate.models:
        res = letdown.load("flowsheets/gate-station.yaml").solve(model=model)
        assert rows["warm.T"].values[model] == pytest.approx(res.streams["warm"].T, abs=1e-9)
        assert rows["preheat.duty"].values[model] == pytest.approx(
            res.equipment["preheat"]["duty_W"], rel=1e-12)
    # the goal holds the network at 5 degC with every model: no spread there
    assert rows["network.T"].spread < 1e-6 and not rows["network.T"].flagged
    # Peng-Robinson needs ~2 K more preheat than GERG-2008 (docs/models.md)
    warm = rows["warm.T"]
    assert warm.values["peng-robinson"] - warm.values["gerg-2008"] > SPREAD_T_K
    assert warm.flagged and rows["preheat.duty"].flagged
    assert warm.spread == pytest.approx(max(warm.values.values()) - min(warm.values.values()))


def test_hydrogen_blend_flags_the_cubic_models(tmp_path):
    path = tmp_path / "blend.yaml"
    path.write_text(BLEND)
    cc = crosscheck(read_spec(str(path)))
    assert "gerg-2008" in cc.models and not cc.failures
    for model in ("peng-robinson", "soave-redlich-kwong"):
        assert any("hydrogen fraction" in what for _, what in cc.warnings[model]), model
    assert not any("hydrogen fraction" in what for _, what in cc.warnings["gerg-2008"])


def test_gerg_refusal_is_reported_not_fatal():
    # the cold-separation train splits phases: GERG-2008 refuses, the cubic models answer
    cc = crosscheck(read_spec("flowsheets/cold-separation.yaml"))
    assert "two phases" in cc.failures["gerg-2008"]
    rows = {r.what: r for r in cc.rows}
    assert np.isnan(rows["cold-gas.T"].values["gerg-2008"])
    assert np.isfinite(rows["cold-gas.T"].values["peng-robinson"])


def test_models_without_gerg_parameters_are_left_out():
    from letdown.sheet.spec import SheetSpec, GasSpec
    fs = SheetSpec("x", GasSpec("peng-robinson", {"methane": 0.9, "methanol": 0.1}), {}, {})
    models, skipped = applicable_models(fs)
    assert models == ["peng-robinson", "peng-robinson-1978", "soave-redlich-kwong"]
    assert "methanol" in skipped["gerg-2008"]


def test_command_line_json():
    out = subprocess.run([sys.executable, "-m", "letdown.cli", "crosscheck",
                          "flowsheets/gate-station.yaml", "--json"],
                         capture_output=True, text=True)
    assert out.returncode == 0, out.stderr
    data = json.loads(out.stdout)
    assert data["models"] == ["peng-robinson", "soave-redlich-kwong", "gerg-2008"]
    assert any(r["flagged"] for r in data["rows"])
    assert set(data["assumptions"]) == set(data["models"])
