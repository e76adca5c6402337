"""The project's case-format page keeps the fixed core of the shared specification."""

from __future__ import annotations

import pytest
from cli_runner import ROOT

SHARED = ROOT.parent / "shared" / "case-format.md"


@pytest.mark.skipif(not SHARED.exists(), reason="shared specification not beside the checkout")
def test_fixed_core_reproduced_exactly() -> None:
    fixed = SHARED.read_text()
    fixed = fixed[fixed.index("## Conventions"):].rstrip()
    ours = (ROOT / "docs" / "case-format.md").read_text()
    assert fixed in ours


def test_readme_opens_with_the_job_and_the_two_commands() -> None:
    text = (ROOT / "README.md").read_text()
    first = next(p for p in text.split("\n\n") if p.strip() and not p.startswith("#"))
    assert len(first) > 200 and "Prentice" in first
    assert "python3 build.py serve" in text and "python3 build.py test" in text
    assert "python3 build.py test" in (ROOT / ".ci" / "run").read_text()


def test_no_network_addresses_in_the_web_app() -> None:
    import re

    for path in (ROOT / "web").rglob("*"):
        if path.is_file() and path.suffix in {".html", ".js", ".css", ".json", ".webmanifest"}:
            for url in re.findall(r"https?://[^\s\"')]+", path.read_text()):
                assert url.startswith(("http://127.0.0.1", "http://localhost",
                                       "http://www.w3.org")), (path, url)
