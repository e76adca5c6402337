"""``python -m pycore evaluate FILE``: the prism and imbalance for a case file."""

from __future__ import annotations

import argparse
import json

from pycore.documents.cases import read_case
from pycore.documents.json_input import load_json
from pycore.documents.kinds import refuse_other_kind
from pycore.documents.summary import text_summary
from pycore.evaluate import evaluate
from pycore.interfaces.commands.common import read_input, write_output

HELP = "prism and imbalance for a case file"

EVALUATE_HELP = """\
Read a case (JSON) from FILE, or from standard input with '-', and write the
prism before each eye and the net binocular prism at each point of gaze.
Signs: base_in positive = base in (negative = base out); base_up positive =
base up (negative = base down); net vertical_base_up_right positive = base up
before the right eye (= base down before the left). Positions are mm from each
eye's distance reference point, in_mm toward the nose, up_mm upward.
"""


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.formatter_class = argparse.RawDescriptionHelpFormatter
    parser.description = EVALUATE_HELP
    parser.add_argument("file", metavar="FILE", help="case file (JSON), or - for standard input")
    parser.add_argument("--text", action="store_true",
                        help="write a readable summary instead of JSON")


def run(args: argparse.Namespace) -> int:
    document = load_json(read_input(args.file))
    refuse_other_kind(document, ("case",))
    case = read_case(document)
    result = evaluate(case)
    write_output(text_summary(result) if args.text else json.dumps(result, indent=2) + "\n")
    return 0
