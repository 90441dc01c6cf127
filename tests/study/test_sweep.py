"""What-if sweeps (letdown sweep)."""
import json
import subprocess
import sys

import numpy as np
import pytest
import CoolProp.CoolProp as CP
from CoolProp import AbstractState

from letdown.errors import InputError
from letdown.sheet.loader import read_spec
from letdown.study.sweep import parse_variable, sweep

GATE = "flowsheets/gate-station.yaml"
#: CoolProp names of the gate-station components (CoolProp 8.0, test-only reference).
COOLPROP = {"methane": "Methane", "ethane": "Ethane", "propane": "Propane", "nitrogen": "Nitrogen",
            "carbon-dioxide": "CarbonDioxide", "hydrogen": "Hydrogen"}


@pytest.fixture(scope="module")
def gate():
    return read_spec(GATE)


@pytest.mark.slow
def test_hydrogen_blend_sweep_matches_coolprop_multiparameter_model(gate):
    """0-30 % hydrogen blended into the gate-station gas, GERG-2008: the preheat outlet that holds
    the network at 5 degC after the regulator agrees with CoolProp's multi-parameter mixture model
    (HEOS, GERG-2008-type departure functions; CoolProp 8.0, test-only) within 0.3 K."""
    table = sweep(gate, [parse_variable(gate, "blend.hydrogen=0:0.3:7")], model="gerg-2008")
    assert all(r[-2] for r in table.rows)
    x = table.column("blend.hydrogen [-]")
    warm = table.column("warm.T [K]")
    P_warm = table.column("warm.P [Pa]")
    net = table.column("network.T [K]")
    P_net = table.column("network.P [Pa]")
    names = list(gate.gas.composition) + ["hydrogen"]
    base = np.array(list(gate.gas.composition.values()) + [0.0])
    for i in range(x.size):
        z = (1 - x[i]) * base + x[i] * np.eye(len(names))[-1]
        keep = z > 0
        st = AbstractState("HEOS", "&".join(COOLPROP[n] for n, k in zip(names, keep) if k))
        st.set_mole_fractions(list(z[keep]))
        st.update(CP.PT_INPUTS, P_net[i], net[i])
        h = st.hmolar()
        st.update(CP.HmolarP_INPUTS, h, P_warm[i])
        assert warm[i] == pytest.approx(st.T(), abs=0.3), x[i]
    # hydrogen warms on throttling: less preheat is needed as the blend gets richer
    assert np.all(np.diff(warm) < 0)


def test_grid_and_zip(gate):
    a = parse_variable(gate, "supply.T=0degC:10degC:3")
    b = parse_variable(gate, "supply.P=50barg,60barg,70barg")
    grid = sweep(gate, [a, b])
    assert len(grid.rows) == 9
    zipped = sweep(gate, [a, b], mode="zip")
    assert len(zipped.rows) == 3
    T = zipped.column("supply.T [K]")
    np.testing.assert_allclose(T, [273.15, 278.15, 283.15])
    # each case is the file's own solve with that input (the goal holds the network at 5 degC)
    np.testing.assert_allclose(zipped.column("network.T [K]"), 278.15, atol=1e-5)
    # at one supply pressure, a warmer supply needs less preheat; at one temperature, a higher
    # supply pressure needs more (a larger let-down, more Joule-Thomson cooling)
    P = grid.column("supply.P [Pa]")
    Tg = grid.column("supply.T [K]")
    duty = grid.column("preheat.duty [W]")
    for p in np.unique(P):
        d = duty[P == p][np.argsort(Tg[P == p])]
        assert np.all(np.diff(d) < 0)
    for t in np.unique(Tg):
        d = duty[Tg == t][np.argsort(P[Tg == t])]
        assert np.all(np.diff(d) > 0)


def test_failed_cases_stay_in_the_table_with_their_reason(gate):
    table = sweep(gate, [parse_variable(gate, "goal1.at=5degC,80degC")])
    ok = table.column("converged")
    assert ok.tolist() == [1.0, 0.0]
    reason = table.rows[1][-1]
    assert "goal 1" in reason and "no preheat.T_out within" in reason
    assert np.isnan(table.column("preheat.duty [W]")[1])


@pytest.mark.parametrize("spec, message", [
    ("supply.X=1,2", "cannot sweep 'supply.X'"),
    ("supply.T=5 furlongs", "furlongs"),
    ("supply.T", "PATH=VALUES"),
    ("blend.unobtainium=0:0.1:2", "unknown component"),
    ("supply.T=0degC:10degC:zero", "not a whole number"),
])
def test_bad_variables_are_input_errors(gate, spec, message):
    with pytest.raises(InputError, match=message):
        parse_variable(gate, spec)


def test_command_line_writes_table_and_run_record(tmp_path):
    out = tmp_path / "run"
    proc = subprocess.run([sys.executable, "-m", "letdown.cli", "sweep", GATE,
                           "--vary", "supply.T=0degC,10degC", "--out", str(out),
                           "--outputs", "warm.T,preheat.duty"], capture_output=True, text=True)
    assert proc.returncode == 0, proc.stderr
    lines = (out / "sweep.csv").read_text().splitlines()
    assert lines[0] == "supply.T [K],warm.T [K],preheat.duty [W],converged,reason"
    assert len(lines) == 3
    record = json.loads((out / "run.json").read_text())
    assert record["model"] == "peng-robinson" and record["vary"] == ["supply.T=0degC,10degC"]


def test_command_line_bad_input_writes_nothing(tmp_path):
    out = tmp_path / "run"
    proc = subprocess.run([sys.executable, "-m", "letdown.cli", "sweep", GATE,
                           "--vary", "supply.T=0 furlongs", "--out", str(out)],
                          capture_output=True, text=True)
    assert proc.returncode == 2
    assert "furlongs" in proc.stderr and "Traceback" not in proc.stderr
    assert not out.exists()
