"""``letdown year``: a year of hourly operation from a profile."""
from __future__ import annotations

import sys

from ..caution import CAUTION
from .common import (EXIT_FAILED_SOLVE, EXIT_OK, STUDY_UNITS_TEXT, csv_target, record_targets,
                     write_csv, write_study_html, write_workbook)


def run(args) -> int:
    from ..report.year import year_files, year_text
    from ..sheet.loader import read_spec
    from ..study.executors import make_executor
    from ..study.year import read_profile, year

    fs = read_spec(args.file)
    args.flowsheet = fs
    atm = fs.extra.get("atmosphere") if fs.extra else None
    profile = read_profile(args.profile, atmosphere=atm)
    target = csv_target(args.out) if args.out else None
    record_targets(args)
    executor = make_executor(args.workers, args.dask)
    try:
        res = year(fs, profile, efficiency=args.efficiency, feed=args.feed,
                   outlet_block=args.outlet, model=args.model, executor=executor,
                   show_progress=sys.stderr.isatty(), calorific=args.calorific)
    finally:
        executor.close()
    if args.units == "display":
        print(year_text(res))
    else:
        from ..report.tables import render
        from ..report.year import year_table
        print(render(year_table(res, args.units, atm)))
        print(CAUTION)
    if target is not None:
        from ..report.year import year_plot_files
        files = year_files(res, flowsheet=args.file, plot=False)
        files.update(year_plot_files(res, args.units, atm))
        write_csv(target, files)
        print(f"letdown: wrote {', '.join(str(target / f) for f in files)}", file=sys.stderr)
    if args.xlsx:
        from ..report.workbook import year_sheets
        write_workbook(args, res.model, year_sheets(res))
    if args.html:
        from ..report.year import year_html_sections
        write_study_html(args, f"{fs.title}: a year of operation", res.model,
                          year_html_sections(res, args.units, atm),
                          STUDY_UNITS_TEXT[args.units])
    failed = int((~res.converged).sum())
    if failed:
        print(f"letdown: {args.file}: {failed} of {res.profile.n} hours failed; every hour is "
              "written with its reason", file=sys.stderr)
        return EXIT_FAILED_SOLVE
    return EXIT_OK
