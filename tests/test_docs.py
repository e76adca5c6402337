"""The project's case-format page keeps the fixed core of the shared specification."""

from __future__ import annotations

from cli_runner import ROOT

FIXED_CORE_KEYS = (
    # The fixed core keys of the case format (the project's brief): each keeps its meaning
    # and is documented in docs/case-format.md.
    "sphere", "cylinder", "axis", "base_in", "base_up", "points", "add", "top_mm",
    "optical_centre_below_top_mm", "optical_centre_in_mm", "slab_off", "line_mm",
    "vertical_base_up_right", "horizontal_base_in",
)
INDUCED_KEYS = ("induced_vertical_base_up_right", "induced_horizontal_base_in",
                "prescribed_net", "induced_distance", "induced_near", "order_lines", "in_words")


def test_fixed_core_and_induced_keys_are_documented() -> None:
    ours = (ROOT / "docs" / "case-format.md").read_text(encoding="utf-8")
    conventions = ours[ours.index("## Conventions"):]
    for key in FIXED_CORE_KEYS:
        assert f"`{key}`" in conventions or f'"{key}"' in conventions, key
    for key in INDUCED_KEYS:
        assert f"`{key}`" in ours, key


def test_nothing_reads_or_cites_a_file_outside_the_repository() -> None:
    """The tests pass from a clone with nothing beside it: no test, module or doc names a
    path outside the repository."""
    outside = ("../" + "shared", "shared" + "/domain-sources", "shared" + "/case-format")
    for folder in ("pycore", "tests", "docs", "web"):
        for path in (ROOT / folder).rglob("*"):
            if path.is_file() and path.suffix in {".py", ".md", ".js", ".json", ".html"}:
                text = path.read_text(encoding="utf-8")
                assert not any(name in text for name in outside), path


def test_sources_page_lists_the_remedy_constants_and_leaves_room_for_tolerances() -> None:
    text = (ROOT / "docs" / "sources.md").read_text(encoding="utf-8")
    for constant in ("SLAB_OFF_USUAL", "MADE_SEGMENTS", "DEFAULT_LAB_STEP", "DEFAULT_THRESHOLD",
                     "VERTICAL_BAND_D", "HEIGHT_LIMIT_MM", "THINNING_PRISM_PER_ADD"):
        assert constant in text, constant
    assert "## Verification tolerances" in text


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
