"""The core as the browser gets it: build.py's web wheel holds every module the
worker can reach, none of the command line, and each module's code unchanged
but for docstrings and comments."""

from __future__ import annotations

import ast
import importlib.util
import sys
from pathlib import Path

from test_layout import import_graph, reachable

ROOT = Path(__file__).resolve().parent.parent


def _build_module():  # type: ignore[no-untyped-def]
    spec = importlib.util.spec_from_file_location("prism_build", ROOT / "build.py")
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    sys.modules["prism_build"] = module
    spec.loader.exec_module(module)
    return module


build = _build_module()


def _without_docstrings(tree: ast.Module) -> str:
    for node in ast.walk(tree):
        body = getattr(node, "body", None)
        if (isinstance(body, list) and body and isinstance(body[0], ast.Expr)
                and isinstance(body[0].value, ast.Constant) and isinstance(body[0].value.value, str)
                and isinstance(node, ast.Module | ast.ClassDef | ast.FunctionDef)):
            node.body = body[1:] or [ast.Pass()]
    return ast.dump(tree)


def test_the_wheel_holds_what_the_worker_reaches_and_no_command_line() -> None:
    names = set(build.web_wheel_files())
    needed = reachable(import_graph(), "pycore.interfaces.bridge")
    for module in needed:
        path = module.replace(".", "/")
        assert f"{path}.py" in names or f"{path}/__init__.py" in names, module
    assert not any(n.startswith("pycore/interfaces/commands/") for n in names)
    assert "pycore/interfaces/cli.py" not in names
    assert any(n.startswith("pycore/data/") and n.endswith(".json") for n in names)


def test_stripping_keeps_the_code() -> None:
    files = build.web_wheel_files()
    for name, data in files.items():
        if not name.endswith(".py"):
            continue
        original = (ROOT / name).read_text(encoding="utf-8")
        stripped = data.decode()
        assert not any(line.lstrip().startswith("#") for line in stripped.splitlines()), name
        assert ast.dump(ast.parse(stripped)) == _without_docstrings(ast.parse(original)), name
        assert len(stripped) <= len(original), name
