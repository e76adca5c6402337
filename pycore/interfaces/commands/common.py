"""What the command-line commands share: reading FILE (or standard input) and writing."""

from __future__ import annotations

import sys
from typing import TextIO

from pycore.documents.cases import MAX_DOCUMENT_BYTES
from pycore.errors import CaseError


def read_input(source: str) -> bytes:
    """The bytes of FILE, or of standard input for '-'; refusals as CaseError."""
    try:
        if source == "-":
            data = sys.stdin.buffer.read(MAX_DOCUMENT_BYTES + 1)
        else:
            with open(source, "rb") as handle:
                data = handle.read(MAX_DOCUMENT_BYTES + 1)
    except FileNotFoundError:
        raise CaseError("", f"There is no file {source!r}.") from None
    except IsADirectoryError:
        raise CaseError("", f"{source!r} is a folder, not a case file.") from None
    except OSError as exc:
        raise CaseError("", f"{source!r} cannot be read ({exc.strerror}).") from None
    return data


def write(stream: TextIO, text: str) -> None:
    stream.write(text)
    stream.flush()
