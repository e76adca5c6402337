"""A case's ``verification`` section: ``evaluate`` then reports the verdicts too.

The order is the case itself (lenses and fitting); the section carries the
settings and the measurements (see docs/case-format.md, "## Verification").
"""

from __future__ import annotations

from typing import Any

from pycore.cautions import CAUTIONS
from pycore.checks.verification import verify
from pycore.checks.verification_input import Section, from_case
from pycore.checks.verification_text import verification_lines
from pycore.documents.cases import Case


def evaluate_section(case: Case, _result: dict[str, Any]) -> dict[str, Any] | None:
    """The verdicts for a case with a verification section (None without one)."""
    section = case.extras.get("verification")
    if not isinstance(section, Section):
        return None
    result = verify(from_case(case, section))
    extra = [f"! {note}" for note in result["cautions"] if note not in CAUTIONS]
    result["summary_lines"] = [*verification_lines(result), *extra]
    return result

