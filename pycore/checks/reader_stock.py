"""A clinic's stock of ready-made readers: reading it, writing it, handing pairs out.

Pure functions on an immutable list: the app keeps the list on the device
(localStorage) and passes it in; nothing here stores anything. A stock pair is
one kind of ready-made reader: both lenses the same spherical power
(dioptres, plus), the distance between the optical centres (mm), the frame
size as labelled, and how many are on hand.

CSV columns (header required, any order, names case-insensitive): ``id``,
``power``, ``oc_distance_mm``, ``frame_size`` (optional), ``count``. Comma or
semicolon separated; with semicolons a decimal comma is accepted.
"""

from __future__ import annotations

import csv
import io
import re
from collections.abc import Iterable, Iterator, Sequence
from dataclasses import dataclass, replace
from typing import Any

from pycore.documents.fields import as_object, only_keys, path_of, require
from pycore.documents.spreadsheet import NumberText, SafeWriter, unguarded
from pycore.errors import CaseError, shown
from pycore.validation import in_range

POWER_RANGE_D = (0.25, 6.0)
OC_RANGE_MM = (40.0, 80.0)
MAX_COUNT = 100_000
MAX_PAIRS = 10_000
MAX_LABEL = 40
COLUMNS = ("id", "power", "oc_distance_mm", "frame_size", "count")
REQUIRED = ("id", "power", "oc_distance_mm", "count")


@dataclass(frozen=True)
class StockPair:
    """One kind of ready-made reader on the shelf (power D, optical-centre distance mm)."""

    id: str
    power: float
    oc_distance_mm: float
    frame_size: str = ""
    count: int = 0

    def as_dict(self) -> dict[str, Any]:
        return {"id": self.id, "power": self.power, "oc_distance_mm": self.oc_distance_mm,
                "frame_size": self.frame_size, "count": self.count}


@dataclass(frozen=True)
class RowProblem:
    """A refused CSV row: its line, the column, and one sentence naming them."""

    line: int
    column: str
    message: str

    @property
    def field(self) -> str:
        return f"line {self.line}.{self.column}" if self.column else f"line {self.line}"

    def as_dict(self) -> dict[str, Any]:
        return {"line": self.line, "column": self.column, "field": self.field,
                "message": self.message}


# --------------------------------------------------------------------------- values


def make_pair(values: dict[str, Any], where: str) -> StockPair:
    """A StockPair from already-typed values, each refusal naming ``where.key``."""
    pair_id = values.get("id")
    if not isinstance(pair_id, str) or not pair_id.strip() or len(pair_id) > MAX_LABEL:
        field = path_of(where, "id")
        raise CaseError(field, f"{field} must be a label of 1 to {MAX_LABEL} characters "
                               "(as written on the shelf).", pair_id)
    power = in_range(values.get("power"), path_of(where, "power"), *POWER_RANGE_D, "dioptres")
    oc = in_range(values.get("oc_distance_mm"), path_of(where, "oc_distance_mm"), *OC_RANGE_MM,
                  "mm")
    frame = values.get("frame_size", "")
    if not isinstance(frame, str) or len(frame) > MAX_LABEL:
        field = path_of(where, "frame_size")
        raise CaseError(field, f"{field} must be text of at most {MAX_LABEL} characters.", frame)
    count = values.get("count")
    field = path_of(where, "count")
    if isinstance(count, bool) or not isinstance(count, (int, float)) \
            or not 0 <= count <= MAX_COUNT or count != int(count):
        raise CaseError(field, f"{field} must be a whole number from 0 to {MAX_COUNT}; "
                               f"got {shown(count)}.", count)
    return StockPair(pair_id.strip(), power, oc, frame.strip(), int(count))


def read_stock(value: Any, path: str = "stock") -> tuple[StockPair, ...]:
    """A stock list given as JSON (a list of objects), validated; ids must be unique."""
    if not isinstance(value, list):
        raise CaseError(path, f"{path} must be a list of stock pairs.", value)
    if len(value) > MAX_PAIRS:
        raise CaseError(path, f"{path} has {len(value)} entries; at most {MAX_PAIRS}.")
    pairs = []
    seen: dict[str, int] = {}
    for index, item in enumerate(value):
        where = path_of(path, index)
        obj = as_object(item, where, "a stock pair")
        only_keys(obj, where, COLUMNS)
        for key in REQUIRED:
            require(obj, where, key, _HINTS[key])
        pair = make_pair(obj, where)
        if pair.id in seen:
            field = path_of(where, "id")
            raise CaseError(field, f"{field} {pair.id!r} is already used by {path}."
                                   f"{seen[pair.id]}; give each pair its own id.", pair.id)
        seen[pair.id] = index
        pairs.append(pair)
    return tuple(pairs)


_HINTS = {
    "id": "give the label of the pair as written on the shelf.",
    "power": "give the lenses' power in dioptres, e.g. 2.50.",
    "oc_distance_mm": "give the distance between the optical centres in mm.",
    "count": "give how many pairs are on hand (0 or more).",
}


# --------------------------------------------------------------------------- CSV

_UNIT = re.compile(r"\s*(?:d|dpt|mm)\s*$", re.IGNORECASE)


def parse_stock_csv(text: str) -> tuple[tuple[StockPair, ...], tuple[RowProblem, ...]]:
    """Stock pairs from CSV text, and the rows refused (line, column, sentence).

    Good rows are kept even when others are refused; a refused header refuses
    the whole file (one problem on line 1).
    """
    text = text.removeprefix("\ufeff")
    lines = text.splitlines()
    first = next((line for line in lines if line.strip()), "")
    delimiter = ";" if ";" in first and "," not in first else ","
    reader = csv.reader(io.StringIO(text), delimiter=delimiter)
    header: list[str] | None = None
    pairs: list[StockPair] = []
    problems: list[RowProblem] = []
    seen: dict[str, int] = {}
    for row in _rows(reader, problems):
        line = reader.line_num
        if not any(cell.strip() for cell in row):
            continue
        if header is None:
            header = [cell.strip().lower() for cell in row]
            problem = _header_problem(header, line)
            if problem is not None:
                return (), (problem,)
            continue
        if len(pairs) + len(problems) >= MAX_PAIRS:
            problems.append(RowProblem(line, "", f"line {line}: the file has more than "
                                                 f"{MAX_PAIRS} pairs; the rest were skipped."))
            break
        try:
            pair = _csv_pair(header, row, line, delimiter)
        except CaseError as exc:
            column = exc.field.split(".", 1)[1] if "." in exc.field else ""
            problems.append(RowProblem(line, column, exc.message))
            continue
        if pair.id in seen:
            problems.append(RowProblem(line, "id", f"line {line}, id {pair.id!r} is already "
                                                   f"used on line {seen[pair.id]}; give each "
                                                   "pair its own id."))
            continue
        seen[pair.id] = line
        pairs.append(pair)
    if header is None:
        problems.append(RowProblem(1, "", "line 1: the file is empty; expected a header "
                                          f"with {', '.join(REQUIRED)}."))
    return tuple(pairs), tuple(problems)


def _rows(reader: Any, problems: list[RowProblem]) -> Iterator[list[str]]:
    """The CSV rows; a row the CSV reader cannot read ends the file as a refused line."""
    try:
        yield from reader
    except csv.Error as exc:
        line = reader.line_num
        problems.append(RowProblem(line, "", f"line {line} cannot be read as CSV "
                                             f"({str(exc).rstrip('.')}); the rest were "
                                             "skipped."))


def stock_from_csv(text: str) -> tuple[StockPair, ...]:
    """Stock pairs from CSV text; any refused row refuses the whole file (CaseError)."""
    pairs, problems = parse_stock_csv(text)
    if problems:
        first = problems[0]
        more = f" ({len(problems) - 1} more rows refused)" if len(problems) > 1 else ""
        raise CaseError(first.field, first.message.rstrip(".") + "." + more, None)
    return pairs


def _header_problem(header: list[str], line: int) -> RowProblem | None:
    for index, name in enumerate(header):
        if name not in COLUMNS:
            return RowProblem(line, name, f"line {line}, column {index + 1} {shown(name)} is not a "
                                          f"stock column; allowed: {', '.join(COLUMNS)}.")
        if name in header[:index]:
            return RowProblem(line, name, f"line {line}, column {shown(name)} appears twice.")
    missing = [name for name in REQUIRED if name not in header]
    if missing:
        return RowProblem(line, missing[0], f"line {line}: the header has no {missing[0]} "
                                            f"column; needed: {', '.join(REQUIRED)}.")
    return None


def _csv_pair(header: list[str], row: list[str], line: int, delimiter: str) -> StockPair:
    where = f"line {line}"
    if len(row) > len(header):
        raise CaseError(where, f"line {line} has {len(row)} cells but the header names "
                               f"{len(header)} columns.")
    cells = {name: (row[i].strip() if i < len(row) else "") for i, name in enumerate(header)}
    values: dict[str, Any] = {"id": unguarded(cells["id"]),
                              "frame_size": unguarded(cells.get("frame_size", ""))}
    for name in ("power", "oc_distance_mm", "count"):
        values[name] = _csv_number(cells[name], f"{where}.{name}", name, delimiter)
    try:
        return make_pair(values, where)
    except CaseError as exc:
        raise CaseError(exc.field, exc.message.replace(f"{where}.", f"{where}, ", 1),
                        exc.value) from None


def _csv_number(cell: str, field: str, name: str, delimiter: str) -> float:
    shown = field.replace(".", ", ", 1)
    if not cell:
        raise CaseError(field, f"{shown} is empty: {_HINTS[name]}")
    cleaned = _UNIT.sub("", cell)
    if delimiter == ";":
        cleaned = cleaned.replace(",", ".")
    try:
        return float(cleaned)
    except ValueError:
        raise CaseError(field, f"{shown} must be a number; got {cell!r}.", cell) from None


def stock_to_csv(pairs: Iterable[StockPair]) -> str:
    """The stock as CSV text (comma separated), readable again by ``parse_stock_csv``;
    labels a spreadsheet would take for formulas get a leading apostrophe."""
    out = io.StringIO()
    writer = SafeWriter(out)
    writer.writerow(COLUMNS)
    for pair in pairs:
        writer.writerow([pair.id, NumberText(_power_text(pair.power)),
                         NumberText(f"{pair.oc_distance_mm:g}"), pair.frame_size, pair.count])
    return out.getvalue()


def _power_text(power: float) -> str:
    two = f"{power:+.2f}"
    return two if float(two) == power else f"{power:+}"


# --------------------------------------------------------------------------- hand-out


def hand_out(pairs: Sequence[StockPair], pair_id: Any,
             field: str = "id") -> tuple[tuple[StockPair, ...], dict[str, Any]]:
    """The stock with one pair of ``pair_id`` handed out, and the record that undoes it."""
    index = _find(pairs, pair_id, field)
    pair = pairs[index]
    if pair.count < 1:
        raise CaseError(field, f"{field}: no pairs of {pair.id!r} are left on hand.", pair_id)
    updated = replace(pair, count=pair.count - 1)
    new = (*pairs[:index], updated, *pairs[index + 1:])
    return new, {"id": pair.id, "count_after": updated.count}


def undo_hand_out(pairs: Sequence[StockPair], record: Any,
                  field: str = "undo") -> tuple[StockPair, ...]:
    """The stock with a handed-out pair put back (the record ``hand_out`` returned)."""
    obj = as_object(record, field, "a hand-out record")
    only_keys(obj, field, ("id", "count_after"))
    index = _find(pairs, require(obj, field, "id", "give the id of the pair handed out."),
                  path_of(field, "id"))
    pair = pairs[index]
    if pair.count >= MAX_COUNT:
        raise CaseError(field, f"{field}: {pair.id!r} already holds the most pairs allowed.")
    return (*pairs[:index], replace(pair, count=pair.count + 1), *pairs[index + 1:])


def _find(pairs: Sequence[StockPair], pair_id: Any, field: str) -> int:
    for index, pair in enumerate(pairs):
        if pair.id == pair_id:
            return index
    raise CaseError(field, f"{field} {pair_id!r} is not in the stock list.", pair_id)
