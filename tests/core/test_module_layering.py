"""The core's modules depend on each other in one direction only.

Every import between modules of ``curvewright.core`` counts, wherever it is written: at the top, inside
a function, or only for type checking. The result type must not need the modules that answer
questions about it (inverse prediction, limits, acceptance), so those can be read, tested and
changed on their own.
"""

from __future__ import annotations

import ast
from pathlib import Path

import curvewright.core as core

CORE = Path(core.__file__).parent


def core_imports() -> dict[str, set[str]]:
    """Module name → the core modules it imports anywhere in its source."""
    graph: dict[str, set[str]] = {}
    for path in sorted(CORE.glob("*.py")):
        name = path.stem
        targets: set[str] = set()
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.ImportFrom):
                if node.level == 1 and node.module:
                    targets.add(node.module.split(".")[0])
                elif node.level == 1:
                    targets.update(alias.name for alias in node.names)
                elif node.module and node.module.startswith("curvewright.core."):
                    targets.add(node.module.split(".")[2])
        graph[name] = targets - {name}
    return graph


def find_cycle(graph: dict[str, set[str]]) -> list[str] | None:
    state: dict[str, int] = {}
    path: list[str] = []

    def visit(node: str) -> list[str] | None:
        state[node] = 1
        path.append(node)
        for target in sorted(graph.get(node, ())):
            if state.get(target) == 1:
                return path[path.index(target):] + [target]
            if target not in state and (cycle := visit(target)):
                return cycle
        state[node] = 2
        path.pop()
        return None

    for node in sorted(graph):
        if node not in state and (cycle := visit(node)):
            return cycle
    return None


def test_core_imports_form_no_circle() -> None:
    cycle = find_cycle(core_imports())
    assert cycle is None, " → ".join(cycle or [])


def test_the_fitted_curve_needs_none_of_the_modules_that_question_it() -> None:
    graph = core_imports()
    for module in ("fitted_curve", "influence", "lack_of_fit", "weighting", "models", "levels"):
        assert not graph[module] & {"calibration", "inverse", "limits", "acceptance", "comparison"}, module
    for module in ("inverse", "limits", "acceptance"):
        assert "calibration" not in graph[module], module


def test_the_circle_finder_finds_a_circle() -> None:
    assert find_cycle({"a": {"b"}, "b": {"c"}, "c": {"a"}}) == ["a", "b", "c", "a"]
    assert find_cycle({"a": {"b"}, "b": set()}) is None
