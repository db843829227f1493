"""Package layout rules (project rules and issue 10; common practice, no source): no import
cycles between shiftcheck's modules and no module over 400 lines.

Imports are read with :mod:`ast` (not executed), including imports inside functions, so a
circle hidden behind a lazy import is found too; imports under ``if TYPE_CHECKING:`` are left
out (they never run). Every module must also import cleanly on its own.
"""
from __future__ import annotations

import ast
import importlib
from pathlib import Path

import pytest

PKG = Path(__file__).resolve().parents[1] / "shiftcheck"
MAX_LINES = 400


def _modules() -> dict[str, Path]:
    out = {}
    for p in sorted(PKG.rglob("*.py")):
        parts = list(p.relative_to(PKG.parent).with_suffix("").parts)
        if parts[-1] == "__init__":
            parts = parts[:-1]
        out[".".join(parts)] = p
    return out


MODULES = _modules()


def _is_type_checking(node: ast.If) -> bool:
    t = node.test
    return (isinstance(t, ast.Name) and t.id == "TYPE_CHECKING") or \
        (isinstance(t, ast.Attribute) and t.attr == "TYPE_CHECKING")


def _imports(name: str, path: Path) -> set[str]:
    """shiftcheck modules imported by module ``name`` (ast walk, TYPE_CHECKING blocks skipped)."""
    is_pkg = path.name == "__init__.py"
    base = name.split(".") if is_pkg else name.split(".")[:-1]
    found: set[str] = set()

    def resolve(target: str) -> None:
        while target and target not in MODULES:
            target = target.rpartition(".")[0]
        if target and target != name:
            found.add(target)

    def visit(node: ast.AST) -> None:
        for child in ast.iter_child_nodes(node):
            if isinstance(child, ast.If) and _is_type_checking(child):
                for sub in child.orelse:
                    visit(sub)
                continue
            if isinstance(child, ast.Import):
                for a in child.names:
                    if a.name.startswith("shiftcheck"):
                        resolve(a.name)
            elif isinstance(child, ast.ImportFrom):
                if child.level:
                    pkg = base[:len(base) - child.level + 1]
                    mod = ".".join(pkg + ([child.module] if child.module else []))
                else:
                    mod = child.module or ""
                if not mod.startswith("shiftcheck"):
                    continue
                for a in child.names:
                    full = f"{mod}.{a.name}"
                    resolve(full if full in MODULES else mod)
            visit(child)

    visit(ast.parse(path.read_text()))
    # importing a module runs its parent packages' __init__ first: not an edge of the graph
    return {m for m in found if not name.startswith(m + ".")}


def _graph() -> dict[str, set[str]]:
    return {name: _imports(name, path) for name, path in MODULES.items()}


def _cycle(graph: dict[str, set[str]]) -> list[str] | None:
    state: dict[str, int] = {}
    stack: list[str] = []

    def dfs(n: str) -> list[str] | None:
        state[n] = 1
        stack.append(n)
        for m in sorted(graph.get(n, ())):
            if state.get(m) == 1:
                return stack[stack.index(m):] + [m]
            if m not in state:
                found = dfs(m)
                if found:
                    return found
        stack.pop()
        state[n] = 2
        return None

    for n in sorted(graph):
        if n not in state:
            found = dfs(n)
            if found:
                return found
    return None


def test_cycle_finder_finds_a_planted_cycle():
    # the checker itself must be able to fail
    assert _cycle({"a": {"b"}, "b": {"c"}, "c": {"a"}}) == ["a", "b", "c", "a"]
    assert _cycle({"a": {"b"}, "b": {"c"}, "c": set()}) is None


def test_import_graph_sees_relative_and_lazy_imports():
    g = _graph()
    assert "shiftcheck.score.scoring" in g["shiftcheck.pipeline"]
    assert "shiftcheck.io.shift_rows" in g["shiftcheck.io.star3"]
    assert "shiftcheck.pipeline" in g["shiftcheck.commands.score"]      # imported inside run()


def test_no_import_cycles():
    cyc = _cycle(_graph())
    assert cyc is None, "import cycle: " + " -> ".join(cyc)


def test_no_module_over_400_lines():
    long = {n: len(p.read_text().splitlines()) for n, p in MODULES.items()}
    over = {n: k for n, k in long.items() if k > MAX_LINES}
    assert not over, over


@pytest.mark.parametrize("name", sorted(n for n in MODULES if not n.endswith("__main__")))
def test_every_module_imports(name):
    importlib.import_module(name)
