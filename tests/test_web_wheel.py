"""The core as the browser gets it: build.py's archive of the core holds every module
the worker can reach, none of the command line, and each module's code unchanged but for
docstrings, comments and function annotations (which only readers and type checkers use);
run from the archive, the core gives the same answers as the source tree."""

from __future__ import annotations

import ast
import importlib.util
import json
import subprocess
import sys
import tarfile
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


def _for_the_browser(tree: ast.Module) -> str:
    """The tree with what the browser never needs taken out, written independently of
    build.py: docstrings (a lone ``pass`` where one was the whole body) and the
    annotations of function parameters and results."""
    for node in ast.walk(tree):
        body = getattr(node, "body", None)
        if (isinstance(body, list) and body and isinstance(body[0], ast.Expr)
                and isinstance(body[0].value, ast.Constant) and isinstance(body[0].value.value, str)
                and isinstance(node, ast.Module | ast.ClassDef | ast.FunctionDef)):
            node.body = body[1:] or [ast.Pass()]
        if isinstance(node, ast.arg):
            node.annotation = None
        if isinstance(node, ast.FunctionDef):
            node.returns = None
    return ast.dump(tree)


def test_the_archive_holds_what_the_worker_reaches_and_no_command_line() -> None:
    names = set(build.web_core_files())
    needed = reachable(import_graph(), "pycore.interfaces.bridge")
    for module in needed:
        path = module.replace(".", "/")
        assert f"{path}.py" in names or f"{path}/__init__.py" in names, module
    assert not any(n.startswith("pycore/interfaces/commands/") for n in names)
    assert "pycore/interfaces/cli.py" not in names
    assert any(n.startswith("pycore/data/") and n.endswith(".json") for n in names)


def test_stripping_keeps_the_code() -> None:
    files = build.web_core_files()
    for name, data in files.items():
        original = (ROOT / name).read_text(encoding="utf-8")
        stripped = data.decode()
        if name.endswith(".json"):
            assert json.loads(stripped) == json.loads(original), name
            continue
        assert not any(line.lstrip().startswith("#") for line in stripped.splitlines()), name
        assert ast.dump(ast.parse(stripped)) == _for_the_browser(ast.parse(original)), name
        assert len(stripped) <= len(original), name


def test_dataclass_fields_keep_their_annotations() -> None:
    stripped = build.web_core_files()["pycore/optics/power.py"].decode()
    classes = [n for n in ast.parse(stripped).body if isinstance(n, ast.ClassDef)]
    assert any(isinstance(s, ast.AnnAssign) for c in classes for s in c.body)


def test_the_archive_is_exactly_the_core_files() -> None:
    archive = build.build_core_archive()
    with tarfile.open(archive, "r:gz") as tar:
        members = tar.getmembers()
        assert all(m.isfile() and ".." not in m.name and len(m.name) < 100 for m in members)
        unpacked = {m.name: tar.extractfile(m).read() for m in members}  # type: ignore[union-attr]
    assert unpacked == build.web_core_files()


def test_the_archived_core_answers_as_the_source_does(tmp_path: Path) -> None:
    """Every example case evaluated by the core unpacked from the archive, in a separate
    interpreter, gives the same JSON as the source tree's core."""
    with tarfile.open(build.build_core_archive(), "r:gz") as tar:
        tar.extractall(tmp_path, filter="data")
    script = ("import json, sys\n"
              "from pycore.interfaces.bridge import handle\n"
              "for line in sys.stdin: print(handle(line.strip()))\n")
    requests = [json.dumps({"action": "evaluate", "payload": json.loads(path.read_text())})
                for path in sorted((ROOT / "examples").glob("*.json"))]
    assert requests

    def answers(root: Path) -> list[str]:
        done = subprocess.run([sys.executable, "-c", script], cwd=root, check=True,
                              input="\n".join(requests), capture_output=True, text=True,
                              env={"PYTHONPATH": str(root), "PYTHONDONTWRITEBYTECODE": "1"})
        return done.stdout.splitlines()
    from_archive = answers(tmp_path)
    assert len(from_archive) == len(requests)
    assert from_archive == answers(ROOT)
    assert any(json.loads(a)["ok"] for a in from_archive)
