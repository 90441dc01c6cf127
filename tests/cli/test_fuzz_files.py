"""A small fixed-seed slice of ``bench/fuzz_files.py`` (the full run is a benchmark, not a test).

Mutated shipped flowsheets (lines deleted, duplicated, swapped; numbers to 0, -1, 1e30, nan, text or
scaled; wrong units; renamed keys, kinds and streams; truncation; control bytes; invalid UTF-8) run
through ``solve --json`` and ``check`` in-process. Issue 10's target: no exit 3, no traceback, every
refusal one line, and no exit-0 result with a NaN, a non-positive absolute temperature or pressure,
a negative flow or an open balance.
"""
import importlib.util
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]

#: Seed and size of the slice: fixed, a few seconds.
SEED = 20261202
PER_FILE = 12


def _fuzz():
    spec = importlib.util.spec_from_file_location("fuzz_files", ROOT / "bench" / "fuzz_files.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


@pytest.mark.parametrize("name", ["gate-station.yaml", "two-stage-letdown.yaml",
                                  "propane-chiller.yaml"])
def test_mutated_flowsheets_are_refused_or_right(tmp_path, name):
    fuzz = _fuzz()
    records = fuzz.fuzz_file((str(ROOT / "flowsheets" / name), PER_FILE, SEED, 0, PER_FILE,
                              str(tmp_path)))
    assert len(records) == 2 * PER_FILE
    failures = [(r["k"], r["what"], r["verb"], r["problems"]) for r in records if r["problems"]]
    assert failures == []
    codes = {r["rc"] for r in records}
    assert codes <= {0, 1, 2}


def test_mutations_are_reproducible_and_varied():
    fuzz = _fuzz()
    path = ROOT / "flowsheets" / "gate-station.yaml"
    a = fuzz.mutants(path, 200, SEED)
    assert a == fuzz.mutants(path, 200, SEED)              # fixed seed, same mutants
    assert a != fuzz.mutants(path, 200, SEED + 1)
    kinds = {what.split(" ")[0] for _, _, what in a}
    for word in ("delete", "duplicate", "swap", "truncate", "number", "unit", "kind", "key",
                 "reference", "control", "bytes", "indent"):
        assert word in kinds, word
    assert any(isinstance(c, bytes) for _, c, _ in a)


def test_the_judge_catches_what_it_looks_for():
    fuzz = _fuzz()
    good = ('{"converged": true, "streams": {"a": {"T_K": 280.0, "P_Pa": 1e6, "flow_mol_s": 1.0, '
            '"vapour_fraction": 1.0}}, "equipment": {"b": {"mole_balance_closure": 0.0, '
            '"energy_balance_closure": 1e-9}}}')
    assert fuzz.judge_json(good) == []
    assert fuzz.judge_json(good.replace("280.0", "NaN"))
    assert fuzz.judge_json(good.replace("280.0", "-5.0"))
    assert fuzz.judge_json(good.replace('"flow_mol_s": 1.0', '"flow_mol_s": -1.0'))
    assert fuzz.judge_json(good.replace("1e-9", "0.5"))
    assert fuzz.judge_json(good.replace("true", "false"))
    assert fuzz.judge(("solve",), 3, "", "letdown: internal error: KeyError", None)
    assert fuzz.judge(("check",), 2, "", "letdown: a\nb\n", None)
    assert fuzz.judge(("check",), 2, "", "letdown: x.yaml:3: gas: bad\n", None) == []


def test_the_judge_reads_null_as_nan():
    # the result JSON writes NaN as null: a stream without a temperature is a NaN answer
    fuzz = _fuzz()
    base = ('{"converged": true, "streams": {"a": {"T_K": 280.0, "P_Pa": 1e6, "flow_mol_s": 1.0}},'
            ' "equipment": {"b": {"duty_W": 5.0, "mole_balance_closure": 0.0, '
            '"energy_balance_closure": 0.0}}}')
    assert fuzz.judge_json(base) == []
    assert fuzz.judge_json(base.replace("280.0", "null"))
    assert fuzz.judge_json(base.replace('"duty_W": 5.0', '"duty_W": null'))


def test_mutated_profile_and_measurement_csvs_are_read_or_refused_with_a_line(tmp_path):
    # the same mutations on the year profile and the --data measurement CSV: each file is read
    # (every profile value finite, every flow positive) or refused with its line, never a bug
    import random

    import numpy as np

    from letdown.errors import InputError
    from letdown.sheet.loader import read_spec
    from letdown.sheet.measurements import read_csv
    from letdown.study.year import read_profile
    fuzz = _fuzz()
    fs = read_spec(ROOT / "flowsheets" / "fired-gate-station.yaml")
    profile = "".join((ROOT / "flowsheets" / "profiles" / "harrowfield-2026.csv")
                      .read_text().splitlines(keepends=True)[:20])
    data = (ROOT / "flowsheets" / "fired-gate-station-readings.csv").read_text()
    rng = random.Random(SEED)
    target = tmp_path / "mutant.csv"
    outcomes = set()
    for which, base in (("profile", profile), ("data", data)):
        for _ in range(150):
            content, what = fuzz.mutate(base, rng)
            if isinstance(content, bytes):
                target.write_bytes(content)
            else:
                target.write_text(content, encoding="utf-8", errors="surrogatepass")
            try:
                if which == "profile":
                    p = read_profile(target)
                    assert all(np.all(np.isfinite(v)) for v in p.values.values()), what
                    assert np.all(p.values["flow"] > 0.0), what
                else:
                    read_csv(target, fs)
                outcomes.add((which, "read"))
            except InputError as exc:
                assert exc.line is not None and exc.file == str(target), (what, str(exc))
                outcomes.add((which, "refused"))
    assert len(outcomes) == 4                 # both files both read and refused
