"""``letdown size``: preheat and inhibitor sizing at the station's limits."""
from __future__ import annotations

import json
import sys

from .common import EXIT_FAILED_SOLVE, EXIT_OK, record_targets, write_study_html, write_workbook


def run(args) -> int:
    from ..report.size import size_text
    from ..sheet.loader import read_spec
    from ..study.size import size

    fs = read_spec(args.file)
    args.flowsheet = fs
    record_targets(args)
    res = size(fs, efficiency=args.efficiency, model=args.model, free_water=args.free_water,
               calorific=args.calorific)
    if args.json:
        print(json.dumps(res.to_dict(), indent=2, allow_nan=False))
        print(f"letdown: {res.to_dict()['caution']}", file=sys.stderr)
    else:
        print(size_text(res, args.units, atmosphere=fs.extra.get("atmosphere")))
    if args.xlsx:
        from ..report.workbook import size_sheets
        write_workbook(args, res.model, size_sheets(res.to_dict()))
    if args.html:
        from ..report.html import table_html, text_html, warnings_list_html
        from ..report.size import size_tables
        d = res.to_dict()
        seen, ws = set(), []
        for c in d["cases"]:
            for w in c["warnings"]:
                key = (w.get("severity"), w.get("where"), w.get("what"))
                if key not in seen:
                    seen.add(key)
                    ws.append(key)
        atm = fs.extra.get("atmosphere")
        write_study_html(args, f"{fs.title}: preheat sizing", res.model, [
            ("Cases", "".join(table_html(t) for t in size_tables(res, args.units, atm))),
            ("Warnings (any case)", warnings_list_html(ws)),
            ("Report as printed", text_html(size_text(res, args.units, atmosphere=atm)))],
            args.units)
    if not res.all_met:
        bad = [c.name for c in res.cases if not c.met]
        print(f"letdown: {args.file}: {len(bad)} of {len(res.cases)} cases failed or not met "
              f"({', '.join(bad)}); every case is reported", file=sys.stderr)
        return EXIT_FAILED_SOLVE
    return EXIT_OK
