"""The README's Python examples are real: run them as doctests (from the project root)."""
import doctest
import os
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent


def test_readme_examples_run():
    cwd = os.getcwd()
    os.chdir(ROOT)
    try:
        failures, tried = doctest.testfile(str(ROOT / "README.md"), module_relative=False,
                                           optionflags=doctest.ELLIPSIS)
    finally:
        os.chdir(cwd)
    assert tried > 20
    assert failures == 0
