"""Fixtures for the core tests (helpers live in cli_runner.py, importable by name)."""

from __future__ import annotations

import sys
from pathlib import Path
from typing import Any

import pytest

sys.path.insert(0, str(Path(__file__).resolve().parent))

from cli_runner import run_cli


@pytest.fixture
def cli() -> Any:
    return run_cli
