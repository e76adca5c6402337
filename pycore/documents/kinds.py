"""Which kind of document a file holds, read the same way by the app and the command line.

Kinds: ``case``, ``verification``, ``readers``, ``deviation`` (JSON objects, told
apart by the keys only that kind has) and ``batch`` (CSV text whose header
names case fields). Worker action ``read_document`` {text, expect?} ->
{kind, document}; see docs/worker-protocol.md and docs/case-format.md
("Reading files").
"""

from __future__ import annotations

import csv
import io
from typing import Any

from pycore.checks.reader_stock import COLUMNS as STOCK_COLUMNS
from pycore.documents.csv_cases import check_header
from pycore.documents.json_input import load_json
from pycore.errors import CaseError

KINDS = ("case", "verification", "readers", "deviation", "batch")
NAMES = {"case": "a case", "verification": "a verification document",
         "readers": "a readers request", "deviation": "a deviation measured through spectacles",
         "batch": "a batch of cases (CSV)"}
MAX_BATCH_TEXT = 2_000_000
"""A batch file read as text holds at most this many characters (as the batch action)."""

_READERS_KEYS = frozenset({"wearer", "stock", "limits", "suitability"})
_DEVIATION_KEYS = frozenset({"fixating", "centre_of_rotation_mm"})


def document_kind(document: dict[str, Any]) -> str:
    """The kind of a JSON document, from the keys only that kind has (else ``case``)."""
    keys = set(document)
    if keys & _READERS_KEYS:
        return "readers"
    if "ordered" in keys:
        return "verification"
    if keys & _DEVIATION_KEYS:
        return "deviation"
    if "measured" in keys:
        measured = document["measured"]
        is_prism = not isinstance(measured, dict) or bool({"base_in", "base_up"} & set(measured))
        return "deviation" if is_prism else "verification"
    return "case"


def read_document(text: Any, expect: Any = None) -> dict[str, Any]:
    """``{"kind", "document"}`` for a file's text; ``expect`` (a kind or a list of kinds)
    refuses any other kind in one sentence."""
    if not isinstance(text, str):
        raise CaseError("text", "text must be the file's text.")
    wanted = _expected(expect)
    body = text.removeprefix("\ufeff")
    if body.lstrip()[:1] in ("{", "[") or not _looks_like_csv(body):
        document = load_json(body, "the file")
        if not isinstance(document, dict):
            raise CaseError("", "The file holds a JSON list or value, not a document (a JSON "
                                "object with named fields).")
        kind = document_kind(document)
        result: dict[str, Any] = {"kind": kind, "document": document}
    else:
        kind = "batch"
        result = {"kind": kind, "document": {"csv": _batch_text(body)}}
    if wanted and kind not in wanted:
        raise CaseError("kind", f"This file is {NAMES[kind]}, not {NAMES[wanted[0]]}.", kind)
    return result


def refuse_other_kind(document: Any, wanted: tuple[str, ...]) -> None:
    """Refuse a JSON document that is clearly of another kind than ``wanted`` (CLI use)."""
    if isinstance(document, dict):
        kind = document_kind(document)
        if kind not in wanted and kind != "case":
            raise CaseError("", f"The file is {NAMES[kind]}, not {NAMES[wanted[0]]}.", kind)


def _expected(expect: Any) -> tuple[str, ...]:
    if expect is None:
        return ()
    kinds = (expect,) if isinstance(expect, str) else expect
    if not isinstance(kinds, (list, tuple)) or not kinds \
            or not all(isinstance(k, str) and k in KINDS for k in kinds):
        raise CaseError("expect", f"expect must be one of {', '.join(KINDS)} (or a list of "
                                  "them).")
    return tuple(kinds)


def _looks_like_csv(text: str) -> bool:
    first = next((line for line in text.splitlines() if line.strip()), "")
    return "," in first or ";" in first


def _batch_text(text: str) -> str:
    if len(text) > MAX_BATCH_TEXT:
        raise CaseError("", f"The file is too large ({len(text):,} characters; at most "
                            f"{MAX_BATCH_TEXT:,}).")
    rows = csv.reader(io.StringIO(text))
    header = next((row for row in rows if any(cell.strip() for cell in row)), [])
    names = [cell.strip().lower() for cell in header]
    if names and set(names) <= set(STOCK_COLUMNS):
        raise CaseError("", "The file is a stock list of ready-made readers (CSV), not a "
                            "document; import it as stock on the readers screen.")
    check_header(header)
    return text


__all__ = ["KINDS", "NAMES", "document_kind", "read_document",
           "refuse_other_kind"]
