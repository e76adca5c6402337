"""``python -m pycore batch INPUT``: many cases to one report, for laboratories."""

from __future__ import annotations

import argparse
import io
import os
import sys
import time
from typing import TextIO

from pycore.documents.batch import FORMATS, ReportWriter, csv_items, folder_items, run_batch
from pycore.errors import CaseError

HELP = "run many cases (a folder of case files, or a CSV) into one report"

DESCRIPTION = """\
Batch run for laboratories. INPUT is a folder of case files (*.json), or a CSV
file with one case per row whose columns are field paths of the case format
(right.rx, left.sphere, fitting.right.mono_pd_mm, verification.measured.
right.prism, ...; see docs/case-format.md, "Batch files"). Each case gives the
net prism at each of its points of gaze and, where it has a verification
section, the verdicts against the chosen standard.

The report goes to --output (or standard output): CSV (one row per case and
point), JSON lines (one object per case) or readable text. Bad rows are
reported by line and field and do not stop the others. Progress goes to
standard error on long runs. Exit status: 0 when every case ran, 1 when some
were refused (they are in the report), 2 when the input itself is refused.
A check aid: verify on the finished spectacles; local standards prevail.
"""

PROGRESS_EVERY_S = 1.0


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.formatter_class = argparse.RawDescriptionHelpFormatter
    parser.description = DESCRIPTION
    parser.add_argument("input", metavar="INPUT", help="a folder of case files, or a CSV file")
    parser.add_argument("--output", "-o", metavar="FILE",
                        help="write the report here (default: standard output)")
    parser.add_argument("--format", choices=FORMATS,
                        help="report format (default: from the --output name, else csv)")
    parser.add_argument("--text", action="store_true", help="same as --format text")
    parser.add_argument("--quiet", action="store_true", help="no progress on standard error")


def run(args: argparse.Namespace) -> int:
    form = "text" if args.text else args.format or _format_from_name(args.output)
    total: int | None
    if os.path.isdir(args.input):
        total, items = folder_items(args.input)
        stream: TextIO | None = None
    else:
        try:
            stream = open(args.input, encoding="utf-8-sig", newline="")  # noqa: SIM115
        except OSError as exc:
            raise CaseError("", f"{args.input!r} cannot be read ({exc.strerror}).") from None
        try:
            total = _count_rows(args.input)
            items = csv_items(stream, os.path.basename(args.input))
        except (CaseError, UnicodeDecodeError) as exc:
            stream.close()
            if isinstance(exc, CaseError):
                raise
            raise CaseError("", f"{args.input!r} is not UTF-8 text.") from None
    progress = None if args.quiet else _Progress(sys.stderr)
    try:
        out = sys.stdout if args.output is None else open(  # noqa: SIM115
            args.output, "w", encoding="utf-8", newline="")
    except OSError as exc:
        raise CaseError("output", f"output {args.output!r} cannot be written "
                                  f"({exc.strerror}).") from None
    try:
        cases, refused = run_batch(items, ReportWriter(out, form), total, progress)
    except UnicodeDecodeError:
        raise CaseError("", f"{args.input!r} is not UTF-8 text.") from None
    finally:
        if out is not sys.stdout:
            out.close()
        else:
            out.flush()
        if stream is not None:
            stream.close()
    if progress is not None:
        progress.finish(cases, refused, args.output)
    return 1 if refused else 0


def _format_from_name(name: str | None) -> str:
    if name and name.lower().endswith((".jsonl", ".json", ".ndjson")):
        return "jsonl"
    if name and name.lower().endswith(".txt"):
        return "text"
    return "csv"


def _count_rows(path: str) -> int | None:
    """Data lines in the file (a progress estimate; quoted line breaks make it approximate)."""
    try:
        with open(path, "rb") as handle:
            count = sum(1 for line in handle if line.strip())
    except OSError:
        return None
    return max(count - 1, 0)


class _Progress:
    """Progress lines on standard error, at most one a second."""

    def __init__(self, stream: TextIO | io.StringIO) -> None:
        self.stream = stream
        self.last = time.monotonic()

    def __call__(self, done: int, total: int | None, refused: int) -> None:
        now = time.monotonic()
        if now - self.last < PROGRESS_EVERY_S:
            return
        self.last = now
        of = f"/{total}" if total else ""
        self.stream.write(f"batch: {done}{of} cases, {refused} refused\n")
        self.stream.flush()

    def finish(self, cases: int, refused: int, output: str | None) -> None:
        where = f" to {output}" if output else ""
        self.stream.write(f"batch: done, {cases} cases, {refused} refused; report written"
                          f"{where}\n")
        self.stream.flush()

