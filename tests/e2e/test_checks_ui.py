"""The check screens in Chromium: pair check, ready-made readers, deviation through glasses.

Every figure on these screens carries data-key (its dotted path in the action's
result) and data-value; each results panel names its action in data-action and
keeps the request it answered in data-request. The tests send that same request
to the command line (``python -m pycore verify|readers|deviation -``) and compare
figure by figure. Most tests share one page (the engine boots once per module).
"""

from __future__ import annotations

import json
import math
import subprocess
import sys
import urllib.error
import urllib.request
from pathlib import Path
from typing import Any

import pytest
from conftest import Site, Watch
from e2e_support import CASES, ROOT, SCREENS, case_fragment, lookup, serious_violations

STORE = "prism-desk.checks."

# ---------------------------------------------------------------- inputs the tests type
VERIFY_FIELDS = {
    "#vf-ord-right-rx": "+1.75 / -1.25 x 35", "#vf-ord-right-prism": "1 BU",
    "#vf-ord-right-pd": "32", "#vf-ord-right-height": "20",
    "#vf-ord-left-rx": "-0.50 / -0.75 x 150", "#vf-ord-left-pd": "31,5",
    "#vf-ord-left-height": "20",
    "#vf-mes-right-prism": "1.25 BU 0.25 BI", "#vf-mes-right-pd": "32.5",
    "#vf-mes-right-height": "20.5",
    "#vf-mes-left-prism": "0.25 BO", "#vf-mes-left-pd": "31", "#vf-mes-left-height": "20",
}
VERIFY_REQUEST = {
    "standard": "ansi-z80.1-2015", "lens_type": "single_vision", "mounting": "mounted",
    "horizontal_reading": "total",
    "ordered": {"right": {"rx": "+1.75 / -1.25 x 35", "prism": "1 BU", "mono_pd_mm": 32,
                          "height_mm": 20},
                "left": {"rx": "-0.50 / -0.75 x 150", "mono_pd_mm": 31.5, "height_mm": 20}},
    "measured": {"right": {"prism": "1.25 BU 0.25 BI", "mono_pd_mm": 32.5, "height_mm": 20.5},
                 "left": {"prism": "0.25 BO", "mono_pd_mm": 31, "height_mm": 20}},
}
STOCK = [
    {"id": "R250-62", "power": "2.5", "oc_distance_mm": "62", "frame_size": "50-18", "count": "4"},
    {"id": "R250-66", "power": "2.5", "oc_distance_mm": "66", "frame_size": "", "count": "2"},
    {"id": "R225-60", "power": "2.25", "oc_distance_mm": "60", "frame_size": "48-20", "count": "3"},
    {"id": "R300-64", "power": "3", "oc_distance_mm": "64", "frame_size": "", "count": "1"},
    {"id": "R200-58", "power": "2", "oc_distance_mm": "58", "frame_size": "", "count": "0"},
]
READERS_FIELDS = {"#rd-rx-right-rx": "+2.50 DS", "#rd-rx-left-rx": "+2.25 / -0.25 x 90",
                  "#rd-distance-pd": "64", "#rd-working": "400"}
READERS_WEARER = {"right": {"rx": "+2.50 DS"}, "left": {"rx": "+2.25 / -0.25 x 90"},
                  "distance_pd_mm": 64, "working_distance_mm": 400}
STOCK_SENT = [{key: (value if key in ("id", "frame_size")
                     else float(value) if "." in value else int(value))
               for key, value in row.items() if value != ""} for row in STOCK]
DEVIATION_FIELDS = {"#dv-measured": "20 BI 4 BD", "#dv-rotation": "25",
                    "#dv-lens-right-rx": "+3.00 / -1.00 x 60", "#dv-lens-right-prism": "1 BU",
                    "#dv-lens-left-rx": "-1.00 DS"}


# ---------------------------------------------------------------- helpers
def cli(command: str, request: dict[str, Any], *args: str) -> dict[str, Any]:
    proc = subprocess.run([sys.executable, "-m", "pycore", command, "-", *args],
                          input=json.dumps(request).encode(), capture_output=True, cwd=ROOT,
                          timeout=60, check=False)
    assert proc.returncode == 0, proc.stderr.decode()
    return json.loads(proc.stdout)


def cli_readers(request: dict[str, Any], tmp_path: Path) -> dict[str, Any]:
    """`readers - --stock FILE`: the stock the page sent goes in a file of its own."""
    wearer = {k: v for k, v in request.items() if k != "stock"}
    stock = tmp_path / "stock.json"
    stock.write_text(json.dumps(request["stock"]))
    return cli("readers", wearer, "--stock", str(stock))


def shown(page: Any, action: str) -> list[tuple[str, str]]:
    return [tuple(pair) for pair in page.eval_on_selector_all(
        f"[data-action='{action}'] [data-key]",
        "els => els.map(e => [e.dataset.key, e.dataset.value])")]


def assert_same(pairs: list[tuple[str, str]], expected: Any) -> set[str]:
    """Every figure shown equals the CLI's value at its key; returns the keys shown."""
    assert pairs, "no figures shown"
    for key, value in pairs:
        want = lookup(expected, key)
        if isinstance(want, bool):
            assert value == json.dumps(want), f"{key}: page {value!r}, CLI {want!r}"
        elif isinstance(want, (int, float)):
            # The browser's maths library may differ from the host's in the last bit.
            assert math.isclose(float(value), want, rel_tol=1e-12, abs_tol=1e-12), \
                f"{key}: page {value}, CLI {want!r}"
        else:
            assert value == str(want), f"{key}: page {value!r}, CLI {want!r}"
    return {key for key, _ in pairs}


def request_of(page: Any, results: str) -> dict[str, Any]:
    return json.loads(page.get_attribute(results, "data-request"))


def seq(page: Any, results: str) -> int:
    return int(page.get_attribute(results, "data-seq") or 0)


def wait_for(page: Any, results: str, after: int = -1, status: str = "current") -> None:
    page.wait_for_function(
        """([sel, after, status]) => {
            const r = document.querySelector(sel);
            return r && r.dataset.status === status &&
                   (status !== 'current' || Number(r.dataset.seq || 0) > after);
        }""", arg=[results, after, status])


def wait_request(page: Any, results: str, check: Any, seconds: float = 30) -> dict[str, Any]:
    """The request of the result on screen, once it is current and `check(request)` holds."""
    for _ in range(int(seconds * 20)):
        if page.get_attribute(results, "data-status") == "current":
            request = json.loads(page.get_attribute(results, "data-request") or "{}")
            if check(request):
                return request
        page.wait_for_timeout(50)
    raise AssertionError(f"{results}: no current result for the expected request; "
                         f"last: {page.get_attribute(results, 'data-request')}")


def open_screen(page: Any, name: str) -> None:
    page.click(f"#tab-{name}")
    page.wait_for_selector("#case-form" if name == "case" else f"#screen-{name}:not([hidden])")


def fill(page: Any, fields: dict[str, str]) -> None:
    for selector, text in fields.items():
        page.fill(selector, text)


def engine_ready(page: Any) -> None:
    page.wait_for_selector("#engine[data-state=ready]")


def set_stock(page: Any, rows: list[dict[str, str]]) -> None:
    """Put a stock list on the device and reload: written as the previous schema
    (one array), which the app moves into one stored entry per row on start."""
    page.evaluate("""([key, rows]) => {
        for (const k of Object.keys(localStorage)) {
            if (k.startsWith('prism-desk.stock.')) localStorage.removeItem(k);
        }
        localStorage.setItem(key, JSON.stringify(rows));
        localStorage.removeItem(key.replace('stock', 'undo')); }""",
                  [STORE + "readers-stock", rows])
    page.reload()
    engine_ready(page)


def stock_count(page: Any, row: int) -> str:
    return page.input_value(f"#rd-stock-{row}-count")


def start_readers(page: Any) -> None:
    set_stock(page, STOCK)
    open_screen(page, "readers")
    page.select_option("#rd-pd-kind", "distance")
    fill(page, READERS_FIELDS)
    wait_request(page, "#rd-results",
                 lambda r: r.get("wearer") == READERS_WEARER and r.get("stock") == STOCK_SENT)


@pytest.fixture(scope="module")
def checks(browser: Any, site: Site) -> Any:
    """One page for the module, its engine booted once; errors in it fail the module."""
    watch = Watch()
    ctx = browser.new_context(viewport={"width": 1024, "height": 768}, accept_downloads=True)
    ctx.set_default_timeout(60_000)
    watch.attach(ctx)
    page = ctx.new_page()
    page.goto(site.url)
    engine_ready(page)
    yield page
    ctx.close()
    assert not watch.unexpected(), watch.unexpected()


@pytest.fixture
def page(checks: Any) -> Any:
    return checks


# ---------------------------------------------------------------- switching screens
def test_screens_switch_by_keyboard_and_are_remembered(page):
    page.goto(page.url.split("#")[0])
    engine_ready(page)
    open_screen(page, "case")
    assert page.is_visible("#case-form") and not page.is_visible("#screen-verify")
    page.focus("#tab-case")
    page.keyboard.press("ArrowRight")
    assert page.evaluate("() => document.activeElement.id") == "tab-verify"
    page.keyboard.press("End")
    assert page.evaluate("() => document.activeElement.id") == "tab-deviation"
    page.keyboard.press("Enter")
    page.wait_for_selector("#screen-deviation:not([hidden])")
    assert not page.is_visible("#case-form")
    assert page.get_attribute("#tab-deviation", "aria-current") == "page"
    page.reload()
    engine_ready(page)
    assert page.is_visible("#screen-deviation") and not page.is_visible("#case-form")
    # A case link opened meanwhile shows the case screen.
    page.goto(page.url.split("#")[0] + case_fragment(CASES["own-points-only"]))
    page.wait_for_selector("#case-form", state="visible")
    assert page.get_attribute("#tab-case", "aria-current") == "page"
    assert not page.is_visible("#screen-deviation")


# ---------------------------------------------------------------- pair check
def test_verify_figures_match_cli(page):
    open_screen(page, "verify")
    page.click("#vf-clear")
    page.wait_for_selector("#vf-standard option[value='iso-21987-2009']", state="attached")
    page.select_option("#vf-standard", "ansi-z80.1-2015")
    page.select_option("#vf-lens-type", "single_vision")
    page.select_option("#vf-mounting", "mounted")
    page.select_option("#vf-reading", "total")
    before = seq(page, "#vf-results")
    fill(page, VERIFY_FIELDS)
    wait_for(page, "#vf-results", before)
    request = wait_request(page, "#vf-results", lambda r: r == VERIFY_REQUEST)
    expected = cli("verify", request)
    keys = assert_same(shown(page, "verify"), expected)
    assert "result" in keys and "standard.short" in keys
    for i, verdict in enumerate(expected["verdicts"]):
        for field in ("label", "status", "value", "limit", "margin", "rule", "applied", "source",
                      "certainty"):
            assert f"verdicts.{i}.{field}" in keys, f"verdicts.{i}.{field} not shown"
        if verdict["criterion"] == "horizontal":
            assert f"verdicts.{i}.reading" in keys
            assert f"verdicts.{i}.readings.total.value" in keys
    assert len(expected["cautions"]) and f"cautions.{len(expected['cautions']) - 1}" in keys
    assert page.text_content("#vf-answer .verdict-word") == expected["result"].upper()

    # Each lens on its own: the verdict says which reading it used, both are shown.
    before = seq(page, "#vf-results")
    page.select_option("#vf-reading", "per_eye")
    wait_for(page, "#vf-results", before)
    request = request_of(page, "#vf-results")
    assert request["horizontal_reading"] == "per_eye"
    expected = cli("verify", request)
    keys = assert_same(shown(page, "verify"), expected)
    h = next(i for i, v in enumerate(expected["verdicts"]) if v["criterion"] == "horizontal")
    assert expected["verdicts"][h]["reading"] == "per_eye"
    assert {f"verdicts.{h}.readings.per_eye.value", f"verdicts.{h}.readings.total.value",
            f"verdicts.{h}.readings.per_eye.right"} <= keys
    page.select_option("#vf-reading", "total")


WHOLE_FIELDS = {
    "#vf-ord-right-rx": "-2.00 / -1.00 x 180", "#vf-ord-left-rx": "-2.25 DS",
    "#vf-ord-right-add": "2", "#vf-ord-left-add": "2",
    "#vf-ord-right-seg-height": "18", "#vf-ord-left-seg-height": "18",
    "#vf-mes-right-rx": "-3.00 / +1.00 x 96", "#vf-mes-left-rx": "-2.25 DS",
    "#vf-mes-right-add": "2.12", "#vf-mes-left-add": "2",
    "#vf-mes-right-prism": "0", "#vf-mes-left-prism": "0.25 BU",
    "#vf-mes-right-seg-height": "18.5", "#vf-mes-left-seg-height": "18",
    "#vf-mes-right-seg-tilt": "1",
}


def test_verify_whole_pair_answer_band_matches_cli(page):
    """The whole pair check (powers, axis, add, segment) shows the CLI's verdicts, the
    deciding criterion in the answer band, and the wearer's side of an axis error."""
    open_screen(page, "verify")
    page.click("#vf-clear")
    page.wait_for_selector("#vf-standard option[value='iso-21987-2009']", state="attached")
    page.select_option("#vf-standard", "ansi-z80.1-2015")
    page.select_option("#vf-lens-type", "multifocal")
    page.select_option("#vf-mounting", "mounted")
    before = seq(page, "#vf-results")
    fill(page, WHOLE_FIELDS)
    wait_for(page, "#vf-results", before)
    request = wait_request(page, "#vf-results",
                           lambda r: r.get("measured", {}).get("right", {}).get("segment")
                           == {"height_mm": 18.5, "tilt_deg": 1})
    assert request["measured"]["right"]["rx"] == "-3.00 / +1.00 x 96"
    expected = cli("verify", request)
    keys = assert_same(shown(page, "verify"), expected)
    criteria = {v["criterion"] for v in expected["verdicts"]}
    assert {"meridian_power", "cylinder", "axis", "add", "segment_height",
            "segment_height_difference", "segment_tilt"} <= criteria
    worst = expected["worst"]
    assert expected["verdicts"][worst]["criterion"] == "axis"  # 6 deg against 3 (ANSI)
    assert page.text_content("#vf-answer .verdict-word") == expected["result"].upper()
    assert page.text_content("#vf-answer .verdict-worst").startswith("Furthest over:")
    assert f"verdicts.{worst}.wearer.in_words" in keys
    size = page.eval_on_selector_all(
        "#vf-answer *, #vf-results *", "els => Math.max(...els.filter(e => e.textContent.trim())"
        ".map(e => parseFloat(getComputedStyle(e).fontSize)))")
    word = page.eval_on_selector("#vf-answer .verdict-word",
                                 "e => parseFloat(getComputedStyle(e).fontSize)")
    assert word == size, "the verdict is the largest text of the answer"
    page.select_option("#vf-lens-type", "single_vision")


def test_verify_standards_are_listed_with_sources_and_unverified_flagged(page):
    open_screen(page, "verify")
    fill(page, VERIFY_FIELDS)
    page.wait_for_selector("#vf-standard option[value='iso-21987-2009']", state="attached")
    listed = cli("verify", {}, "--list-standards")
    before = seq(page, "#vf-results")
    page.select_option("#vf-standard", "iso-21987-2009")
    wait_for(page, "#vf-results", before)
    # The table panel: the unverified warning, the table's source and each row's source.
    info = page.text_content("#vf-standard-info")
    assert "Unverified tolerance table" in info and "from memory" in info
    page.click("#vf-standard-info details summary")
    keys = assert_same(shown(page, "verify_standards"), listed)
    iso = next(i for i, s in enumerate(listed["standards"]) if s["id"] == "iso-21987-2009")
    assert f"standards.{iso}.source" in keys
    for j, _ in enumerate(listed["standards"][iso]["rows"]):
        row = f"standards.{iso}.rows.{j}"
        assert f"{row}.source" in keys and f"{row}.bands.0.limit" in keys
    # The verdict: flagged, and every figure still the CLI's.
    expected = cli("verify", request_of(page, "#vf-results"))
    assert expected["unverified"] is True
    assert_same(shown(page, "verify"), expected)
    assert page.is_visible("#vf-results .unverified-flag")
    assert "UNVERIFIED" in page.text_content("#vf-results .unverified-flag")
    assert page.locator("#vf-results .unverified-inline").count() == len(expected["verdicts"])
    before = seq(page, "#vf-results")
    page.select_option("#vf-standard", "ansi-z80.1-2015")
    wait_for(page, "#vf-results", before)


def test_verify_unmounted_lens(page):
    open_screen(page, "verify")
    page.click("#vf-clear")
    page.select_option("#vf-mounting", "unmounted")
    before = seq(page, "#vf-results")
    fill(page, {"#vf-ord-right-rx": "-2.00 / -1.00 x 20", "#vf-mes-right-prism": "0.5 BU",
                "#vf-mes-right-in": "1", "#vf-mes-right-up": "-0.5"})
    wait_for(page, "#vf-results", before)
    request = request_of(page, "#vf-results")
    assert request["mounting"] == "unmounted" and set(request["ordered"]) == {"right"}
    assert request["measured"] == {"right": {"prism": "0.5 BU",
                                             "offset": {"in_mm": 1, "up_mm": -0.5}}}
    expected = cli("verify", request)
    keys = assert_same(shown(page, "verify"), expected)
    assert {"verdicts.0.options.0.value", "verdicts.0.options.1.value", "verdicts.0.eye"} & keys
    assert "verdicts.0.options.1.limit" in keys
    page.select_option("#vf-mounting", "mounted")
    page.click("#vf-clear")


def test_verify_takes_the_case_prescription(page):
    page.goto(page.url.split("#")[0] + case_fragment(CASES["oblique-progressive"]))
    page.wait_for_function("() => document.querySelector('#right-sphere').value === '-3.25'")
    page.wait_for_timeout(400)                           # the case screen keeps it
    open_screen(page, "verify")
    page.click("#vf-clear")
    page.click("#vf-from-case")
    assert page.input_value("#vf-ord-right-rx") == "-3.25 / -0.75 x 20"
    assert page.input_value("#vf-ord-right-prism") == "1.5 BU 2 BI"
    assert page.input_value("#vf-ord-right-pd") == "32"
    assert page.input_value("#vf-ord-right-height") == "20"
    assert page.input_value("#vf-ord-left-rx") == "-1 DS"
    assert page.input_value("#vf-ord-left-pd") == "31.5"
    assert "Copied" in page.text_content("#vf-case-note")
    assert page.input_value("#vf-lens-type") == "single_vision"   # no segment, no progressive
    before = seq(page, "#vf-results")
    page.fill("#vf-mes-right-prism", "1.5 BU 2 BI")
    page.fill("#vf-mes-left-prism", "0.25 BD")
    wait_for(page, "#vf-results", before)
    assert_same(shown(page, "verify"), cli("verify", request_of(page, "#vf-results")))
    page.click("#vf-clear")


def test_verify_bad_input_marks_the_field_and_keeps_the_last_result(page):
    open_screen(page, "verify")
    page.click("#vf-clear")
    before = seq(page, "#vf-results")
    fill(page, VERIFY_FIELDS)
    wait_for(page, "#vf-results", before)
    good = request_of(page, "#vf-results")
    figures = shown(page, "verify")
    page.fill("#vf-mes-right-prism", "1.25 BQ")
    wait_for(page, "#vf-results", status="stale")
    assert page.get_attribute("#vf-mes-right-prism", "aria-invalid") == "true"
    note = page.text_content("#vf-mes-right-prism-error")
    assert "Prism found" in note and "measured.right.prism" not in note  # in words only
    assert "Out of date" in page.text_content("#vf-results .check-status")
    assert request_of(page, "#vf-results") == good and shown(page, "verify") == figures
    # Nothing typed is lost: the draft survives a reload.
    page.reload()
    engine_ready(page)
    assert page.input_value("#vf-mes-right-prism") == "1.25 BQ"
    wait_for(page, "#vf-results", status="error")
    assert page.get_attribute("#vf-mes-right-prism", "aria-invalid") == "true"
    before = seq(page, "#vf-results")
    page.fill("#vf-mes-right-prism", "1.25 BU 0.25 BI")
    wait_for(page, "#vf-results", before)
    assert page.get_attribute("#vf-mes-right-prism", "aria-invalid") is None
    assert page.locator("#vf-mes-right-prism-error").count() == 0


# ---------------------------------------------------------------- ready-made readers
def test_readers_figures_match_cli(page, tmp_path):
    start_readers(page)
    request = request_of(page, "#rd-results")
    assert request["limits"] == "iso-16034-2002"
    expected = cli_readers(request, tmp_path)
    keys = assert_same(shown(page, "readers_rank"), expected)
    assert expected["ranked"], "the test stock should suit this wearer"
    for i, _ in enumerate(expected["ranked"]):
        for field in ("id", "rank", "count", "prism.right.in_words", "prism.right.base_in",
                      "prism.left.base_in", "net.horizontal_in_words", "checks.0.value",
                      "checks.0.limit", "checks.0.margin"):
            assert f"ranked.{i}.{field}" in keys, f"ranked.{i}.{field} not shown"
    assert page.locator("#rd-results .pair-card").count() == len(expected["ranked"])
    # The low-resource limits: sources shown, figures the CLI's again.
    listed = cli("readers", {}, "--list-limits")
    before = seq(page, "#rd-results")
    page.select_option("#rd-limits", "low-resource-2007")
    wait_for(page, "#rd-results", before)
    keys = assert_same(shown(page, "readers_limit_sets"), listed)
    low = next(i for i, s in enumerate(listed["limit_sets"]) if s["id"] == "low-resource-2007")
    assert f"limit_sets.{low}.source" in keys
    assert "Optom Vis Sci" in page.text_content("#rd-limits-info")
    assert_same(shown(page, "readers_rank"), cli_readers(request_of(page, "#rd-results"), tmp_path))
    page.select_option("#rd-limits", "iso-16034-2002")


def test_readers_custom_spectacles_needed(page, tmp_path):
    start_readers(page)
    before = seq(page, "#rd-results")
    page.fill("#rd-rx-left-rx", "+4.00 DS")
    wait_for(page, "#rd-results", before)
    expected = cli_readers(request_of(page, "#rd-results"), tmp_path)
    assert expected["custom_needed"] is True
    assert_same(shown(page, "readers_rank"), expected)
    text = page.text_content("#rd-results .verdict-banner")
    assert "Custom spectacles needed" in text
    assert page.locator("#rd-results .reasons li[data-code=anisometropia]").count() == 1
    assert page.locator("#rd-results .hand-out").count() == 0
    page.fill("#rd-rx-left-rx", READERS_FIELDS["#rd-rx-left-rx"])


def test_readers_hand_out_undo_and_reload(page, tmp_path):
    start_readers(page)
    first = page.get_attribute("#rd-results .pair-card", "data-id")
    row = next(i for i, r in enumerate(STOCK) if r["id"] == first)
    count = int(STOCK[row]["count"])
    before = seq(page, "#rd-results")
    page.click(f"#rd-results .pair-card[data-id='{first}'] .hand-out")
    wait_for(page, "#rd-results", before)
    assert stock_count(page, row) == str(count - 1)
    assert page.get_attribute(f"#rd-results .pair-card[data-id='{first}'] [data-key$='.count']",
                              "data-value") == str(count - 1)
    assert f"{count - 1} left" in page.text_content("#rd-handout")
    # The ranking now is the CLI's for the stock as it is after the hand-out.
    assert_same(shown(page, "readers_rank"), cli_readers(request_of(page, "#rd-results"), tmp_path))
    # Kept on the device: a reload shows the lower count.
    page.reload()
    engine_ready(page)
    wait_for(page, "#rd-results")
    assert stock_count(page, row) == str(count - 1)
    before = seq(page, "#rd-results")
    page.click("#rd-undo")
    wait_for(page, "#rd-results", before)
    assert stock_count(page, row) == str(count)
    assert "back on the shelf" in page.text_content("#rd-handout")
    assert page.locator("#rd-undo").count() == 0
    page.reload()
    engine_ready(page)
    assert stock_count(page, row) == str(count)


def test_readers_stock_editing_and_bad_value(page, tmp_path):
    start_readers(page)
    rows = page.locator("#rd-stock-list .stock-row").count()
    page.click("#rd-add-row")
    assert page.evaluate("() => document.activeElement.id") == f"rd-stock-{rows}-id"
    fill(page, {f"#rd-stock-{rows}-id": "R275-62", f"#rd-stock-{rows}-power": "2.75",
                f"#rd-stock-{rows}-oc_distance_mm": "62"})
    page.fill(f"#rd-stock-{rows}-count", "2")
    page.wait_for_function(
        "n => JSON.parse(document.querySelector('#rd-results').dataset.request).stock.length === n",
        arg=rows + 1)
    wait_for(page, "#rd-results")
    assert_same(shown(page, "readers_rank"), cli_readers(request_of(page, "#rd-results"), tmp_path))
    good = request_of(page, "#rd-results")
    page.fill(f"#rd-stock-{rows}-power", "2.7x")
    wait_for(page, "#rd-results", status="stale")
    cell = f"#rd-stock-{rows}-power"
    assert page.get_attribute(cell, "aria-invalid") == "true"
    note = page.text_content(cell + "-error")
    assert note.startswith("Power: ") and f"stock.{rows}.power" not in note   # in words only
    assert request_of(page, "#rd-results") == good
    page.reload()
    engine_ready(page)
    assert page.input_value(cell) == "2.7x"            # nothing typed is lost
    page.click(f"#rd-stock-list .stock-row[data-row='{rows}'] .remove")
    assert page.locator("#rd-stock-list .stock-row").count() == rows
    wait_for(page, "#rd-results")


def test_readers_csv_import_keeps_good_rows_and_names_bad_ones(page, tmp_path):
    start_readers(page)
    csv_file = tmp_path / "clinic.csv"
    csv_file.write_text("id;power;oc_distance_mm;frame_size;count\n"
                        "R350-64;+3,50 D;64 mm;52-18;5\n"
                        "R400-64;four;64;;2\n"
                        "R250-62;2,50;62;50-18;7\n")
    before = seq(page, "#rd-results")
    page.set_input_files("#rd-import-file", str(csv_file))
    page.wait_for_selector("#rd-import-report li")
    report = page.locator("#rd-import-report li")
    assert report.count() == 1
    assert report.get_attribute("data-line") == "3"
    assert report.get_attribute("data-field") == "line 3.power"
    assert "Line 3, power" in report.text_content()
    message = page.text_content("#rd-stock-message")
    assert "Imported 2 pairs" in message and "1 added, 1 updated" in message
    assert "1 row was refused" in message
    ids = [page.input_value(f"#rd-stock-{i}-id") for i in range(len(STOCK) + 1)]
    assert ids == [r["id"] for r in STOCK] + ["R350-64"]
    assert stock_count(page, 0) == "7"
    assert page.input_value(f"#rd-stock-{len(STOCK)}-power") == "3.5"
    wait_for(page, "#rd-results", before)
    assert_same(shown(page, "readers_rank"), cli_readers(request_of(page, "#rd-results"), tmp_path))
    # Export: the core's CSV of the list as it is now.
    with page.expect_download() as download:
        page.click("#rd-export")
    text = Path(download.value.path()).read_text()
    assert text.splitlines()[0] == "id,power,oc_distance_mm,frame_size,count"
    assert "R350-64,+3.50,64,52-18,5" in text


# ---------------------------------------------------------------- deviation through glasses
def test_deviation_figures_match_cli(page):
    open_screen(page, "deviation")
    page.click("#dv-clear")
    page.check("#dv-fix-left")
    page.click("#dv-points summary")
    fill(page, DEVIATION_FIELDS)
    fill(page, {"#dv-pt-right-in": "2", "#dv-pt-right-up": "-3"})
    wanted = {"measured": "20 BI 4 BD", "centre_of_rotation_mm": 25, "fixating": "left",
              "right": {"rx": "+3.00 / -1.00 x 60", "prism": "1 BU"}, "left": {"rx": "-1.00 DS"},
              "points": {"right": {"in_mm": 2, "up_mm": -3}}}
    request = wait_request(page, "#dv-results", lambda r: r == wanted)
    expected = cli("deviation", request)
    keys = assert_same(shown(page, "deviation"), expected)
    for key in ("at_eye.in_words", "at_eye.base_in", "at_eye.base_up", "measured.in_words",
                "meridians.horizontal.at_eye", "meridians.vertical.factor", "explanation.0",
                "spectacle_prism.right.in_words", "spectacle_prism.right.base_up",
                "spectacle_prism.net.vertical_in_words",
                "lens_that_counts.written", "lens_effect.amount"):
        assert key in keys, f"{key} not shown"
    for i, _ in enumerate(expected["cautions"]):
        assert f"cautions.{i}" in keys
    assert any("stacked" in c for c in expected["cautions"])
    assert "stacked" in page.text_content("#dv-results .check-cautions")


def test_deviation_bad_input_and_case_lenses(page):
    page.goto(page.url.split("#")[0] + case_fragment(CASES["anisometropia"]))
    page.wait_for_function("() => document.querySelector('#right-rx').value !== ''")
    page.wait_for_timeout(400)
    open_screen(page, "deviation")
    page.click("#dv-clear")
    page.check("#dv-fix-right")
    page.click("#dv-from-case")
    assert page.input_value("#dv-lens-right-rx") == "-6.00 / -1.50 x 65"
    assert page.input_value("#dv-lens-left-rx") == "-2 / -1 x 170"
    assert page.input_value("#dv-lens-left-prism") == "0.5 BU 1 BO"
    before = seq(page, "#dv-results")
    page.fill("#dv-measured", "30 BO")
    wait_for(page, "#dv-results", before)
    expected = cli("deviation", request_of(page, "#dv-results"))
    figures = assert_same(shown(page, "deviation"), expected)
    assert "at_eye.in_words" in figures
    page.fill("#dv-measured", "30 BX")
    wait_for(page, "#dv-results", status="stale")
    assert page.get_attribute("#dv-measured", "aria-invalid") == "true"
    assert page.text_content("#dv-measured-error").startswith(
        "Prism that neutralised the deviation: cannot read")
    assert_same(shown(page, "deviation"), expected)      # the last good result stays
    page.fill("#dv-measured", "30 BO")
    page.fill("#dv-rotation", "90")
    wait_for(page, "#dv-results", status="stale")
    note = page.text_content("#dv-rotation-error")
    assert note.startswith("Lens to centre of rotation: ") and "_mm" not in note  # in words
    page.fill("#dv-rotation", "")
    wait_for(page, "#dv-results")


# ---------------------------------------------------------------- offline at the clinic
def test_readers_work_offline(context, own_site, tmp_path):
    page = context.new_page()
    page.goto(own_site.url)
    engine_ready(page)
    start_readers(page)
    page.wait_for_selector("body[data-offline=ready]")   # offered after this screen's first answer
    page.wait_for_function("() => navigator.serviceWorker.controller !== null")
    own_site.stop()
    with pytest.raises(urllib.error.URLError):
        urllib.request.urlopen(own_site.url, timeout=2)

    offline = context.new_page()
    offline.goto(own_site.url)
    engine_ready(offline)
    offline.wait_for_selector("#screen-readers:not([hidden])")      # the screen last used
    wait_for(offline, "#rd-results")
    expected = cli_readers(request_of(offline, "#rd-results"), tmp_path)
    assert_same(shown(offline, "readers_rank"), expected)
    first = offline.get_attribute("#rd-results .pair-card", "data-id")
    row = next(i for i, r in enumerate(STOCK) if r["id"] == first)
    before = seq(offline, "#rd-results")
    offline.click(f"#rd-results .pair-card[data-id='{first}'] .hand-out")
    wait_for(offline, "#rd-results", before)
    assert stock_count(offline, row) == str(int(STOCK[row]["count"]) - 1)


# ---------------------------------------------------------------- accessibility and screenshots
@pytest.fixture(scope="module")
def looks(browser: Any, site: Site) -> Any:
    """A page for axe-core and screenshots (axe is injected inline, so this context
    bypasses the page's policy; the app itself is unchanged)."""
    watch = Watch()
    ctx = browser.new_context(bypass_csp=True, viewport={"width": 1024, "height": 768})
    ctx.set_default_timeout(60_000)
    watch.attach(ctx)
    page = ctx.new_page()
    page.goto(site.url)
    engine_ready(page)
    start_readers(page)
    open_screen(page, "verify")
    fill(page, VERIFY_FIELDS)
    wait_for(page, "#vf-results")
    open_screen(page, "deviation")
    fill(page, DEVIATION_FIELDS)
    wait_for(page, "#dv-results")
    yield page
    ctx.close()
    assert not watch.unexpected(), watch.unexpected()



@pytest.mark.parametrize("width,height", [(360, 740), (1024, 768)])
@pytest.mark.parametrize("screen", ["verify", "readers", "deviation"])
def test_no_serious_accessibility_problems(looks, screen, width, height):
    page = looks
    page.set_viewport_size({"width": width, "height": height})
    open_screen(page, screen)
    for summary in page.locator(f"#screen-{screen} details:not([open]) > summary").all():
        if summary.is_visible():
            summary.click()
    assert serious_violations(page) == []


def test_no_serious_accessibility_problems_in_error_states(looks):
    page = looks
    page.set_viewport_size({"width": 360, "height": 740})
    open_screen(page, "verify")
    page.fill("#vf-ord-left-pd", "3x")
    wait_for(page, "#vf-results", status="stale")
    open_screen(page, "readers")
    page.fill("#rd-stock-1-count", "-1")
    wait_for(page, "#rd-results", status="stale")
    assert serious_violations(page) == []
    page.fill("#rd-stock-1-count", STOCK[1]["count"])
    wait_for(page, "#rd-results")
    open_screen(page, "verify")
    page.fill("#vf-ord-left-pd", "31.5")
    wait_for(page, "#vf-results")


def test_touch_targets_on_the_check_screens(looks):
    page = looks
    page.set_viewport_size({"width": 360, "height": 740})
    for screen in ("verify", "readers", "deviation"):
        open_screen(page, screen)
        small = page.evaluate("""() => [
            ...document.querySelectorAll('input, button, select, summary')]
            .filter(e => e.offsetParent !== null && e.type !== 'file')
            .map(e => [e.id || e.textContent.trim(),
                       (e.type === 'radio' ? e.closest('label') : e).getBoundingClientRect()])
            .filter(([, r]) => r.height < 44 || r.width < 44)
            .map(([n, r]) => n + ' ' + r.width + 'x' + r.height)""")
        assert small == [], screen


@pytest.mark.parametrize("width,height", [(360, 740), (1024, 768)])
def test_screenshots(looks, width, height):
    page = looks
    SCREENS.mkdir(exist_ok=True)
    page.set_viewport_size({"width": width, "height": height})
    for close in page.locator(".notice .close").all():      # passing notices would hide the screen
        close.click()
    for screen in ("verify", "readers", "deviation"):
        open_screen(page, screen)
        page.wait_for_timeout(200)
        overflow = page.evaluate("() => document.documentElement.scrollWidth - window.innerWidth")
        assert overflow <= 0, f"{screen} scrolls sideways by {overflow}px at {width}px"
        page.screenshot(path=str(SCREENS / f"checks-{screen}-{width}x{height}.png"))
        page.screenshot(path=str(SCREENS / f"checks-{screen}-{width}x{height}-full.png"),
                        full_page=True)
        results = page.locator(f"#screen-{screen} .check-results")
        results.scroll_into_view_if_needed()
        page.screenshot(path=str(SCREENS / f"checks-{screen}-{width}x{height}-results.png"))
    open_screen(page, "verify")
    page.fill("#vf-mes-left-prism", "0.25 BX")
    wait_for(page, "#vf-results", status="stale")
    page.locator("#vf-mes-left-prism-error").scroll_into_view_if_needed()
    page.screenshot(path=str(SCREENS / f"checks-verify-{width}x{height}-bad-input.png"))
    page.emulate_media(media="print")
    page.screenshot(path=str(SCREENS / f"checks-verify-{width}x{height}-print.png"), full_page=True)
    page.emulate_media(media="screen")
    page.fill("#vf-mes-left-prism", VERIFY_FIELDS["#vf-mes-left-prism"])
    wait_for(page, "#vf-results")
