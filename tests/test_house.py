"""The shape of the house, read from the source with ``ast``: imports go one way (no circle, nothing
imports a layer above its own, kernels import nothing of the package above ``constants``), modules and
functions stay small, and no module is named like a public function (DEVELOPERS.md, "The house").

These are rules of this project's design, not physics: they need no outside reference.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parents[1] / "edl_solver"

#: Layers from the bottom up; a module may import its own layer and the ones below. The longest matching
#: prefix of a module's dotted name gives its layer.
LAYERS: dict[str, int] = {
    "edl_solver.constants": 0,
    "edl_solver.errors": 0,
    "edl_solver.kernels": 1,
    "edl_solver.inputs": 2,
    "edl_solver.results.schema": 3,
    "edl_solver.results.profiles": 3,
    "edl_solver.io": 4,
    "edl_solver.report": 4,
    "edl_solver.results.result": 5,
    "edl_solver.results": 5,
    "edl_solver.model": 6,
    "edl_solver.pipeline": 7,
    "edl_solver.sweeping": 8,
    "edl_solver.channel": 9,
    "edl_solver.analysis": 9,
    "edl_solver.fitting": 9,
    "edl_solver.plot": 10,
    "edl_solver.cli": 11,
    "edl_solver": 12,  # the public face: __init__ and __main__
}
#: Public functions of the package: no submodule may carry their names.
PUBLIC_FUNCTIONS = ("solve", "sweep", "load", "fit", "transient")
LARGEST_MODULE = 500
LARGEST_FUNCTION = 80


def _modules() -> dict[str, Path]:
    found = {}
    for path in sorted(PACKAGE.rglob("*.py")):
        parts = list(path.relative_to(PACKAGE.parent).with_suffix("").parts)
        if parts[-1] == "__init__":
            parts.pop()
        found[".".join(parts)] = path
    return found


def _layer(module: str) -> int:
    best = max((prefix for prefix in LAYERS if module == prefix or module.startswith(prefix + ".")), key=len)
    return LAYERS[best]


def _runtime_imports(module: str, path: Path, known: set[str]) -> set[str]:
    """Package modules imported at run time (anywhere in the file, ``if TYPE_CHECKING:`` blocks left out)."""
    tree = ast.parse(path.read_text())
    skipped: set[int] = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.If) and "TYPE_CHECKING" in ast.unparse(node.test):
            skipped.update(id(child) for stmt in node.body for child in ast.walk(stmt))
    package = module if path.name == "__init__.py" else module.rpartition(".")[0]
    targets: set[str] = set()
    for node in ast.walk(tree):
        if id(node) in skipped:
            continue
        if isinstance(node, ast.Import):
            targets.update(alias.name for alias in node.names)
        elif isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:
                parents = package.split(".")[: len(package.split(".")) - node.level + 1]
                base = ".".join(parents + ([base] if base else []))
            for alias in node.names:
                full = f"{base}.{alias.name}"
                targets.add(full if full in known else base)
    resolved = set()
    for target in targets:
        while target and target not in known:
            target = target.rpartition(".")[0]
        if target and target != module and target.startswith("edl_solver"):
            resolved.add(target)
    return resolved


@pytest.fixture(scope="module")
def graph() -> dict[str, set[str]]:
    modules = _modules()
    return {name: _runtime_imports(name, path, set(modules)) for name, path in modules.items()}


def test_imports_go_down_the_layers(graph: dict[str, set[str]]) -> None:
    upward = [f"{m} (layer {_layer(m)}) imports {t} (layer {_layer(t)})"
              for m, targets in graph.items() for t in sorted(targets)
              if _layer(t) > _layer(m) and not (m == "edl_solver" or t == "edl_solver")]
    assert not upward, "\n".join(upward)


def test_kernels_import_nothing_above_constants(graph: dict[str, set[str]]) -> None:
    bad = [f"{m} imports {t}" for m, targets in graph.items() if m.startswith("edl_solver.kernels")
           for t in targets if not (t.startswith("edl_solver.kernels") or t == "edl_solver.constants")]
    assert not bad, "\n".join(bad)


def test_no_import_circle(graph: dict[str, set[str]]) -> None:
    # Tarjan's strongly connected components; the package's own __init__ (the lazy public face) is left out
    edges = {m: {t for t in ts if t != "edl_solver"} for m, ts in graph.items() if m != "edl_solver"}
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    circles: list[list[str]] = []

    def visit(node: str) -> None:
        index[node] = low[node] = len(index)
        stack.append(node)
        for target in edges.get(node, ()):
            if target not in index:
                visit(target)
                low[node] = min(low[node], low[target])
            elif target in stack:
                low[node] = min(low[node], index[target])
        if low[node] == index[node]:
            component = []
            while True:
                top = stack.pop()
                component.append(top)
                if top == node:
                    break
            if len(component) > 1:
                circles.append(sorted(component))

    for node in edges:
        if node not in index:
            visit(node)
    assert not circles, circles


def test_modules_and_functions_stay_small() -> None:
    large = []
    for name, path in _modules().items():
        source = path.read_text()
        lines = len(source.splitlines())
        if lines > LARGEST_MODULE:
            large.append(f"{name}: {lines} lines")
        for node in ast.walk(ast.parse(source)):
            if isinstance(node, ast.FunctionDef | ast.AsyncFunctionDef):
                length = node.end_lineno - node.lineno + 1
                if length > LARGEST_FUNCTION:
                    large.append(f"{name}.{node.name}: {length} lines")
    assert not large, "\n".join(large)


def test_no_module_is_named_like_a_public_function() -> None:
    clashes = [name for name in _modules() if name.rpartition(".")[2] in PUBLIC_FUNCTIONS]
    assert not clashes, clashes
