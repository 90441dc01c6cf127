"""``letdown check``: validate a flowsheet file without solving it."""
from __future__ import annotations

from ..errors import InputError
from .common import EXIT_OK


def run(args) -> int:
    from ..fluid import Fluid
    from ..sheet.graph import build_graph, solve_order
    from ..sheet.loader import read_spec

    fs = read_spec(args.file)
    args.flowsheet = fs
    steps = solve_order(build_graph(fs))
    zs = dict(fs.gas.composition)
    try:
        Fluid(zs, model=fs.gas.model, kij=fs.gas.kij)      # a ModelError names gas.model (main)
    except InputError as exc:
        raise InputError(exc.message, file=fs.source, line=fs.gas.model_where.line,
                         field="gas") from None
    loops = [s for s in steps if s.is_loop]
    tears = "; ".join(", ".join(s.tears) for s in loops)
    print(f"{args.file}: ok -- {len(fs.feeds)} feed(s), {len(fs.blocks)} block(s), "
          f"{len(fs.goals)} goal(s), {len(loops)} loop(s)" + (f" (tears: {tears})" if loops else ""))
    return EXIT_OK
