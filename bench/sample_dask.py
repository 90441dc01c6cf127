"""Uncertainty-study benchmark: ``letdown sweep flowsheets/gate-station.yaml --sample N`` serially,
on a local pool of 2 processes (``--workers 2``) and on a local Dask cluster of 2 worker processes
(``--dask``, one thread each), each run as the command a user types, in a fresh process.

Run:  python bench/sample_dask.py [--samples N] [--configs serial,workers,dask]

The study is the worked one of docs/guides/studies.md: the supply temperature normal(5 degC, 2 K),
the flow uniform(60,000, 90,000 Sm3/h) and the gas quality dirichlet(500), Latin hypercube, seed 7,
four outputs, written with ``--out``. Prints per configuration the wall time of the command, the
CPU seconds it used (user + system of the command and, for Dask, what the workers used during
the run: what the run costs whatever else the machine is doing; a pool's workers are children of
its fork server, whose usage the command does not see, so the pool's CPU is not given), the peak
resident memory of the command's process (``wait4``: the process and the children it reaped,
so the pool's workers count) and, for Dask, of the largest worker (asked through the cluster), and
the load average before each run. The figures go in docs/guides/studies.md (issue 14, item 4:
"scales to 100,000 samples on Dask with the same code path as today's --dask"); the machine should
be quiet (load average below 2.5), else measure fewer samples and say so.
"""
from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from _shared import GATE, ROOT, STUDY_VARY, child_env

OUTPUTS = "preheat.duty,warm.T,network.hydrate_margin,supply.hydrate_margin"


def _worker_usage():
    """(peak resident memory [MB], CPU seconds, user + system) of the Dask worker running this."""
    import resource
    r = resource.getrusage(resource.RUSAGE_SELF)
    return r.ru_maxrss / 1024.0, r.ru_utime + r.ru_stime


def run_cli(args: list, env: dict) -> tuple:
    """(wall time [s], peak RSS of the process and its reaped children [MB], their CPU seconds
    (user + system), exit code)."""
    t0 = time.perf_counter()
    child = subprocess.Popen([sys.executable, "-c", "import sys; from letdown.cli import main; "
                              "sys.exit(main())"] + args, env=env, stdout=subprocess.DEVNULL,
                             stderr=subprocess.DEVNULL)
    _, status, usage = os.wait4(child.pid, 0)
    child.returncode = os.waitstatus_to_exitcode(status)
    wall = time.perf_counter() - t0
    return (wall, usage.ru_maxrss / 1024.0, usage.ru_utime + usage.ru_stime,
            os.waitstatus_to_exitcode(status))


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--samples", type=int, default=100_000)
    ap.add_argument("--configs", default="serial,workers,dask")
    ap.add_argument("--settle", type=float, default=0.0, metavar="S",
                    help="before each run, wait up to S seconds for the load average to fall "
                         "below --quiet-load (the previous run's own load decays in about a "
                         "minute)")
    ap.add_argument("--quiet-load", type=float, default=1.0)
    args = ap.parse_args(argv)
    env = child_env()
    print(f"{os.cpu_count()} cpus, {args.samples:,} samples, load average "
          f"{os.getloadavg()[0]:.2f}")
    for config in args.configs.split(","):
        with tempfile.TemporaryDirectory() as tmp:
            cli = ["sweep", str(ROOT / GATE), "--sample", str(args.samples), "--seed", "7",
                   "--outputs", OUTPUTS, "--out", str(Path(tmp) / "out"), "--quiet"]
            for v in STUDY_VARY:
                cli += ["--vary", v]
            t_wait = time.perf_counter()
            while (os.getloadavg()[0] >= args.quiet_load
                   and time.perf_counter() - t_wait < args.settle):
                time.sleep(5.0)
            load = os.getloadavg()[0]
            worker_mb = None
            if config == "serial":
                wall, rss, cpu, code = run_cli(cli, env)
            elif config == "workers":
                wall, rss, cpu, code = run_cli(cli + ["--workers", "2"], env)
            elif config == "dask":
                import distributed
                with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                              host="127.0.0.1", dashboard_address=None) as cl:
                    with distributed.Client(cl.scheduler_address) as client:
                        before = client.run(_worker_usage)
                        wall, rss, cpu, code = run_cli(cli + ["--dask", cl.scheduler_address],
                                                       env)
                        after = client.run(_worker_usage)
                    worker_mb = max(mb for mb, _ in after.values())
                    cpu += sum(after[w][1] - before[w][1] for w in after)
            else:
                raise SystemExit(f"unknown configuration {config!r}")
            lines = (Path(tmp) / "out" / "samples.csv").read_text().count("\n") - 1 \
                if code in (0, 1) else 0
        cpu_text = (f"CPU {cpu:6.1f} s" if config != "workers" else
                    "CPU of the pool's workers not seen")
        print(f"{config:8s} {wall:7.2f} s, {cpu_text}, peak RSS {rss:5.0f} MB"
              + (f", largest Dask worker {worker_mb:.0f} MB" if worker_mb is not None else "")
              + f", exit {code}, {lines:,} samples written, load average before {load:.2f}")
        sys.stdout.flush()


if __name__ == "__main__":
    main()
