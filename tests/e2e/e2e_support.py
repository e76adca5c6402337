"""Helpers for the browser tests: case addresses, waiting for results, the CLI."""

from __future__ import annotations

import base64
import json
import math
import subprocess
import sys
from collections.abc import Iterator
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[2]
SCREENS = ROOT / "screens"

# Cases the browser and the command line must agree on (oblique cylinders on purpose).
CASES: dict[str, dict[str, Any]] = {
    "oblique-progressive": {
        "name": "Oblique cylinder, prism as written",
        "right": {"sphere": -3.25, "cylinder": -0.75, "axis": 20, "add": 2.0,
                  "prism": "1.5 BU 2 BI"},
        "left": {"sphere": -1.0, "cylinder": 0, "axis": 0, "add": 2.0},
        "fitting": {"right": {"mono_pd_mm": 32, "height_mm": 20},
                    "left": {"mono_pd_mm": 31.5, "height_mm": 20},
                    "working_distance_mm": 400, "centre_of_rotation_mm": 27,
                    "reading_depth_mm": 10},
        "frame": {"a_mm": 52, "dbl_mm": 18, "ed_mm": 56},
        "points": ["distance", "near",
                   {"name": "left gaze", "right": {"in_mm": -8, "up_mm": 0},
                    "left": {"in_mm": 8, "up_mm": 0}}],
    },
    "crossed-obliques": {
        "name": "Crossed oblique cylinders",
        "right": {"sphere": 4.5, "cylinder": -2.0, "axis": 135, "add": 2.5, "prism": "2.5 @ 37"},
        "left": {"sphere": 3.0, "cylinder": -1.25, "axis": 45, "add": 2.5},
        "fitting": {"right": {"mono_pd_mm": 30.5}, "left": {"mono_pd_mm": 31},
                    "working_distance_mm": 330, "centre_of_rotation_mm": 25,
                    "reading_depth_mm": 12},
        "frame": {"a_mm": 50, "dbl_mm": 20, "ed_mm": 55, "b_mm": 38},
        "points": ["near", "distance",
                   {"name": "down and right", "right": {"in_mm": -6, "up_mm": -9},
                    "left": {"in_mm": 6, "up_mm": -9}},
                   {"name": "up", "right": {"in_mm": 0, "up_mm": 7},
                    "left": {"in_mm": 0, "up_mm": 7}}],
    },
    "anisometropia": {
        "name": "Anisometropia, reading low",
        "right": {"rx": "-6.00 / -1.50 x 65"},
        "left": {"sphere": -2.0, "cylinder": -1.0, "axis": 170,
                 "prism": {"base_in": -1, "base_up": 0.5}},
        "fitting": {"right": {"mono_pd_mm": 33}, "left": {"mono_pd_mm": 32}},
    },
    "own-points-only": {
        "right": {"sphere": 2.25, "cylinder": 1.5, "axis": 95},
        "left": {"sphere": 1.75},
        "points": [{"name": "temporal", "right": {"in_mm": -10, "up_mm": 2},
                    "left": {"in_mm": -10, "up_mm": 2}}],
    },
}

FIGURE_FIELDS = ["right.base_in", "right.base_up", "right.amount", "right.direction_360",
                 "right.in_words", "left.base_in", "left.base_up", "left.amount",
                 "left.direction_360", "left.in_words", "net.horizontal_base_in",
                 "net.vertical_base_up_right", "net.vertical_in_words", "net.horizontal_in_words"]


def case_fragment(doc: dict[str, Any]) -> str:
    raw = json.dumps(doc).encode()
    return "#case=" + base64.urlsafe_b64encode(raw).decode().rstrip("=")


def case_from_fragment(fragment: str) -> dict[str, Any]:
    assert fragment.startswith("#case="), fragment
    data = fragment[len("#case="):]
    return json.loads(base64.urlsafe_b64decode(data + "=" * (-len(data) % 4)))


def address_case(page: Any) -> dict[str, Any]:
    return case_from_fragment(page.evaluate("() => location.hash"))


def result_seq(page: Any) -> int:
    return int(page.evaluate("() => Number(document.querySelector('#results').dataset.seq || 0)"))


def wait_result(page: Any, after: int = 0, status: str = "current") -> None:
    """Wait until the results panel shows `status` (for current: a render newer than `after`)."""
    page.wait_for_function(
        """([after, status]) => {
            const r = document.querySelector('#results');
            return r && r.dataset.status === status &&
                   (status !== 'current' || Number(r.dataset.seq || 0) > after);
        }""", arg=[after, status])


def figures(page: Any) -> list[tuple[str, str]]:
    return [tuple(pair) for pair in page.eval_on_selector_all(
        "[data-key]", "els => els.map(e => [e.dataset.key, e.dataset.value])")]


def lookup(tree: Any, key: str) -> Any:
    # The live request's point_totals are the points' names, totals and nets, the same numbers
    # (tests/test_live_sections.py): the CLI's whole result has them under points.
    if key.startswith("point_totals.") and "point_totals" not in tree:
        key = "points." + key.removeprefix("point_totals.")
    for part in key.split("."):
        tree = tree[int(part)] if isinstance(tree, list) else tree[part]
    return tree


def cli_evaluate(doc: dict[str, Any]) -> dict[str, Any]:
    proc = subprocess.run([sys.executable, "-m", "pycore", "evaluate", "-"],
                          input=json.dumps(doc).encode(), capture_output=True, cwd=ROOT,
                          timeout=60, check=False)
    assert proc.returncode == 0, proc.stderr.decode()
    return json.loads(proc.stdout)


def open_point_figures(page: Any) -> None:
    """Open the folded per-point figures (the page asks for them when the section opens:
    each keystroke computes only the answer band's) and wait until they are drawn."""
    if page.locator("#sec-points").count() == 0:
        return
    page.evaluate("() => { document.querySelector('#sec-points').open = true; }")
    page.wait_for_function("""() => {
        const r = document.querySelector('#results');
        return r.dataset.status !== 'pending'
            && (r.dataset.status !== 'current'
                || document.querySelector("#sec-points [data-key^='points.']") !== null);
    }""")


def assert_figures_match(page: Any, expected: dict[str, Any]) -> int:
    """Every data-key figure on the page equals the CLI's value; the main ones are all shown
    (the folded per-point figures opened first)."""
    open_point_figures(page)
    shown = figures(page)
    keys = {key for key, _ in shown}
    for key, value in shown:
        want = lookup(expected, key)
        if isinstance(want, bool):
            assert value == json.dumps(want), f"{key}: page {value!r}, CLI {want!r}"
        elif not isinstance(want, (int, float)):
            assert value == str(want), f"{key}: page {value!r}, CLI {want!r}"
        else:
            # The browser's Python uses the WebAssembly C library's maths functions;
            # they may differ from the host's in the last bit or two (atan2, sin...).
            assert math.isclose(float(value), want, rel_tol=1e-12, abs_tol=1e-12), \
                f"{key}: page {value}, CLI {want!r}"
    for i in range(len(expected["points"])):
        for field in FIGURE_FIELDS:
            assert f"points.{i}.{field}" in keys, f"points.{i}.{field} not shown"
    for eye in ("right", "left"):
        for field in ("transposed_written", "horizontal_power", "vertical_power"):
            assert f"eyes.{eye}.{field}" in keys
    return len(shown)


AXE = ROOT / "node_modules" / "axe-core" / "axe.min.js"


def serious_violations(page: Any) -> list[str]:
    """axe-core's serious and critical findings on the page as it is now."""
    if not AXE.exists():
        raise AssertionError("node_modules/axe-core is missing: run npm ci")
    if not page.evaluate("() => typeof axe === 'object'"):
        page.add_script_tag(path=str(AXE))
    found: list[str] = page.evaluate("""async () => {
        const r = await axe.run(document, {resultTypes: ['violations']});
        return r.violations.filter(v => v.impact === 'serious' || v.impact === 'critical')
            .map(v => v.id + ': ' + v.help + ' -> '
                      + v.nodes.map(n => n.target.join(' ')).join(', '));
    }""")
    return found


def ready_app(browser: Any, site: Any, **context: Any) -> Iterator[Any]:
    """A page of the app with the calculator ready, in a context of its own; after use,
    no page error or unexpected console error (use with ``yield from`` in a fixture)."""
    from conftest import Watch

    watch = Watch()
    ctx = browser.new_context(**context)
    ctx.set_default_timeout(90_000)
    watch.attach(ctx)
    page = ctx.new_page()
    page.goto(site.url)
    page.wait_for_selector("#engine[data-state=ready]")
    yield page
    ctx.close()
    assert not watch.unexpected(), watch.unexpected()
