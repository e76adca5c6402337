"""``python -m pycore apply-remedy REMEDY FILE``: the finished case (JSON) with the remedy
applied through the case keys; ``--evaluate`` its full evaluation instead, ``--text`` its
readable summary."""

from __future__ import annotations

import argparse
import json

from pycore.documents.cases import read_case_text
from pycore.documents.kinds import refuse_other_kind
from pycore.documents.summary import text_summary
from pycore.evaluate import evaluate
from pycore.interfaces.commands.common import read_input, write_output
from pycore.reading.remedies.side_by_side import ORDER, finished_case

HELP = "the finished case with one reading-zone remedy applied (slab-off, ...)"

DESCRIPTION = f"""\
Apply one remedy for a vertical imbalance at the reading point to a case and
write the finished case (JSON), ready to evaluate or save: the remedy is
written through the case keys (slab_off on the chosen lens, segment sizes,
prism, lens powers). REMEDY is one of: {', '.join(ORDER)}. The remedies, with
what each leaves at distance and at the reading point, are listed under
"remedies" by 'python -m pycore evaluate FILE'. Whether to act, and how, is a
clinical decision; verify on the finished lenses.
"""


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.formatter_class = argparse.RawDescriptionHelpFormatter
    parser.description = DESCRIPTION
    parser.add_argument("remedy", metavar="REMEDY", help=f"one of {', '.join(ORDER)}")
    parser.add_argument("file", metavar="FILE", help="case file (JSON), or - for standard input")
    shown = parser.add_mutually_exclusive_group()
    shown.add_argument("--evaluate", action="store_true",
                       help="write the finished case's evaluation instead of the case")
    shown.add_argument("--text", action="store_true",
                       help="write the finished case's readable summary")


def run(args: argparse.Namespace) -> int:
    from pycore.documents.cases import load_json

    document = load_json(read_input(args.file))
    refuse_other_kind(document, ("case",))
    _entry, finished = finished_case(document, args.remedy)
    if args.evaluate or args.text:
        result = evaluate(read_case_text(json.dumps(finished)))
        text = text_summary(result) if args.text else json.dumps(result, indent=2) + "\n"
    else:
        text = json.dumps(finished, indent=2) + "\n"
    write_output(text)
    return 0



