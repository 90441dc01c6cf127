"""The command-line reference (``docs/reference/cli.md``), generated from the parser itself, so it cannot
drift from what the command accepts (``tests/cli/test_cli_reference.py`` fails if the shipped file
differs). Write it again after changing an option::

    python -m letdown.cli.reference
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

from .parser import HELP_EPILOG, build_parser

#: Where the reference is kept, from the repository root.
REFERENCE = Path(__file__).resolve().parents[2] / "docs" / "reference" / "cli.md"

_HEAD = """\
# Command-line reference

Generated from the argument parser by `python -m letdown.cli.reference`; do not edit by hand.
Exit codes: 0 success; 1 a failed solve (or a study case that failed or does not meet its
limits); 2 bad input (file, line and field named); 3 an internal error (run with `--debug` and
report it).
"""


def _usage(parser: argparse.ArgumentParser) -> str:
    return " ".join(parser.format_usage().split())[len("usage: "):]


def _option_rows(parser: argparse.ArgumentParser) -> list[str]:
    rows = []
    for action in parser._actions:                     # argparse keeps no public list
        if isinstance(action, argparse._HelpAction):
            continue
        names = ", ".join(f"`{s}`" for s in action.option_strings) or f"`{action.metavar or action.dest}`"
        if action.option_strings and action.nargs != 0:
            meta = action.metavar or (("{" + ",".join(action.choices) + "}") if action.choices
                                      else action.dest.upper())
            meta = " ".join(meta) if isinstance(meta, tuple) else meta
            names += f" `{meta}`"
        text = (action.help or "").replace("|", "\\|")
        if action.choices and action.option_strings:
            text += f" (one of {', '.join(map(str, action.choices))}"
            text += f"; default {action.default})" if action.default is not None else ")"
        elif action.default not in (None, False, argparse.SUPPRESS) and action.nargs != 0:
            text += f" (default {action.default})"
        rows.append(f"| {names} | {text} |")
    return rows


def markdown() -> str:
    """The reference as Markdown: every verb's usage, arguments and options, then the models and
    unit spellings of ``--help``."""
    parser = build_parser()
    sub = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    helps = {c.dest: c.help for c in sub._choices_actions}
    parts = [_HEAD]
    for verb, verb_parser in sub.choices.items():
        parts.append(f"## `letdown {verb}`\n\n{helps.get(verb, '')}\n\n```\n{_usage(verb_parser)}\n```\n")
        parts.append("| argument | meaning |\n|---|---|\n" + "\n".join(_option_rows(verb_parser)) + "\n")
    parts.append("## Models and unit spellings\n\n```\n" + HELP_EPILOG.rstrip() + "\n```\n")
    return "\n".join(parts)


def main() -> int:  # pragma: no cover - a maintainer's command
    REFERENCE.parent.mkdir(exist_ok=True)
    REFERENCE.write_text(markdown(), encoding="utf-8")
    print(f"wrote {REFERENCE}", file=sys.stderr)
    return 0


if __name__ == "__main__":  # pragma: no cover
    raise SystemExit(main())
