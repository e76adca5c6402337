"""Command line: ``python -m pycore evaluate FILE`` and friends.

Exit status 0 on success, 2 on refused input (one sentence on standard
error, nothing on standard output).
"""

from __future__ import annotations

import argparse
import sys
from collections.abc import Sequence
from typing import Any, NoReturn

from pycore.errors import CaseError
from pycore.interfaces.commands import (
    apply_remedy,
    batch,
    deviation,
    evaluate,
    readers,
    verify,
)
from pycore.interfaces.commands.common import silence_stdout

DESCRIPTION = """\
Prism Desk: the prism each spectacle lens puts before each eye (Prentice's rule)
and the imbalance between the eyes, for a case file (JSON) describing both
lenses and the points of gaze to check. A check aid: verify on the finished
spectacles; clinical decisions belong to licensed practitioners.
"""

COMMANDS = {
    "evaluate": evaluate,
    "apply-remedy": apply_remedy,
    "verify": verify,
    "readers": readers,
    "deviation": deviation,
    "batch": batch,
}
"""Every command, by name: each module has HELP, add_arguments(parser) and run(args)."""


class _Parser(argparse.ArgumentParser):
    def error(self, message: str) -> NoReturn:
        sys.stderr.write(f"{self.prog}: {message} (see --help)\n")
        raise SystemExit(2)


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(prog="python -m pycore", description=DESCRIPTION,
                     formatter_class=argparse.RawDescriptionHelpFormatter)
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    for name, command in COMMANDS.items():
        extra = sub.add_parser(name, help=command.HELP, description=command.HELP)
        command.add_arguments(extra)
        extra.set_defaults(run=command.run)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
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
