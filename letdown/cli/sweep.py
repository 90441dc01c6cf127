"""``letdown sweep``: cases over grids or lists of input values."""
from __future__ import annotations

import sys

from ..caution import CAUTION
from ..errors import InputError
from .common import (EXIT_FAILED_SOLVE, EXIT_OK, STUDY_UNITS_TEXT, csv_target, record_targets,
                     write_csv, write_study_html, write_workbook)


def run(args) -> int:
    from ..report.sweep import sweep_files
    from ..sheet.loader import load
    from ..study.sweep import case_count, parse_variable, sweep

    from ..quantities import STANDARD_ATMOSPHERE

    fs = load(args.file)
    args.flowsheet = fs
    atm = (fs.extra.get("atmosphere") if fs.extra else None) or STANDARD_ATMOSPHERE
    variables = [parse_variable(fs, v) for v in args.vary]
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
