"""Accessibility (axe-core), keyboard use, and screenshots for a human to look at."""

from __future__ import annotations

from pathlib import Path

import pytest
from e2e_support import (
    CASES,
    SCREENS,
    case_fragment,
    result_seq,
    serious_violations,
    wait_result,
)


@pytest.fixture
def axe_page(browser, watch):
    # axe is injected as an inline script, which the app's policy forbids: this one
    # context bypasses the policy so the checker can run (the app is unchanged).
    ctx = browser.new_context(bypass_csp=True, viewport={"width": 1024, "height": 768})
    ctx.set_default_timeout(60_000)
    watch.attach(ctx)
    yield ctx.new_page()
    ctx.close()
    assert not watch.unexpected(), watch.unexpected()



@pytest.mark.parametrize("width,height", [(360, 740), (1024, 768)])
def test_no_serious_accessibility_problems(axe_page, site, width, height):
    page = axe_page
    page.set_viewport_size({"width": width, "height": height})
    page.goto(site.url + case_fragment(CASES["oblique-progressive"]))
    wait_result(page)
    page.click("#sec-points > summary")                  # opened sections too
    page.click(".point details summary")
    assert serious_violations(page) == []
    page.fill("#right-axis", "400")                       # and the error state
    wait_result(page, status="stale")
    assert serious_violations(page) == []


def test_keyboard_only_use(site, page):
    page.goto(site.url + case_fragment(CASES["own-points-only"]))
    wait_result(page)
    page.focus("#right-sphere")
    page.keyboard.press("Control+A")
    page.keyboard.type("3")
    for _ in range(90):                                   # Tab through to the add button
        page.keyboard.press("Tab")
        if page.evaluate("() => document.activeElement.id") == "add-point":
            break
    else:
        pytest.fail("the Add button cannot be reached with Tab")
    seq = result_seq(page)
    page.keyboard.press("Enter")
    assert page.evaluate("() => document.activeElement.dataset.field") == "name"
    page.keyboard.type("by keyboard")
    wait_result(page, after=seq)
    page.focus("#sec-points > summary")                   # the folded figures, by keyboard
    page.keyboard.press("Enter")
    page.wait_for_function("""() => [...document.querySelectorAll('.point h3')]
                               .some(h => h.textContent === 'by keyboard')""", timeout=10_000)
    page.focus("#custom-points li:last-child .remove")
    page.keyboard.press("Space")
    assert page.locator("#custom-points li").count() == 1


def test_touch_targets_are_large_enough(browser, site):
    ctx = browser.new_context(viewport={"width": 360, "height": 740}, has_touch=True,
                              is_mobile=True)
    page = ctx.new_page()
    page.goto(site.url + case_fragment(CASES["oblique-progressive"]))
    wait_result(page)
    small = page.evaluate("""() => [...document.querySelectorAll('input, button, select, summary')]
        .filter(e => e.offsetParent !== null && e.type !== 'checkbox' && e.type !== 'file')
        .map(e => [e.id || e.dataset.field || e.textContent.trim(), e.getBoundingClientRect()])
        .filter(([, r]) => r.height < 44 || r.width < 44)
        .map(([n, r]) => n + ' ' + r.width + 'x' + r.height)""")
    checkbox_rows = page.evaluate("""() => [...document.querySelectorAll('label.check')]
        .map(e => e.getBoundingClientRect().height)""")
    ctx.close()
    assert small == []
    assert min(checkbox_rows) >= 44


@pytest.mark.parametrize("width,height", [(360, 740), (1024, 768)])
def test_screenshots(browser, site, width, height):
    SCREENS.mkdir(exist_ok=True)
    ctx = browser.new_context(viewport={"width": width, "height": height})
    page = ctx.new_page()
    page.goto(site.url + case_fragment(CASES["oblique-progressive"]))
    wait_result(page)
    overflow = page.evaluate("() => document.documentElement.scrollWidth - window.innerWidth")
    page.screenshot(path=str(SCREENS / f"app-{width}x{height}.png"))
    page.screenshot(path=str(SCREENS / f"app-{width}x{height}-full.png"), full_page=True)
    page.fill("#right-axis", "200")
    wait_result(page, status="stale")
    page.locator("#right-axis").scroll_into_view_if_needed()
    page.screenshot(path=str(SCREENS / f"app-{width}x{height}-bad-input.png"))
    page.evaluate("() => window.dispatchEvent(new Event('beforeprint'))")
    page.emulate_media(media="print")
    page.screenshot(path=str(SCREENS / f"app-{width}x{height}-print.png"), full_page=True)
    ctx.close()
    assert overflow <= 0, f"page scrolls sideways by {overflow}px"
    assert Path(SCREENS / f"app-{width}x{height}.png").stat().st_size > 10_000
