"""Running the command line as a user would, for the core tests."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(Path(__file__).resolve().parent))


class CliRun:
    def __init__(self, code: int, stdout: str, stderr: str) -> None:
        self.code, self.stdout, self.stderr = code, stdout, stderr

    def json(self) -> Any:
        return json.loads(self.stdout)


def run_cli(*args: str, stdin: str | bytes | None = None) -> CliRun:
    """Run ``python -m pycore ARGS`` as a separate process, as a user would."""
    data = stdin.encode() if isinstance(stdin, str) else stdin
    proc = subprocess.run([sys.executable, "-m", "pycore", *args], input=data,
                          capture_output=True, cwd=ROOT, timeout=60)
    return CliRun(proc.returncode, proc.stdout.decode(), proc.stderr.decode())


def check_refusal_in_process(command: str, name: str, document: Any, field: str,
                             reader: Any, capsys: Any, monkeypatch: Any) -> None:
    """Run ``python -m pycore COMMAND -`` in this process on ``document`` and check the
    refusal: exit 2, nothing on standard output, one sentence naming ``field``; then
    check that ``reader`` (the command's document reader) refuses the same field."""
    import copy
    import io

    import pytest

    from pycore.errors import CaseError
    from pycore.interfaces.cli import main

    text = document if isinstance(document, str) else json.dumps(document)
    monkeypatch.setattr(sys, "stdin", io.TextIOWrapper(io.BytesIO(text.encode())))
    code = main([command, "-"])
    out, err = capsys.readouterr()
    assert code == 2 and out == "", name
    assert "Traceback" not in err and err.count("\n") == 1
    assert field in err, (name, err)
    if isinstance(document, dict):
        with pytest.raises(CaseError) as caught:
            reader(copy.deepcopy(document))
        assert caught.value.field.startswith(field), (name, caught.value.field)
