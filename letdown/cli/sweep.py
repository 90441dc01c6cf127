"""``letdown sweep``: cases over grids or lists of input values."""
from __future__ import annotations

import sys

from ..caution import CAUTION
from ..errors import InputError
from .common import (EXIT_FAILED_SOLVE, EXIT_OK, STUDY_UNITS_TEXT, csv_target, record_targets,
                     write_csv, write_study_html, write_workbook)


def run(args) -> int:
    from ..report.sweep import sweep_files
    from ..sheet.loader import read_spec
    from ..study.sweep import case_count, parse_variable, sweep

    from ..quantities import STANDARD_ATMOSPHERE

    fs = read_spec(args.file)
    args.flowsheet = fs
    atm = (fs.extra.get("atmosphere") if fs.extra else None) or STANDARD_ATMOSPHERE
    if getattr(args, "sample", None) is not None:
        return _uncertainty(args, fs, atm)
    from ..study.uncertainty import is_distribution
    if any(is_distribution(v) for v in args.vary):
        raise InputError("a distribution in --vary needs --sample N (the number of samples)",
                         field="--vary")
    variables = [parse_variable(fs, v) for v in args.vary]
    _notes(v.note for v in variables)
    case_count(variables, "zip" if args.zip else "grid")
    outputs = [o.strip() for o in args.outputs.split(",")] if args.outputs else None
    target = csv_target(args.out) if args.out else None
    if args.plot and target is None and not args.html:
        raise InputError("--plot needs --out DIR (or --html PATH) to put the pictures in",
                         field="--plot")
    record_targets(args)
    from ..study.executors import make_executor
    executor = make_executor(args.workers, args.dask)
    try:
        table = sweep(fs, variables, mode="zip" if args.zip else "grid", model=args.model,
                      outputs=outputs, executor=executor, show_progress=sys.stderr.isatty(),
                      basis=args.basis)
    finally:
        executor.close()
    if target is not None:
        files = sweep_files(table, source=args.file, variables=args.vary,
                            mode="zip" if args.zip else "grid", plot=args.plot,
                            units=args.units, atmosphere=atm)
        write_csv(target, files)
        print(f"letdown: wrote {', '.join(str(target / f) for f in files)}", file=sys.stderr)
    elif args.units == "si":
        sys.stdout.write(table.csv_text())
    if args.units != "si":
        from ..report.sweep import display_table
        from ..report.tables import render
        print(render(display_table(table, args.units, atm)))
    if args.xlsx:
        from ..report.workbook import sweep_sheets
        write_workbook(args, table.model, sweep_sheets(table))
    if args.html:
        from ..report.sweep import sweep_html_sections
        sections = sweep_html_sections(table, args.vary, "zip" if args.zip else "grid",
                                       plot=args.plot, units=args.units, atmosphere=atm)
        write_study_html(args, f"{fs.title}: sweep", table.model, sections,
                          STUDY_UNITS_TEXT[args.units])
    failed = sum(1 for r in table.rows if not r[-2])
    if failed:
        print(f"letdown: {failed} of {len(table.rows)} cases failed (see the reason column)",
              file=sys.stderr)
    print(f"letdown: {CAUTION}", file=sys.stderr)
    return EXIT_FAILED_SOLVE if failed else EXIT_OK


def _uncertainty(args, fs, atm) -> int:
    """``letdown sweep --sample N``: an uncertainty study (:mod:`letdown.study.uncertainty`)."""
    from ..report.uncertainty import uncertainty_files, uncertainty_text
    from ..study.executors import make_executor
    from ..study.uncertainty import parse_distribution, uncertainty

    for flag in ("zip", "plot", "xlsx", "html"):
        if getattr(args, flag, None):
            raise InputError(f"--{flag} does not go with --sample", field=f"--{flag}")
    dists = [parse_distribution(fs, v) for v in args.vary]
    from ..study.sweep import spelling_note
    _notes(spelling_note(fs, d.path) for d in dists)
    seed = args.seed
    if seed is None:
        import numpy as np
        seed = int(np.random.SeedSequence().entropy % (2 ** 32))
    outputs = [o.strip() for o in args.outputs.split(",")] if args.outputs else None
    target = csv_target(args.out) if args.out else None
    executor = make_executor(args.workers, args.dask)
    try:
        result = uncertainty(fs, dists, args.sample, sampler=args.sampler, seed=seed,
                             model=args.model, outputs=outputs, executor=executor,
                             show_progress=sys.stderr.isatty(), basis=args.basis)
    finally:
        executor.close()
    units = args.units
    if target is not None:
        files = uncertainty_files(result, source=args.file, specs=args.vary, units=units,
                                  atmosphere=atm)
        write_csv(target, files)
        print(f"letdown: wrote {', '.join(str(target / f) for f in files)}", file=sys.stderr)
    sys.stdout.write(uncertainty_text(result, units, atm))
    if result.failed:
        print(f"letdown: {result.failed} of {result.n} samples failed (statistics over the "
              f"solved ones; see the reason column of samples.csv)", file=sys.stderr)
    print(f"letdown: {CAUTION}", file=sys.stderr)
    return EXIT_FAILED_SOLVE if result.failed else EXIT_OK


def _notes(notes) -> None:
    """Print each note about the paths as written (an old spelling) once, on stderr."""
    for note in dict.fromkeys(n for n in notes if n):
        print(f"letdown: note: {note}", file=sys.stderr)
