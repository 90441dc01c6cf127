"""The ``letdown`` command line. The only module that prints or sets exit codes.

Verbs::

    letdown solve FILE [--json] [--csv DIR] [--model M] [--units si|field] [--debug]
    letdown check FILE [--debug]
    letdown crosscheck FILE [--models M,M] [--json] [--units si|field]
    letdown compare FILE [--data CSV] [--fit block.parameter --within LO HI] [--models M,M] [--json]
    letdown envelope FILE --stream NAME [--lines 0.1,0.5] [--csv DIR] [--json] [--plot F.png|F.svg]
    letdown sweep FILE --vary PATH=VALUES [...] [--zip] [--out DIR] [--plot X:Y] [--workers N|--dask A]
    letdown year FILE --profile CSV [--efficiency E] [--calorific gross|net] [--out DIR]
                 [--workers N|--dask A]
    letdown size FILE [--efficiency E] [--model M] [--free-water always|by-dew-point]
                 [--calorific gross|net] [--json] [--units si|field]
    letdown capacity FILE [--model M] [--json] [--units si|field]
    letdown upsets FILE [--model M] [--json] [--units si|field]
    letdown state --T 10degC --P 70barg --gas "methane=0.9,ethane=0.1" [--model M] [--json]

Exit codes: 0 success; 2 bad input (:class:`InputError`, :class:`TopologyError`,
:class:`ModelError`); 1 a failed solve (:class:`ConvergenceError`, or a result that did not
converge; ``year``: an hour that failed; ``size``: a case that failed or does not meet its limits,
with every other row written); 3 an internal error (a bug: please report it with the ``--debug``
traceback).
Errors are one line on stderr, ``letdown: FILE:LINE: field: message``; ``--debug`` adds the
traceback. With ``--json`` stdout holds only the JSON object; messages for people go to stderr.
``--csv DIR`` writes ``streams.csv`` and ``equipment.csv`` only after a successful solve (into a
temporary directory first, then moved into place), so a failure leaves nothing behind.
"""
from __future__ import annotations

import argparse
import json
import os
import shutil
import sys
import tempfile
import traceback
from pathlib import Path

from .caution import CAUTION
from .errors import ConvergenceError, InputError, LetdownError, ModelError

EXIT_OK = 0
EXIT_FAILED_SOLVE = 1
EXIT_BAD_INPUT = 2
EXIT_INTERNAL = 3


class _ArgumentError(Exception):
    """argparse refused the command line (its message is already in the text)."""


class _Parser(argparse.ArgumentParser):
    def error(self, message):  # noqa: D102 - argparse hook: raise instead of exiting
        raise _ArgumentError(f"{self.prog}: {message}")


def _parser() -> argparse.ArgumentParser:
    common = argparse.ArgumentParser(add_help=False)
    common.add_argument("--debug", action="store_true", help="show the traceback of an error")
    p = _Parser(prog="letdown", description="Steady-state flowsheets for natural-gas let-down "
                "stations and gas chilling trains.", parents=[common])
    sub = p.add_subparsers(dest="verb", metavar="VERB", parser_class=_Parser)
    sub.required = True

    s = sub.add_parser("solve", parents=[common], help="solve a flowsheet file and report it")
    s.add_argument("file", metavar="FILE")
    s.add_argument("--json", action="store_true", help="print only the JSON result on stdout")
    s.add_argument("--csv", metavar="DIR", help="also write streams.csv and equipment.csv to DIR")
    s.add_argument("--model", metavar="M", help="override the file's thermodynamic model")
    s.add_argument("--units", choices=("si", "field"), default="si", help="display units")
    s.add_argument("--dew-points", action="store_true",
                   help="also give each product gas's hydrocarbon dew point and cricondentherm")
    s.add_argument("--html", metavar="PATH",
                   help="also write the calculation record as one self-contained HTML file")

    c = sub.add_parser("check", parents=[common], help="validate a flowsheet file without solving")
    c.add_argument("file", metavar="FILE")

    x = sub.add_parser("crosscheck", parents=[common],
                       help="solve a flowsheet with every applicable model and compare")
    x.add_argument("file", metavar="FILE")
    x.add_argument("--models", metavar="M,M", help="comma-separated models (default: all that apply)")
    x.add_argument("--json", action="store_true", help="print only the JSON comparison on stdout")
    x.add_argument("--units", choices=("si", "field"), default="si", help="display units")

    w = sub.add_parser("sweep", parents=[common],
                       help="solve a flowsheet over a list, range or grid of input values")
    w.add_argument("file", metavar="FILE")
    w.add_argument("--vary", action="append", required=True, metavar="PATH=VALUES",
                   help="e.g. supply.T=0degC:20degC:5, blend.hydrogen=0:0.3:7, goal1.at=2degC,5degC")
    w.add_argument("--zip", action="store_true", help="take the variables together, not as a grid")
    w.add_argument("--outputs", metavar="A,B", help="output columns, e.g. network.T,preheat.duty")
    w.add_argument("--model", metavar="M", help="override the file's thermodynamic model")
    w.add_argument("--out", metavar="DIR", help="write sweep.csv, run.json (and plots) to DIR")
    w.add_argument("--plot", metavar="X:Y[,Y]", help="plot outputs Y against input X into DIR")
    w.add_argument("--workers", type=int, metavar="N", help="solve on N local processes")
    w.add_argument("--dask", metavar="ADDRESS", help="solve on an existing Dask cluster")

    y = sub.add_parser("year", parents=[common],
                       help="solve every hour of an operating profile with the goals held")
    y.add_argument("file", metavar="FILE")
    y.add_argument("--profile", required=True, metavar="CSV",
                   help="hourly profile: time,flow [unit],T_in [unit],P_in [unit][,P_out][,ground_T]")
    y.add_argument("--efficiency", type=float, metavar="E",
                   help="efficiency 0..1 of heaters the file gives none (default 0.75, assumed)")
    y.add_argument("--calorific", choices=("gross", "net"), default="gross",
                   help="calorific value of the fuel gas volume (ISO 6976:2016; default gross)")
    y.add_argument("--feed", metavar="NAME", help="the feed the profile drives (default: the only one)")
    y.add_argument("--outlet", metavar="BLOCK", help="the throttle whose P_out the profile sets")
    y.add_argument("--model", metavar="M", help="override the file's thermodynamic model")
    y.add_argument("--out", metavar="DIR", help="write hourly.csv, summary.json, run.json, plots")
    y.add_argument("--workers", type=int, metavar="N", help="solve on N local processes")
    y.add_argument("--dask", metavar="ADDRESS", help="solve on an existing Dask cluster")
    sz = sub.add_parser("size", parents=[common],
                        help="size the preheater over the file's operating cases")
    sz.add_argument("file", metavar="FILE")
    sz.add_argument("--efficiency", type=float, metavar="E",
                    help="heater efficiency 0..1 when the file's heater has none (water-bath "
                         "heaters run about 0.5-0.8; default 0.75, stated as assumed)")
    sz.add_argument("--model", metavar="M", help="override the file's thermodynamic model")
    sz.add_argument("--free-water", choices=("always", "by-dew-point"), default="always",
                    help="assume free water in every stream (default), or only below its water "
                         "dew point (trust the water dew point)")
    sz.add_argument("--calorific", choices=("gross", "net"), default="gross",
                    help="calorific value of the fuel gas volume (ISO 6976:2016; default gross)")
    sz.add_argument("--json", action="store_true", help="print only the JSON sizing on stdout")
    sz.add_argument("--units", choices=("si", "field"), default="si", help="display units")
    for verb, text in (("capacity", "the largest flow of each operating case before a valve, "
                                    "velocity or noise limit, the goals held"),
                       ("upsets", "loss of preheat, regulators failing wide open (alone and in "
                                  "series): coldest temperatures and protection loads")):
        up = sub.add_parser(verb, parents=[common], help=text)
        up.add_argument("file", metavar="FILE")
        up.add_argument("--model", metavar="M", help="override the file's thermodynamic model")
        up.add_argument("--json", action="store_true", help="print only the JSON result on stdout")
        up.add_argument("--units", choices=("si", "field"), default="si", help="display units")
    cm = sub.add_parser("compare", parents=[common],
                        help="compare a flowsheet with plant measurements, per model; fit one "
                             "parameter")
    cm.add_argument("file", metavar="FILE")
    cm.add_argument("--data", metavar="CSV",
                    help="measurements (columns at,value,uncertainty[,note]) added to the file's")
    cm.add_argument("--fit", metavar="BLOCK.PARAMETER", help="fit one block parameter")
    cm.add_argument("--within", nargs=2, metavar=("LO", "HI"),
                    help="bracket of the fitted parameter, with units (e.g. 0.6 0.95, 900kW 1400kW)")
    cm.add_argument("--models", metavar="M,M", help="comma-separated models (default: all that apply)")
    cm.add_argument("--json", action="store_true", help="print only the JSON comparison on stdout")
    cm.add_argument("--units", choices=("si", "field"), default="si", help="display units")
    e = sub.add_parser("envelope", parents=[common],
                       help="phase envelope of one stream of a solved flowsheet")
    e.add_argument("file", metavar="FILE")
    e.add_argument("--stream", required=True, metavar="NAME", help="the stream whose gas to use")
    e.add_argument("--model", metavar="M", help="override the file's thermodynamic model")
    e.add_argument("--lines", metavar="B,B", default="",
                   help="vapour fractions of extra lines, e.g. 0.1,0.5,0.9")
    e.add_argument("--csv", metavar="DIR", help="write envelope.csv and points.csv to DIR")
    e.add_argument("--json", action="store_true", help="print only the JSON envelope on stdout")
    e.add_argument("--plot", metavar="FILE", help="draw the envelope into FILE (.png or .svg)")
    e.add_argument("--units", choices=("si", "field"), default="si", help="display units")

    st = sub.add_parser("state", parents=[common], help="one fluid state from two of T, P, h, s")
    st.add_argument("--T", help="temperature, e.g. 10degC")
    st.add_argument("--P", help="pressure, e.g. 70barg")
    st.add_argument("--h", help="molar enthalpy, e.g. -1200 J/mol (plain number: J/mol)")
    st.add_argument("--s", help="molar entropy, e.g. -20 J/(mol*K) (plain number: J/(mol K))")
    st.add_argument("--gas", required=True, help='composition, e.g. "methane=0.9,ethane=0.1"')
    st.add_argument("--model", default="peng-robinson", help="thermodynamic model")
    st.add_argument("--normalise", action="store_true", help="scale fractions to sum to 1")
    st.add_argument("--atmosphere", default="101.325 kPa", help="atmosphere for gauge pressures")
    st.add_argument("--json", action="store_true", help="print the state as JSON")
    st.add_argument("--units", choices=("si", "field"), default="si", help="display units")
    return p


def main(argv=None) -> int:
    """Run the command line; return the exit code (the console script exits with it)."""
    argv = list(sys.argv[1:] if argv is None else argv)
    debug = "--debug" in argv
    if not argv:                   # a bare 'letdown': the usage and the verbs
        _parser().print_help()
        return EXIT_OK
    if argv == ["--version"]:
        from ._version import __version__
        print(f"letdown {__version__}")
        return EXIT_OK
    try:
        args = _parser().parse_args(argv)
    except _ArgumentError as exc:
        print(str(exc), file=sys.stderr)
        return EXIT_BAD_INPUT
    except SystemExit as exc:      # --help prints and exits 0
        return int(exc.code or 0)
    where = getattr(args, "file", None)
    try:
        if args.verb == "solve":
            return _solve(args)
        if args.verb == "check":
            return _check(args)
        if args.verb == "crosscheck":
            return _crosscheck(args)
        if args.verb == "sweep":
            return _sweep(args)
        if args.verb == "year":
            return _year(args)
        if args.verb == "compare":
            return _compare(args)
        if args.verb == "envelope":
            return _envelope(args)
        if args.verb == "size":
            return _size(args)
        if args.verb in ("capacity", "upsets"):
            return _station_study(args)
        return _state(args)
    except ModelError as exc:
        _error(_model_refusal(exc, args), where, debug)
        return EXIT_BAD_INPUT
    except InputError as exc:
        _error(exc, where, debug)
        return EXIT_BAD_INPUT
    except ConvergenceError as exc:
        _error(exc, where, debug)
        return EXIT_FAILED_SOLVE
    except LetdownError as exc:
        _error(exc, where, debug)
        return EXIT_FAILED_SOLVE
    except KeyboardInterrupt:
        print("letdown: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        # the reader went away (``letdown solve ... | head``): not an error of ours; stop quietly
        # and keep the interpreter from complaining about stdout at exit
        import os
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 0
    except Exception as exc:  # a bug: one line, traceback only on request
        if debug:
            traceback.print_exc()
        print(f"letdown: internal error: {type(exc).__name__}: {exc} (run with --debug for the "
              f"traceback)", file=sys.stderr)
        return EXIT_INTERNAL


def _model_refusal(exc: ModelError, args) -> InputError:
    """A model's refusal as bad input at the place the model was chosen: ``--model`` on the command
    line, else the file's ``gas.model`` line (or its ``gas`` line when the model is the default)."""
    if getattr(args, "model", None):
        return InputError(str(exc), field="--model")
    fs = getattr(args, "flowsheet", None)
    if fs is None:
        return InputError(str(exc))
    where = fs.gas.model_where
    return InputError(str(exc), file=where.file or fs.source, line=where.line, field="gas.model")


def _error(exc, file, debug) -> None:
    if debug:
        traceback.print_exc()
    text = str(exc)
    if isinstance(exc, InputError):
        if not exc.file and file:
            text = f"{file}: {text}"
    elif file:
        text = f"{file}: {text}"
    # one line, whatever the message quotes (a schema message may show a value over lines)
    text = " ".join(part.strip() for part in text.splitlines() if part.strip())
    print(f"letdown: {text}", file=sys.stderr)


# ---------------------------------------------------------------------------------------------

def _csv_target(path: str) -> Path:
    """Check ``--csv DIR`` before solving: a directory (existing or to be made) we can write."""
    target = Path(path)
    if target.exists() and not target.is_dir():
        raise InputError(f"'{path}' exists and is not a directory", field="--csv")
    parent = target.resolve().parent
    if not parent.is_dir():
        raise InputError(f"the parent directory of '{path}' does not exist", field="--csv")
    return target


def _write_csv(target: Path, files: dict) -> None:
    """Write ``files`` {name: text} into ``target`` through a temporary directory beside it."""
    parent = target.resolve().parent
    tmp = Path(tempfile.mkdtemp(prefix=".letdown-csv-", dir=parent))
    try:
        for name, text in files.items():
            if isinstance(text, bytes):
                (tmp / name).write_bytes(text)
            else:
                (tmp / name).write_text(text, encoding="utf-8")
        if target.is_dir():
            for name in files:
                os.replace(tmp / name, target / name)
        else:
            os.replace(tmp, target)
    finally:
        if tmp.exists():
            shutil.rmtree(tmp, ignore_errors=True)


def _solve(args) -> int:
    import letdown

    from .report.tables import csv_text, equipment_table, stream_table
    from .report.text import report_text

    target = _csv_target(args.csv) if args.csv else None
    sheet = letdown.load(args.file)
    spec = getattr(sheet, "flowsheet", None)
    args.flowsheet = spec
    atmosphere = spec.extra.get("atmosphere") if spec is not None else None
    result = sheet.solve(model=args.model) if args.model else sheet.solve()
    if hasattr(result, "case") and not hasattr(result, "to_json"):
        result = result.case(0)
    if args.dew_points:
        from .sheet.dewpoints import with_dew_points
        result = with_dew_points(result, spec)
    converged = bool(getattr(result, "converged", True))
    if args.json:
        print(result.to_json())
        for w in getattr(result, "warnings", None) or ():
            where = w.get("where") if isinstance(w, dict) else getattr(w, "where", "")
            what = w.get("what") if isinstance(w, dict) else getattr(w, "what", w)
            print(f"letdown: warning: {where}: {what}", file=sys.stderr)
    else:
        print(report_text(result, args.units, atmosphere=atmosphere))
    if not converged:
        print(f"letdown: {args.file}: the solve did not converge (see the loops and goals above);"
              f" no CSV written", file=sys.stderr)
        return EXIT_FAILED_SOLVE
    if target is not None:
        _write_csv(target, {
            "streams.csv": csv_text(stream_table(result, args.units, atmosphere=atmosphere)),
            "equipment.csv": csv_text(equipment_table(result, args.units, atmosphere=atmosphere)),
        })
        print(f"letdown: wrote {target / 'streams.csv'} and {target / 'equipment.csv'}",
              file=sys.stderr)
    if args.html:
        _write_record(Path(args.html), result, args, atmosphere)
    return EXIT_OK


def _write_record(path: Path, result, args, atmosphere) -> None:
    """Write the HTML calculation record of ``result`` to ``path`` (whole or not at all)."""
    import datetime
    import hashlib

    from ._version import __version__
    from .report.html import html_report

    raw = Path(args.file).read_bytes()
    run = {"Command": "letdown " + " ".join(sys.argv[1:]) if sys.argv[1:] else "letdown solve",
           "letdown version": __version__,
           "Input file": str(args.file),
           "Input SHA-256": hashlib.sha256(raw).hexdigest(),
           "Model": str(result.model),
           "Made": datetime.datetime.now(datetime.timezone.utc).strftime("%Y-%m-%d %H:%M UTC"),
           "Units": "SI (degC, barg, kW)" if args.units == "si" else "field (degF, psig, MMBtu/h)"}
    text = html_report(result, run=run, input_text=raw.decode("utf-8", errors="replace"),
                       units=args.units, atmosphere=atmosphere)
    tmp = path.with_name(f".{path.name}.tmp")
    try:
        tmp.write_text(text, encoding="utf-8")
        os.replace(tmp, path)
    except OSError as exc:
        raise InputError(f"cannot write the record: {exc.strerror or exc}",
                         field="--html") from None
    finally:
        if tmp.exists():
            tmp.unlink()
    print(f"letdown: wrote {path}", file=sys.stderr)


def _sweep(args) -> int:
    from .report.sweep import sweep_files
    from .sheet.loader import load
    from .study.sweep import case_count, parse_variable, sweep

    fs = load(args.file)
    args.flowsheet = fs
    variables = [parse_variable(fs, v) for v in args.vary]
    case_count(variables, "zip" if args.zip else "grid")
    outputs = [o.strip() for o in args.outputs.split(",")] if args.outputs else None
    target = _csv_target(args.out) if args.out else None
    if args.plot and target is None:
        raise InputError("--plot needs --out DIR to write the pictures into", field="--plot")
    from .study.executors import make_executor
    executor = make_executor(args.workers, args.dask)
    try:
        table = sweep(fs, variables, mode="zip" if args.zip else "grid", model=args.model,
                      outputs=outputs, executor=executor, show_progress=sys.stderr.isatty())
    finally:
        executor.close()
    if target is not None:
        files = sweep_files(table, source=args.file, variables=args.vary,
                            mode="zip" if args.zip else "grid", plot=args.plot)
        _write_csv(target, files)
        print(f"letdown: wrote {', '.join(str(target / f) for f in files)}", file=sys.stderr)
    else:
        sys.stdout.write(table.csv_text())
    failed = sum(1 for r in table.rows if not r[-2])
    if failed:
        print(f"letdown: {failed} of {len(table.rows)} cases failed (see the reason column)",
              file=sys.stderr)
    print(f"letdown: {CAUTION}", file=sys.stderr)
    return EXIT_FAILED_SOLVE if failed else EXIT_OK


def _year(args) -> int:
    from .report.year import year_files, year_text
    from .sheet.loader import load
    from .study.executors import make_executor
    from .study.year import read_profile, year

    fs = load(args.file)
    args.flowsheet = fs
    atm = fs.extra.get("atmosphere") if fs.extra else None
    profile = read_profile(args.profile, atmosphere=atm)
    target = _csv_target(args.out) if args.out else None
    executor = make_executor(args.workers, args.dask)
    try:
        res = year(fs, profile, efficiency=args.efficiency, feed=args.feed,
                   outlet_block=args.outlet, model=args.model, executor=executor,
                   show_progress=sys.stderr.isatty(), calorific=args.calorific)
    finally:
        executor.close()
    print(year_text(res))
    if target is not None:
        files = year_files(res, flowsheet=args.file)
        _write_csv(target, files)
        print(f"letdown: wrote {', '.join(str(target / f) for f in files)}", file=sys.stderr)
    failed = int((~res.converged).sum())
    if failed:
        print(f"letdown: {args.file}: {failed} of {res.profile.n} hours failed; every hour is "
              "written with its reason", file=sys.stderr)
        return EXIT_FAILED_SOLVE
    return EXIT_OK


def _size(args) -> int:
    from .report.size import size_text
    from .sheet.loader import load
    from .study.size import size

    fs = load(args.file)
    args.flowsheet = fs
    res = size(fs, efficiency=args.efficiency, model=args.model, free_water=args.free_water,
               calorific=args.calorific)
    if args.json:
        print(json.dumps(res.to_dict(), indent=2, allow_nan=False))
        print(f"letdown: {res.to_dict()['caution']}", file=sys.stderr)
    else:
        print(size_text(res, args.units, atmosphere=fs.extra.get("atmosphere")))
    if not res.all_met:
        bad = [c.name for c in res.cases if not c.met]
        print(f"letdown: {args.file}: {len(bad)} of {len(res.cases)} cases failed or not met "
              f"({', '.join(bad)}); every case is reported", file=sys.stderr)
        return EXIT_FAILED_SOLVE
    return EXIT_OK


def _station_study(args) -> int:
    """``letdown capacity`` and ``letdown upsets``: exit 1 when a case's capacity was not found
    (or, for upsets, a case of normal operation failed), with every case reported."""
    from .sheet.loader import load

    fs = load(args.file)
    args.flowsheet = fs
    atmosphere = fs.extra.get("atmosphere")
    if args.verb == "capacity":
        from .report.capacity import capacity_text
        from .study.capacity import capacity
        res = capacity(fs, model=args.model)
        text = capacity_text(res, args.units, atmosphere=atmosphere)
        bad = [c.name for c in res.cases if not c.found]
    else:
        from .report.upsets import upsets_text
        from .study.upsets import upsets
        res = upsets(fs, model=args.model)
        text = upsets_text(res, args.units, atmosphere=atmosphere)
        bad = list(res.preheat[0]["failures"]) if res.preheat else []
    data = res.to_dict()
    if args.json:
        print(json.dumps(data, indent=2, allow_nan=False))
        print(f"letdown: {data['caution']}", file=sys.stderr)
    else:
        print(text)
    if bad:
        what = "capacity not found" if args.verb == "capacity" else "failed in normal operation"
        print(f"letdown: {args.file}: {len(bad)} of {len(data['cases'])} cases: {what} "
              f"({', '.join(bad)}); every case is reported", file=sys.stderr)
        return EXIT_FAILED_SOLVE
    return EXIT_OK


def _crosscheck(args) -> int:
    import json

    from .fluid.fluid import canonical_model
    from .report.crosscheck import crosscheck_text
    from .sheet.loader import load
    from .study.crosscheck import crosscheck

    fs = load(args.file)
    args.flowsheet = fs
    models = None
    if args.models:
        models = [canonical_model(m) for m in args.models.split(",") if m.strip()]
    cc = crosscheck(fs, models)
    if args.json:
        print(json.dumps(cc.to_dict(), indent=2))
    else:
        print(crosscheck_text(cc, args.units))
    if not any(m not in cc.failures for m in cc.models):
        print(f"letdown: {args.file}: no model could solve the flowsheet", file=sys.stderr)
        return EXIT_FAILED_SOLVE
    return EXIT_OK


def _compare(args) -> int:
    from .fluid.fluid import canonical_model
    from .report.compare import compare_text
    from .sheet.loader import load
    from .sheet.measurements import parse_fit, read_csv, with_measurements
    from .study.compare import compare

    if args.within and not args.fit:
        raise InputError("--within goes with --fit", field="--within")
    fs = load(args.file)
    args.flowsheet = fs
    if args.data:
        fs = with_measurements(fs, read_csv(args.data, fs))
    fit, within = (None, None)
    if args.fit:
        if not args.within:
            raise InputError(f"fitting {args.fit} needs a bracket: --within LO HI", field="--within")
        fit, within = parse_fit(fs, args.fit, args.within)
    models = None
    if args.models:
        models = [canonical_model(m) for m in args.models.split(",") if m.strip()]
    cmp = compare(fs, models=models, fit=fit, within=within)
    if args.json:
        print(json.dumps(cmp.to_dict(), indent=2, allow_nan=False))
    else:
        print(compare_text(cmp, args.units, atmosphere=fs.extra.get("atmosphere")))
    if not cmp.results:
        print(f"letdown: {args.file}: no model could solve the flowsheet", file=sys.stderr)
        return EXIT_FAILED_SOLVE
    failed = [m for m, c in cmp.results.items() if fit and c.fit is None]
    if failed and len(failed) == len(cmp.results):
        print(f"letdown: {args.file}: the fit failed with every model", file=sys.stderr)
        return EXIT_FAILED_SOLVE
    return EXIT_OK


def _plot_target(path: str) -> Path:
    """Check ``--plot FILE`` before solving: a .png or .svg in an existing directory, and
    matplotlib present."""
    import importlib.util
    target = Path(path)
    if target.suffix.lower() not in (".png", ".svg"):
        raise InputError(f"'{path}' must end in .png or .svg", field="--plot")
    if not target.resolve().parent.is_dir():
        raise InputError(f"the directory of '{path}' does not exist", field="--plot")
    if importlib.util.find_spec("matplotlib") is None:
        raise InputError("drawing the envelope needs matplotlib (pip install matplotlib); the "
                         "data can still be written with --csv or --json", field="--plot")
    return target


def _envelope(args) -> int:
    import numpy as np

    import letdown

    from .fluid import Fluid
    from .fluid.models import DEW_POINT_BIAS
    from .report.envelope import (envelope_csv_files, envelope_dict, envelope_text,
                                  plot_envelope)

    target = _csv_target(args.csv) if args.csv else None
    plot = _plot_target(args.plot) if args.plot else None
    betas = []
    for part in args.lines.split(","):
        if part.strip():
            try:
                betas.append(float(part))
            except ValueError:
                raise InputError(f"'{part.strip()}' is not a number", field="--lines") from None
    sheet = letdown.load(args.file)
    spec = sheet.flowsheet
    args.flowsheet = spec
    atmosphere = spec.extra.get("atmosphere") if spec is not None else None
    result = sheet.solve(model=args.model) if args.model else sheet.solve()
    if hasattr(result, "case") and not hasattr(result, "to_json"):
        result = result.case(0)
    if args.stream not in result.streams:
        raise InputError(f"no stream '{args.stream}' (streams: {', '.join(result.streams)})",
                         field="--stream")
    if not result.converged:
        print(f"letdown: {args.file}: the flowsheet did not converge; no envelope drawn",
              file=sys.stderr)
        return EXIT_FAILED_SOLVE
    # GERG-2008 is used for single-phase states only: the envelope is traced on Peng-Robinson
    model = result.model if result.model != "gerg-2008" else "peng-robinson"
    notes = []
    if model != result.model:
        notes.append(f"the flowsheet was solved with {result.model}; the envelope is traced with "
                     f"{model} (GERG-2008 is used here for single-phase states only)")
    if model in DEW_POINT_BIAS:
        notes.append(DEW_POINT_BIAS[model])
    gas = Fluid(dict(result.streams[args.stream].zs), model=model, kij=spec.gas.kij,
                normalise=True)
    env = gas.envelope(betas=betas)
    points = [(n, s.T, s.P) for n, s in result.streams.items()]
    if args.json:
        print(json.dumps(envelope_dict(env, args.stream, model, points, notes), indent=2,
                         allow_nan=False))
    else:
        kw = {"atmosphere": atmosphere} if atmosphere else {}
        print(envelope_text(env, args.stream, model, points, args.units, notes=notes, **kw))
    if target is not None:
        _write_csv(target, envelope_csv_files(env, points))
        print(f"letdown: wrote {target / 'envelope.csv'} and {target / 'points.csv'}",
              file=sys.stderr)
    if plot is not None:
        tmp = plot.with_name(f".{plot.stem}.tmp{plot.suffix}")
        hydrate = None
        if gas.model != "gerg-2008":
            # the hydrate curve of the stream's gas over the envelope's pressures (free water)
            P_top = max([env.cricondenbar.P if env.cricondenbar is not None else 0.0]
                        + [float(P) for _, _, P in points])
            P_h = np.geomspace(5e5, max(P_top, 10e5) * 1.1, 24)
            curve = gas.hydrate_curve(P_h)
            hydrate = (curve.T, curve.P)
        try:
            plot_envelope(env, str(tmp), f"{spec.title}: stream {args.stream} ({model})", points,
                          args.units, hydrate=hydrate)
            os.replace(tmp, plot)
        finally:
            if tmp.exists():
                tmp.unlink()
        print(f"letdown: wrote {plot}", file=sys.stderr)
    if not env.converged:
        print(f"letdown: {args.file}: the envelope is incomplete (see the warnings above)",
              file=sys.stderr)
        return EXIT_FAILED_SOLVE
    return EXIT_OK


def _check(args) -> int:
    from .fluid import Fluid
    from .sheet.graph import build_graph, solve_order
    from .sheet.loader import load

    fs = load(args.file)
    args.flowsheet = fs
    steps = solve_order(build_graph(fs))
    zs = dict(fs.gas.composition)
    try:
        Fluid(zs, model=fs.gas.model, kij=fs.gas.kij)      # a ModelError names gas.model (main)
    except InputError as exc:
        raise InputError(exc.message, file=fs.source, line=fs.gas.model_where.line,
                         field="gas") from None
    loops = [s for s in steps if s.is_loop]
    tears = "; ".join(", ".join(s.tears) for s in loops)
    print(f"{args.file}: ok -- {len(fs.feeds)} feed(s), {len(fs.blocks)} block(s), "
          f"{len(fs.goals)} goal(s), {len(loops)} loop(s)" + (f" (tears: {tears})" if loops else ""))
    return EXIT_OK


def _gas_argument(text: str, normalise: bool) -> dict:
    from .fluid.components import canonical_name
    out: dict = {}
    for part in text.split(","):
        if not part.strip():
            continue
        name, sep, value = part.partition("=")
        if not sep:
            raise InputError(f"'{part.strip()}' should read name=fraction", field="--gas")
        try:
            canon = canonical_name(name.strip())
        except InputError as exc:
            raise InputError(exc.message, field="--gas") from None
        try:
            x = float(value)
        except ValueError:
            raise InputError(f"'{value.strip()}' is not a number", field="--gas") from None
        if x != x or x in (float("inf"), float("-inf")):
            raise InputError(f"fraction of {name.strip()} is not a finite number", field="--gas")
        if x < 0.0:
            raise InputError(f"fraction of {name.strip()} must not be negative", field="--gas")
        if canon in out:
            raise InputError(f"'{name.strip()}' is listed twice", field="--gas")
        out[canon] = x
    total = sum(out.values())
    if not out or total <= 0.0:
        raise InputError("no component with a positive fraction", field="--gas")
    if abs(total - 1.0) > 1e-6 and not normalise:
        raise InputError(f"fractions sum to {total:.9g}, not 1; correct them or add --normalise",
                         field="--gas")
    return {k: v / total for k, v in out.items()}


def _state(args) -> int:
    from .fluid import Fluid
    from .quantities import STANDARD_ATMOSPHERE, format_number, parse_quantity, unit_system

    atm = parse_quantity(args.atmosphere, "pressure", field="--atmosphere")
    spec = {}
    kinds = {"T": "temperature", "P": "pressure", "h": "molar_enthalpy", "s": "molar_entropy"}
    bare = {"h": "J/mol", "s": "J/(mol*K)"}
    for key, kind in kinds.items():
        text = getattr(args, key)
        if text is not None:
            spec[key] = parse_quantity(text, kind, atmosphere=atm, bare=bare.get(key),
                                       field=f"--{key}")
    if len(spec) != 2:
        raise InputError(f"give exactly two of --T, --P, --h, --s (got {len(spec)})",
                         field="state")
    gas = Fluid(_gas_argument(args.gas, args.normalise), model=args.model)
    st = gas.flash(**spec)
    props = {"T_K": st.T, "P_Pa": st.P, "vapour_fraction": st.vapour_fraction,
             "h_J_mol": st.h, "s_J_molK": st.s, "Z": st.Z, "density_kg_m3": st.density,
             "molar_mass_kg_mol": st.molar_mass}
    for extra in ("cp", "cv", "jt", "w"):
        if hasattr(st, extra):
            unit = {"cp": "cp_J_molK", "cv": "cv_J_molK", "jt": "jt_K_Pa", "w": "w_m_s"}[extra]
            props[unit] = getattr(st, extra)
    props = {k: float(v) for k, v in props.items()}
    if args.json:
        print(json.dumps({"model": gas.model,
                          "composition": dict(zip(gas.components, map(float, gas.zs))),
                          **{k: (v if v == v else None) for k, v in props.items()}}, indent=2))
        return EXIT_OK
    u = unit_system(args.units, atm if atm else STANDARD_ATMOSPHERE)
    rows = [("Temperature", u["T"](st.T), u["T"].label), ("Pressure", u["P"](st.P), u["P"].label),
            ("Vapour fraction", st.vapour_fraction, "-"),
            ("Enthalpy", u["h"](st.h), u["h"].label), ("Entropy", u["s"](st.s), u["s"].label),
            ("Z", st.Z, "-"), ("Density", u["density"](st.density), u["density"].label),
            ("Molar mass", u["molar_mass"](st.molar_mass), u["molar_mass"].label)]
    if "cp_J_molK" in props:
        rows.append(("cp", u["s"](props["cp_J_molK"]), u["s"].label))
    if "jt_K_Pa" in props:
        rows.append(("Joule-Thomson coefficient", props["jt_K_Pa"] * 1e5, "K/bar"))
    if "w_m_s" in props:
        rows.append(("Speed of sound", props["w_m_s"], "m/s"))
    print(f"{gas.model}: " + ", ".join(f"{c}={format_number(x, 4)}"
                                       for c, x in zip(gas.components, gas.zs)))
    width = max(len(r[0]) for r in rows)
    for label, value, unit in rows:
        print(f"  {label.ljust(width)}  {format_number(value).rjust(12)}  {unit}")
    return EXIT_OK


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
