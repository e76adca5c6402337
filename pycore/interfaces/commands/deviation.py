"""``python -m pycore deviation FILE``: a deviation measured through spectacles, at the eye."""

from __future__ import annotations

import argparse
import json

from pycore.checks.deviation import read_deviation, through_spectacles
from pycore.checks.readers_text import deviation_text
from pycore.documents.cases import load_json
from pycore.documents.kinds import refuse_other_kind
from pycore.interfaces.commands.common import read_input, write_output

HELP = "a deviation measured with prisms through spectacles, worked back to the eye"

DESCRIPTION = """\
A deviation measured with prisms through the patient's spectacles. FILE (JSON,
or - for standard input) gives the prism that neutralised the deviation as
held before the non-fixating eye ("measured": "45 BO", or
{"base_in": -45, "base_up": 0}), which eye fixated ("fixating": right or
left), both spectacle lenses (rx, or horizontal_power and vertical_power in
dioptres, and any prescribed prism), and optionally the lens to centre-of-
rotation distance (centre_of_rotation_mm, default 27) and the points of the
lenses the eyes used ("points", mm from each reference point).

The tool gives the eye's rotation behind the lens, u = (measured + P) /
(1 - d F) with P the prism prescribed before that eye (measured =
u(1 - d F) - P, derived with Prentice's rule), and, labelled separately,
the deviation the spectacles leave uncorrected, measured / (1 - d F). It
says why they differ: plus lenses make the measurement smaller, minus
lenses larger, and only the lens before the non-fixating eye counts; the
line of sight crosses the lens d u from the straight-ahead point. It also
gives the prism the spectacles themselves put before the eyes at the points
used, and cautions about stacking loose prisms (sources: docs/sources.md).
An aid to clinical judgement, which belongs to licensed
practitioners.
"""


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.formatter_class = argparse.RawDescriptionHelpFormatter
    parser.description = DESCRIPTION
    parser.add_argument("file", metavar="FILE",
                        help="the measurement (JSON), or - for standard input")
    parser.add_argument("--text", action="store_true",
                        help="write a readable account instead of JSON")


def run(args: argparse.Namespace) -> int:
    what = "the deviation file"
    document = load_json(read_input(args.file, what), what)
    refuse_other_kind(document, ("deviation",))
    result = through_spectacles(read_deviation(document))
    write_output(deviation_text(result) if args.text else json.dumps(result, indent=2) + "\n")
    return 0

