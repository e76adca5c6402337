"""``python -m pycore verify FILE``: judge a finished pair against a standard's tolerances."""

from __future__ import annotations

import argparse
import json

from pycore.checks.tolerances import tolerance_tables
from pycore.checks.verification import verify
from pycore.checks.verification_input import read_verification
from pycore.checks.verification_section import evaluate_section
from pycore.checks.verification_text import verification_text
from pycore.documents.cases import load_json, read_case
from pycore.documents.kinds import refuse_other_kind
from pycore.errors import CaseError
from pycore.interfaces.commands.common import read_input, write_output

HELP = ("judge a finished pair (prism, powers, axis, add, segments) against a standard "
        "(ANSI Z80.1, ISO 21987, ...)")

DESCRIPTION = """\
Verify finished spectacles. Give what was ordered (powers, prescribed prism,
PD and heights) and what you measured on the finished pair: the prism found at
each lens's prism reference point (PRP) or marked centre, the distance between
the centres and their heights, and (optionally) the measured powers. The tool
works out the unwanted prism per lens and between the eyes, and judges it
against the chosen standard's prism tolerances: pass or fail per criterion,
with the margin and the rule that applied (above a power some rows switch
from a prism limit to a millimetre limit on the PRP positions).

With the lensmeter reading of each lens (rx or sphere/cylinder/axis, either
cylinder sign; add; segment heights, positions and tilt; fitting-cross
heights) it also judges the power in the principal meridians, the cylinder,
the axis (never where the cylinder is too weak for the standard to define
one), the add and the positions, each with value, limit, margin, rule and
source, and says what an axis error leaves the wearer (2F sin(alpha)).

Progressive lenses are judged at the PRP with the thinning prism taken out.
ANSI horizontal: the standard's test method moves each lens until 1/3 prism
dioptre is induced, so 0.33 per lens and 0.67 for the pair are both met in
practice; --reading chooses which the verdict uses (both are shown).

FILE is a verification document (JSON; '-' for standard input) with
"ordered" and "measured", or a case file with a "verification" section.
Signs: base_in + (base out -), base_up + (base down -); positions in mm.
ISO 21987 values are from memory and every verdict using them says so.
A check aid: local regulations and the laboratory's own standards prevail.
"""


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.formatter_class = argparse.RawDescriptionHelpFormatter
    parser.description = DESCRIPTION
    parser.add_argument("file", metavar="FILE", nargs="?",
                        help="verification document or case (JSON), or - for standard input")
    parser.add_argument("--standard", metavar="ID",
                        help="tolerance table to use (overrides the file's); see "
                             "--list-standards")
    parser.add_argument("--reading", choices=("total", "per_eye"),
                        help="horizontal prism reading for ANSI tables (overrides the file's)")
    parser.add_argument("--list-standards", action="store_true",
                        help="list the tolerance tables with their sources and exit")
    parser.add_argument("--text", action="store_true",
                        help="write a readable report instead of JSON")


def run(args: argparse.Namespace) -> int:
    if args.list_standards:
        write_output(_standards(args.text))
        return 0
    if args.file is None:
        raise CaseError("FILE", "FILE is missing: give a verification file, or - for standard "
                                "input.")
    document = load_json(read_input(args.file, "the verification file"),
                         "the verification file")
    refuse_other_kind(document, ("verification", "case"))
    if isinstance(document, dict) and "ordered" not in document and "right" in document:
        result = _from_case(document, args)
    else:
        if isinstance(document, dict):
            _override(document, args)
        result = verify(read_verification(document))
    write_output(verification_text(result) if args.text else json.dumps(result, indent=2) + "\n")
    return 0


def _from_case(document: dict[str, object], args: argparse.Namespace) -> dict[str, object]:
    section = document.get("verification")
    if not isinstance(section, dict):
        raise CaseError("verification", "verification is missing: a case given to verify "
                                        "needs a verification section with the measurements.")
    _override(section, args)
    case = read_case(document)
    result = evaluate_section(case, {})
    assert result is not None
    result.pop("summary_lines", None)
    return result


def _override(obj: dict[str, object], args: argparse.Namespace) -> None:
    if args.standard is not None:
        obj["standard"] = args.standard
    if args.reading is not None:
        obj["horizontal_reading"] = args.reading


def _standards(as_text: bool) -> str:
    tables = [table.as_dict() for table in tolerance_tables().values()]
    if not as_text:
        return json.dumps({"standards": tables}, indent=2) + "\n"
    lines = []
    for table in tables:
        flag = "  [FROM MEMORY - verify against the standard]" if table["unverified"] else ""
        lines.append(f"{table['id']}: {table['title']}{flag}")
        lines.append(f"    source ({table['certainty']}): {table['source']}")
    return "\n".join(lines) + "\n"

