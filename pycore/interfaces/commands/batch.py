"""``python -m pycore batch INPUT``: many cases to one report, for laboratories."""

from __future__ import annotations

import argparse
import codecs
import contextlib
import csv
import io
import os
import sys
import tempfile
import time
from collections.abc import Iterator
from typing import BinaryIO, TextIO

from pycore.documents.batch import FORMATS, ReportWriter, csv_items, folder_items, run_batch
from pycore.documents.input_files import open_regular
from pycore.errors import CaseError, shown
from pycore.interfaces.commands.common import silence_stdout

HELP = "run many cases (a folder of case files, or a CSV) into one report"

DESCRIPTION = """\
Batch run for laboratories. INPUT is a folder of case files (*.json), or a CSV
file with one case per row whose columns are field paths of the case format
(right.rx, left.sphere, fitting.right.mono_pd_mm, verification.measured.
right.prism, ...; see docs/case-format.md, "Batch files"). Each case gives the
net prism at each of its points of gaze and, where it has a verification
section, the verdicts against the chosen standard.

The report goes to --output (or standard output): CSV (one row per case and
point), JSON lines (one object per case) or readable text. --output is
written whole or not at all (a temporary file renamed at the end); an
existing file is replaced only with --replace. Text cells of a CSV report
that a spreadsheet would take for a formula start with an apostrophe. Bad rows are
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
    parser.add_argument("--replace", action="store_true",
                        help="replace an existing --output file (refused otherwise)")
    parser.add_argument("--quiet", action="store_true", help="no progress on standard error")


def run(args: argparse.Namespace) -> int:
    form = "text" if args.text else args.format or _format_from_name(args.output)
    if args.output is not None:
        _check_output(args.output, args.input, args.replace)
    total: int | None
    stream: TextIO | None = None
    if os.path.isdir(args.input):
        total, items = folder_items(args.input)
    else:
        handle = open_regular(args.input, "a CSV file of cases")
        try:
            total = _check_csv(handle, args.input)
            stream = io.TextIOWrapper(handle, encoding="utf-8-sig", newline="")
            items = csv_items(stream, os.path.basename(args.input))
        except BaseException:
            handle.close()
            raise
    progress = None if args.quiet else _Progress(sys.stderr)
    try:
        with _report(args.output, args.replace) as out:
            cases, refused = run_batch(items, ReportWriter(out, form), total, progress)
    finally:
        if stream is not None:
            stream.close()
    if progress is not None:
        progress.finish(cases, refused, args.output)
    return 1 if refused else 0


def _check_output(output: str, source: str, replace: bool) -> None:
    """Refuse an --output that is the input, one of its cases, not a file, or (without
    --replace) an existing report."""
    name = shown(output)
    if not os.path.lexists(output):
        return
    if os.path.isdir(output):
        raise CaseError("output", f"--output {name} is a folder; give a file name for the "
                                  "report.")
    if not os.path.isfile(output):
        raise CaseError("output", f"--output {name} is not a regular file; leave out "
                                  "--output to write the report to standard output.")
    inside = os.path.isdir(source) and os.path.samefile(os.path.dirname(os.path.abspath(
        output)), source) and output.lower().endswith(".json")
    if inside or (os.path.exists(source) and os.path.samefile(output, source)):
        raise CaseError("output", f"--output {name} names the batch's own input; write the "
                                  "report to another file.")
    if not replace:
        raise CaseError("output", f"--output {name} already exists; give --replace to "
                                  "replace it, or another file name.")


def _check_csv(handle: BinaryIO, source: str) -> int:
    """Read the whole CSV once before any report line is written: it must be UTF-8 and
    parse as CSV. Returns the number of data rows (for progress)."""
    decoder = codecs.getincrementaldecoder("utf-8-sig")()
    line = 0

    def decoded() -> Iterator[str]:
        nonlocal line
        for raw in handle:
            line += 1
            yield decoder.decode(raw)
        decoder.decode(b"", final=True)

    rows = 0
    try:
        for row in csv.reader(decoded()):
            rows += any(cell.strip() for cell in row)
    except UnicodeDecodeError:
        raise CaseError("", f"{shown(source)} is not UTF-8 text (a bad byte on line {line}); "
                            "save it as UTF-8 CSV. Nothing was run.") from None
    except csv.Error as exc:
        raise CaseError("", f"{shown(source)} line {line}: {str(exc).rstrip('.')}. Nothing "
                            "was run.") from None
    handle.seek(0)
    return max(rows - 1, 0)


@contextlib.contextmanager
def _report(output: str | None, replace: bool) -> Iterator[TextIO]:
    """Where the report goes: standard output, or a temporary file beside --output that
    takes its name only when the whole report is written."""
    if output is None:
        try:
            yield sys.stdout
            sys.stdout.flush()
        except (OSError, UnicodeEncodeError) as exc:
            if isinstance(exc, BrokenPipeError):
                raise
            silence_stdout()
            raise CaseError("output", f"Standard output cannot be written ({_why(exc)}); the "
                                      "report is incomplete.") from None
        return
    folder = os.path.dirname(os.path.abspath(output))
    try:
        fd, temporary = tempfile.mkstemp(prefix=f".{os.path.basename(output)}.", suffix=".part",
                                         dir=folder)
    except OSError as exc:
        raise CaseError("output", f"--output {shown(output)} cannot be written "
                                  f"({_why(exc)}).") from None
    try:
        with open(fd, "w", encoding="utf-8", newline="") as out:
            yield out
        os.chmod(temporary, _mode(output))
        _move(temporary, output, replace)
    except (OSError, UnicodeEncodeError) as exc:
        raise CaseError("output", f"--output {shown(output)} cannot be written ({_why(exc)}); "
                                  "nothing was changed.") from None
    finally:
        with contextlib.suppress(OSError):
            os.unlink(temporary)


def _move(temporary: str, output: str, replace: bool) -> None:
    if replace:
        os.replace(temporary, output)
        return
    try:
        os.link(temporary, output)   # fails, rather than replaces, if the name was taken
    except FileExistsError:
        raise CaseError("output", f"--output {shown(output)} appeared while the batch ran; "
                                  "give --replace to replace it.") from None
    except OSError:   # a file system without hard links
        os.replace(temporary, output)


def _mode(output: str) -> int:
    try:
        return os.stat(output).st_mode & 0o777
    except OSError:
        umask = os.umask(0)
        os.umask(umask)
        return 0o666 & ~umask


def _why(exc: BaseException) -> str:
    if isinstance(exc, UnicodeEncodeError):
        return f"the character {exc.object[exc.start:exc.start + 1]!r} cannot be encoded"
    return getattr(exc, "strerror", None) or str(exc)


def _format_from_name(name: str | None) -> str:
    if name and name.lower().endswith((".jsonl", ".json", ".ndjson")):
        return "jsonl"
    if name and name.lower().endswith(".txt"):
        return "text"
    return "csv"


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

