"""The package layout is the pipeline: imports go only downward and never in a circle.

Stages, lowest first: the shared base (``model``, ``errors``, ``versions``), ``entry`` (load and
validate), ``geometry``, ``physics``, ``site``, ``run``, and the command layer (``cli``) on top.
A module may import its own stage and the stages below it, never one above; no two modules may
import each other, directly or through others (function-level imports count too: a lazy
import is still a dependency).
"""

from __future__ import annotations

import ast
from collections.abc import Mapping
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parents[1] / "generator"
STAGES = ("base", "entry", "geometry", "physics", "site", "run", "commands")
BASE = {"generator", "generator.model", "generator.errors", "generator.versions",
        "generator.argv"}
COMMANDS = {"generator.cli", "generator.__main__"}


def module_name(path: Path) -> str:
    parts = path.relative_to(PACKAGE.parent).with_suffix("").parts
    return ".".join(parts[:-1] if parts[-1] == "__init__" else parts)


def stage_of(module: str) -> str:
    if module in BASE:
        return "base"
    if module in COMMANDS:
        return "commands"
    return module.split(".")[1]


def imported_modules(path: Path, known: set[str]) -> set[str]:
    """Every module of the package that ``path`` imports, at any depth of its code."""
    this = module_name(path)
    package = this if path.name == "__init__.py" else this.rpartition(".")[0]
    found: set[str] = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            found |= {a.name for a in node.names if a.name in known}
        elif isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:
                anchor = package.split(".")[: len(package.split(".")) - node.level + 1]
                base = ".".join([*anchor, *([base] if base else [])])
            for alias in node.names:
                candidate = f"{base}.{alias.name}"
                found.add(candidate if candidate in known else base)
    return {m for m in found if m in known and m != this}


def import_graph() -> dict[str, set[str]]:
    files = sorted(PACKAGE.rglob("*.py"))
    known = {module_name(f) for f in files}
    return {module_name(f): imported_modules(f, known) for f in files}


def upward_imports(graph: Mapping[str, set[str]]) -> list[str]:
    rank = {stage: k for k, stage in enumerate(STAGES)}
    return sorted(f"{a} ({stage_of(a)}) imports {b} ({stage_of(b)})"
                  for a, targets in graph.items() for b in targets
                  if rank[stage_of(b)] > rank[stage_of(a)])


def cycles(graph: Mapping[str, set[str]]) -> list[list[str]]:
    """One cycle through each module that lies on one (depth-first search, sorted order)."""
    found: list[list[str]] = []
    state: dict[str, int] = {}  # 1 on the current path, 2 finished

    def visit(node: str, path: list[str]) -> None:
        state[node] = 1
        for nxt in sorted(graph.get(node, ())):
            if state.get(nxt) == 1:
                found.append([*path[path.index(nxt):], nxt])
            elif nxt not in state:
                visit(nxt, [*path, nxt])
        state[node] = 2

    for start in sorted(graph):
        if start not in state:
            visit(start, [start])
    return found


def test_every_module_belongs_to_a_stage() -> None:
    assert {stage_of(m) for m in import_graph()} <= set(STAGES)


def test_imports_go_only_downward() -> None:
    assert upward_imports(import_graph()) == []


def test_no_module_imports_itself_through_others() -> None:
    assert cycles(import_graph()) == []


def test_the_stage_packages_are_there() -> None:
    graph = import_graph()
    for stage in STAGES[1:-1]:
        assert f"generator.{stage}" in graph, stage


@pytest.mark.parametrize(("graph", "expected"), [
    ({"generator.entry.a": {"generator.entry.b"}, "generator.entry.b": {"generator.entry.a"}},
     [["generator.entry.a", "generator.entry.b", "generator.entry.a"]]),
    ({"generator.run.a": {"generator.run.b"}, "generator.run.b": {"generator.run.c"},
      "generator.run.c": {"generator.run.a"}},
     [["generator.run.a", "generator.run.b", "generator.run.c", "generator.run.a"]]),
    ({"generator.site.a": {"generator.site.b"}, "generator.site.b": set()}, []),
])
def test_the_cycle_finder_sees_circles(graph: dict[str, set[str]],
                                       expected: list[list[str]]) -> None:
    """The check itself can fail: a planted circle is reported, a chain is not."""
    assert cycles(graph) == expected


def test_the_layer_check_sees_an_upward_import() -> None:
    graph = {"generator.geometry.x": {"generator.site.y"}, "generator.site.y": {"generator.model"},
             "generator.model": set()}
    assert upward_imports(graph) == [
        "generator.geometry.x (geometry) imports generator.site.y (site)"]


def test_relative_imports_are_resolved(tmp_path: Path) -> None:
    """A lazy relative import inside a function counts as a dependency."""
    module = PACKAGE / "physics" / "verify.py"
    graph = import_graph()
    assert "generator.geometry.curvature" in graph["generator.physics.verify"]
    assert module.is_file()
