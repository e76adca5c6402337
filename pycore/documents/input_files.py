"""Opening input files safely: only regular files, size known before reading, never blocking.

A pipe, device or socket given by name is refused before it is opened (opening
a pipe with no writer would wait forever); '-' is standard input. A file over
the limit is refused with its real size, unread.
"""

from __future__ import annotations

import os
import stat
import sys
from typing import BinaryIO

from pycore.documents.json_input import MAX_DOCUMENT_BYTES, too_large
from pycore.errors import CaseError, shown


def capitalised(what: str) -> str:
    return what[:1].upper() + what[1:]


def open_regular(path: str, what: str = "a case file") -> BinaryIO:
    """``path`` opened for reading in binary, refused unless it is a regular file."""
    name = shown(path)
    try:
        info = os.stat(path)
    except FileNotFoundError:
        raise CaseError("", f"There is no file {name}.") from None
    except (OSError, ValueError) as exc:
        raise CaseError("", f"{name} cannot be read ({_reason(exc)}).") from None
    if stat.S_ISDIR(info.st_mode):
        raise CaseError("", f"{name} is a folder, not {what}.")
    if not stat.S_ISREG(info.st_mode):
        raise CaseError("", f"{name} is not a regular file (it is a pipe, device or socket); "
                            "give a file, or - for standard input.")
    try:
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_BINARY", 0))
    except OSError as exc:
        raise CaseError("", f"{name} cannot be read ({_reason(exc)}).") from None
    if not stat.S_ISREG(os.fstat(fd).st_mode):   # replaced since the check above
        os.close(fd)
        raise CaseError("", f"{name} is not a regular file; give a file, or - for standard "
                            "input.")
    return os.fdopen(fd, "rb")


def read_input(source: str, what: str = "the case",
               limit: int = MAX_DOCUMENT_BYTES) -> bytes:
    """The bytes of file ``source`` (or standard input for '-'), at most ``limit`` of them.

    ``what`` names the document in refusals ("the case", "the stock file").
    """
    label = capitalised(what)
    try:
        if source == "-":
            stream = sys.stdin.buffer
            size = _regular_size(stream)
            if size is not None and size > limit:
                raise too_large(f"{label} on standard input", size)
            data = stream.read(limit + 1)
            where = f"{label} on standard input"
        else:
            with open_regular(source, _article(what)) as handle:
                where = f"{label} {shown(source)}"
                size = os.fstat(handle.fileno()).st_size
                if size > limit:
                    raise too_large(where, size)
                data = handle.read(limit + 1)
    except OSError as exc:
        raise CaseError("", f"{shown(source)} cannot be read ({_reason(exc)}).") from None
    if len(data) > limit:
        raise too_large(where, len(data), exact=False)
    return data


def _regular_size(stream: BinaryIO) -> int | None:
    try:
        info = os.fstat(stream.fileno())
    except (OSError, ValueError, AttributeError):
        return None
    return info.st_size if stat.S_ISREG(info.st_mode) else None


def _article(what: str) -> str:
    return "a " + what.removeprefix("the ") if what.startswith("the ") else what


def _reason(exc: BaseException) -> str:
    return getattr(exc, "strerror", None) or str(exc) or type(exc).__name__
