"""Imports point down the layers (DESIGN.md): cli -> report -> study -> sheet -> equipment -> fluid."""
import ast
from pathlib import Path

import pytest

PKG = Path(__file__).resolve().parent.parent / "letdown"
#: For each layer, the letdown modules it may import (beside itself).
#: (``errors``, ``_version`` and ``caution`` are leaf modules every layer may use.)
ALLOWED = {
    "fluid": {"errors", "_version", "caution"},
    "equipment": {"errors", "_version", "caution", "fluid"},
    "sheet": {"errors", "_version", "caution", "fluid", "equipment", "quantities"},
    "study": {"errors", "_version", "caution", "fluid", "equipment", "quantities", "sheet"},
    "report": {"errors", "_version", "caution", "quantities"},
}


def letdown_imports(path: Path, layer: str):
    tree = ast.parse(path.read_text())
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom):
            if node.level == 0 and (node.module or "").split(".")[0] == "letdown":
                yield (node.module.split(".") + [""])[1]
            elif node.level == 2:
                yield (node.module or "").split(".")[0]
        elif isinstance(node, ast.Import):
            for alias in node.names:
                if alias.name.split(".")[0] == "letdown":
                    yield (alias.name.split(".") + ["letdown"])[1]


@pytest.mark.parametrize("layer", sorted(ALLOWED))
def test_imports_point_down(layer):
    bad = []
    for path in sorted((PKG / layer).glob("*.py")):
        for target in letdown_imports(path, layer):
            if target and target != layer and target not in ALLOWED[layer]:
                bad.append(f"{path.name} imports {target}")
    assert not bad, bad


def test_nothing_imports_the_command_line():
    for path in PKG.rglob("*.py"):
        if path.name in ("cli.py", "__main__.py"):
            continue
        assert "cli" not in set(letdown_imports(path, "")), path
