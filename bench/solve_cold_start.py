"""Cold-start wall time of the command line (issue 3: ``letdown solve`` on the gate station < 1 s).

Each run is a new process, as an engineer's shell would start it: the interpreter starts, letdown
is imported, the file is read, validated and (for ``solve``) solved and reported. Timed with
``time.perf_counter`` around ``subprocess.run``; stdout and stderr are captured and discarded, and
every run must exit with code 0. The operating system's file cache is warm after the first run, as it
would be on an engineer's machine; all runs are printed so that a slow first one shows.

For scale the script also times a bare interpreter (``python -c pass``) and ``import letdown`` in
the same way. Where the environment sets ``PYTHONDONTWRITEBYTECODE`` (every process then compiles
letdown's sources again), ``letdown solve`` is also timed with a bytecode cache in a temporary
directory (``PYTHONPYCACHEPREFIX``; one untimed run fills it), as on a usual installation.

Usage::

    python bench/solve_cold_start.py [--runs 7] [--file flowsheets/gate-station.yaml]

This is a benchmark, not a test: nothing here is run by pytest.
"""
from __future__ import annotations

import argparse
import os
import platform
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
#: Issue 3: ``letdown solve`` on the gate-station example within this wall time [s].
TARGET_S = 1.0
DEFAULT_RUNS = 7


def letdown_command() -> list[str]:
    """The ``letdown`` console script on PATH (what users run), else this interpreter's module."""
    script = shutil.which("letdown")
    if script is not None:
        return [script]
    return [sys.executable, "-m", "letdown.cli"]


def time_runs(argv: list[str], runs: int, env: dict | None = None) -> list[float]:
    """Wall time [s] of ``runs`` fresh processes of ``argv`` (each must exit 0)."""
    times = []
    for _ in range(runs):
        start = time.perf_counter()
        done = subprocess.run(argv, cwd=ROOT, stdout=subprocess.DEVNULL,
                              stderr=subprocess.PIPE, text=True, env=env)
        elapsed = time.perf_counter() - start
        if done.returncode != 0:
            raise SystemExit(f"{' '.join(argv)} exited with {done.returncode}:\n{done.stderr}")
        times.append(elapsed)
    return times


def line(label: str, times: list[float]) -> str:
    """One result line: median, min, max and every run [s]."""
    runs = " ".join(f"{t:.3f}" for t in times)
    return (f"{label:<44s} median {statistics.median(times):.3f} s  min {min(times):.3f} s  "
            f"max {max(times):.3f} s   runs: {runs}")


def main(argv=None) -> int:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--runs", type=int, default=DEFAULT_RUNS, help="processes per command")
    p.add_argument("--file", default="flowsheets/gate-station.yaml",
                   help="flowsheet, relative to the project root")
    args = p.parse_args(argv)
    if args.runs < 1:
        p.error("--runs must be at least 1")

    cmd = letdown_command()
    print(f"machine: {platform.machine()}, {os.cpu_count()} logical CPUs "
          f"({len(os.sched_getaffinity(0)) if hasattr(os, 'sched_getaffinity') else '?'} usable), "
          f"{platform.system()} {platform.release()}")
    print(f"python {platform.python_version()} ({sys.executable}); command: {' '.join(cmd)}")
    no_bytecode = bool(os.environ.get("PYTHONDONTWRITEBYTECODE"))
    print(f"PYTHONDONTWRITEBYTECODE is {'set' if no_bytecode else 'not set'}")
    print(f"{args.runs} fresh processes per line; wall time from process start to exit\n")

    baseline = time_runs([sys.executable, "-c", "pass"], args.runs)
    imported = time_runs([sys.executable, "-c", "import letdown"], args.runs)
    check = time_runs(cmd + ["check", args.file], args.runs)
    solve = time_runs(cmd + ["solve", args.file], args.runs)

    print(line("python -c pass (interpreter only)", baseline))
    print(line("python -c 'import letdown'", imported))
    print(line(f"letdown check {args.file}", check))
    print(line(f"letdown solve {args.file}", solve))
    if no_bytecode:
        with tempfile.TemporaryDirectory(prefix="letdown-pycache-") as cache:
            env = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}
            env["PYTHONPYCACHEPREFIX"] = cache
            time_runs(cmd + ["solve", args.file], 1, env)      # fills the cache, not timed
            cached = time_runs(cmd + ["solve", args.file], args.runs, env)
        print(line("  the same, bytecode cached", cached))
    median = statistics.median(solve)
    verdict = "within" if median < TARGET_S else "OVER"
    print(f"\nletdown solve median {median:.3f} s: {verdict} the {TARGET_S:g} s target of issue 3")
    return 0


if __name__ == "__main__":
    sys.exit(main())
