"""Imports point down the layers (DESIGN.md): cli -> report -> study -> sheet -> equipment -> fluid."""
import ast
from pathlib import Path

import pytest

PKG = Path(__file__).resolve().parent.parent / "letdown"
#: For each layer, the letdown modules it may import (beside itself).
#: (``errors``, ``_version``, ``caution`` and ``constants`` are leaf modules every layer may use;
#: ``derived``, the small figures of a stream's own numbers, is a leaf the sheet, studies and report
#: share.)
LEAVES = {"errors", "_version", "caution", "constants"}
ALLOWED = {
    "numerics": set(),
    "derived": set(),
    "fluid": LEAVES | {"numerics"},
    "equipment": LEAVES | {"fluid", "numerics"},
    "sheet": LEAVES | {"fluid", "equipment", "quantities", "numerics", "derived"},
    "study": LEAVES | {"fluid", "equipment", "quantities", "sheet", "numerics", "derived"},
    "report": LEAVES | {"quantities", "derived"},
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
    """Every import of a module of ``layer`` (inside functions too, nested packages included)
    lands in the layer itself or in one it may use."""
    bad = []
    for a, b in import_graph().edges:
        parts_a, parts_b = a.split("."), b.split(".")
        if len(parts_a) < 2 or parts_a[1] != layer:
            continue
        target = parts_b[1] if len(parts_b) > 1 else "letdown"
        if target != layer and target not in ALLOWED[layer]:
            bad.append(f"{a} imports {b}")
    assert not bad, bad


def test_nothing_imports_the_command_line():
    for path in PKG.rglob("*.py"):
        if path.parent.name == "cli" or path.name == "__main__.py":
            continue
        assert "cli" not in set(letdown_imports(path, "")), path


# --- import cycles -------------------------------------------------------------------------------
# The layer test above sees only which package a module reaches. A cycle between two modules of the
# same layer (or through a package __init__) hides behind imports placed inside functions; this graph
# counts every import statement, wherever it stands, so such a cycle fails here.

def _module_name(path: Path) -> str:
    rel = path.relative_to(PKG.parent).with_suffix("")
    parts = list(rel.parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def _modules():
    return {_module_name(p): p for p in PKG.rglob("*.py")}


def _resolve(importer: str, is_package: bool, node, known) -> list[str]:
    """The letdown modules one import statement loads (submodules named in ``from . import x`` included)."""
    out = []
    if isinstance(node, ast.Import):
        for alias in node.names:
            if alias.name.split(".")[0] == "letdown" and alias.name in known:
                out.append(alias.name)
        return out
    if node.level == 0:
        base = node.module or ""
    else:
        pkg = importer.split(".") if is_package else importer.split(".")[:-1]
        pkg = pkg[: len(pkg) - (node.level - 1)]
        base = ".".join(pkg + ([node.module] if node.module else []))
    if base.split(".")[0] != "letdown":
        return out
    for alias in node.names:
        sub = f"{base}.{alias.name}"
        if sub in known:
            out.append(sub)  # ``from . import water`` loads the submodule itself
        elif base in known:
            out.append(base)
    return out


def import_graph():
    import networkx as nx

    known = _modules()
    g = nx.DiGraph()
    for name, path in known.items():
        g.add_node(name)
        is_package = path.name == "__init__.py"
        for node in ast.walk(ast.parse(path.read_text())):
            if isinstance(node, (ast.Import, ast.ImportFrom)):
                for target in _resolve(name, is_package, node, known):
                    if target != name:
                        g.add_edge(name, target)
    return g


def test_no_import_cycles_inside_letdown():
    """No cycle among letdown's modules, counting imports inside functions. A package ``__init__`` that
    re-exports its modules is an edge from the package to them; a module that imports its own package's
    ``__init__`` (``from . import X`` where X is not a submodule) closes a cycle and is reported too."""
    import networkx as nx

    cycles = sorted(nx.simple_cycles(import_graph()), key=len)
    shown = [" -> ".join(c + [c[0]]) for c in cycles[:10]]
    assert not cycles, f"{len(cycles)} import cycles, shortest first:\n" + "\n".join(shown)


def test_the_cycle_finder_sees_function_level_imports(tmp_path):
    """The graph is not blind to imports inside functions: the shipped tree has them (the lazy pyaga8
    import, the compiled kernels), and each one that names a letdown module is an edge."""
    g = import_graph()
    inner = 0
    for name, path in _modules().items():
        for fn in ast.walk(ast.parse(path.read_text())):
            if isinstance(fn, (ast.FunctionDef, ast.AsyncFunctionDef)):
                for node in ast.walk(fn):
                    if isinstance(node, ast.ImportFrom) and (node.level > 0 or (node.module or "").startswith("letdown")):
                        targets = _resolve(name, path.name == "__init__.py", node, _modules())
                        for t in targets:
                            if t != name:
                                assert g.has_edge(name, t)
                                inner += 1
    assert inner > 0


# --- the rooms of fluid/ ---------------------------------------------------------------------------
#: The core thermodynamics (equations of state, flashes, compiled kernels) never import the water
#: room above them, nor the public Fluid that sits on both.
CORE = ("letdown.fluid.eos", "letdown.fluid.flash", "letdown.fluid.kernels")


def test_the_core_thermodynamics_never_imports_the_water_room():
    g = import_graph()
    bad = [(a, b) for a, b in g.edges if a.startswith(CORE)
           and (b.startswith("letdown.fluid.aqueous") or b in ("letdown.fluid.fluid", "letdown.fluid"))]
    assert not bad, bad


def test_the_constants_leaf_imports_nothing():
    tree = ast.parse((PKG / "constants.py").read_text())
    assert not [n for n in ast.walk(tree) if isinstance(n, (ast.Import, ast.ImportFrom))]


def test_the_numerics_leaf_imports_nothing_of_letdown():
    g = import_graph()
    assert not [(a, b) for a, b in g.edges
                if a.startswith("letdown.numerics") and not b.startswith("letdown.numerics")]


def test_every_solver_report_is_the_one_report_type():
    """Issue 12: one result type. The root finder's, the envelope tracer's and the flashes' reports
    are all :class:`letdown.numerics.report.SolveReport` (with their extra fields), so any report
    reads through converged, iterations, residual, message and status."""
    import numpy as np

    from letdown.fluid.flash import twophase
    from letdown.fluid.flash.continuation import TraceReport, trace_report
    from letdown.numerics.report import SolveReport
    from letdown.numerics.rootfind import RootReport, bracketed_root

    assert twophase.SolveReport is SolveReport
    assert issubclass(RootReport, SolveReport) and issubclass(TraceReport, SolveReport)
    root = bracketed_root(lambda x, idx: x - 2.0, np.array([0.0]), np.array([5.0]),
                          np.array([-2.0]), np.array([3.0]), ftol=1e-12, max_iterations=60)
    assert isinstance(root, SolveReport) and root.all_converged and root.status == "converged"
    assert abs(root.x[0] - 2.0) < 1e-12
    rep = trace_report(True, "complete", "dew branch", 12, 1e-11, 40)
    assert isinstance(rep, SolveReport) and rep.all_converged and rep.n_points == 40
    assert "1/1 converged" in repr(rep)
