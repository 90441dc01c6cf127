"""The command line's entry point: parse, run the verb, turn each error into one located line and
its exit code."""
from __future__ import annotations

import sys
import traceback

from ..errors import ConvergenceError, InputError, LetdownError, ModelError
from . import (check, compare, crosscheck, envelope, new, size, solve, state, station, sweep,
               year)
from .common import EXIT_BAD_INPUT, EXIT_FAILED_SOLVE, EXIT_INTERNAL, EXIT_OK
from .parser import ArgumentRefused, build_parser


#: Verb -> the function that runs it.
VERBS = {"solve": solve.run, "check": check.run, "new": new.run, "crosscheck": crosscheck.run,
         "sweep": sweep.run, "year": year.run, "compare": compare.run, "envelope": envelope.run,
         "size": size.run, "state": state.run, "capacity": station.run, "upsets": station.run}


def main(argv=None) -> int:
    """Run the command line; return the exit code (the console script exits with it)."""
    argv = list(sys.argv[1:] if argv is None else argv)
    debug = "--debug" in argv
    if not argv:                   # a bare 'letdown': the usage and the verbs
        build_parser().print_help()
        return EXIT_OK
    if argv == ["--version"]:
        from .._version import __version__
        print(f"letdown {__version__}")
        return EXIT_OK
    try:
        args = build_parser().parse_args(argv)
    except ArgumentRefused as exc:
        print(str(exc), file=sys.stderr)
        return EXIT_BAD_INPUT
    except SystemExit as exc:      # --help prints and exits 0
        return int(exc.code or 0)
    args.argv = argv               # the command as given, for the run record
    where = getattr(args, "file", None)
    if args.quiet:
        return _quietly(args, debug)
    return _dispatch(args, where, debug)


def _quietly(args, debug) -> int:
    """Run with the progress bar of the studies off (it never reaches its start delay)."""
    from ..study import executors
    saved = executors.PROGRESS_DELAY
    executors.PROGRESS_DELAY = float("inf")
    try:
        return _dispatch(args, getattr(args, "file", None), debug)
    finally:
        executors.PROGRESS_DELAY = saved


def _dispatch(args, where, debug) -> int:
    """Run the verb; turn each error into one located line and its exit code."""
    try:
        return VERBS[args.verb](args)
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
