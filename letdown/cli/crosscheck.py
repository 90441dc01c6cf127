"""``letdown crosscheck``: the same flowsheet on every model, side by side."""
from __future__ import annotations

import sys

from .common import EXIT_FAILED_SOLVE, EXIT_OK, record_targets, write_study_html


def run(args) -> int:
    import json

    from ..fluid.fluid import canonical_model
    from ..report.crosscheck import crosscheck_text
    from ..sheet.loader import read_spec
    from ..study.crosscheck import crosscheck

    fs = read_spec(args.file)
    args.flowsheet = fs
    models = None
    if args.models:
        models = [canonical_model(m) for m in args.models.split(",") if m.strip()]
    record_targets(args)
    cc = crosscheck(fs, models)
    if args.json:
        print(json.dumps(cc.to_dict(), indent=2))
    else:
        print(crosscheck_text(cc, args.units))
    if args.html:
        from ..report.crosscheck import crosscheck_table
        from ..report.html import table_html, text_html, warnings_list_html
        ws = [("check", f"{m}: {where}", what) for m, items in cc.warnings.items()
              for where, what in items]
        write_study_html(args, f"{cc.title}: second opinion by model", ", ".join(cc.models), [
            ("Results by model", table_html(crosscheck_table(cc, args.units))),
            ("Warnings by model", warnings_list_html(ws)),
            ("Report as printed", text_html(crosscheck_text(cc, args.units)))], args.units)
    if not any(m not in cc.failures for m in cc.models):
        print(f"letdown: {args.file}: no model could solve the flowsheet", file=sys.stderr)
        return EXIT_FAILED_SOLVE
    return EXIT_OK
