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
