"""The reading zone and its remedies from the command line and the browser worker.

- ``python -m pycore apply-remedy REMEDY FILE``: the finished case (JSON) with the
  remedy applied through the case keys; ``--evaluate`` its full evaluation instead,
  ``--text`` its readable summary.
- Worker actions ``reading_zone`` (a case -> its ``reading_zone`` and ``remedies``
  result sections) and ``apply_remedy`` (``{"case", "remedy"}`` -> the remedy, the
  finished case and its evaluation).
"""

from __future__ import annotations

import argparse
import json
from typing import Any

from .bridge import action
from .cases import read_case, read_case_text
from .cli import COMMANDS, read_input, write_output
from .errors import CaseError
from .evaluate import evaluate
from .reading_zone import reading_zone_section
from .remedies import ORDER, remedies_section
from .summary import text_summary

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


def finished_case(case_document: Any, remedy_id: Any) -> tuple[dict[str, Any], dict[str, Any]]:
    """(the remedy's entry, its finished case document); refusals as CaseError."""
    if remedy_id not in ORDER:
        raise CaseError("remedy", f"remedy must be one of {', '.join(ORDER)}.", remedy_id)
    case = read_case(case_document)
    section = remedies_section(case, {})
    assert section is not None
    entry = next(e for e in section["options"] if e["id"] == remedy_id)
    if not entry["available"] or entry["applied_case"] is None:
        raise CaseError("remedy", f"remedy {remedy_id} does not apply to this case: "
                                  f"{entry['why_not']}", remedy_id)
    document: dict[str, Any] = entry.pop("applied_case")
    return entry, document


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
    from .cases import load_json

    document = load_json(read_input(args.file))
    _entry, finished = finished_case(document, args.remedy)
    if args.evaluate or args.text:
        result = evaluate(read_case_text(json.dumps(finished)))
        text = text_summary(result) if args.text else json.dumps(result, indent=2) + "\n"
    else:
        text = json.dumps(finished, indent=2) + "\n"
    write_output(text)
    return 0


COMMANDS["apply-remedy"] = (HELP, run, add_arguments)


@action("reading_zone")
def _reading_zone(payload: Any) -> dict[str, Any]:
    case = read_case(payload)
    return {"reading_zone": reading_zone_section(case, {}),
            "remedies": remedies_section(case, {})}


@action("apply_remedy")
def _apply_remedy(payload: Any) -> dict[str, Any]:
    if not isinstance(payload, dict) or "case" not in payload:
        raise CaseError("case", "case is missing from the request.")
    entry, finished = finished_case(payload["case"], payload.get("remedy"))
    return {"remedy": entry, "case": finished, "result": evaluate(read_case(finished))}
