"""Spreadsheet safety for every CSV the project writes.

A text cell that begins with ``=``, ``+``, ``-``, ``@``, a tab or a carriage
return could be taken by a spreadsheet for a formula, so it is written with a
leading apostrophe (the spreadsheet's own mark for "this is text"). Numbers
stay numbers. Readers of the project's own CSV drop that apostrophe again.
Lines end in CR LF (RFC 4180), so a carriage return inside a cell is quoted.
"""

from __future__ import annotations

import csv
from collections.abc import Iterable
from typing import Any, TextIO

FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")


class NumberText(str):
    """A number already written as text (``"+2.50"``): a number, so written as it is."""


def safe_cell(value: Any) -> Any:
    """``value``, with an apostrophe before text that a spreadsheet would run as a formula."""
    if isinstance(value, str) and not isinstance(value, NumberText) \
            and value.startswith(FORMULA_STARTS):
        return "'" + value
    return value


def safe_row(row: Iterable[Any]) -> list[Any]:
    return [safe_cell(value) for value in row]


def unguarded(text: str) -> str:
    """A cell as written before ``safe_cell`` (the apostrophe it added dropped)."""
    if text.startswith("'") and text[1:2] and text[1:].startswith(FORMULA_STARTS):
        return text[1:]
    return text


class SafeWriter:
    """A CSV writer (CR LF line ends) whose text cells go through ``safe_cell``."""

    def __init__(self, stream: TextIO) -> None:
        self._writer = csv.writer(stream, lineterminator="\r\n")

    def writerow(self, row: Iterable[Any]) -> None:
        self._writer.writerow(safe_row(row))

    def writerows(self, rows: Iterable[Iterable[Any]]) -> None:
        for row in rows:
            self.writerow(row)
