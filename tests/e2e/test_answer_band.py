"""The answer band: a case typed by hand on a phone and two tablets.

The case (an invented scenario): R +4.50 / -0.50 x 90, L +1.00, add +2.50 both,
monocular PDs 32 / 31, flat-top 28 segments with their tops 4 mm below the
distance reference points. Typed into the fields key by key, as a person does;
then the band's reading-level figure and its suggested remedy must be inside the
viewport without scrolling and equal `python -m pycore evaluate` run on the same
case written as JSON here. Also: nothing wider than the viewport, axe-core clean,
the print view an order note of at most two A4 pages. Screenshots of each size
go to test-results/screens/.
"""

from __future__ import annotations

import json
import math
import re
from collections.abc import Iterator
from typing import Any

import pytest
from conftest import Watch
from e2e_support import ROOT, case_fragment, cli_evaluate, lookup, serious_violations, wait_result

SHOTS = ROOT / "test-results" / "screens"
SIZES = [(360, 740), (768, 1024), (1024, 768)]

# The same case written as a case file (docs/case-format.md).
CASE = {
    "right": {"sphere": 4.5, "cylinder": -0.5, "axis": 90, "add": 2.5,
              "segment": {"shape": "flat_top", "width_mm": 28, "top_mm": -4}},
    "left": {"sphere": 1.0, "add": 2.5,
             "segment": {"shape": "flat_top", "width_mm": 28, "top_mm": -4}},
    "fitting": {"right": {"mono_pd_mm": 32}, "left": {"mono_pd_mm": 31}},
}


def overlapping_labels(page: Any) -> list[list[str]]:
    """Pairs of labels in one lens drawing whose boxes overlap (none may)."""
    return page.evaluate("""() => {
        const out = [];
        for (const drawing of document.querySelectorAll('svg.lens-svg')) {
            if (!drawing.getBoundingClientRect().width) continue;
            const labels = [...drawing.querySelectorAll('text.lens-label')]
                .map((t) => [t.textContent, t.getBBox()]);
            labels.forEach(([a, p], i) => labels.slice(i + 1).forEach(([b, q]) => {
                if (p.x < q.x + q.width && q.x < p.x + p.width
                    && p.y < q.y + q.height && q.y < p.y + p.height) out.push([a, b]);
            }));
        }
        return out;
    }""")


def type_into(page: Any, selector: str, text: str) -> None:
    """A person's typing: tap the field, type key by key."""
    page.click(selector)
    page.keyboard.type(text, delay=15)


def type_case(page: Any) -> None:
    # The lens design first, then the fitting, the prescription last: the last
    # keystrokes are in a prescription field.
    page.select_option("#right-design", "bifocal")
    page.select_option("#right-seg-shape", "flat_top")
    type_into(page, "#right-seg-size", "28")
    page.select_option("#seg-heights-from", "reference_point")
    type_into(page, "#right-seg-top", "-4")
    page.click("#zone-copy-design")
    type_into(page, "#right-pd", "32")
    type_into(page, "#left-pd", "31")
    type_into(page, "#right-cylinder", "-0.50")
    type_into(page, "#right-axis", "90")
    type_into(page, "#right-add", "+2.50")
    type_into(page, "#left-add", "+2.50")
    type_into(page, "#left-sphere", "+1.00")
    type_into(page, "#right-sphere", "+4.50")


def settled(page: Any) -> None:
    """The answer to the last keystroke is drawn (nothing is waiting)."""
    page.wait_for_function("""() =>
        document.querySelector('#answer-band').dataset.pending === 'false'
        && document.querySelector('#results').dataset.status !== 'pending'""")


def in_viewport(page: Any, selector: str) -> bool:
    return page.evaluate("""(s) => {
        const e = document.querySelector(s);
        if (!e) return false;
        const r = e.getBoundingClientRect();
        return r.width > 0 && r.top >= 0 && r.left >= 0
            && r.bottom <= innerHeight && r.right <= innerWidth;
    }""", selector)


def too_wide(page: Any) -> list[str]:
    """Elements reaching past the viewport's right edge, outside their own scroll boxes."""
    return page.evaluate("""() => {
        const scrolls = (e) => {
            for (let p = e.parentElement; p; p = p.parentElement) {
                const o = getComputedStyle(p).overflowX;
                if (o === 'auto' || o === 'scroll' || o === 'hidden') return true;
            }
            return false;
        };
        return [...document.querySelectorAll('body *')].filter((e) => {
            const r = e.getBoundingClientRect();
            return r.width > 0 && r.right > innerWidth + 0.5 && !scrolls(e);
        }).map((e) => e.tagName + '#' + e.id + '.' + e.className + ' '
                      + Math.round(e.getBoundingClientRect().right));
    }""")



@pytest.fixture(scope="module")
def expected() -> dict[str, Any]:
    return cli_evaluate(CASE)


@pytest.fixture
def sized(browser: Any, request: Any) -> Iterator[Any]:
    width, height = request.param
    watch = Watch()
    # axe is injected as an inline script, which the app's policy forbids: this
    # context bypasses the policy so the checker can run (the app is unchanged).
    ctx = browser.new_context(viewport={"width": width, "height": height}, bypass_csp=True,
                              has_touch=width < 900)
    ctx.set_default_timeout(60_000)
    watch.attach(ctx)
    yield ctx.new_page()
    ctx.close()
    assert not watch.unexpected(), watch.unexpected()


@pytest.mark.parametrize("sized", SIZES, indirect=True, ids=[f"{w}x{h}" for w, h in SIZES])
def test_typed_case_answers_in_view(sized, site, expected):
    page = sized
    width, height = page.viewport_size["width"], page.viewport_size["height"]
    SHOTS.mkdir(parents=True, exist_ok=True)
    page.goto(site.url)
    wait_result(page, status="error")                    # a new, empty case: a prompt
    assert page.get_attribute("#results", "data-empty") == "true"
    assert page.locator(".field-error").count() == 0
    assert "Type a prescription" in page.text_content("#answer-band")
    type_case(page)
    settled(page)
    assert page.get_attribute("#results", "data-status") == "current"
    page.evaluate("() => document.querySelectorAll('.notice').forEach(n => n.remove())")
    page.screenshot(path=str(SHOTS / f"band-{width}x{height}-typed.png"))

    zone, remedies = expected["reading_zone"], expected["remedies"]
    figure = "#answer-band [data-key^='reading_zone.at_reading_point']"
    key = page.get_attribute(figure, "data-key")
    assert key in ("reading_zone.at_reading_point.induced_vertical_base_up_right",
                   "reading_zone.at_reading_point.vertical_base_up_right")
    # Prentice's rule by hand for this case (common practice): no prescribed prism, so
    # the induced and the total imbalance are the same; at the reading point 10 mm down
    # the distance lenses give R 4.50 D x 1.0 cm = 4.50 base up (a plus lens below its
    # centre), L 1.00 base up; the identical segments add the same prism to both eyes.
    assert math.isclose(float(page.get_attribute(figure, "data-value")), lookup(expected, key),
                        rel_tol=1e-12, abs_tol=1e-12)
    assert math.isclose(lookup(expected, key), 4.5 - 1.0, abs_tol=1e-9)
    assert zone["over_threshold_at_reading_point"] is True
    suggested = "#answer-band [data-key='remedies.recommended']"
    assert page.get_attribute(suggested, "data-value") == remedies["recommended"]
    assert remedies["recommended"] != "none"
    assert in_viewport(page, figure), "the reading-level figure is not in view"
    assert in_viewport(page, suggested), "the suggested remedy is not in view"
    assert in_viewport(page, "#answer-band .band-apply")
    # The most important number is the largest text on the screen.
    sizes = page.evaluate("""() => {
        const big = parseFloat(getComputedStyle(document.querySelector('.band-figure')).fontSize);
        const others = [...document.querySelectorAll('body *')]
            .filter(e => !e.closest('.band-number') && e.offsetParent !== null
                    && [...e.childNodes].some(n => n.nodeType === 3 && n.textContent.trim()))
            .map(e => parseFloat(getComputedStyle(e).fontSize));
        return [big, Math.max(...others)];
    }""")
    assert sizes[0] > sizes[1], sizes

    # While a prescription field has focus (phone): the band stays in view.
    page.click("#left-cylinder")
    page.keyboard.type("-0.25", delay=15)
    settled(page)
    assert page.evaluate("() => document.activeElement.id") == "left-cylinder"
    assert in_viewport(page, figure) and in_viewport(page, "#left-cylinder")
    band_box = page.locator("#answer-band").bounding_box()
    field_box = page.locator("#left-cylinder").bounding_box()
    if width < 900:                                      # pinned above: never over the field
        assert field_box["y"] >= band_box["y"] + band_box["height"] - 1
    page.keyboard.press("Control+A")
    page.keyboard.press("Backspace")
    settled(page)

    # Everything else folded, in the fixed order.
    order = page.eval_on_selector_all("#result-body > details.sec", "els => els.map(e => e.id)")
    assert order == ["sec-points", "sec-map", "sec-remedies", "sec-errors", "sec-sources"]
    assert page.eval_on_selector_all("#result-body > details.sec[open]", "els => els.length") == 0
    page.evaluate("() => document.querySelectorAll('details').forEach(d => d.open = true)")
    assert too_wide(page) == []
    assert overlapping_labels(page) == []
    assert page.evaluate("() => document.documentElement.scrollWidth - innerWidth") <= 0
    assert serious_violations(page) == []
    page.screenshot(path=str(SHOTS / f"band-{width}x{height}-open.png"), full_page=True)

    # The print view: an order note with the design and the order line, two pages at most.
    page.evaluate("() => window.dispatchEvent(new Event('beforeprint'))")
    note = page.text_content("#print-summary")
    assert "Bifocal" in note and "flat-top" in note and "28" in note
    option = next(o for o in remedies["options"] if o["id"] == remedies["recommended"])
    order_line = option.get("order_lines") or [option["summary"]]
    for text in order_line:
        assert text in note
    assert page.locator("#print-zone svg.lens-svg").count() == 2
    page.emulate_media(media="print")
    page.screenshot(path=str(SHOTS / f"band-{width}x{height}-print.png"), full_page=True)
    if width == 1024:
        pdf = page.pdf(format="A4")
        pages = len(re.findall(rb"/Type\s*/Page[^s]", pdf))
        assert 1 <= pages <= 2, f"{pages} pages"
        assert len(pdf) < 400_000                         # vector, not a raster of the screen


@pytest.mark.parametrize("sized", [(1024, 768)], indirect=True, ids=["1024x768"])
def test_lens_labels_stay_clear_of_one_another(sized, site):
    """On a progressive whose reading point lies by the near circle and whose threshold
    line passes the fitting cross (the demo orchard-keeper case), every label of the
    lens drawings stays readable: no two overlap."""
    page = sized
    doc = json.loads((ROOT / "examples" / "orchard-keeper-progressive.json").read_text())
    page.goto(site.url + case_fragment(doc))
    wait_result(page)
    page.click("#sec-map > summary")
    page.wait_for_selector("#sec-map svg.lens-svg")
    assert page.locator("svg.lens-svg text.lens-label").count() >= 10
    assert overlapping_labels(page) == []
