"""``letdown envelope``: the phase envelope of a stream."""
from __future__ import annotations

import json
import os
import sys

from ..errors import InputError
from .common import EXIT_FAILED_SOLVE, EXIT_OK, csv_target, plot_target, write_csv


def run(args) -> int:
    import numpy as np

    import letdown

    from ..fluid import Fluid
    from ..fluid.models import DEW_POINT_BIAS
    from ..report.envelope import (envelope_csv_files, envelope_dict, envelope_text,
                                  plot_envelope)

    target = csv_target(args.csv) if args.csv else None
    plot = plot_target(args.plot) if args.plot else None
    betas = []
    for part in args.lines.split(","):
        if part.strip():
            try:
                betas.append(float(part))
            except ValueError:
                raise InputError(f"'{part.strip()}' is not a number", field="--lines") from None
    sheet = letdown.load(args.file)
    spec = sheet.spec
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
        write_csv(target, envelope_csv_files(env, points))
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
