"""Measure the case screen: page height, results-panel content height, and where the
reading-level imbalance and the suggested remedy sit (px from the top of the page).

Usage: python bench/case_screen_heights.py  (builds dist/ if needed; Debian chromium)
The case is the anisometropic bifocal of the case-screen tests (invented scenario).
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests" / "e2e"))

from conftest import CHROMIUM, CHROMIUM_ARGS, Site  # noqa: E402
from e2e_support import case_fragment, wait_result  # noqa: E402
from playwright.sync_api import sync_playwright  # noqa: E402

import build  # noqa: E402

CASE = {
    "right": {"sphere": 4.5, "cylinder": -0.5, "axis": 90, "add": 2.5,
              "segment": {"shape": "flat_top", "width_mm": 28, "top_mm": -4}},
    "left": {"sphere": 1.0, "add": 2.5,
             "segment": {"shape": "flat_top", "width_mm": 28, "top_mm": -4}},
    "fitting": {"right": {"mono_pd_mm": 32}, "left": {"mono_pd_mm": 31}},
}

MEASURE = """() => {
  const top = (sel) => { const e = document.querySelector(sel);
    return e ? Math.round(e.getBoundingClientRect().top + scrollY) : null; };
  const results = document.querySelector('#results');
  return {
    page: document.documentElement.scrollHeight,
    panel: results.scrollHeight,
    results_top: top('#results'),
    reading_figure: top('[data-key^="reading_zone.at_reading_point"]'),
    remedy: top('[data-key="remedies.recommended"]') ?? top('.zcard.is-suggested'),
    words: results.innerText.split(/\\s+/).filter(Boolean).length,
  };
}"""


def main() -> None:
    if build.needs_build():
        build.build()
    site = Site(build.DIST)
    out = {}
    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=CHROMIUM_ARGS)
        for width, height in [(360, 740), (768, 1024), (1024, 768)]:
            ctx = browser.new_context(viewport={"width": width, "height": height})
            page = ctx.new_page()
            page.goto(site.url + case_fragment(CASE))
            wait_result(page)
            out[f"{width}x{height}"] = page.evaluate(MEASURE)
            ctx.close()
        browser.close()
    site.stop()
    print(json.dumps(out, indent=1))


if __name__ == "__main__":
    main()
