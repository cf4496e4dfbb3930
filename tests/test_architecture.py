"""The package's shape: imports run one way (no cycle between headingref's modules).

Every ``import`` and ``from ... import`` inside the package counts, at module level or inside a
function (a lazy import still ties two modules together), except under ``if TYPE_CHECKING:``.
A subpackage's ``__init__`` counts as a module of its own; importing ``headingref.plots.route``
depends on ``headingref.plots.route`` only. The cycle search is Tarjan's strongly connected
components algorithm (Tarjan 1972, SIAM J. Comput. 1(2):146-160, doi:10.1137/0201010).
"""

from __future__ import annotations

import ast
from pathlib import Path

PACKAGE = Path(__file__).resolve().parent.parent / "headingref"


def _module_name(path: Path) -> str:
    parts = list(path.relative_to(PACKAGE.parent).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def _is_type_checking(node: ast.If) -> bool:
    test = node.test
    return (isinstance(test, ast.Name) and test.id == "TYPE_CHECKING") or (
        isinstance(test, ast.Attribute) and test.attr == "TYPE_CHECKING")


def _imports(path: Path, modules: set[str]) -> set[str]:  # noqa: C901 - an AST walk, one branch per import form
    name = _module_name(path)
    package = name if path.name == "__init__.py" else name.rsplit(".", 1)[0]
    found: set[str] = set()

    def target(base: str, names: list[str]) -> None:
        for item in names:
            if f"{base}.{item}" in modules:  # from headingref.plots import route -> the submodule
                found.add(f"{base}.{item}")
            elif base in modules:
                found.add(base)

    def visit(node: ast.AST) -> None:
        for child in ast.iter_child_nodes(node):
            if isinstance(child, ast.If) and _is_type_checking(child):
                for rest in child.orelse:
                    visit(rest)
                continue
            if isinstance(child, ast.Import):
                for alias in child.names:
                    if alias.name in modules:
                        found.add(alias.name)
            elif isinstance(child, ast.ImportFrom):
                if child.level:
                    base_parts = package.split(".")
                    base_parts = base_parts[: len(base_parts) - (child.level - 1)]
                    base = ".".join(base_parts + ([child.module] if child.module else []))
                else:
                    base = child.module or ""
                if base.startswith("headingref"):
                    target(base, [alias.name for alias in child.names])
            visit(child)

    visit(ast.parse(path.read_text(encoding="utf-8"), filename=str(path)))
    found.discard(name)
    return found


def import_graph() -> dict[str, set[str]]:
    paths = sorted(PACKAGE.rglob("*.py"))
    modules = {_module_name(p) for p in paths}
    return {_module_name(p): _imports(p, modules) for p in paths}


def cycles(graph: dict[str, set[str]]) -> list[list[str]]:
    """Strongly connected components with more than one module (Tarjan's algorithm)."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    found: list[list[str]] = []

    def strongconnect(v: str) -> None:
        index[v] = low[v] = len(index)
        stack.append(v)
        on_stack.add(v)
        for w in sorted(graph.get(v, ())):
            if w not in index:
                strongconnect(w)
                low[v] = min(low[v], low[w])
            elif w in on_stack:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            component = []
            while True:
                w = stack.pop()
                on_stack.discard(w)
                component.append(w)
                if w == v:
                    break
            if len(component) > 1:
                found.append(sorted(component))

    for v in sorted(graph):
        if v not in index:
            strongconnect(v)
    return found


def test_cycle_finder_finds_a_cycle():
    # a -> b -> c -> a is one component; d hangs off it (a made-up graph with a known answer)
    assert cycles({"a": {"b"}, "b": {"c"}, "c": {"a"}, "d": {"a"}}) == [["a", "b", "c"]]
    assert cycles({"a": {"b"}, "b": set()}) == []


def test_graph_sees_relative_and_lazy_imports():
    graph = import_graph()
    assert "headingref.model" in graph["headingref"]  # `from .model import ...` in the package's __init__
    assert any(dep.startswith("headingref.") for dep in graph["headingref.cli"])


def test_no_import_cycle_inside_the_package():
    found = cycles(import_graph())
    assert not found, "import cycles: " + "; ".join(" <-> ".join(c) for c in found)
