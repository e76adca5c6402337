"""Every figure on screen is the core's: the page agrees with `python -m pycore evaluate`."""

from __future__ import annotations

import pytest
from e2e_support import (
    CASES,
    address_case,
    assert_figures_match,
    case_fragment,
    cli_evaluate,
    result_seq,
    wait_result,
)


def test_typed_case_matches_cli(site, page):
    page.goto(site.url)
    wait_result(page, status="error")          # an empty form: nothing to show yet
    typed = {
        "#right-sphere": "+1.75", "#right-cylinder": "-1.25", "#right-axis": "35",
        "#right-add": "2.25", "#right-prism": "1 BU",
        "#left-sphere": "\u22120.50",                    # a typographic minus sign
        "#left-cylinder": "-0.75", "#left-axis": "150",
        "#left-add": "2.25",
        "#right-pd": "31,5", "#left-pd": "32", "#right-height": "19", "#left-height": "19",
        "#reading-depth": "12", "#frame-a": "51", "#frame-dbl": "19", "#frame-ed": "54",
    }
    for selector, text in typed.items():
        page.fill(selector, text)
    page.click("#add-point")
    row = page.locator("#custom-points li").last
    row.locator("[data-field=name]").fill("right gaze")
    row.locator("[data-field='right.in_mm']").fill("7")
    row.locator("[data-field='left.in_mm']").fill("-7")
    row.locator("[data-field='left.up_mm']").fill("-2.5")
    wait_result(page)
    doc = address_case(page)
    assert doc["right"] == {"sphere": 1.75, "cylinder": -1.25, "axis": 35, "add": 2.25,
                            "prism": "1 BU"}
    assert doc["left"] == {"sphere": -0.5, "cylinder": -0.75, "axis": 150, "add": 2.25}
    assert doc["fitting"] == {"right": {"mono_pd_mm": 31.5, "height_mm": 19},
                              "left": {"mono_pd_mm": 32, "height_mm": 19},
                              "working_distance_mm": 400, "centre_of_rotation_mm": 27,
                              "reading_depth_mm": 12}
    assert doc["frame"] == {"a_mm": 51, "dbl_mm": 19, "ed_mm": 54}
    assert doc["points"] == ["distance", "near", {"name": "right gaze",
                                                  "right": {"in_mm": 7},
                                                  "left": {"in_mm": -7, "up_mm": -2.5}}]
    assert_figures_match(page, cli_evaluate(doc))


@pytest.mark.parametrize("name", sorted(CASES))
def test_bookmarked_case_matches_cli(site, page, name):
    original = CASES[name]
    page.goto(site.url + case_fragment(original))
    wait_result(page)
    shown = address_case(page)                 # the case as the app now holds it
    expected = cli_evaluate(shown)
    count = assert_figures_match(page, expected)
    assert count > 40
    # The app kept the case's meaning: same answer, point for point, by name.
    by_name = {p["name"]: p for p in cli_evaluate(original)["points"]}
    for point in expected["points"]:
        assert point == by_name[point["name"]]
    # Transposed forms come from the core.
    for eye in ("right", "left"):
        text = page.text_content(f"#{eye}-transposed [data-key='eyes.{eye}.transposed_written']")
        assert text == expected["eyes"][eye]["transposed_written"]


def test_recompute_after_edit_renders_only_latest(site, page):
    page.goto(site.url + case_fragment(CASES["oblique-progressive"]))
    wait_result(page)
    seq = result_seq(page)
    for text in ["-3", "-3.5", "-4", "-4.25"]:          # faster than the debounce
        page.fill("#right-sphere", text)
    wait_result(page, after=seq)
    page.wait_for_timeout(400)                          # nothing older arrives afterwards
    doc = address_case(page)
    assert doc["right"]["sphere"] == -4.25
    assert_figures_match(page, cli_evaluate(doc))


def test_written_prescription_replaces_components(site, page):
    page.goto(site.url + case_fragment(CASES["oblique-progressive"]))
    wait_result(page)
    seq = result_seq(page)
    page.fill("#left-rx", "+0.50 / -1.00 x 30")
    wait_result(page, after=seq)
    assert page.is_disabled("#left-sphere")
    doc = address_case(page)
    assert doc["left"]["rx"] == "+0.50 / -1.00 x 30" and "sphere" not in doc["left"]
    expected = cli_evaluate(doc)
    assert expected["eyes"]["left"]["cylinder"] == -1.0
    assert_figures_match(page, expected)


def test_print_summary_figures_are_the_cores(site, page):
    page.goto(site.url + case_fragment(CASES["crossed-obliques"]))
    wait_result(page)
    page.evaluate("() => window.dispatchEvent(new Event('beforeprint'))")
    summary = page.locator("#print-summary [data-key]")
    assert summary.count() > 20
    assert_figures_match(page, cli_evaluate(address_case(page)))
    assert "Order note" in page.text_content("#print-summary")
