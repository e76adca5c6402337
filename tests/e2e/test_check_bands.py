"""Answer first on the check screens (readers, deviation, pair check) on a phone.

Each screen's answer band sits under its title, before the form, and stays
pinned while the form scrolls: on a 360 x 740 phone it is read in the first
viewport without scrolling, and stays in view while the person types further
down.

The band's figures carry data-key/data-value; each is compared with the
command line's answer for the request the screen sent (``python -m pycore
readers|deviation -``). Which pair is the one to hand out is the core's
ranking (``ranked[0]``); when none passes, the closest is chosen in the test
from the CLI's pairs by the rule the band states (in stock, nearest power,
smallest share of the tightest limit).
"""

from __future__ import annotations

import json
from typing import Any

import pytest
from conftest import Site
from e2e_support import SCREENS, ready_app
from test_checks_ui import (
    DEVIATION_FIELDS,
    READERS_FIELDS,
    STOCK,
    VERIFY_FIELDS,
    assert_same,
    cli,
    cli_readers,
    fill,
    request_of,
    set_stock,
    wait_for,
)

SHOTS = SCREENS


@pytest.fixture(scope="module")
def phone(browser: Any, site: Site) -> Any:
    yield from ready_app(browser, site, viewport={"width": 360, "height": 740})


def band(page: Any, selector: str) -> dict[str, str]:
    return dict(page.eval_on_selector_all(f"{selector} [data-key]",
                                          "els => els.map(e => [e.dataset.key, e.dataset.value])"))


def too_wide(page: Any) -> list[str]:
    """Visible elements whose right edge passes the viewport (none may)."""
    return page.evaluate("""() => {
        const width = document.documentElement.clientWidth;
        const out = [];
        for (const e of document.querySelectorAll('body *')) {
            const r = e.getBoundingClientRect();
            if (!r.width || e.closest('.table-wrap')) continue;
            if (r.right > width + 1) out.push(e.tagName + '#' + e.id + '.' + e.className);
        }
        return out.slice(0, 10);
    }""")


def in_view(page: Any, selector: str) -> bool:
    return page.evaluate("""(sel) => {
        const r = document.querySelector(sel).getBoundingClientRect();
        return r.top >= 0 && r.bottom <= innerHeight && r.left >= 0 && r.right <= innerWidth;
    }""", selector)


def answer_in_first_viewport(page: Any, figure: str, action: str, lower: str) -> None:
    """The answer and what to do are in view at the top of the page (no scrolling),
    and stay in view while a field further down is in use."""
    page.evaluate("() => window.scrollTo(0, 0)")
    assert in_view(page, figure), f"{figure} not in the first viewport"
    assert in_view(page, action), f"{action} not in the first viewport"
    SHOTS.mkdir(exist_ok=True)
    name = figure.split("-")[0].lstrip("#")
    page.screenshot(path=str(SHOTS / f"{name}-360-first-viewport.png"), full_page=False)
    page.locator(lower).scroll_into_view_if_needed()
    assert page.evaluate("() => window.scrollY") > 0
    assert in_view(page, figure), f"{figure} scrolled away with the form"


def test_pair_check_verdict_is_in_a_phones_first_viewport(phone):
    page = phone
    page.click("#tab-verify")
    page.click("#vf-clear")
    fill(page, VERIFY_FIELDS)
    wait_for(page, "#vf-results")
    expected = cli("verify", request_of(page, "#vf-results"))
    shown = band(page, "#vf-answer")
    assert shown["result"] == expected["result"]
    assert_same(list(shown.items()), expected)
    answer_in_first_viewport(page, "#vf-answer .verdict-word", "#vf-answer .verdict-worst",
                             lower="#vf-clear")
    assert too_wide(page) == []
    SHOTS.mkdir(exist_ok=True)
    page.screenshot(path=str(SHOTS / "verify-360.png"), full_page=False)
    # A refused field keeps the verdict, marked out of date, and names the field in the band.
    before = int(page.get_attribute("#vf-results", "data-seq"))
    page.fill("#vf-mes-right-prism", "2 BQ")
    page.wait_for_selector("#vf-answer[data-state=stale] .band-problem")
    problem = page.text_content("#vf-answer .band-problem")
    assert problem.startswith("Right (R), Prism found: could not read"), problem
    assert "measured.right.prism" not in problem
    note = page.text_content("#vf-mes-right-prism-error")
    assert note.startswith("Right (R), Prism found: could not read"), note
    assert in_view(page, "#vf-answer .verdict-word")
    page.fill("#vf-mes-right-prism", VERIFY_FIELDS["#vf-mes-right-prism"])
    wait_for(page, "#vf-results", before)
    assert page.get_attribute("#vf-answer", "data-state") == "current"
    page.click("#tab-case")


def test_readers_band_names_the_pair_and_fits_a_phone(phone, tmp_path):
    page = phone
    set_stock(page, STOCK)
    page.click("#tab-readers")
    page.select_option("#rd-pd-kind", "distance")
    fill(page, READERS_FIELDS)
    wait_for(page, "#rd-results")
    expected = cli_readers(request_of(page, "#rd-results"), tmp_path)
    shown = band(page, "#rd-band")
    assert shown["ranked.0.id"] == expected["ranked"][0]["id"]
    assert_same(list(shown.items()), expected)
    assert "Hand out" in page.text_content("#rd-band")
    answer_in_first_viewport(page, "#rd-band .band-figure", "#rd-answer .band-hand-out",
                             lower="#rd-add-row")
    assert too_wide(page) == []
    SHOTS.mkdir(exist_ok=True)
    page.screenshot(path=str(SHOTS / "readers-360.png"), full_page=False)

    before = int(page.get_attribute("#rd-results", "data-seq"))
    page.fill("#rd-rx-left-rx", "+4.00 DS")                 # no pair can pass
    wait_for(page, "#rd-results", before)
    expected = cli_readers(request_of(page, "#rd-results"), tmp_path)
    assert expected["ranked"] == []
    pairs = expected["pairs"]
    closest = min(range(len(pairs)), key=lambda i: (not pairs[i]["in_stock"],
                                                    abs(pairs[i]["power_difference_d"]),
                                                    pairs[i]["worst_share"]))
    shown = band(page, "#rd-band")
    assert shown[f"pairs.{closest}.id"] == pairs[closest]["id"]
    assert f"pairs.{closest}.net.horizontal_in_words" in shown
    assert_same(list(shown.items()), expected)
    assert "closest" in page.text_content("#rd-band")
    assert too_wide(page) == []
    page.fill("#rd-rx-left-rx", READERS_FIELDS["#rd-rx-left-rx"])


def test_deviation_band_gives_the_deviation_at_the_eye(phone):
    page = phone
    page.click("#tab-deviation")
    page.click("#dv-clear")
    fill(page, DEVIATION_FIELDS)
    wait_for(page, "#dv-results")
    expected = cli("deviation", request_of(page, "#dv-results"))
    shown = band(page, "#dv-band")
    assert shown["at_eye.in_words"] == expected["at_eye"]["in_words"]
    assert_same(list(shown.items()), expected)
    text = page.text_content("#dv-band")
    assert "prism dioptres" in text and "Δ" in text
    # The deviation is the largest text on the screen.
    sizes = page.evaluate("""() => {
        const size = (e) => parseFloat(getComputedStyle(e).fontSize);
        const main = size(document.querySelector('#dv-band .band-figure'));
        const others = [...document.querySelectorAll('#screen-deviation *')]
            .filter((e) => e.offsetParent && e.textContent.trim())
            .filter((e) => !e.closest('#dv-band .band-figure'))
            .map(size);
        return [main, Math.max(...others)];
    }""")
    assert sizes[0] > sizes[1]
    answer_in_first_viewport(page, "#dv-band .band-figure", "#dv-band", lower="#dv-clear")
    assert too_wide(page) == []
    SHOTS.mkdir(exist_ok=True)
    page.screenshot(path=str(SHOTS / "deviation-360.png"), full_page=False)
    page.click("#tab-case")


def test_notices_never_cover_a_field_or_the_answer(phone, site):
    page = phone
    page.evaluate("""() => {
        localStorage.setItem('prism-desk.store', '{not json');   // gives a notice at start
    }""")
    page.reload()
    page.wait_for_selector("#storage-notice")
    page.evaluate("""() => {
        const box = document.createElement('div');
        box.className = 'notice';
        box.textContent = 'Prism Desk now works offline on this device.';
        document.querySelector('#notices').append(box);
    }""")
    overlaps = page.evaluate("""() => {
        const boxes = [...document.querySelectorAll('#notices .notice')]
            .map((n) => n.getBoundingClientRect());
        const hit = [];
        const covered = 'input, select, button, .field-error, #results, .answer-band';
        for (const e of document.querySelectorAll(covered)) {
            if (e.closest('#notices')) continue;
            const r = e.getBoundingClientRect();
            if (!r.width) continue;
            for (const b of boxes) {
                const crosses = r.left < b.right && b.left < r.right &&
                    r.top < b.bottom && b.top < r.bottom;
                if (crosses) hit.push(e.id || e.tagName);
            }
        }
        return hit;
    }""")
    assert overlaps == []
    assert page.evaluate("() => getComputedStyle(document.querySelector('#notices')).position") \
        == "static"
    page.evaluate("() => { localStorage.removeItem('prism-desk.store.unreadable'); }")
    kept = json.loads(page.evaluate("() => localStorage.getItem('prism-desk.store')"))
    assert kept["schema"] == 2


@pytest.fixture(scope="module")
def tablet(browser: Any, site: Site) -> Any:
    yield from ready_app(browser, site, viewport={"width": 768, "height": 1024})


@pytest.mark.parametrize(("tab", "fields", "results", "figure"), [
    ("verify", VERIFY_FIELDS, "#vf-results", "#vf-answer .verdict-word"),
    ("deviation", DEVIATION_FIELDS, "#dv-results", "#dv-band .band-figure"),
])
def test_check_answers_in_a_portrait_tablets_first_viewport(tablet, tab, fields, results,
                                                             figure):
    page = tablet
    page.click(f"#tab-{tab}")
    fill(page, fields)
    wait_for(page, results)
    page.evaluate("() => window.scrollTo(0, 0)")
    assert in_view(page, figure), f"{figure} not in a 768 x 1024 first viewport"
    assert too_wide(page) == []
