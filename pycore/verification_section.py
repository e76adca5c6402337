"""A case's ``verification`` section: ``evaluate`` then reports the verdicts too.

The order is the case itself (lenses and fitting); the section carries the
settings and the measurements (see docs/case-format.md, "## Verification").
"""

from __future__ import annotations

from typing import Any

from .cases import EXTRA_SECTIONS, Case
from .evaluate import CAUTIONS, EXTRA_RESULTS
from .verification import verify
from .verify_input import Section, from_case, read_section
from .verify_text import verification_lines


def evaluate_section(case: Case, _result: dict[str, Any]) -> dict[str, Any] | None:
    """The verdicts for a case with a verification section (None without one)."""
    section = case.extras.get("verification")
    if not isinstance(section, Section):
        return None
    result = verify(from_case(case, section))
    extra = [f"! {note}" for note in result["cautions"] if note not in CAUTIONS]
    result["summary_lines"] = [*verification_lines(result), *extra]
    return result


EXTRA_SECTIONS["verification"] = read_section
EXTRA_RESULTS["verification"] = evaluate_section
