"""``letdown solve``: solve a flowsheet file and report it (text, JSON, CSV, HTML record,
workbook)."""
from __future__ import annotations

import json
import sys
from pathlib import Path

from .common import (EXIT_FAILED_SOLVE, EXIT_OK, csv_target, record_targets, write_csv,
                     write_record, write_workbook)


def run(args) -> int:
    import letdown

    from ..report.tables import csv_text, equipment_table, stream_table
    from ..report.text import report_text

    target = csv_target(args.csv) if args.csv else None
    record_targets(args)
    sheet = letdown.load(args.file)
    spec = getattr(sheet, "spec", None)
    args.flowsheet = spec
    atmosphere = spec.extra.get("atmosphere") if spec is not None else None
    result = sheet.solve(model=args.model) if args.model else sheet.solve()
    if hasattr(result, "case") and not hasattr(result, "to_json"):
        result = result.case(0)
    if args.dew_points:
        from ..sheet.dewpoints import with_dew_points
        result = with_dew_points(result, spec)
    converged = bool(getattr(result, "converged", True))
    if args.json:
        print(result.to_json(profile=True) if args.profile else result.to_json())
        for w in getattr(result, "warnings", None) or ():
            where = w.get("where") if isinstance(w, dict) else getattr(w, "where", "")
            what = w.get("what") if isinstance(w, dict) else getattr(w, "what", w)
            print(f"letdown: warning: {where}: {what}", file=sys.stderr)
    else:
        print(report_text(result, args.units, atmosphere=atmosphere))
        if args.profile:
            from ..report.tables import profile_tables, render
            for table in profile_tables(result, args.units, atmosphere=atmosphere):
                print()
                print(render(table))
    if not converged:
        print(f"letdown: {args.file}: the solve did not converge (see the loops and goals above);"
              f" no CSV written", file=sys.stderr)
        return EXIT_FAILED_SOLVE
    if target is not None:
        write_csv(target, {
            "streams.csv": csv_text(stream_table(result, args.units, atmosphere=atmosphere)),
            "equipment.csv": csv_text(equipment_table(result, args.units, atmosphere=atmosphere)),
        })
        print(f"letdown: wrote {target / 'streams.csv'} and {target / 'equipment.csv'}",
              file=sys.stderr)
    if args.html:
        write_record(Path(args.html), result, args, atmosphere)
    if args.xlsx:
        from ..report.workbook import solve_sheets
        write_workbook(args, result.model, solve_sheets(json.loads(result.to_json()), {}))
    return EXIT_OK
