"""Fuzz the shipped flowsheets: mutate each file many ways and run ``solve --json`` and ``check``.

Not a test (pytest never collects ``bench/``); a small fixed-seed slice runs in
``tests/cli/test_fuzz_files.py``. Each flowsheet in ``flowsheets/*.yaml`` is mutated ``--per-file``
times (default 1,500) by a fixed-seed generator, one to three mutations at a time:

* lines: delete one, duplicate one, swap two, truncate the file at a random byte;
* numbers: one number to 0, -1, 1e30, -1e30, 1e-30, nan, .nan, .inf or a word, or scaled
  (x10, x0.1, x-1, +-100, ...: a slip that still loads);
* units: one unit to another unit (a pressure unit on a temperature, ...) or a misspelling;
* names: rename a key, a block kind or a stream reference (to a known one or a typo);
* bytes: a control byte (NUL, escape, form feed, ...) or bytes that are not UTF-8 inserted.

Each mutant is written to a file and run in-process through :func:`letdown.cli.main` with stdout and
stderr captured (the verbs print; only exceptions escaping ``main`` count as tracebacks). What is
counted and listed:

* exit codes per verb;
* **failures** (the target is none): exit 3 (internal error), a traceback on stderr or escaping
  ``main``, an exit code that is not 0, 1, 2, a refusal (exit 1 or 2) that is not one line
  ``letdown: ...`` on stderr, an exit 0 ``solve --json`` whose JSON holds a NaN or infinity (or a
  null, which is how the JSON writes a NaN, for a stream's T, P or flow or a block's duty, power
  or dP), an
  absolute temperature or pressure at or below zero, a negative flow, a vapour fraction outside
  [0, 1], a block balance open beyond the result's own limits, or stdout that is not one JSON object;
* numpy RuntimeWarnings seen (counted, listed with ``--show-warnings``: not a failure by itself);
* refusals (exit 2) whose message names no line of the file (counted and their distinct messages
  listed: every refusal should name file, line and field).

Each failure is listed with its flowsheet, mutation and the first line of its message, and written
to ``--out DIR`` (default ``bench/fuzz-failures``) as a reproducer file ``<n>.yaml`` when given.

Usage::

    python bench/fuzz_files.py [--per-file N] [--seed S] [--files GLOB] [--workers W] [--out DIR]

Exit status 0 if no failure was found, 1 otherwise.
"""
from __future__ import annotations

import argparse
import contextlib
import glob
import io
import json
import math
import os
import random
import re
import sys
import tempfile
import time
import traceback
import warnings
from collections import Counter
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

#: Default seed: fixed, so two runs mutate the same way.
SEED = 20261202
PER_FILE = 1500
VERBS = (("solve", "--json"), ("check",))

NUMBER_RE = re.compile(r"(?<![\w.])[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?(?![\w.])")
UNIT_RE = re.compile(r"(?<=\d) ?(degC|degF|K|barg|bara|bar|psig|psi|kPa|MPa|Sm3/h|Nm3/h|MMscfd|"
                     r"kmol/h|mol/s|t/h|kg/h|kg/s|kW|MW|W|kW/K|%|mg/Sm3|lb/MMscf|delta_degC)\b")
KEY_RE = re.compile(r"(?:^|[{,]\s*|^\s*-\s*)([A-Za-z_][\w-]*):", re.MULTILINE)
KIND_RE = re.compile(r"kind:\s*([a-z]+)")
NUMBERS = ("0", "-1", "1e30", "-1e30", "1e-30", "nan", ".nan", ".inf", "-.inf", "abc", "1e308",
           "0.0", "-0", "99999999999999999999999999999999999999999", "9" * 5000, "1_000",
           "0x1F", "1:30", "~", "[]", "{}", "''", "true", "2026-01-01")
UNITS = ("degC", "degF", "K", "barg", "bar", "psig", "kPa", "Sm3/h", "kmol/h", "t/h", "kW", "MW",
         "kW/K", "%", "delta_degC", "mg/Sm3", "m3/h", "hp", "degX", "", "barg barg", "J/mol")
KINDS = ("throttle", "heater", "cooler", "separator", "compressor", "expander", "mixer",
         "splitter", "exchanger", "inject", "valve")
KEYS = ("from", "to", "kind", "T", "P", "flow", "T_out", "P_out", "dP", "duty", "UA", "hot",
        "cold", "vapour", "liquid", "water", "model", "composition", "efficiency", "rate",
        "depression", "hold", "by", "at", "within", "min_T", "hydrate_margin", "feeds",
        "equipment", "gas", "goals", "limits", "cases", "name", "normalise", "xyz")
CONTROL = ("\x00", "\x01", "\x07", "\x08", "\x0b", "\x0c", "\x1b", "\x7f", "\x85", "\u2028",
           "\ufffe")
BAD_UTF8 = (b"\xff", b"\xc3", b"\xe2\x82", b"\xed\xa0\x80", b"\xc0\xaf", b"\xfe\xff")


# ---------------------------------------------------------------------------------------------
# Mutations: each takes (text, rng) and returns (new text or bytes, description)
# ---------------------------------------------------------------------------------------------

def _lines(text):
    return text.splitlines(keepends=True)


def delete_line(text, rng):
    lines = _lines(text)
    i = rng.randrange(len(lines))
    return "".join(lines[:i] + lines[i + 1:]), f"delete line {i + 1}"


def duplicate_line(text, rng):
    lines = _lines(text)
    i = rng.randrange(len(lines))
    return "".join(lines[:i + 1] + [lines[i]] + lines[i + 1:]), f"duplicate line {i + 1}"


def swap_lines(text, rng):
    lines = _lines(text)
    i = rng.randrange(len(lines))
    j = min(i + 1, len(lines) - 1) if rng.random() < 0.5 else rng.randrange(len(lines))
    lines[i], lines[j] = lines[j], lines[i]
    return "".join(lines), f"swap lines {i + 1} and {j + 1}"


def truncate(text, rng):
    n = rng.randrange(len(text))
    return text[:n], f"truncate at character {n}"


def _replace_match(text, rng, regex, choices, what, group=0):
    found = list(regex.finditer(text))
    if not found:
        return text, f"{what}: none found"
    m = rng.choice(found)
    new = rng.choice(choices)
    a, b = m.span(group)
    line = text.count("\n", 0, a) + 1
    shown = new if len(new) <= 40 else f"{new[:12]}... ({len(new)} characters)"
    return text[:a] + new + text[b:], f"{what} {m.group(group)!r} -> {shown!r} on line {line}"


def number(text, rng):
    return _replace_match(text, rng, NUMBER_RE, NUMBERS, "number")


def scale(text, rng):
    """One number scaled, negated or shifted: a plausible slip that still loads."""
    found = list(NUMBER_RE.finditer(text))
    if not found:
        return text, "scale: none found"
    m = rng.choice(found)
    x = float(m.group())
    how = rng.choice(("x10", "x0.1", "x-1", "+100", "-100", "x1000", "x0.001", "x2"))
    y = {"x10": x * 10, "x0.1": x * 0.1, "x-1": -x, "+100": x + 100, "-100": x - 100,
         "x1000": x * 1000, "x0.001": x * 0.001, "x2": x * 2}[how]
    a, b = m.span()
    line = text.count("\n", 0, a) + 1
    return text[:a] + f"{y:.6g}" + text[b:], f"number {m.group()!r} {how} on line {line}"


def unit(text, rng):
    return _replace_match(text, rng, UNIT_RE, UNITS, "unit", group=1)


def kind(text, rng):
    return _replace_match(text, rng, KIND_RE, KINDS, "kind", group=1)


def key(text, rng):
    found = list(KEY_RE.finditer(text))
    if not found:
        return text, "key: none found"
    m = rng.choice(found)
    old = m.group(1)
    names = sorted({k.group(1) for k in found})
    choices = KEYS + tuple(names) + (old[:-1] or "x", old + "s", old.upper())
    new = rng.choice(choices)
    a, b = m.span(1)
    line = text.count("\n", 0, a) + 1
    return text[:a] + new + text[b:], f"key {old!r} -> {new!r} on line {line}"


def stream_reference(text, rng):
    """Point a from/to at another name of the file (or a typo)."""
    refs = list(re.finditer(r"(?:from|to|vapour|liquid|water):\s*\[?([A-Za-z][\w-]*)", text))
    if not refs:
        return text, "reference: none found"
    m = rng.choice(refs)
    names = sorted({r.group(1) for r in refs})
    new = rng.choice(names + [m.group(1) + "x"])
    a, b = m.span(1)
    line = text.count("\n", 0, a) + 1
    return text[:a] + new + text[b:], f"reference {m.group(1)!r} -> {new!r} on line {line}"


def control(text, rng):
    i = rng.randrange(len(text) + 1)
    c = rng.choice(CONTROL)
    line = text.count("\n", 0, i) + 1
    return text[:i] + c + text[i:], f"control character U+{ord(c):04X} on line {line}"


def bad_utf8(text, rng):
    raw = text.encode("utf-8")
    i = rng.randrange(len(raw) + 1)
    b = rng.choice(BAD_UTF8)
    line = raw.count(b"\n", 0, i) + 1
    return raw[:i] + b + raw[i:], f"bytes {b!r} on line {line}"


def indent(text, rng):
    lines = _lines(text)
    i = rng.randrange(len(lines))
    new = (" " + lines[i]) if rng.random() < 0.5 else lines[i].lstrip(" ")
    lines[i] = new
    return "".join(lines), f"indent changed on line {i + 1}"


MUTATIONS = ((delete_line, 3), (duplicate_line, 2), (swap_lines, 2), (truncate, 1), (number, 5),
             (scale, 5),
             (unit, 3), (kind, 2), (key, 3), (stream_reference, 2), (control, 1), (bad_utf8, 1),
             (indent, 1))


def mutate(text: str, rng: random.Random):
    """One to three mutations of ``text``: (str or bytes, description)."""
    funcs = [f for f, w in MUTATIONS for _ in range(w)]
    n = rng.choices((1, 2, 3), weights=(6, 3, 1))[0]
    done = []
    out = text
    for _ in range(n):
        if isinstance(out, bytes):
            break
        if not out:
            break
        out, what = rng.choice(funcs)(out, rng)
        done.append(what)
    return out, "; ".join(done)


#: The one-number changes of ``--numbers`` mode: slips that still load.
NUMBER_SLIPS = (("x10", 10.0), ("x0.1", 0.1), ("x-1", -1.0), ("x1000", 1000.0), ("x0.001", 1e-3),
                ("x2", 2.0), ("x0.5", 0.5))


def number_slips(path: Path):
    """Every number of the file changed alone by every slip of :data:`NUMBER_SLIPS`, in order:
    (index, content, description)."""
    text = path.read_text(encoding="utf-8")
    out = []
    for m in NUMBER_RE.finditer(text):
        line = text.count("\n", 0, m.start()) + 1
        if text[text.rfind("\n", 0, m.start()) + 1:m.start()].lstrip().startswith("#"):
            continue                                    # a comment
        for how, factor in NUMBER_SLIPS:
            new = f"{float(m.group()) * factor:.6g}"
            out.append((len(out), text[:m.start()] + new + text[m.end():],
                        f"number {m.group()!r} {how} on line {line}"))
    return out


def mutants(path: Path, per_file: int, seed: int, numbers: bool = False):
    """The fixed list of (index, content, description) of one flowsheet (``numbers``: the
    one-number slips instead, all of them)."""
    if numbers:
        return number_slips(path)
    text = path.read_text(encoding="utf-8")
    rng = random.Random(f"{seed}:{path.name}")
    return [(k, *mutate(text, rng)) for k in range(per_file)]


# ---------------------------------------------------------------------------------------------
# Running and judging
# ---------------------------------------------------------------------------------------------

def _numbers(obj, path=""):
    """Every number of a JSON value with its path."""
    if isinstance(obj, dict):
        for k, v in obj.items():
            yield from _numbers(v, f"{path}.{k}" if path else str(k))
    elif isinstance(obj, list):
        for i, v in enumerate(obj):
            yield from _numbers(v, f"{path}[{i}]")
    elif isinstance(obj, (int, float)) and not isinstance(obj, bool):
        yield path, float(obj)


def judge_json(out: str) -> list:
    """Problems of an exit-0 ``solve --json`` output (empty if none)."""
    from letdown.sheet.result import ENERGY_CLOSURE, MOLE_CLOSURE
    try:
        data = json.loads(out)
    except ValueError as exc:
        return [f"stdout is not one JSON object: {exc}"]
    problems = []
    for where, x in _numbers(data):
        if not math.isfinite(x):
            problems.append(f"{where} = {x}")
    for name, s in (data.get("streams") or {}).items():
        for k in ("T_K", "P_Pa"):
            v = s.get(k)
            if isinstance(v, (int, float)) and v <= 0.0:
                problems.append(f"streams.{name}.{k} = {v}")
        for k in ("T_K", "P_Pa", "flow_mol_s"):   # the JSON writes a NaN as null
            if k not in s or s[k] is None:
                problems.append(f"streams.{name}.{k} = null (NaN)")
        v = s.get("flow_mol_s")
        if isinstance(v, (int, float)) and v < 0.0:
            problems.append(f"streams.{name}.flow_mol_s = {v}")
        v = s.get("vapour_fraction")
        if isinstance(v, (int, float)) and not -1e-9 <= v <= 1.0 + 1e-9:
            problems.append(f"streams.{name}.vapour_fraction = {v}")
    for name, e in (data.get("equipment") or {}).items():
        for k in ("duty_W", "power_W", "dP_Pa"):
            if k in e and e[k] is None:
                problems.append(f"equipment.{name}.{k} = null (NaN)")
        for k, limit in (("mole_balance_closure", MOLE_CLOSURE),
                         ("energy_balance_closure", ENERGY_CLOSURE)):
            v = e.get(k)
            if v is None or (isinstance(v, float) and not v <= limit):
                problems.append(f"equipment.{name}.{k} = {v} (limit {limit:g})")
    if data.get("converged") is not True:
        problems.append(f"exit 0 with converged = {data.get('converged')}")
    return problems


def run_one(path: Path, argv: list):
    """Run the CLI in-process: (exit code, stdout, stderr, escaped traceback, runtime warnings)."""
    from letdown.cli import main
    out, err = io.StringIO(), io.StringIO()
    escaped = None
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
            try:
                rc = main([argv[0], str(path), *argv[1:]])
            except BaseException:      # noqa: BLE001 - what escapes main is what we look for
                rc = None
                escaped = traceback.format_exc()
    runtime = sorted({f"{w.category.__name__}: {w.message} ({Path(w.filename).name}:{w.lineno})"
                      for w in caught if issubclass(w.category, RuntimeWarning)})
    return rc, out.getvalue(), err.getvalue(), escaped, runtime


def judge(argv, rc, out, err, escaped) -> list:
    """Failures of one run (empty if it behaved)."""
    problems = []
    if escaped is not None:
        problems.append("exception escaped main: " + escaped.strip().splitlines()[-1])
        return problems
    if "Traceback" in err:
        problems.append("traceback on stderr")
    if rc == 3:
        problems.append("exit 3: " + (err.strip().splitlines() or [""])[-1])
    elif rc not in (0, 1, 2):
        problems.append(f"exit code {rc!r}")
    elif rc in (1, 2):
        lines = [x for x in err.strip().splitlines() if not x.startswith("letdown: warning:")]
        if rc == 2 and (len(lines) != 1 or not lines[0].startswith("letdown: ")):
            problems.append(f"refusal is not one line: {err.strip()[:300]!r}")
        if rc == 2 and out:
            problems.append("exit 2 with output on stdout")
    if rc == 0 and argv[0] == "solve":
        problems.extend(judge_json(out))
    return problems


def fuzz_file(task):
    """Run every mutant of one file (one worker's share): list of records."""
    path, per_file, seed, start, stop, tmpdir, *more = task
    numbers = bool(more and more[0])
    records = []
    target = Path(tmpdir) / f"{Path(path).stem}-mutant.yaml"
    for k, content, what in mutants(Path(path), per_file, seed, numbers)[start:stop]:
        if isinstance(content, bytes):
            target.write_bytes(content)
        else:
            target.write_text(content, encoding="utf-8", errors="surrogatepass")
        for argv in VERBS:
            rc, out, err, escaped, runtime = run_one(target, list(argv))
            problems = judge(argv, rc, out, err, escaped)
            first = (err.strip().splitlines() or [""])
            first = [x for x in first if not x.startswith("letdown: warning:")] or [""]
            records.append({"file": Path(path).name, "k": k, "what": what, "verb": argv[0],
                            "rc": rc, "problems": problems, "runtime": runtime,
                            "message": first[0][:240],
                            "content": content if problems else None})
    return records


def main(argv=None) -> int:
    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    p.add_argument("--per-file", type=int, default=PER_FILE, help="mutants per flowsheet")
    p.add_argument("--seed", type=int, default=SEED, help="seed of the mutations")
    p.add_argument("--files", default=str(ROOT / "flowsheets" / "*.yaml"), help="glob of flowsheets")
    p.add_argument("--workers", type=int, default=1, help="processes (default 1)")
    p.add_argument("--out", default=None, help="write each failing mutant here as a reproducer")
    p.add_argument("--show-warnings", action="store_true", help="list the RuntimeWarnings seen")
    p.add_argument("--numbers", action="store_true",
                   help="instead of random mutants: every number of each file changed alone by "
                        "x10, x0.1, x-1, x1000, x0.001, x2, x0.5 (--per-file and --seed unused)")
    args = p.parse_args(argv)
    files = sorted(glob.glob(args.files))
    if not files:
        print(f"no files match {args.files}", file=sys.stderr)
        return 2
    t0 = time.perf_counter()
    records = []
    with tempfile.TemporaryDirectory(prefix="letdown-fuzz-") as tmp:
        tasks = []
        for f in files:
            total = len(number_slips(Path(f))) if args.numbers else args.per_file
            step = max(1, math.ceil(total / max(1, args.workers)))
            for start in range(0, total, step):
                wdir = Path(tmp) / f"w{len(tasks)}"
                wdir.mkdir()
                tasks.append((f, args.per_file, args.seed, start, min(start + step, total),
                              str(wdir), args.numbers))
        if args.workers > 1:
            import multiprocessing
            with multiprocessing.get_context("spawn").Pool(args.workers) as pool:
                for part in pool.imap_unordered(fuzz_file, tasks):
                    records.extend(part)
        else:
            for task in tasks:
                records.extend(fuzz_file(task))
    seconds = time.perf_counter() - t0
    report(records, files, args, seconds)
    failures = [r for r in records if r["problems"]]
    if failures and args.out:
        out = Path(args.out)
        out.mkdir(parents=True, exist_ok=True)
        for n, r in enumerate(failures):
            suffix = ".yaml"
            data = r["content"]
            target = out / f"{n:03d}-{r['file'].removesuffix('.yaml')}-{r['k']}-{r['verb']}{suffix}"
            if isinstance(data, bytes):
                target.write_bytes(data)
            else:
                target.write_text(data, encoding="utf-8", errors="surrogatepass")
        print(f"wrote {len(failures)} reproducer(s) to {out}")
    return 1 if failures else 0


def _shape(message: str) -> str:
    """A refusal with its numbers and file names blanked, to group alike messages."""
    text = re.sub(r"letdown: \S+?(?=: )", "letdown: FILE", message)
    return re.sub(r"\d+(\.\d+)?(e[-+]?\d+)?", "N", text)[:160]


def report(records, files, args, seconds) -> None:
    mutants_run = len({(r["file"], r["k"]) for r in records})
    each = "every number alone x10, x0.1, x-1, x1000, x0.001, x2, x0.5" if args.numbers else \
        f"{args.per_file} mutants each, seed {args.seed}"
    print(f"fuzz_files: {len(files)} flowsheet(s), {each} ({mutants_run} mutants in all), "
          f"{len(records)} runs in {seconds:.0f} s")
    for verb, *_ in VERBS:
        counts = Counter(r["rc"] for r in records if r["verb"] == verb)
        print(f"  {verb:6s} exit codes: " + ", ".join(f"{rc}: {n}" for rc, n in
                                                      sorted(counts.items(), key=str)))
    per_file = Counter((r["file"], r["rc"]) for r in records if r["verb"] == "solve")
    for f in files:
        name = Path(f).name
        print(f"    {name:28s} solve " + ", ".join(f"{rc}: {per_file[(name, rc)]}"
                                                   for rc in (0, 1, 2, 3) if per_file[(name, rc)]))
    failures = [r for r in records if r["problems"]]
    kinds = Counter(p.split(":")[0].split(" =")[0] for r in failures for p in r["problems"])
    print(f"  failures: {len(failures)}" + (f" ({', '.join(f'{k}: {n}' for k, n in kinds.most_common())})"
                                            if kinds else ""))
    for r in failures:
        print(f"    {r['file']} #{r['k']} {r['verb']} ({r['what']}): rc {r['rc']}: "
              f"{'; '.join(r['problems'])[:400]}")
    unlocated = Counter(_shape(r["message"]) for r in records
                        if r["rc"] == 2 and not re.match(r"letdown: [^:]+:\d+: ", r["message"]))
    print(f"  refusals naming no line: {sum(unlocated.values())}")
    for m, n in unlocated.most_common(20):
        print(f"    {n:5d}  {m}")
    warned = [r for r in records if r["runtime"]]
    print(f"  runs with numpy RuntimeWarnings: {len(warned)}")
    if args.show_warnings:
        for w, n in Counter(w for r in warned for w in r["runtime"]).most_common():
            print(f"    {n:5d}  {w}")


if __name__ == "__main__":
    sys.exit(main())
