"""The worker actions beyond evaluate: reading zone and remedies, verification, readers,
deviations and batch runs (the table of names is in pycore.interfaces.bridge).

Each takes the request's payload (JSON-ready data) and returns JSON-ready
data; refusals are CaseError, which the bridge turns into
``{"ok": false, "error": {"field", "message"}}``. Shapes: docs/case-format.md
("Verification", "Ready-made readers", "Deviations through spectacles",
"Batch files").
"""

from __future__ import annotations

from typing import Any

from pycore.documents.cases import read_case
from pycore.documents.fields import as_object, only_keys
from pycore.errors import CaseError, shown
from pycore.evaluate import evaluate
from pycore.reading.remedies.side_by_side import finished_case, remedies_section
from pycore.reading.zone import reading_zone_section

# The case pipeline above is imported with the bridge. Each other action imports its own
# modules when it is first asked for (verification, readers, deviations, documents,
# batch runs), so the first case result never waits for them; LAZY_MODULES lists them
# all, for a worker that wants them loaded ahead of use (preload).

LAZY_MODULES = (
    "pycore.checks.deviation", "pycore.checks.reader_limits", "pycore.checks.reader_stock",
    "pycore.checks.readers", "pycore.checks.readers_text", "pycore.checks.tolerances",
    "pycore.checks.verification", "pycore.checks.verification_input",
    "pycore.checks.verification_section", "pycore.checks.verification_text",
    "pycore.documents.batch", "pycore.documents.kinds", "pycore.documents.summary",
)
"""Every module an action (here or in the bridge) imports on first use; tests/test_layout.py
checks the list against the imports themselves."""


def preload() -> None:
    """Import every action's modules now (for an interpreter image that holds them all)."""
    import importlib

    for name in LAZY_MODULES:
        importlib.import_module(name)


MAX_TEXT = 2_000_000


def verify(payload: Any) -> dict[str, Any]:
    """A verification document, or a case with a verification section -> the verdicts."""
    from pycore.checks import verification
    from pycore.checks.verification_input import read_verification
    from pycore.checks.verification_section import evaluate_section
    from pycore.checks.verification_text import verification_text

    obj = as_object(payload, "", "a verification")
    if "ordered" not in obj and "right" in obj:
        result = evaluate_section(read_case(obj), {})
        if result is None:
            raise CaseError("verification", "verification is missing: the case needs a "
                                            "verification section with the measurements.")
        result.pop("summary_lines", None)
    else:
        result = verification.verify(read_verification(obj))
    return {**result, "text": verification_text(result)}


def verify_standards(_payload: Any) -> dict[str, Any]:
    from pycore.checks.tolerances import tolerance_tables

    return {"standards": [table.as_dict() for table in tolerance_tables().values()]}


def readers_limit_sets(_payload: Any) -> dict[str, Any]:
    from pycore.checks.reader_limits import limit_sets

    return {"limit_sets": [limits.as_dict() for limits in limit_sets().values()]}


def readers_rank(payload: Any) -> dict[str, Any]:
    from pycore.checks.readers import readers_request
    from pycore.checks.readers_text import readers_text

    result = readers_request(payload)
    return {**result, "text": readers_text(result)}


def stock_import(payload: Any) -> dict[str, Any]:
    """CSV text -> the good pairs and the refused rows (line, column, field, message)."""
    from pycore.checks.reader_stock import parse_stock_csv

    obj = as_object(payload, "", "a stock import")
    only_keys(obj, "", ("csv",))
    text = _text(obj, "csv")
    pairs, problems = parse_stock_csv(text)
    return {"stock": [pair.as_dict() for pair in pairs],
            "errors": [problem.as_dict() for problem in problems]}


def stock_export(payload: Any) -> dict[str, Any]:
    from pycore.checks.reader_stock import read_stock, stock_to_csv

    obj = as_object(payload, "", "a stock export")
    only_keys(obj, "", ("stock",))
    return {"csv": stock_to_csv(read_stock(obj.get("stock")))}


def hand_out(payload: Any) -> dict[str, Any]:
    from pycore.checks import reader_stock

    obj = as_object(payload, "", "a hand-out")
    only_keys(obj, "", ("stock", "id"))
    stock, record = reader_stock.hand_out(reader_stock.read_stock(obj.get("stock")),
                                          obj.get("id"))
    return {"stock": [pair.as_dict() for pair in stock], "undo": record}


def undo(payload: Any) -> dict[str, Any]:
    from pycore.checks.reader_stock import read_stock, undo_hand_out

    obj = as_object(payload, "", "an undo")
    only_keys(obj, "", ("stock", "undo"))
    stock = undo_hand_out(read_stock(obj.get("stock")), obj.get("undo"))
    return {"stock": [pair.as_dict() for pair in stock]}


def deviation(payload: Any) -> dict[str, Any]:
    from pycore.checks.deviation import read_deviation, through_spectacles
    from pycore.checks.readers_text import deviation_text

    result = through_spectacles(read_deviation(payload))
    return {**result, "text": deviation_text(result)}


def batch(payload: Any) -> dict[str, Any]:
    """CSV text of cases -> the report text (csv, jsonl or text) and the counts."""
    from pycore.documents.batch import FORMATS, run_csv_text

    obj = as_object(payload, "", "a batch")
    only_keys(obj, "", ("csv", "format"))
    form = obj.get("format", "csv")
    if form not in FORMATS:
        raise CaseError("format", f"format must be one of {', '.join(FORMATS)}.", form)
    return run_csv_text(_text(obj, "csv"), form)


def _text(obj: dict[str, Any], key: str) -> str:
    value = obj.get(key)
    if not isinstance(value, str):
        raise CaseError(key, f"{key} must be the file's text.", value)
    if len(value) > MAX_TEXT:
        raise CaseError(key, f"{key} is too large (at most {MAX_TEXT} characters).")
    return value


def reading_zone(payload: Any) -> dict[str, Any]:
    """A case -> its ``reading_zone`` and ``remedies`` result sections."""
    case = read_case(payload)
    return {"reading_zone": reading_zone_section(case, {}),
            "remedies": remedies_section(case, {})}


def apply_remedy(payload: Any) -> dict[str, Any]:
    """``{"case", "remedy"}`` -> the remedy, the finished case and its evaluation."""
    if not isinstance(payload, dict) or "case" not in payload:
        raise CaseError("case", "case is missing from the request.")
    entry, finished = finished_case(payload["case"], payload.get("remedy"))
    return {"remedy": entry, "case": finished, "result": evaluate(read_case(finished))}


def read_document(payload: Any) -> dict[str, Any]:
    """``{text, expect?}`` -> ``{kind, document}``: a file read the way the CLI reads it."""
    from pycore.documents import kinds

    if not isinstance(payload, dict) or "text" not in payload:
        raise CaseError("text", "text is missing from the request.")
    unknown = set(payload) - {"text", "expect"}
    if unknown:
        first = shown(sorted(unknown)[0])
        raise CaseError(first, f"{first} is not a field of read_document; give text and, if "
                               "wanted, expect.")
    return kinds.read_document(payload["text"], payload.get("expect"))
