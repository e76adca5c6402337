"""What the command-line commands share: reading FILE (or standard input) and writing
the whole answer to standard output (a failure to write is a refusal, exit 2)."""

from __future__ import annotations

import os
import sys

from pycore.documents.input_files import read_input
from pycore.errors import CaseError

__all__ = ["read_input", "silence_stdout", "write_output"]


def write_output(text: str) -> None:
    """Write a command's whole answer to standard output; a failure is a CaseError."""
    try:
        sys.stdout.write(text)
        sys.stdout.flush()
    except BrokenPipeError:
        raise
    except UnicodeEncodeError as exc:
        silence_stdout()
        raise CaseError("output", f"Standard output cannot take the character "
                                  f"{exc.object[exc.start:exc.start + 1]!r} (its encoding is "
                                  f"{exc.encoding}); set PYTHONIOENCODING=utf-8.") from None
    except OSError as exc:
        silence_stdout()
        raise CaseError("output", f"Standard output cannot be written "
                                  f"({exc.strerror or exc}).") from None


def silence_stdout() -> None:
    """Point standard output at the null device, so nothing fails again at exit."""
    try:
        fd = sys.stdout.fileno()
    except (OSError, ValueError, AttributeError):
        return
    null = os.open(os.devnull, os.O_WRONLY)
    os.dup2(null, fd)
    os.close(null)
