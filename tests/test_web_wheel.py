"""The core as the browser gets it: build.py's wheel of the core holds every module
the worker can reach, none of the command line, and each module's code unchanged but for
docstrings, comments and function annotations (which only readers and type checkers use);
it is a valid wheel (the binary distribution format, PEP 427, with its RECORD as PEP 376
and the packaging guide's "Recording installed projects" describe it); run from the wheel,
the core gives the same answers as the source tree."""

from __future__ import annotations

import ast
import base64
import hashlib
import importlib.util
import json
import subprocess
import sys
import zipfile
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


def test_the_wheel_holds_what_the_worker_reaches_and_no_command_line() -> None:
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


def _wheel_files() -> tuple[str, dict[str, bytes]]:
    """The wheel's dist-info folder name and every file it holds, read with zipfile."""
    wheel = build.build_wheel()
    name, version, python, abi, platform = wheel.name.removesuffix(".whl").split("-")
    assert (python, abi, platform) == ("py3", "none", "any")
    with zipfile.ZipFile(wheel) as archive:
        assert archive.testzip() is None   # every member's CRC-32 checks
        entries = archive.infolist()
        # The bytes depend on the content only: files in name order, one fixed time.
        assert [e.filename for e in entries] == sorted(e.filename for e in entries)
        assert len({e.date_time for e in entries}) == 1
        assert all(e.compress_type == zipfile.ZIP_DEFLATED and not e.is_dir()
                   and ".." not in e.filename for e in entries)
        files = {e.filename: archive.read(e) for e in entries}
    assert len(files) == len(entries)
    return f"{name}-{version}.dist-info", files


def test_the_wheel_is_exactly_the_core_files_and_its_metadata() -> None:
    info, files = _wheel_files()
    assert {n: d for n, d in files.items() if not n.startswith(info + "/")} == \
        build.web_core_files()
    assert sorted(n for n in files if n.startswith(info + "/")) == \
        [f"{info}/METADATA", f"{info}/RECORD", f"{info}/WHEEL"]
    wheel_file = dict(line.split(": ", 1) for line in files[f"{info}/WHEEL"].decode().splitlines())
    assert wheel_file["Wheel-Version"] == "1.0" and wheel_file["Root-Is-Purelib"] == "true"
    assert wheel_file["Tag"] == "py3-none-any"
    metadata = files[f"{info}/METADATA"].decode()
    assert "Name: prism-desk\n" in metadata and metadata.startswith("Metadata-Version: ")


def test_the_record_lists_every_file_with_its_sha256_and_size() -> None:
    """RECORD (PEP 376, PEP 427): one CSV row per file, ``sha256=`` and the digest in
    URL-safe base64 without padding, then the size in bytes; RECORD's own row is empty."""
    import csv

    info, files = _wheel_files()
    rows = list(csv.reader(files[f"{info}/RECORD"].decode().splitlines()))
    assert sorted(row[0] for row in rows) == sorted(files)
    for path, digest, size in rows:
        if path == f"{info}/RECORD":
            assert (digest, size) == ("", "")
            continue
        expected = base64.urlsafe_b64encode(hashlib.sha256(files[path]).digest()).rstrip(b"=")
        assert digest == "sha256=" + expected.decode(), path
        assert int(size) == len(files[path]), path


def test_the_core_from_the_wheel_answers_as_the_source_does(tmp_path: Path) -> None:
    """Every example case evaluated by the core unpacked from the wheel (as the worker
    unpacks it, with zipfile), in a separate interpreter, gives the same JSON as the
    source tree's core."""
    with zipfile.ZipFile(build.build_wheel()) as wheel:
        wheel.extractall(tmp_path)
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
    from_wheel = answers(tmp_path)
    assert len(from_wheel) == len(requests)
    assert from_wheel == answers(ROOT)
    assert any(json.loads(a)["ok"] for a in from_wheel)
