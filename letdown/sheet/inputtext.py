"""Reading an input file's text (flowsheet, profile or measurement CSV): UTF-8 with or without a
byte-order mark, no control characters, every refusal with its file and line. A leaf of the sheet
layer (the loader and the measurement reader share it)."""

from __future__ import annotations

import codecs
import re
from pathlib import Path

from ..errors import InputError

#: Characters a flowsheet may hold: those YAML 1.1 allows (tab, line breaks, printable Unicode),
#: less NEL (U+0085) and the line and paragraph separators (U+2028, U+2029), which YAML reads as
#: line breaks that no editor shows.
_BAD_CHARACTER = re.compile("[^\t\n\r\x20-\x7e\xa0-\u2027\u202a-\ud7ff\ue000-\ufffd"
                            "\U00010000-\U0010ffff]")


def _line_column(text, pos):
    """1-based line and column of character ``pos`` of ``text``."""
    return text.count("\n", 0, pos) + 1, pos - (text.rfind("\n", 0, pos) + 1) + 1


def _check_characters(text: str, file: str, what: str = "a flowsheet file") -> None:
    """Refuse control characters (NUL, escape, form feed, ...) with their line and column."""
    m = _BAD_CHARACTER.search(text)
    if m is None:
        return
    line, column = _line_column(text, m.start())
    code = ord(m.group())
    kind = "a control character" if code < 0x20 or 0x7f <= code <= 0x9f else "a character"
    raise InputError(f"{kind} U+{code:04X} at column {column} does not belong in {what} "
                     f"(remove it; a stray byte from a copy or a transfer)", file=file, line=line)


def decode(raw: bytes, file: str) -> str:
    """The text of a flowsheet or CSV file: UTF-8 (with or without a byte-order mark).

    Raises
    ------
    InputError
        A UTF-16 or UTF-32 file (some editors save so), or a byte that is not UTF-8, with its line.
    """
    if raw.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE, codecs.BOM_UTF32_BE)):
        raise InputError("the file is UTF-16 or UTF-32 text; save it as UTF-8", file=file, line=1)
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = raw.count(b"\n", 0, exc.start) + 1
        column = exc.start - (raw.rfind(b"\n", 0, exc.start) + 1) + 1
        raise InputError(f"byte 0x{raw[exc.start]:02x} at column {column} is not UTF-8 text "
                         f"(save the file as UTF-8)", file=file, line=line) from None


def read_text(path, what: str = "a flowsheet file", field: str | None = None) -> str:
    """The text of an input file (flowsheet, profile or measurement CSV): UTF-8, no control
    characters.

    Raises
    ------
    InputError
        A missing or unreadable file, a byte that is not UTF-8 or a control character (with its
        line).
    """
    name = str(path)
    try:
        raw = Path(path).read_bytes()
    except FileNotFoundError:
        raise InputError("no such file", file=name, field=field) from None
    except OSError as exc:
        raise InputError(f"cannot read the file: {exc.strerror or exc}", file=name,
                         field=field) from None
    text = decode(raw, name)
    _check_characters(text, name, what)
    return text
