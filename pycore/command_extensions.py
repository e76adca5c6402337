"""Imports the modules that register further command-line commands (pycore.cli)."""

from . import (  # noqa: F401  (imported to register)
    batch_cli,
    deviation_cli,
    extensions,
    readers_cli,
    verify_cli,
)
