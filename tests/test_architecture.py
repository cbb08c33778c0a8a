"""The package's import graph: layered and acyclic at run time.

Each module's imports of other opsym modules are read from its source (module
level and inside functions alike; ``if TYPE_CHECKING:`` blocks are not run and
do not count). Importing ``opsym.a.b`` also runs ``opsym/__init__.py`` and
``opsym/a/__init__.py``, so those edges count too. The layers, lowest first,
are the order DEVELOPERS.md gives; a module may import its own layer and the
layers below it, never one above.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).parents[1] / "opsym"

#: Lowest first. A module may import only from its own layer or a lower one.
LAYERS = (
    ("opsym.errors", "opsym.values", "opsym._services", "opsym._version"),
    ("opsym.model",),
    ("opsym.equations",),
    ("opsym.numeric",),
    ("opsym.analyses",),
    ("opsym.output",),
    ("opsym.io",),
    ("opsym.study",),
    ("opsym.cli", "opsym.demo", "opsym.__main__", "opsym"),
)


def _modules() -> dict[str, Path]:
    found = {}
    for path in PACKAGE.rglob("*.py"):
        parts = path.relative_to(PACKAGE.parent).with_suffix("").parts
        name = ".".join(parts[:-1] if parts[-1] == "__init__" else parts)
        found[name] = path
    return found


MODULES = _modules()


def _is_type_checking(node: ast.If) -> bool:
    test = node.test
    return (isinstance(test, ast.Name) and test.id == "TYPE_CHECKING") or (
        isinstance(test, ast.Attribute) and test.attr == "TYPE_CHECKING"
    )


def _imports(name: str, path: Path) -> list[tuple[str, bool]]:
    """(imported opsym module, inside a function?) for each import that runs."""
    package = name if path.name == "__init__.py" else name.rpartition(".")[0]
    found: list[tuple[str, bool]] = []

    def visit(node: ast.AST, nested: bool) -> None:
        if isinstance(node, ast.If) and _is_type_checking(node):
            for child in node.orelse:
                visit(child, nested)
            return
        if isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")[: len(package.split(".")) - node.level + 1]
                target = ".".join(base + ([node.module] if node.module else []))
            else:
                target = node.module or ""
            if target.split(".")[0] == "opsym":
                found.append((target, nested))
                found.extend((f"{target}.{a.name}", nested) for a in node.names
                             if f"{target}.{a.name}" in MODULES)  # fmt: skip
            return
        if isinstance(node, ast.Import):
            found.extend((a.name, nested) for a in node.names if a.name.split(".")[0] == "opsym")
            return
        inner = nested or isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef, ast.Lambda))
        for child in ast.iter_child_nodes(node):
            visit(child, inner)

    visit(ast.parse(path.read_text(encoding="utf-8")), False)
    return found


def _with_packages(target: str) -> list[str]:
    """``opsym.a.b`` runs ``opsym``, ``opsym.a`` and ``opsym.a.b`` (each ``__init__``)."""
    parts = target.split(".")
    return [".".join(parts[: i + 1]) for i in range(len(parts)) if ".".join(parts[: i + 1])
            in MODULES]  # fmt: skip


def _graph() -> dict[str, set[str]]:
    graph: dict[str, set[str]] = {name: set() for name in MODULES}
    for name, path in MODULES.items():
        for target, _nested in _imports(name, path):
            for module in _with_packages(target):
                # A module's own packages are already importing when it runs.
                if not (name == module or name.startswith(module + ".")):
                    graph[name].add(module)
    return graph


def _cycles(graph: dict[str, set[str]]) -> list[list[str]]:
    """Strongly connected components of more than one module (Tarjan, iterative)."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    found: list[list[str]] = []
    for root in graph:
        if root in index:
            continue
        work = [(root, iter(sorted(graph[root])))]
        index[root] = low[root] = len(index)
        stack.append(root)
        on_stack.add(root)
        while work:
            node, children = work[-1]
            child = next(children, None)
            if child is not None:
                if child not in index:
                    index[child] = low[child] = len(index)
                    stack.append(child)
                    on_stack.add(child)
                    work.append((child, iter(sorted(graph[child]))))
                elif child in on_stack:
                    low[node] = min(low[node], index[child])
                continue
            work.pop()
            if work:
                low[work[-1][0]] = min(low[work[-1][0]], low[node])
            if low[node] == index[node]:
                component = []
                while True:
                    member = stack.pop()
                    on_stack.discard(member)
                    component.append(member)
                    if member == node:
                        break
                if len(component) > 1:
                    found.append(sorted(component))
    return found


def _layer(name: str) -> int:
    best = (-1, -1)
    for level, prefixes in enumerate(LAYERS):
        for prefix in prefixes:
            if name == prefix or name.startswith(prefix + "."):
                best = max(best, (len(prefix), level))
    assert best[1] >= 0, f"{name} is in no layer; add it to LAYERS and DEVELOPERS.md"
    return best[1]


def test_the_graph_sees_the_package():
    graph = _graph()
    assert "opsym.model.circuit" in graph and "opsym.errors" in graph["opsym.model.circuit"]


def test_the_import_graph_has_no_cycle():
    assert _cycles(_graph()) == []


def test_the_cycle_finder_finds_a_cycle():
    assert _cycles({"a": {"b"}, "b": {"c"}, "c": {"a"}, "d": {"a"}}) == [["a", "b", "c"]]


@pytest.mark.parametrize("name", sorted(MODULES))
def test_a_module_imports_only_its_own_layer_and_those_below(name):
    upward = sorted(
        target for target in _graph()[name]
        if _layer(target) > _layer(name)
    )  # fmt: skip
    assert upward == [], f"{name} (layer {_layer(name)}) reaches up to {upward}"


def test_opsym_modules_are_imported_at_module_level():
    """Imports inside functions are kept for optional dependencies (matplotlib)."""
    nested = sorted(
        f"{name} -> {target}"
        for name, path in MODULES.items()
        for target, inside in _imports(name, path)
        if inside
    )
    assert nested == []
