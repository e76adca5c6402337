"""Spreadsheet safety for every CSV the project writes.

A text cell that begins with ``=``, ``+``, ``-``, ``@``, a tab or a carriage
return could be taken by a spreadsheet for a formula, so it is written with a
leading apostrophe (the spreadsheet's own mark for "this is text"). Numbers
stay numbers. Readers of the project's own CSV drop that apostrophe again.
"""

from __future__ import annotations

from collections.abc import Iterable
from typing import Any

FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")


def safe_cell(value: Any) -> Any:
    """``value``, with an apostrophe before text that a spreadsheet would run as a formula."""
    if isinstance(value, str) and value.startswith(FORMULA_STARTS):
        return "'" + value
    return value


def safe_row(row: Iterable[Any]) -> list[Any]:
    return [safe_cell(value) for value in row]


def unguarded(text: str) -> str:
    """A cell as written before ``safe_cell`` (the apostrophe it added dropped)."""
    if text.startswith("'") and text[1:2] and text[1:].startswith(FORMULA_STARTS):
        return text[1:]
    return text
