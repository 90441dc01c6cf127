"""The documentation's examples are real: the README and every page under docs/ run as doctests
(from the project root), and every relative link in them points at a file that exists."""
import doctest
import os
import re
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
PAGES = [ROOT / "README.md", ROOT / "DEVELOPERS.md"] + sorted((ROOT / "docs").rglob("*.md"))


def _doctest(path):
    cwd = os.getcwd()
    os.chdir(ROOT)
    try:
        return doctest.testfile(str(path), module_relative=False, optionflags=doctest.ELLIPSIS)
    finally:
        os.chdir(cwd)


@pytest.mark.parametrize("path", PAGES, ids=lambda p: str(p.relative_to(ROOT)))
def test_examples_run(path):
    failures, tried = _doctest(path)
    assert failures == 0


def test_the_python_api_page_holds_its_examples():
    failures, tried = _doctest(ROOT / "docs" / "reference" / "python-api.md")
    assert tried > 20 and failures == 0


def _anchors(path):
    """GitHub-style anchors of a page's headings."""
    out = set()
    for line in path.read_text(encoding="utf-8").splitlines():
        m = re.match(r"#+ (.*)", line)
        if m:
            text = re.sub(r"[^\w\- ]", "", m.group(1).strip().lower())
            out.add(text.replace(" ", "-"))
    return out


@pytest.mark.parametrize("path", PAGES, ids=lambda p: str(p.relative_to(ROOT)))
def test_relative_links_resolve(path):
    text = path.read_text(encoding="utf-8")
    text = re.sub(r"```.*?```", "", text, flags=re.S)          # not inside code blocks
    bad = []
    for target in re.findall(r"\]\(([^)\s]+)\)", text):
        if re.match(r"[a-z]+:", target):                         # http:, https:, mailto:
            continue
        file, _, anchor = target.partition("#")
        dest = (path.parent / file).resolve() if file else path
        if not dest.exists():
            bad.append(target)
        elif anchor and dest.suffix == ".md" and anchor not in _anchors(dest):
            bad.append(target)
    assert not bad, bad
