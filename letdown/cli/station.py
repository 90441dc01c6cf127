"""``letdown capacity`` and ``letdown upsets``: the station's hydraulic studies (the largest flow
of each operating case before a rating or limit is reached; loss of preheat and regulators failing
wide open)."""
from __future__ import annotations

import json
import sys

from .common import EXIT_FAILED_SOLVE, EXIT_OK, record_targets, write_study_html


def run(args) -> int:
    """``letdown capacity`` and ``letdown upsets``: exit 1 when a case's capacity was not found
    (or, for upsets, a case of normal operation failed), with every case reported."""
    from ..sheet.loader import read_spec

    record_targets(args)
    fs = read_spec(args.file)
    args.flowsheet = fs
    atmosphere = fs.extra.get("atmosphere")
    if args.verb == "capacity":
        from ..report.capacity import capacity_text
        from ..study.capacity import capacity
        res = capacity(fs, model=args.model)
        text = capacity_text(res, args.units, atmosphere=atmosphere)
        bad = [c.name for c in res.cases if not c.found]
    else:
        from ..report.upsets import upsets_text
        from ..study.upsets import upsets
        res = upsets(fs, model=args.model)
        text = upsets_text(res, args.units, atmosphere=atmosphere)
        bad = list(res.preheat[0]["failures"]) if res.preheat else []
    data = res.to_dict()
    if args.html:
        from ..report.html import text_html
        what = "capacity" if args.verb == "capacity" else "upsets"
        write_study_html(args, f"{fs.title}: {what}", res.model if hasattr(res, "model") else
                         (args.model or fs.gas.model or "default"),
                         [("Report as printed", text_html(text))], args.units)
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
