"""``letdown new``: write a commented starter file."""
from __future__ import annotations

import sys
from pathlib import Path

from ..errors import InputError
from .common import EXIT_OK, write_file


def run(args) -> int:
    """Write (or print) a commented starter file that ``check`` accepts and ``solve`` solves."""
    from ..report.starters import STARTERS

    text = STARTERS[args.kind]
    if not args.file:
        sys.stdout.write(text)
        return EXIT_OK
    target = Path(args.file)
    if target.exists():
        raise InputError(f"'{args.file}' exists; choose another name (nothing was written)",
                         field="new")
    if not target.resolve().parent.is_dir():
        raise InputError(f"the directory of '{args.file}' does not exist", field="new")
    write_file(target, text, "new")
    print(f"letdown: next: letdown check {args.file}  then  letdown solve {args.file}",
          file=sys.stderr)
    return EXIT_OK
