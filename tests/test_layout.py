"""The core's layout: no import cycles, a one-line docstring per package, and the
browser worker's imports kept free of the command line.

The import graph is built from the source with ``ast`` (nothing is imported):
every ``import`` and ``from ... import`` that runs, at module level or inside a
function. Imports under ``if TYPE_CHECKING:`` never run and are left out.
"""

from __future__ import annotations

import ast
from collections.abc import Iterator
from pathlib import Path

PYCORE = Path(__file__).resolve().parent.parent / "pycore"


def module_name(path: Path) -> str:
    parts = path.relative_to(PYCORE.parent).with_suffix("").parts
    return ".".join(parts[:-1] if parts[-1] == "__init__" else parts)


def modules() -> dict[str, Path]:
    return {module_name(path): path for path in sorted(PYCORE.rglob("*.py"))}


def _runtime_nodes(tree: ast.AST) -> Iterator[ast.AST]:
    """Every node, skipping the bodies of ``if TYPE_CHECKING:`` blocks."""
    stack: list[ast.AST] = [tree]
    while stack:
        node = stack.pop()
        yield node
        for child in ast.iter_child_nodes(node):
            if (isinstance(child, ast.If) and isinstance(child.test, ast.Name)
                    and child.test.id == "TYPE_CHECKING"):
                stack.extend(child.orelse)
                continue
            stack.append(child)


def imports_of(name: str, path: Path, known: set[str]) -> set[str]:
    """The pycore modules that ``name`` imports when it runs."""
    package = name if path.name == "__init__.py" else name.rpartition(".")[0]
    found: set[str] = set()
    for node in _runtime_nodes(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            candidates = [alias.name for alias in node.names]
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")[: len(package.split(".")) - node.level + 1]
                target = ".".join([*base, node.module] if node.module else base)
            else:
                target = node.module or ""
            candidates = [target, *(f"{target}.{alias.name}" for alias in node.names)]
        else:
            continue
        found.update(c for c in candidates if c in known and c != name)
    return found


def import_graph() -> dict[str, set[str]]:
    found = modules()
    known = set(found)
    return {name: imports_of(name, path, known) for name, path in found.items()}


def find_cycle(graph: dict[str, set[str]]) -> list[str] | None:
    """One import cycle as a list of modules (first = last), or None."""
    state: dict[str, int] = {}
    trail: list[str] = []

    def visit(node: str) -> list[str] | None:
        state[node] = 1
        trail.append(node)
        for nxt in sorted(graph[node]):
            if state.get(nxt) == 1:
                return [*trail[trail.index(nxt):], nxt]
            if nxt not in state:
                cycle = visit(nxt)
                if cycle:
                    return cycle
        state[node] = 2
        trail.pop()
        return None

    for start in sorted(graph):
        if start not in state:
            cycle = visit(start)
            if cycle:
                return cycle
    return None


def reachable(graph: dict[str, set[str]], start: str) -> set[str]:
    seen, todo = set(), [start]
    while todo:
        node = todo.pop()
        if node not in seen:
            seen.add(node)
            todo.extend(graph[node])
            # importing a.b.c runs a/__init__ and a/b/__init__ first
            parts = node.split(".")
            todo.extend(".".join(parts[:i]) for i in range(1, len(parts)))
    return {node for node in seen if node in graph}


def test_the_cycle_finder_finds_a_cycle() -> None:
    """The check itself can fail: a made-up graph with a loop is caught."""
    assert find_cycle({"a": {"b"}, "b": {"c"}, "c": {"a"}, "d": set()}) == ["a", "b", "c", "a"]
    assert find_cycle({"a": {"b"}, "b": set()}) is None


def test_the_graph_sees_the_core_imports() -> None:
    graph = import_graph()
    assert "pycore.evaluate" in graph["pycore.interfaces.commands.evaluate"]
    assert "pycore.documents.cases" in graph["pycore.evaluate"]


def test_pycore_has_no_import_cycle() -> None:
    cycle = find_cycle(import_graph())
    assert cycle is None, "import cycle: " + " -> ".join(cycle or [])


def test_every_package_says_what_lives_there() -> None:
    for init in PYCORE.rglob("__init__.py"):
        doc = ast.get_docstring(ast.parse(init.read_text(encoding="utf-8")))
        assert doc, f"{init} has no docstring"
        assert "\n" not in doc.strip() or init.parent == PYCORE, f"{init}: one line, please"


def test_the_worker_never_loads_the_command_line() -> None:
    """The browser worker imports pycore.interfaces.bridge; the CLI stays out of it."""
    loaded = reachable(import_graph(), "pycore.interfaces.bridge")
    assert "pycore.evaluate" in loaded
    assert not {name for name in loaded
                if name == "pycore.interfaces.cli" or name.startswith("pycore.interfaces.commands")}


def _imports_inside_functions(path: Path) -> set[str]:
    found: set[str] = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.FunctionDef):
            for inner in ast.walk(node):
                if isinstance(inner, ast.ImportFrom) and (inner.module or "").startswith("pycore"):
                    target = inner.module or ""
                    known = modules()
                    found.update(f"{target}.{a.name}" if f"{target}.{a.name}" in known else target
                                 for a in inner.names)
    return found


def test_the_lazy_list_names_every_import_on_first_use() -> None:
    """actions.LAZY_MODULES (what preload imports) is exactly what the actions of the
    bridge and of actions.py import on first use."""
    from pycore.interfaces import actions

    inside = (_imports_inside_functions(PYCORE / "interfaces" / "actions.py")
              | _imports_inside_functions(PYCORE / "interfaces" / "bridge.py"))
    assert inside == set(actions.LAZY_MODULES)


def test_a_first_case_result_loads_no_check_or_document_module() -> None:
    """The worker imports the bridge, then evaluates a case: the ready-made readers,
    deviations, batch runs, document kinds, text summaries and the tolerance tables (read
    only for a case that carries a finished pair's measurements) stay unloaded until
    asked for, and preload loads every one."""
    import json
    import subprocess
    import sys

    example = sorted((PYCORE.parent / "examples").glob("*.json"))[0].read_text()
    script = (
        "import json, sys\n"
        "from pycore.interfaces import actions, bridge\n"
        f"reply = json.loads(bridge.handle(json.dumps({{'action': 'evaluate_live', "
        f"'payload': {{'case': json.loads({example!r})}}}})))\n"
        "assert reply['ok'], reply\n"
        "before = sorted(m for m in sys.modules if m.startswith('pycore'))\n"
        "actions.preload()\n"
        "after = sorted(m for m in sys.modules if m.startswith('pycore'))\n"
        "print(json.dumps([before, after]))\n")
    done = subprocess.run([sys.executable, "-c", script], cwd=PYCORE.parent, check=True,
                          capture_output=True, text=True)
    before, after = json.loads(done.stdout)
    for name in ("pycore.checks.readers", "pycore.checks.reader_stock", "pycore.checks.deviation",
                 "pycore.documents.batch", "pycore.documents.kinds", "pycore.documents.summary",
                 "pycore.checks.verification_input", "pycore.checks.tolerances",
                 "pycore.documents.datafiles"):
        assert name not in before and name in after, name
    from pycore.interfaces import actions

    assert set(actions.LAZY_MODULES) <= set(after)
