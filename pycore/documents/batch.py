"""Batch runs for laboratories: many cases in, one report out, bad rows reported.

Input: a folder of case files (``*.json``), or a CSV file with one case per
row (columns are dotted field paths, see pycore.documents.csv_cases; a lensmeter reading
is ``verification.measured.right.rx``, ``...add``, ``...segment.height_mm`` and
so on, the case format's own keys). Each case gives the
net prism at each of its points of gaze and, where it has a ``verification``
section, the verdicts. A refused case becomes a report line with its source,
line and field; the others go on. Reports: CSV (one row per case and point),
JSON lines (one object per case) or readable text.
"""

from __future__ import annotations

import csv
import io
import json
import os
from collections.abc import Callable, Iterable, Iterator
from dataclasses import dataclass
from typing import Any, TextIO

from pycore.checks.verification_section import evaluate_section
from pycore.documents.cases import load_json, read_case
from pycore.documents.csv_cases import check_header, row_document
from pycore.documents.input_files import read_input
from pycore.documents.spreadsheet import SafeWriter
from pycore.errors import CaseError
from pycore.evaluate import evaluate_point, resolve_points

FORMATS = ("csv", "jsonl", "text")
CSV_COLUMNS = (
    "source", "line", "name", "status", "field", "message", "point",
    "right_base_in", "right_base_up", "left_base_in", "left_base_up",
    "net_horizontal_base_in", "net_vertical_base_up_right",
    "verification_standard", "verification_result", "verification_unverified",
    "verification_detail",
)


@dataclass(frozen=True)
class Item:
    """One case to run: where it came from, and its document or why it was refused."""

    source: str
    line: int | None
    document: Any = None
    error: CaseError | None = None


# --------------------------------------------------------------------------- inputs


def folder_items(folder: str) -> tuple[int, Iterator[Item]]:
    """The ``*.json`` files of ``folder`` (sorted), as items; and how many there are."""
    try:
        names = sorted(name for name in os.listdir(folder) if name.lower().endswith(".json"))
    except OSError as exc:
        raise CaseError("", f"The folder {folder!r} cannot be read ({exc.strerror}).") from None
    if not names:
        raise CaseError("", f"The folder {folder!r} holds no case files (*.json).")

    def items() -> Iterator[Item]:
        for name in names:
            try:   # a regular file, its size checked before it is read
                data = read_input(os.path.join(folder, name), "the case")
                yield Item(name, None, load_json(data))
            except CaseError as exc:
                yield Item(name, None, error=exc)

    return len(names), items()


def csv_items(stream: TextIO, source: str) -> Iterator[Item]:
    """One item per data row of a CSV stream; the header is checked before any row.

    Raises CaseError (the whole file refused) for an empty file or a bad header.
    """
    reader = csv.reader(stream)
    header: list[str] | None = None
    for row in reader:
        if any(cell.strip() for cell in row):
            header = row
            break
    if header is None:
        raise CaseError("", f"{source} is empty; expected a header row of field paths.")
    if header and header[0].startswith("\ufeff"):
        header[0] = header[0][1:]
    paths = check_header(header)
    return _csv_rows(reader, paths, source)


def _csv_rows(reader: Any, paths: tuple[tuple[str, ...], ...], source: str) -> Iterator[Item]:
    for row in reader:
        line = reader.line_num
        if not any(cell.strip() for cell in row):
            continue
        try:
            yield Item(source, line, row_document(paths, row))
        except CaseError as exc:
            yield Item(source, line, error=exc)


# --------------------------------------------------------------------------- running


def run_item(item: Item) -> dict[str, Any]:
    """The report entry for one case: nets at its points and its verdicts, or the refusal."""
    entry: dict[str, Any] = {"source": item.source, "line": item.line, "name": "",
                             "status": "ok", "error": None, "points": [],
                             "verification": None}
    if isinstance(item.document, dict) and isinstance(item.document.get("name"), str):
        entry["name"] = item.document["name"][:80]
    try:
        if item.error is not None:
            raise item.error
        case = read_case(item.document)
        for point in resolve_points(case):
            result = evaluate_point(case, point)
            entry["points"].append({
                "name": result["name"],
                "right_base_in": result["right"]["base_in"],
                "right_base_up": result["right"]["base_up"],
                "left_base_in": result["left"]["base_in"],
                "left_base_up": result["left"]["base_up"],
                "net_horizontal_base_in": result["net"]["horizontal_base_in"],
                "net_vertical_base_up_right": result["net"]["vertical_base_up_right"],
            })
        verification = evaluate_section(case, {})
        if verification is not None:
            entry["verification"] = _verdict_summary(verification)
    except CaseError as exc:
        entry.update(status="refused", points=[], verification=None,
                     error={"field": exc.field, "message": exc.message})
    return entry


def _verdict_summary(result: dict[str, Any]) -> dict[str, Any]:
    verdicts = [{key: verdict.get(key) for key in
                 ("criterion", "label", "eye", "status", "quantity", "value", "limit", "margin",
                  "unit", "reading", "certainty", "unverified")}
                for verdict in result["verdicts"]]
    return {"standard": result["standard"]["id"], "result": result["result"],
            "unverified": result["unverified"], "verdicts": verdicts}


Progress = Callable[[int, int | None, int], None]


def run_batch(items: Iterable[Item], write: Callable[[dict[str, Any]], None],
              total: int | None = None, progress: Progress | None = None) -> tuple[int, int]:
    """Run every item, handing each entry to ``write``; returns (cases, refused)."""

    done = refused = 0
    for item in items:
        entry = run_item(item)
        write(entry)
        done += 1
        refused += entry["status"] == "refused"
        if progress is not None:
            progress(done, total, refused)
    return done, refused


# --------------------------------------------------------------------------- reports


class ReportWriter:
    """Writes entries as CSV rows, JSON lines or readable text to a stream (CSV text cells
    are made spreadsheet-safe, see pycore.documents.spreadsheet)."""

    def __init__(self, stream: TextIO, form: str) -> None:
        if form not in FORMATS:
            raise CaseError("format", f"format must be one of {', '.join(FORMATS)}.", form)
        self.stream = stream
        self.form = form
        self._csv = SafeWriter(stream) if form == "csv" else None
        if self._csv is not None:
            self._csv.writerow(CSV_COLUMNS)

    def __call__(self, entry: dict[str, Any]) -> None:
        if self.form == "jsonl":
            self.stream.write(json.dumps(entry, allow_nan=False) + "\n")
        elif self._csv is not None:
            self._csv.writerows(csv_rows(entry))
        else:
            self.stream.write(text_block(entry))


def csv_rows(entry: dict[str, Any]) -> list[list[Any]]:
    """The CSV report rows of one entry: one per point (one row for a refusal)."""
    error = entry["error"] or {}
    verification = entry["verification"] or {}
    head = [entry["source"], "" if entry["line"] is None else entry["line"], entry["name"],
            entry["status"], error.get("field", ""), error.get("message", "")]
    tail = [verification.get("standard", ""), verification.get("result", ""),
            "" if not verification else str(verification["unverified"]).lower(),
            verdict_detail(verification)]
    if not entry["points"]:
        return [[*head, "", "", "", "", "", "", "", *tail]]
    return [[*head, point["name"], *(point[key] for key in CSV_COLUMNS[7:13]), *tail]
            for point in entry["points"]]


def verdict_detail(verification: dict[str, Any]) -> str:
    """``vertical pass 0.25/0.33 prism dioptres; ...`` for one case's verdicts."""
    parts = []
    for verdict in verification.get("verdicts", []):
        label = verdict["criterion"] + (f" {verdict['eye']}" if verdict.get("eye") else "")
        if verdict["value"] is None:
            parts.append(f"{label} {verdict['status']}")
            continue
        reading = f" ({verdict['reading']} reading)" if verdict.get("reading") else ""
        parts.append(f"{label} {verdict['status']} {verdict['value']:.2f}/"
                     f"{verdict['limit']:g} {verdict['unit']}{reading}")
    return "; ".join(parts)


def text_block(entry: dict[str, Any]) -> str:
    where = entry["source"] + (f" line {entry['line']}" if entry["line"] is not None else "")
    title = f"{where}: {entry['name']}" if entry["name"] else where
    if entry["status"] == "refused":
        return f"{title}\n  REFUSED {entry['error']['message']}\n"
    lines = [title]
    for point in entry["points"]:
        lines.append(f"  {point['name']}: net horizontal {point['net_horizontal_base_in']:+.2f} "
                     f"(base in +), vertical {point['net_vertical_base_up_right']:+.2f} "
                     "(base up right +)")
    if entry["verification"]:
        ver = entry["verification"]
        flag = " UNVERIFIED (values from memory)" if ver["unverified"] else ""
        lines.append(f"  verification {ver['standard']}: {ver['result'].upper()}{flag}")
        lines.append(f"    {verdict_detail(ver)}")
    return "\n".join(lines) + "\n"


def run_csv_text(text: str, form: str = "csv", source: str = "cases.csv") -> dict[str, Any]:
    """A whole batch in memory (for the app): CSV text in, the report text out."""
    out = io.StringIO()
    writer = ReportWriter(out, form)
    cases, refused = run_batch(csv_items(io.StringIO(text), source), writer)
    return {"report": out.getvalue(), "format": form, "cases": cases, "refused": refused}
