"""Batches are honest: every case of a batch lives or fails on its own (issue 10, "Batches are
honest").

A case that a block refuses (``InputError`` with ``cases``), whose loop or goal does not converge,
or whose balances do not close is marked failed with its reason and blank (NaN) numbers, its
streams ``converged`` false; the other cases get exactly the numbers they get when solved alone.
A strict solve still raises. These are regressions named for the symptoms seen on the code before
(a throttle refusing one case killed the whole batch; an unconverged exchanger loop reported -12 MW
of duty with a hot side leaving at 590 degC while every stream said converged).
"""
from __future__ import annotations

import dataclasses
import json
import subprocess
import sys

import numpy as np
import pytest

from tests.blocks import feed, fluid
from letdown.equipment import compressor, expander, mixer, throttle
from letdown.errors import ConvergenceError, InputError
from letdown.sheet.loader import read_spec
from letdown.sheet.solve import solve, solve_cases

GATE = "flowsheets/gate-station.yaml"
COLD = "flowsheets/cold-separation.yaml"
BAR = 1e5
ATM = 101325.0

#: Numbers of one case that must not differ from the same case solved alone: the cases of a batch
#: are independent (every block, loop step and goal step is per case), so only round-off may differ.
SAME = 1e-10


@pytest.fixture(scope="module")
def gate():
    return read_spec(GATE)


@pytest.fixture(scope="module")
def cold():
    return read_spec(COLD)


def _assert_same_case(batch, i, alone, j):
    """Case ``i`` of ``batch`` equals case ``j`` of ``alone`` (streams, duties, goals) to SAME."""
    for name, s in alone.streams.items():
        b = batch.streams[name]
        for attr in ("T", "P", "flow", "h", "vapour_fraction"):
            np.testing.assert_allclose(getattr(b, attr)[i], getattr(s, attr)[j], rtol=SAME,
                                       atol=1e-12, err_msg=f"{name}.{attr}")
        assert b.converged[i]
    for name, e in alone.equipment.items():
        for attr in ("duty", "power", "dP"):
            if getattr(e, attr) is not None:
                np.testing.assert_allclose(getattr(batch.equipment[name], attr)[i],
                                           getattr(e, attr)[j], rtol=SAME, atol=1e-6,
                                           err_msg=f"{name}.{attr}")
    for g, ga in zip(batch.goals, alone.goals):
        np.testing.assert_allclose(g.value[i], ga.value[j], rtol=SAME)
        assert g.met[i]


def _assert_blank_case(batch, i):
    """Case ``i`` is failed: NaN numbers everywhere, streams not converged, a reason."""
    assert not batch.converged[i]
    assert batch.failures[i]
    for name, s in batch.streams.items():
        assert not s.converged[i], name
        for attr in ("T", "P", "flow", "h", "vapour_fraction"):
            assert np.isnan(getattr(s, attr)[i]), f"{name}.{attr}"
    for name, e in batch.equipment.items():
        for attr in ("duty", "power", "dP"):
            if getattr(e, attr) is not None:
                assert np.isnan(getattr(e, attr)[i]), f"{name}.{attr}"
    for g in batch.goals:
        assert np.isnan(g.value[i]) and np.isnan(g.achieved[i]) and not g.met[i]


# -- blocks name the cases they refuse --------------------------------------------------------------
def test_pressure_guards_name_the_refused_cases():
    gas = fluid("lean")
    inlet = feed(gas, [300.0, 300.0, 300.0], [50e5, 50e5, 50e5], [1.0, 1.0, 1.0])
    P_out = np.array([40e5, 60e5, 30e5])
    with pytest.raises(InputError, match="above the inlet pressure") as err:
        throttle.run(gas, "valve", {"in": inlet}, {"P_out": P_out})
    assert err.value.cases.tolist() == [False, True, False]
    with pytest.raises(InputError, match="above the inlet pressure") as err:
        expander.run(gas, "turbine", {"in": inlet}, {"P_out": P_out, "efficiency": 0.8})
    assert err.value.cases.tolist() == [False, True, False]
    with pytest.raises(InputError, match="below the inlet pressure") as err:
        compressor.run(gas, "booster", {"in": inlet}, {"P_out": P_out, "efficiency": 0.75})
    assert err.value.cases.tolist() == [True, False, True]
    other = feed(gas, [300.0, 300.0, 300.0], [45e5, 45e5, 45e5], [1.0, 1.0, 1.0])
    with pytest.raises(InputError, match="above the lowest inlet") as err:
        mixer.run(gas, "mix", {"in0": inlet, "in1": other}, {"P_out": P_out})
    assert err.value.cases.tolist() == [False, True, False]


# -- per-case input errors --------------------------------------------------------------------------
def test_one_refused_case_fails_alone_and_the_others_are_as_if_solved_alone(gate):
    """A regulator set point above its inlet in one case of three: that case fails with the
    throttle's refusal; the other two equal their own solve."""
    P_out = np.array([17.0, 80.0, 10.0]) * BAR + ATM
    batch = solve_cases(gate, {"regulator.P_out": P_out}, strict=False)
    assert batch.converged.tolist() == [True, False, True]
    assert "above the inlet pressure" in batch.failures[1]
    assert "regulator" in batch.failures[1]
    assert batch.failures[0] == "" and batch.failures[2] == ""
    _assert_blank_case(batch, 1)
    alone = solve_cases(gate, {"regulator.P_out": P_out[[0, 2]]}, strict=False)
    _assert_same_case(batch, 0, alone, 0)
    _assert_same_case(batch, 2, alone, 1)
    # balances are checked on the cases that lived, and close
    mole, energy = batch.balance_closures()["regulator"]
    assert mole[0] <= 1e-9 and energy[2] <= 1e-6


def test_a_strict_batch_and_a_single_solve_still_raise_the_located_refusal(gate):
    P_out = np.array([17.0, 80.0]) * BAR + ATM
    with pytest.raises(InputError, match="above the inlet pressure") as err:
        solve_cases(gate, {"regulator.P_out": P_out})
    assert err.value.file and err.value.line
    assert "(case 1)" in str(err.value) and err.value.cases.tolist() == [False, True]
    bad = dataclasses.replace(gate, blocks={**gate.blocks, "regulator": dataclasses.replace(
        gate.blocks["regulator"], params={**gate.blocks["regulator"].params,
                                          "P_out": 80 * BAR + ATM})})
    with pytest.raises(InputError, match="above the inlet pressure") as err:
        solve(bad)
    assert err.value.line is not None
    # one case: no batch index (the goal's two bracket ends are an internal batch of two)
    assert "(case" not in str(err.value)


def test_every_case_refused_gives_a_blank_batch_not_an_error(gate):
    batch = solve_cases(gate, {"regulator.P_out": np.array([80.0, 90.0]) * BAR + ATM},
                        strict=False)
    assert batch.converged.tolist() == [False, False]
    _assert_blank_case(batch, 0)
    _assert_blank_case(batch, 1)
    assert batch.equipment["preheat"].duty is not None     # the same fields as a solved batch


def test_a_goal_with_no_root_in_one_case_blanks_that_case_only(gate):
    """Holding the network at 150 degC needs a preheat outlet far above the 90 degC bracket."""
    target = np.array([5.0, 150.0, 10.0]) + 273.15
    batch = solve_cases(gate, {"goal1.at": target}, strict=False)
    assert batch.converged.tolist() == [True, False, True]
    assert "goal 1" in batch.failures[1] and "within" in batch.failures[1]
    _assert_blank_case(batch, 1)
    alone = solve_cases(gate, {"goal1.at": target[[0, 2]]})
    _assert_same_case(batch, 0, alone, 0)
    _assert_same_case(batch, 2, alone, 1)


# -- non-convergence --------------------------------------------------------------------------------
def test_an_unconverged_loop_case_is_blank_not_its_last_iterate(cold):
    """With the field gas at 50 degC the gas-gas loop of the cold-separation train does not
    converge; its last iterate had -12 MW of exchanger duty and a cold separator at 590 degC, with
    every stream saying converged. Now that case is blank and the 30 degC case is as if alone."""
    # (at 10 degC the exchanger's 24 degC cold outlet is refused as a temperature cross: 30 degC,
    # the file's own feed temperature, is the solved case)
    T = np.array([30.0, 50.0]) + 273.15
    batch = solve_cases(cold, {"field-gas.T": T}, strict=False)
    assert batch.converged.tolist() == [True, False]
    assert "loop" in batch.failures[1] and "did not converge" in batch.failures[1]
    _assert_blank_case(batch, 1)
    assert not batch.loops[0].converged[1]
    alone = solve_cases(cold, {"field-gas.T": T[:1]})
    _assert_same_case(batch, 0, alone, 0)
    with pytest.raises(ConvergenceError, match="did not converge"):
        solve_cases(cold, {"field-gas.T": T})


def test_a_case_whose_balances_do_not_close_fails_alone(gate):
    """A negative feed flow (which the input checks refuse in files and profiles) must not make the
    balance check raise for the whole batch ('energy balance closes only to 1.9e+291')."""
    flow = np.array([1000.0, -1000.0])
    batch = solve_cases(gate, {"supply.flow": flow}, strict=False)
    assert batch.converged.tolist() == [True, False]
    _assert_blank_case(batch, 1)
    alone = solve_cases(gate, {"supply.flow": flow[:1]})
    _assert_same_case(batch, 0, alone, 0)


# -- the record of a failed case ---------------------------------------------------------------------
def test_json_of_a_failed_case_says_why_and_holds_no_numbers(gate):
    P_out = np.array([17.0, 80.0]) * BAR + ATM
    batch = solve_cases(gate, {"regulator.P_out": P_out}, strict=False)
    ok, bad = (json.loads(batch.case(i).to_json()) for i in (0, 1))
    assert ok["converged"] is True and ok["failure"] is None
    assert bad["converged"] is False and "above the inlet pressure" in bad["failure"]
    assert bad["streams"]["network"]["T_K"] is None
    assert bad["streams"]["network"]["converged"] is False
    assert ok["streams"]["network"]["converged"] is True
    assert bad["equipment"]["preheat"]["duty_W"] is None
    assert bad["goals"][0]["value"] is None and bad["goals"][0]["met"] is False
    # no warnings computed from the numbers of a failed case
    assert bad["warnings"] == []


# -- sweep -----------------------------------------------------------------------------------------
def test_sweep_writes_every_row_and_exits_1_when_a_case_failed(tmp_path):
    proc = subprocess.run([sys.executable, "-m", "letdown.cli", "sweep", GATE,
                           "--vary", "regulator.P_out=17barg,80barg,10barg"],
                          capture_output=True, text=True)
    assert proc.returncode == 1, proc.stderr
    lines = proc.stdout.splitlines()
    assert len(lines) == 4
    header = lines[0].split(",")
    rows = [ln.split(",", len(header) - 1) for ln in lines[1:]]
    conv = header.index("converged")
    assert [r[conv] for r in rows] == ["True", "False", "True"]
    bad = dict(zip(header, rows[1]))
    assert float(bad["regulator.P_out [Pa]"]) == pytest.approx(80e5 + ATM)
    assert bad["network.T [K]"] == "" and bad["preheat.duty [W]"] == ""
    assert "above the inlet pressure" in bad["reason"]
    assert "1 of 3 cases failed" in proc.stderr


def test_sweep_exits_0_when_every_case_solved():
    proc = subprocess.run([sys.executable, "-m", "letdown.cli", "sweep", GATE,
                           "--vary", "regulator.P_out=17barg,10barg"], capture_output=True, text=True)
    assert proc.returncode == 0, proc.stderr
    assert len(proc.stdout.splitlines()) == 3


def test_a_refusal_inside_a_loop_fails_that_case_only(cold):
    """The JT valve sits inside the gas-gas loop: a set point above its inlet in one case is
    refused during the loop's iterations; the other cases converge as if alone, with the same
    iteration counts."""
    P_out = np.array([40.0, 75.0, 35.0]) * BAR + ATM
    batch = solve_cases(cold, {"jt-valve.P_out": P_out}, strict=False)
    assert batch.converged.tolist() == [True, False, True]
    assert "jt-valve" in batch.failures[1] and "above the inlet pressure" in batch.failures[1]
    _assert_blank_case(batch, 1)
    alone = solve_cases(cold, {"jt-valve.P_out": P_out[[0, 2]]})
    _assert_same_case(batch, 0, alone, 0)
    _assert_same_case(batch, 2, alone, 1)
    assert batch.loops[0].iterations[[0, 2]].tolist() == alone.loops[0].iterations.tolist()


def test_different_failures_in_one_batch_each_keep_their_own_reason(cold):
    """A refusal, a loop that does not converge and a solved case in one batch."""
    cases = {"field-gas.T": np.array([30.0, 50.0, 30.0]) + 273.15,
             "jt-valve.P_out": np.array([40.0, 40.0, 75.0]) * BAR + ATM}
    batch = solve_cases(cold, cases, strict=False)
    assert batch.converged.tolist() == [True, False, False]
    assert "did not converge" in batch.failures[1]
    assert "above the inlet pressure" in batch.failures[2]
    for i in (1, 2):
        _assert_blank_case(batch, i)
    alone = solve_cases(cold, {k: v[:1] for k, v in cases.items()})
    _assert_same_case(batch, 0, alone, 0)


def test_the_sweep_table_of_a_refused_case_keeps_inputs_and_reason(gate):
    from letdown.study.sweep import parse_variable, sweep
    table = sweep(gate, [parse_variable(gate, "regulator.P_out=80barg,17barg")])
    assert table.column("converged").tolist() == [0.0, 1.0]
    assert table.column("regulator.P_out [Pa]")[0] == pytest.approx(80e5 + ATM)
    assert np.isnan(table.column("network.T [K]")[0])
    assert "above the inlet pressure" in table.rows[0][-1]
    assert table.rows[1][-1] == ""


@pytest.mark.parametrize("path, seed", [(GATE, 3), ("flowsheets/two-stage-expander.yaml", 5),
                                        ("flowsheets/two-stage-letdown.yaml", 11)])
def test_random_batches_fail_case_by_case(path, seed):
    """A fixed-seed fuzz of what a practitioner sweeps (feed T and P, set points, goal targets,
    some out of reach): every case is either failed (a reason, blank numbers) or has exactly the
    numbers of the batch of the solved cases alone."""
    fs = read_spec(path)
    rng = np.random.default_rng(seed)
    n = 12
    feed = next(iter(fs.feeds))
    cases = {f"{feed}.T": fs.feeds[feed].T + rng.uniform(-25.0, 30.0, n),
             f"{feed}.P": fs.feeds[feed].P * rng.uniform(0.3, 1.3, n),
             "goal1.at": fs.goals[0].target + rng.uniform(-20.0, 60.0, n)}
    for name, spec in fs.blocks.items():
        if "P_out" in spec.params:
            cases[f"{name}.P_out"] = spec.params["P_out"] * rng.uniform(0.5, 2.5, n)
    batch = solve_cases(fs, cases, strict=False)
    failed = np.flatnonzero(~batch.converged)
    solved = np.flatnonzero(batch.converged)
    assert failed.size and solved.size          # the seed gives both kinds
    for i in failed:
        _assert_blank_case(batch, i)
    alone = solve_cases(fs, {k: v[solved] for k, v in cases.items()})
    for j, i in enumerate(solved):
        _assert_same_case(batch, i, alone, j)


@pytest.mark.parametrize("key, values, words", [
    ("supply.flow", [1000.0, -1000.0], "negative"),
    ("supply.T", [280.0, float("nan")], "not a number"),
    ("supply.P", [60e5, -1e5], "not positive"),
    ("supply.T", [280.0, 0.0], "not positive"),
])
def test_a_feed_value_no_gas_can_have_is_refused_for_its_case(gate, key, values, words):
    """A negative flow, a NaN or a non-positive absolute temperature or pressure in one case is that
    case's input error (strict: raised, naming the case variable), not a balance that 'closes only
    to 1.9e+291' or a flash that did not converge."""
    batch = solve_cases(gate, {key: np.array(values)}, strict=False)
    assert batch.converged.tolist() == [True, False]
    assert words in batch.failures[1] and key in batch.failures[1]
    _assert_blank_case(batch, 1)
    with pytest.raises(InputError, match=words) as err:
        solve_cases(gate, {key: np.array(values)})
    assert err.value.field == f"cases.{key}"


def test_margins_of_a_batch_with_a_failed_case_are_those_of_the_solved_cases_alone(gate):
    """The freezing margins (water, hydrate temperature) are computed on the cases that lived:
    equal to their solve alone; the failed case has none, and no warning of its own."""
    P_out = np.array([17.0, 80.0, 12.0]) * BAR + ATM
    batch = solve_cases(gate, {"regulator.P_out": P_out}, strict=False, margins=True)
    alone = solve_cases(gate, {"regulator.P_out": P_out[[0, 2]]}, margins=True)
    assert batch.converged.tolist() == [True, False, True]
    for name, fz in alone.freezing.items():
        got = batch.freezing[name]
        np.testing.assert_allclose(got.hydrate_T[[0, 2]], fz.hydrate_T, rtol=SAME)
        np.testing.assert_allclose(got.water_dew_T[[0, 2]], fz.water_dew_T, rtol=SAME)
        assert np.isnan(got.hydrate_T[1]) and np.isnan(got.water_dew_T[1])
    bad = batch.case(1).to_dict()
    assert bad["streams"]["network"]["hydrate_T_K"] is None and bad["warnings"] == []
    whats = {(w.where, w.kind): w.cases for w in batch.warnings}
    for w in alone.warnings:
        assert whats[(w.where, w.kind)] == tuple(int([0, 2][c]) for c in w.cases)


def test_sweep_out_writes_its_files_when_a_case_failed(tmp_path):
    out = tmp_path / "run"
    proc = subprocess.run([sys.executable, "-m", "letdown.cli", "sweep", GATE,
                           "--vary", "regulator.P_out=80barg,17barg", "--out", str(out)],
                          capture_output=True, text=True)
    assert proc.returncode == 1, proc.stderr
    assert len((out / "sweep.csv").read_text().splitlines()) == 3
    assert json.loads((out / "run.json").read_text())["failed"] == 1
