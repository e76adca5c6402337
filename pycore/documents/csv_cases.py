"""Case documents from CSV rows: each column names a dotted path into the case.

A column ``right.sphere`` fills ``{"right": {"sphere": ...}}``; a numeric part
makes a list (``points.0.right.in_mm``). Cells that read as numbers become
numbers, except in text fields (``name``, ``notes``, ``rx``, ``prism``,
``standard``, ``lens_type``, ``mounting``, ``horizontal_reading``, and list
items such as ``points.0`` = ``near``). An empty cell leaves its field out.
The document then goes through the same reader as any case file, so every
refusal names the field, which is also the column.
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from typing import Any

from pycore.errors import CaseError

TEXT_FIELDS = frozenset({"name", "notes", "rx", "prism", "standard", "lens_type", "mounting",
                         "horizontal_reading"})
MAX_COLUMNS = 200
MAX_CELL = 2000
_NUMBER = re.compile(r"^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$")
_PART = re.compile(r"^(?:[a-z_][a-z0-9_]*|0|[1-9]\d{0,2})$")


def check_header(header: Sequence[str]) -> tuple[tuple[str, ...], ...]:
    """The columns as path parts; a malformed or repeated column refuses the whole file."""
    if len(header) > MAX_COLUMNS:
        raise CaseError("header", f"header has {len(header)} columns; at most {MAX_COLUMNS}.")
    paths = []
    for index, raw in enumerate(header):
        name = raw.strip()
        parts = tuple(name.split("."))
        if not name or not all(_PART.match(part) for part in parts) or parts[0].isdigit():
            raise CaseError("header", f"header column {index + 1} ({raw!r}) is not a field "
                                      "path such as right.sphere or fitting.right.mono_pd_mm.",
                            raw)
        if parts in paths:
            raise CaseError("header", f"header column {name!r} appears twice.", raw)
        paths.append(parts)
    return tuple(paths)


def row_document(paths: Sequence[tuple[str, ...]], row: Sequence[str]) -> dict[str, Any]:
    """The case document one CSV row describes (refusals name the column)."""
    if len(row) > len(paths):
        raise CaseError("", f"the row has {len(row)} cells but the header names "
                            f"{len(paths)} columns.")
    document: dict[str, Any] = {}
    for parts, raw in zip(paths, row, strict=False):
        cell = raw.strip()
        if not cell:
            continue
        column = ".".join(parts)
        if len(cell) > MAX_CELL:
            raise CaseError(column, f"{column} is too long (at most {MAX_CELL} characters).")
        _place(document, parts, _value(parts, cell), column)
    result = _lists(document, "")
    assert isinstance(result, dict)
    return result


def _value(parts: tuple[str, ...], cell: str) -> Any:
    last = parts[-1]
    if last in TEXT_FIELDS or last.isdigit() or not _NUMBER.match(cell):
        return cell
    number = float(cell)
    return int(number) if number.is_integer() and "." not in cell and "e" not in cell.lower() \
        else number


def _place(document: dict[str, Any], parts: tuple[str, ...], value: Any, column: str) -> None:
    node = document
    for depth, part in enumerate(parts[:-1]):
        child = node.setdefault(part, {})
        if not isinstance(child, dict):
            clash = ".".join(parts[:depth + 1])
            raise CaseError(column, f"{column} clashes with column {clash}; give one or the "
                                    "other.")
        node = child
    if parts[-1] in node:
        raise CaseError(column, f"{column} clashes with another column filling the same "
                                "field.")
    node[parts[-1]] = value


def _lists(node: Any, path: str) -> Any:
    if not isinstance(node, dict):
        return node
    converted = {key: _lists(value, f"{path}.{key}" if path else key)
                 for key, value in node.items()}
    if converted and all(key.isdigit() for key in converted):
        indices = sorted(int(key) for key in converted)
        if indices != list(range(len(indices))):
            missing = next(i for i in range(len(indices) + 1) if i not in indices)
            where = f"{path}.{missing}"
            raise CaseError(where, f"{where} is missing: list columns must be numbered from 0 "
                                   "without gaps.")
        return [converted[str(i)] for i in indices]
    return converted
