"""The app's actions for verification, ready-made readers, deviations and batch runs.

Each takes the request's payload (JSON-ready data) and returns JSON-ready
data; refusals are CaseError, which the bridge turns into
``{"ok": false, "error": {"field", "message"}}``. Shapes: docs/case-format.md
("Verification", "Ready-made readers", "Deviations through spectacles",
"Batch files").
"""

from __future__ import annotations

from typing import Any

from .batch import FORMATS, run_csv_text
from .bridge import action
from .cases import read_case
from .deviation import read_deviation, through_spectacles
from .errors import CaseError
from .fields import as_object, only_keys
from .reader_limits import limit_sets
from .readers import readers_request
from .readers_text import deviation_text, readers_text
from .stock import hand_out, parse_stock_csv, read_stock, stock_to_csv, undo_hand_out
from .tolerances import tolerance_tables
from .verification import verify
from .verification_section import evaluate_section
from .verify_input import read_verification
from .verify_text import verification_text

MAX_TEXT = 2_000_000


@action("verify")
def _verify(payload: Any) -> dict[str, Any]:
    """A verification document, or a case with a verification section -> the verdicts."""
    obj = as_object(payload, "", "a verification")
    if "ordered" not in obj and "right" in obj:
        result = evaluate_section(read_case(obj), {})
        if result is None:
            raise CaseError("verification", "verification is missing: the case needs a "
                                            "verification section with the measurements.")
        result.pop("summary_lines", None)
    else:
        result = verify(read_verification(obj))
    return {**result, "text": verification_text(result)}


@action("verify_standards")
def _verify_standards(_payload: Any) -> dict[str, Any]:
    return {"standards": [table.as_dict() for table in tolerance_tables().values()]}


@action("readers_limit_sets")
def _readers_limit_sets(_payload: Any) -> dict[str, Any]:
    return {"limit_sets": [limits.as_dict() for limits in limit_sets().values()]}


@action("readers_rank")
def _readers_rank(payload: Any) -> dict[str, Any]:
    result = readers_request(payload)
    return {**result, "text": readers_text(result)}


@action("readers_stock_import")
def _stock_import(payload: Any) -> dict[str, Any]:
    """CSV text -> the good pairs and the refused rows (line, column, field, message)."""
    obj = as_object(payload, "", "a stock import")
    only_keys(obj, "", ("csv",))
    text = _text(obj, "csv")
    pairs, problems = parse_stock_csv(text)
    return {"stock": [pair.as_dict() for pair in pairs],
            "errors": [problem.as_dict() for problem in problems]}


@action("readers_stock_export")
def _stock_export(payload: Any) -> dict[str, Any]:
    obj = as_object(payload, "", "a stock export")
    only_keys(obj, "", ("stock",))
    return {"csv": stock_to_csv(read_stock(obj.get("stock")))}


@action("readers_hand_out")
def _hand_out(payload: Any) -> dict[str, Any]:
    obj = as_object(payload, "", "a hand-out")
    only_keys(obj, "", ("stock", "id"))
    stock, record = hand_out(read_stock(obj.get("stock")), obj.get("id"))
    return {"stock": [pair.as_dict() for pair in stock], "undo": record}


@action("readers_undo")
def _undo(payload: Any) -> dict[str, Any]:
    obj = as_object(payload, "", "an undo")
    only_keys(obj, "", ("stock", "undo"))
    stock = undo_hand_out(read_stock(obj.get("stock")), obj.get("undo"))
    return {"stock": [pair.as_dict() for pair in stock]}


@action("deviation")
def _deviation(payload: Any) -> dict[str, Any]:
    result = through_spectacles(read_deviation(payload))
    return {**result, "text": deviation_text(result)}


@action("batch")
def _batch(payload: Any) -> dict[str, Any]:
    """CSV text of cases -> the report text (csv, jsonl or text) and the counts."""
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
