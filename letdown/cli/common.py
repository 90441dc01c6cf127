"""What the verbs share: exit codes, output targets checked before solving, files written through a
temporary file or directory, the run record."""
from __future__ import annotations

import os
import shutil
import sys
import tempfile
from pathlib import Path

from ..errors import InputError


EXIT_OK = 0


EXIT_FAILED_SOLVE = 1


EXIT_BAD_INPUT = 2


EXIT_INTERNAL = 3


def csv_target(path: str) -> Path:
    """Check ``--csv DIR`` before solving: a directory (existing or to be made) we can write."""
    target = Path(path)
    if target.exists() and not target.is_dir():
        raise InputError(f"'{path}' exists and is not a directory", field="--csv")
    parent = target.resolve().parent
    if not parent.is_dir():
        raise InputError(f"the parent directory of '{path}' does not exist", field="--csv")
    return target


def write_csv(target: Path, files: dict) -> None:
    """Write ``files`` {name: text} into ``target`` through a temporary directory beside it."""
    parent = target.resolve().parent
    tmp = Path(tempfile.mkdtemp(prefix=".letdown-csv-", dir=parent))
    try:
        for name, text in files.items():
            if isinstance(text, bytes):
                (tmp / name).write_bytes(text)
            else:
                (tmp / name).write_text(text, encoding="utf-8")
        if target.is_dir():
            for name in files:
                os.replace(tmp / name, target / name)
        else:
            os.replace(tmp, target)
    finally:
        if tmp.exists():
            shutil.rmtree(tmp, ignore_errors=True)


def record_targets(args) -> None:
    """Check ``--html PATH`` and ``--xlsx PATH`` before any solving: a file name in an existing
    directory, and openpyxl present for the workbook."""
    for field in ("html", "xlsx"):
        path = getattr(args, field, None)
        if not path:
            continue
        target = Path(path)
        if target.is_dir():
            raise InputError(f"'{path}' is a directory, not a file name", field=f"--{field}")
        if not target.resolve().parent.is_dir():
            raise InputError(f"the directory of '{path}' does not exist", field=f"--{field}")
        if field == "xlsx":
            from ..report.workbook import available
            if not available():
                raise InputError("the workbook needs openpyxl: pip install 'letdown[xlsx]' (or "
                                 "write CSV with --csv / --out)", field="--xlsx")


def run_info(args, model: str, units: str) -> dict:
    """What was run, for the header of a record: command, version, input file and its SHA-256,
    model, date and units."""
    import datetime
    import hashlib

    from .._version import __version__

    import shlex

    raw = Path(args.file).read_bytes()
    argv = getattr(args, "argv", None) or [getattr(args, "verb", "solve"), str(args.file)]
    return {"Command": "letdown " + shlex.join(argv),
            "letdown version": __version__,
            "Input file": str(args.file),
            "Input SHA-256": hashlib.sha256(raw).hexdigest(),
            "Model": str(model),
            "Made": datetime.datetime.now(datetime.timezone.utc).strftime("%Y-%m-%d %H:%M UTC"),
            "Units": units}


#: The unit system of a record's tables, as said in its header.
UNITS_TEXT = {"si": "SI (degC, barg, kW)", "field": "field (degF, psig, MMBtu/h)"}


#: The same for ``sweep`` and ``year``, whose ``si`` is plain SI as their CSV columns.
STUDY_UNITS_TEXT = {"si": "SI (K, Pa, W), as the CSV columns",
                    "display": "display (degC, barg, kW, MWh)",
                    "field": "field (degF, psig, MMBtu/h, MMBtu)"}


#: The units of a workbook (always the JSON result's SI units).
XLSX_UNITS = "SI as in the JSON result (K, Pa, mol/s, kg/s, W, J/mol); the unit is in each header"


def write_file(path: Path, data, field: str) -> None:
    """Write ``data`` (str or bytes) to ``path`` whole or not at all (a temporary file beside it,
    then renamed)."""
    tmp = path.with_name(f".{path.name}.tmp")
    try:
        if isinstance(data, bytes):
            tmp.write_bytes(data)
        else:
            tmp.write_text(data, encoding="utf-8")
        os.replace(tmp, path)
    except OSError as exc:
        raise InputError(f"cannot write '{path}': {exc.strerror or exc}", field=field) from None
    finally:
        if tmp.exists():
            tmp.unlink()
    print(f"letdown: wrote {path}", file=sys.stderr)


def write_record(path: Path, result, args, atmosphere) -> None:
    """Write the HTML calculation record of ``result`` to ``path`` (whole or not at all)."""
    from ..report.html import html_report

    run = run_info(args, result.model, UNITS_TEXT[args.units])
    raw = Path(args.file).read_bytes()
    text = html_report(result, run=run, input_text=raw.decode("utf-8", errors="replace"),
                       units=args.units, atmosphere=atmosphere)
    write_file(path, text, "--html")


def write_study_html(args, title: str, model: str, sections, units: str) -> None:
    """Write the HTML record of a study (``sections``: [(heading, HTML)])."""
    from ..report.html import study_html

    raw = Path(args.file).read_bytes()
    text = study_html(title, run=run_info(args, model, UNITS_TEXT.get(units, units)),
                      sections=sections, input_text=raw.decode("utf-8", errors="replace"))
    write_file(Path(args.html), text, "--html")


def write_workbook(args, model: str, sheets) -> None:
    """Write ``sheets`` (run information first) as the ``--xlsx`` workbook."""
    from ..report.workbook import _run_rows, workbook_bytes

    run = run_info(args, model, XLSX_UNITS)
    name, header, rows = sheets[0]
    if name == "Run":
        sheets = [(name, header, _run_rows(run) + tuple(rows))] + list(sheets[1:])
    write_file(Path(args.xlsx), workbook_bytes(sheets), "--xlsx")


def plot_target(path: str) -> Path:
    """Check ``--plot FILE`` before solving: a .png or .svg in an existing directory, and
    matplotlib present."""
    import importlib.util
    target = Path(path)
    if target.suffix.lower() not in (".png", ".svg"):
        raise InputError(f"'{path}' must end in .png or .svg", field="--plot")
    if not target.resolve().parent.is_dir():
        raise InputError(f"the directory of '{path}' does not exist", field="--plot")
    if importlib.util.find_spec("matplotlib") is None:
        raise InputError("drawing the envelope needs matplotlib (pip install matplotlib); the "
                         "data can still be written with --csv or --json", field="--plot")
    return target
