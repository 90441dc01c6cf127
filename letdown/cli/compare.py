"""``letdown compare``: a solve against plant readings, and a fitted parameter."""
from __future__ import annotations

import json
import sys

from ..errors import InputError
from .common import EXIT_FAILED_SOLVE, EXIT_OK, record_targets, write_study_html


def run(args) -> int:
    from ..fluid.fluid import canonical_model
    from ..report.compare import compare_text
    from ..sheet.loader import read_spec
    from ..sheet.measurements import parse_fit, read_csv, with_measurements
    from ..study.compare import compare

    if args.within and not args.fit:
        raise InputError("--within goes with --fit", field="--within")
    fs = read_spec(args.file)
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
    record_targets(args)
    cmp = compare(fs, models=models, fit=fit, within=within)
    if args.json:
        print(json.dumps(cmp.to_dict(), indent=2, allow_nan=False))
    else:
        print(compare_text(cmp, args.units, atmosphere=fs.extra.get("atmosphere")))
    if args.html:
        from ..report.compare import compare_table
        from ..report.html import table_html, text_html, warnings_list_html
        atm = fs.extra.get("atmosphere")
        ws = [("check", f"{m}: {where}", what) for m, c in cmp.results.items()
              for where, what in c.warnings]
        sections = [("Residuals by model", table_html(compare_table(cmp, args.units, atm)))] \
            if cmp.results else []
        write_study_html(args, f"{cmp.title}: check against measurements",
                          ", ".join(cmp.results) or "-", sections + [
                              ("Warnings by model", warnings_list_html(ws)),
                              ("Report as printed", text_html(compare_text(
                                  cmp, args.units, atmosphere=atm)))], args.units)
    if not cmp.results:
        print(f"letdown: {args.file}: no model could solve the flowsheet", file=sys.stderr)
        return EXIT_FAILED_SOLVE
    failed = [m for m, c in cmp.results.items() if fit and c.fit is None]
    if failed and len(failed) == len(cmp.results):
        print(f"letdown: {args.file}: the fit failed with every model", file=sys.stderr)
        return EXIT_FAILED_SOLVE
    return EXIT_OK
