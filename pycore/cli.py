"""Command line: ``python -m pycore evaluate FILE`` and friends.

Exit status 0 on success, 2 on refused input (one sentence on standard
error, nothing on standard output).
"""

from __future__ import annotations

import argparse
import json
import os
import sys
from collections.abc import Callable, Sequence
from typing import Any, NoReturn

from .cases import read_case_text
from .errors import CaseError
from .evaluate import evaluate
from .input_files import read_input
from .summary import text_summary

DESCRIPTION = """\
Prism Desk: the prism each spectacle lens puts before each eye (Prentice's rule)
and the imbalance between the eyes, for a case file (JSON) describing both
lenses and the points of gaze to check. A check aid: verify on the finished
spectacles; clinical decisions belong to licensed practitioners.
"""

EVALUATE_HELP = """\
Read a case (JSON) from FILE, or from standard input with '-', and write the
prism before each eye and the net binocular prism at each point of gaze.
Signs: base_in positive = base in (negative = base out); base_up positive =
base up (negative = base down); net vertical_base_up_right positive = base up
before the right eye (= base down before the left). Positions are mm from each
eye's distance reference point, in_mm toward the nose, up_mm upward.
"""

__all__ = ["COMMANDS", "main", "read_input", "silence_stdout", "write_output"]

Command = Callable[[argparse.Namespace], int]
COMMANDS: dict[str, tuple[str, Command, Callable[[argparse.ArgumentParser], None]]] = {}
"""Further subcommands register here: name -> (help, run, add_arguments)."""


class _Parser(argparse.ArgumentParser):
    def error(self, message: str) -> NoReturn:
        sys.stderr.write(f"{self.prog}: {message} (see --help)\n")
        raise SystemExit(2)


def write_output(text: str) -> None:
    """Write a command's whole answer to standard output; a failure is a CaseError."""
    try:
        sys.stdout.write(text)
        sys.stdout.flush()
    except BrokenPipeError:
        raise
    except UnicodeEncodeError as exc:
        silence_stdout()
        raise CaseError("output", f"Standard output cannot take the character "
                                  f"{exc.object[exc.start:exc.start + 1]!r} (its encoding is "
                                  f"{exc.encoding}); set PYTHONIOENCODING=utf-8.") from None
    except OSError as exc:
        silence_stdout()
        raise CaseError("output", f"Standard output cannot be written "
                                  f"({exc.strerror or exc}).") from None


def silence_stdout() -> None:
    """Point standard output at the null device, so nothing fails again at exit."""
    try:
        fd = sys.stdout.fileno()
    except (OSError, ValueError, AttributeError):
        return
    null = os.open(os.devnull, os.O_WRONLY)
    os.dup2(null, fd)
    os.close(null)


def _evaluate(args: argparse.Namespace) -> int:
    case = read_case_text(read_input(args.file))
    result = evaluate(case)
    write_output(text_summary(result) if args.text else json.dumps(result, indent=2) + "\n")
    return 0


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(prog="python -m pycore", description=DESCRIPTION,
                     formatter_class=argparse.RawDescriptionHelpFormatter)
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    ev = sub.add_parser("evaluate", help="prism and imbalance for a case file",
                        description=EVALUATE_HELP,
                        formatter_class=argparse.RawDescriptionHelpFormatter)
    ev.add_argument("file", metavar="FILE", help="case file (JSON), or - for standard input")
    ev.add_argument("--text", action="store_true",
                    help="write a readable summary instead of JSON")
    ev.set_defaults(run=_evaluate)
    for name, (help_text, run, add_arguments) in COMMANDS.items():
        extra = sub.add_parser(name, help=help_text, description=help_text)
        add_arguments(extra)
        extra.set_defaults(run=run)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    from . import command_extensions  # noqa: F401  (registers further sections and commands)

    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "run", None):
        parser.print_help(sys.stderr)
        return 2
    try:
        code: Any = args.run(args)
        return int(code)
    except CaseError as exc:
        sys.stderr.write(exc.message.rstrip() + "\n")
        return 2
    except KeyboardInterrupt:
        sys.stderr.write("Stopped.\n")
        return 130
    except BrokenPipeError:
        silence_stdout()
        return 0
