"""Nothing lost by a slip, nothing stuck: New, Back, undo, storage, bad links and files.

Most tests share one page (the engine boots once per module); each starts from
an empty localStorage. The expected figures come from the command line
(``python -m pycore evaluate``) for the case the page holds.
"""

from __future__ import annotations

import base64
import json
from typing import Any

import pytest
from conftest import Site, Watch
from e2e_support import (
    CASES,
    address_case,
    assert_figures_match,
    case_fragment,
    cli_evaluate,
    ready_app,
    result_seq,
    wait_result,
)

STORE_KEY = "prism-desk.store"
OLD_STOCK_KEY = "prism-desk.checks.readers-stock"
STOCK_ROWS = [
    {"id": "R250-62", "power": "2.5", "oc_distance_mm": "62", "frame_size": "50-18", "count": "4"},
    {"id": "R300-64", "power": "3", "oc_distance_mm": "64", "frame_size": "", "count": "1"},
]


@pytest.fixture(scope="module")
def app(browser: Any, site: Site) -> Any:
    yield from ready_app(browser, site, viewport={"width": 1024, "height": 768},
                         accept_downloads=True)


def fresh(page: Any, url: str, storage: dict[str, str] | None = None) -> None:
    """An empty profile (plus `storage`), then `url` loaded on the case screen."""
    page.evaluate("""(items) => {
        localStorage.clear();
        localStorage.setItem('prism-desk.checks.screen', '"case"');
        for (const [k, v] of Object.entries(items)) localStorage.setItem(k, v);
    }""", storage or {})
    page.goto("about:blank")
    page.goto(url)
    page.wait_for_selector("#engine[data-state=ready]")


def stored(page: Any, key: str) -> Any:
    text = page.evaluate("(k) => localStorage.getItem(k)", key)
    return None if text is None else json.loads(text)


def message(page: Any) -> str:
    return page.text_content("#case-message") or ""


def link(raw: bytes) -> str:
    return "#case=" + base64.urlsafe_b64encode(raw).decode().rstrip("=")


def nested(levels: int) -> dict[str, Any]:
    doc: dict[str, Any] = {}
    for _ in range(levels - 1):
        doc = {"a": doc}
    return doc


# ---------------------------------------------------------------- New, Back, undo
def test_new_on_an_edited_case_can_be_undone_and_back_returns(app, site):
    page = app
    fresh(page, site.url + case_fragment(CASES["anisometropia"]))
    wait_result(page)
    seq = result_seq(page)
    page.fill("#left-sphere", "-2.5")                   # an unsaved edit
    wait_result(page, after=seq)
    edited = address_case(page)
    assert edited["left"]["sphere"] == -2.5
    page.click("#new-case")
    wait_result(page, status="error")
    assert page.input_value("#left-sphere") == ""
    page.click("#case-message button:has-text('Undo')")
    wait_result(page)
    assert address_case(page) == edited
    assert page.input_value("#left-sphere") == "-2.5"

    page.click("#new-case")
    wait_result(page, status="error")
    page.go_back()                                      # the browser's Back
    wait_result(page)
    assert address_case(page) == edited
    assert page.input_value("#left-sphere") == "-2.5"
    assert_figures_match(page, cli_evaluate(edited))


def test_back_returns_before_open_and_import(app, site, tmp_path):
    page = app
    fresh(page, site.url + case_fragment(CASES["own-points-only"]))
    wait_result(page)
    page.fill("#case-name", "kept one")
    page.click("#save-case")
    page.wait_for_selector("#case-message:has-text('Saved')")
    first = address_case(page)

    page.evaluate("(hash) => { location.hash = hash; }", case_fragment(CASES["crossed-obliques"]))
    page.wait_for_function("() => document.querySelector('#right-sphere').value === '+4.50'")
    wait_result(page)
    second = address_case(page)
    page.select_option("#saved-cases", "kept one")
    page.click("#open-saved")
    page.wait_for_function("() => document.querySelector('#case-name').value === 'kept one'")
    wait_result(page)
    page.go_back()
    page.wait_for_function("() => document.querySelector('#right-sphere').value === '+4.50'")
    wait_result(page)
    assert address_case(page) == second

    imported = tmp_path / "imported.prism.json"
    imported.write_text(json.dumps(CASES["oblique-progressive"]))
    page.set_input_files("#import-file", str(imported))
    page.wait_for_selector("#case-message:has-text('Imported')")
    wait_result(page)
    assert address_case(page) == CASES["oblique-progressive"]
    page.go_back()
    page.wait_for_function("() => document.querySelector('#right-sphere').value === '+4.50'")
    wait_result(page)
    assert address_case(page) == second
    assert first != second


def test_deleting_a_saved_case_can_be_undone(app, site):
    page = app
    fresh(page, site.url + case_fragment(CASES["crossed-obliques"]))
    wait_result(page)
    kept = address_case(page)
    page.click("#save-case")
    page.wait_for_selector("#case-message:has-text('Saved')")
    name = CASES["crossed-obliques"]["name"]
    page.select_option("#saved-cases", name)
    page.click("#delete-saved")
    page.wait_for_selector("#case-message:has-text('Deleted')")
    assert name not in stored(page, STORE_KEY)["cases"]
    page.click("#case-message button:has-text('Undo')")
    page.wait_for_selector("#case-message:has-text('Brought back')")
    assert stored(page, STORE_KEY)["cases"][name]["case"] == kept
    assert page.locator("#saved-cases option").all_text_contents() == [name]


def test_removing_a_stock_row_can_be_undone(app, site):
    page = app
    fresh(page, site.url, {OLD_STOCK_KEY: json.dumps(STOCK_ROWS)})
    page.click("#tab-readers")
    page.wait_for_selector("#rd-stock-1-id")
    page.click("#rd-stock-list .stock-row[data-row='0'] .remove")
    assert page.locator("#rd-stock-list .stock-row").count() == 1
    page.reload()
    page.wait_for_selector("#rd-stock-0-id")
    assert page.input_value("#rd-stock-0-id") == "R300-64"   # the removal is kept...
    page.click("#rd-stock-list .stock-row[data-row='0'] .remove")
    page.click("#rd-undo-remove")                            # ...and undone
    assert page.input_value("#rd-stock-0-id") == "R300-64"
    page.reload()
    page.wait_for_selector("#rd-stock-0-id")
    assert page.input_value("#rd-stock-0-id") == "R300-64"
    page.click("#tab-case")


# ---------------------------------------------------------------- storage
def test_profile_of_the_previous_schema_is_upgraded(app, site):
    """Schema 1 (the store as the previous release wrote it, and the readers
    stock as one array): after the update every case, the draft and the stock are there."""
    page = app
    schema1 = {"schema": 1,
               "cases": {"clinic A": {"saved": "2026-01-05T10:00:00.000Z",
                                      "case": CASES["anisometropia"]},
                         "clinic B": {"saved": "2026-01-06T10:00:00.000Z",
                                      "case": CASES["own-points-only"]}},
               "draft": {"saved": "2026-01-07T10:00:00.000Z", "case": CASES["crossed-obliques"]}}
    fresh(page, site.url, {STORE_KEY: json.dumps(schema1), OLD_STOCK_KEY: json.dumps(STOCK_ROWS)})
    wait_result(page)
    assert address_case(page)["name"] == CASES["crossed-obliques"]["name"]   # the draft
    assert address_case(page)["right"] == CASES["crossed-obliques"]["right"]
    assert page.locator("#saved-cases option").all_text_contents() == ["clinic A", "clinic B"]
    upgraded = stored(page, STORE_KEY)
    assert upgraded["schema"] == 2
    assert upgraded["cases"] == schema1["cases"]
    page.select_option("#saved-cases", "clinic A")
    seq = result_seq(page)
    page.click("#open-saved")
    wait_result(page, after=seq)
    assert_figures_match(page, cli_evaluate(CASES["anisometropia"]))
    page.click("#tab-readers")
    page.wait_for_selector("#rd-stock-1-id")
    assert [page.input_value(f"#rd-stock-{i}-id") for i in range(2)] == ["R250-62", "R300-64"]
    assert page.input_value("#rd-stock-0-frame_size") == "50-18"
    assert stored(page, OLD_STOCK_KEY) is None                     # moved, one key per row
    page.click("#tab-case")


def test_a_null_row_in_the_stored_stock_leaves_the_others(app, site):
    page = app
    fresh(page, site.url, {OLD_STOCK_KEY: json.dumps([STOCK_ROWS[0], None, STOCK_ROWS[1]])})
    page.click("#tab-readers")
    page.wait_for_selector("#rd-stock-1-id")
    assert page.locator("#rd-stock-list .stock-row").count() == 2
    assert page.is_visible("#rd-title")
    assert "1 unreadable row" in page.text_content("#notices")
    page.evaluate("() => localStorage.setItem('prism-desk.stock.broken', 'null')")
    page.reload()
    page.wait_for_selector("#rd-stock-1-id")
    assert "unreadable" in page.text_content("#rd-stock-message")
    page.click("#tab-case")


def test_unreadable_store_is_kept_and_offered_as_a_file(app, site, tmp_path):
    page = app
    damaged = '{"schema": 1, "cases": {"Mrs K": {"case": {"right": {"sphere": 1'   # cut short
    fresh(page, site.url + case_fragment(CASES["own-points-only"]), {STORE_KEY: damaged})
    wait_result(page)
    notice = page.locator("#storage-notice")
    assert "could not be read" in notice.text_content()
    assert page.evaluate("() => localStorage.getItem('prism-desk.store.unreadable')") == damaged
    with page.expect_download() as info:
        notice.locator("button:has-text('Download')").click()
    kept = tmp_path / "kept.txt"
    info.value.save_as(kept)
    assert kept.read_text() == damaged
    page.fill("#case-name", "after repair")
    page.click("#save-case")
    page.wait_for_selector("#case-message:has-text('Saved')")
    assert "after repair" in stored(page, STORE_KEY)["cases"]
    page.reload()                                           # the copy is never overwritten
    wait_result(page)
    assert page.evaluate("() => localStorage.getItem('prism-desk.store.unreadable')") == damaged


@pytest.mark.parametrize("shape", [{"schema": 1, "cases": []}, {"schema": 1, "cases": "x"}, [1, 2],
                                   {"schema": "one"}])
def test_store_of_the_wrong_shape_never_says_saved_without_keeping(app, site, shape):
    page = app
    fresh(page, site.url + case_fragment(CASES["anisometropia"]), {STORE_KEY: json.dumps(shape)})
    wait_result(page)
    page.fill("#case-name", "must be kept")
    page.click("#save-case")
    page.wait_for_selector("#case-message:has-text('Saved')")
    assert stored(page, STORE_KEY)["cases"]["must be kept"]["case"]["name"] == "must be kept"
    backup = page.evaluate("() => localStorage.getItem('prism-desk.store.unreadable')")
    assert backup == json.dumps(shape)


def test_newer_schema_is_named_and_left_untouched(app, site):
    page = app
    newer = json.dumps({"schema": 9, "cases": {"from later": {"case": CASES["anisometropia"]}},
                        "draft": None, "more": "a later field"})
    fresh(page, site.url + case_fragment(CASES["own-points-only"]), {STORE_KEY: newer})
    wait_result(page)
    assert "newer version" in page.text_content("#storage-notice")
    page.fill("#case-name", "try")
    page.click("#save-case")
    page.wait_for_selector("#case-message:has-text('Not saved')")
    assert "newer version" in message(page) and "full" not in message(page)
    assert page.evaluate("(k) => localStorage.getItem(k)", STORE_KEY) == newer


def test_two_tabs_on_the_readers_screen_lose_nothing(app, site):
    fresh(app, site.url, {OLD_STOCK_KEY: json.dumps(STOCK_ROWS[:1])})
    context = app.context
    one, two = context.new_page(), context.new_page()
    for page in (one, two):
        page.goto(site.url)
        page.click("#tab-readers")
        page.wait_for_selector("#rd-stock-0-id")
    one.click("#rd-add-row")
    one.fill("#rd-stock-1-id", "TAB-ONE")
    two.wait_for_function("() => document.querySelector('#rd-stock-1-id')?.value === 'TAB-ONE'")
    two.click("#rd-add-row")
    two.fill("#rd-stock-2-id", "TAB-TWO")
    one.wait_for_function("() => document.querySelector('#rd-stock-2-id')?.value === 'TAB-TWO'")
    one.fill("#rd-stock-0-count", "9")                     # edits of different rows at once
    two.fill("#rd-stock-1-count", "3")
    for page in (one, two):
        page.reload()
        page.click("#tab-readers")
        page.wait_for_selector("#rd-stock-2-id")
        ids = [page.input_value(f"#rd-stock-{i}-id") for i in range(3)]
        assert ids == ["R250-62", "TAB-ONE", "TAB-TWO"]
        assert page.input_value("#rd-stock-0-count") == "9"
        assert page.input_value("#rd-stock-1-count") == "3"
        page.click("#tab-case")
        page.close()


# ---------------------------------------------------------------- documents and links
@pytest.mark.parametrize("kind, doc, words", [
    ("deviation", {"measured": "45 BO", "fixating": "right", "right": {"rx": "-10.00 DS"},
                   "left": {"rx": "-10.00 DS"}}, "a deviation document"),
    ("readers", {"wearer": {"distance_pd_mm": 64, "right": {"rx": "+2.50 DS"},
                            "left": {"rx": "+2.50 DS"}}, "stock": []},
     "a ready-made readers document"),
    ("verification", {"standard": "ansi-z80.1-2015", "lens_type": "single_vision",
                      "ordered": {"right": {"rx": "+1.00 DS"}, "left": {"rx": "+1.00 DS"}},
                      "measured": {"right": {"prism": "0 BU"}, "left": {"prism": "0 BU"}}},
     "verification"),
])
def test_a_document_of_another_kind_is_refused_on_the_case_screen(app, site, tmp_path, kind, doc,
                                                                  words):
    page = app
    fresh(page, site.url + case_fragment(CASES["anisometropia"]))
    wait_result(page)
    before = address_case(page)
    path = tmp_path / f"{kind}.json"
    path.write_text(json.dumps(doc))
    page.set_input_files("#import-file", str(path))
    page.wait_for_selector("#case-message:has-text('Not imported')")
    text = message(page)
    assert words in text and "not a case" in text and "unchanged" in text
    assert address_case(page) == before
    assert stored(page, STORE_KEY)["draft"]["case"] == before


def test_a_case_is_refused_on_the_readers_screen(app, site, tmp_path):
    page = app
    fresh(page, site.url, {OLD_STOCK_KEY: json.dumps(STOCK_ROWS)})
    page.click("#tab-readers")
    page.wait_for_selector("#rd-stock-1-id")
    path = tmp_path / "a-case.json"
    path.write_text(json.dumps(CASES["crossed-obliques"]))
    page.set_input_files("#rd-import-file", str(path))
    page.wait_for_selector("#rd-stock-message:has-text('Not imported')")
    assert "is a case, not a ready-made readers document" in page.text_content("#rd-stock-message")
    assert page.locator("#rd-stock-list .stock-row").count() == 2
    page.click("#tab-case")


def test_nesting_beyond_32_levels_is_refused_before_sending_or_saving(app, site, tmp_path):
    page = app
    fresh(page, site.url + case_fragment(CASES["own-points-only"]))
    wait_result(page)
    draft = stored(page, STORE_KEY)["draft"]["case"]
    deep = dict(CASES["anisometropia"], notes=nested(40))
    page.goto(site.url + case_fragment(deep))
    page.wait_for_selector("#case-message:has-text('nested more than 32 levels')")
    wait_result(page)                                     # the engine is not stuck
    assert stored(page, STORE_KEY)["draft"]["case"] == draft
    assert address_case(page) == draft
    # An imported file, far deeper than the browser can copy to the worker.
    path = tmp_path / "deep.json"
    path.write_text('{"right": ' * 5000 + "1" + "}" * 5000)
    page.set_input_files("#import-file", str(path))
    page.wait_for_selector("#case-message:has-text('Not imported')")
    assert "nested more than 32 levels" in message(page)
    assert address_case(page) == draft
    # Exactly 32 levels is a document like any other (the core then names the field).
    page.goto("about:blank")
    page.goto(site.url + case_fragment(dict(CASES["anisometropia"], notes=nested(31))))
    page.wait_for_function("() => ['current', 'error'].includes("
                           "document.querySelector('#results').dataset.status)")
    assert "nested" not in message(page)
    assert address_case(page)["notes"] == nested(31)


@pytest.mark.parametrize("hash, words", [
    ("#case=%%%", "not valid base64"),
    (link(b"\xff\xfe not text"), "not decode to UTF-8 text"),
    (link(b"right: +1.00"), "is not JSON"),
    (link(b"[1, 2, 3]"), "does not hold a JSON object"),
    (link(b'"a string"'), "does not hold a JSON object"),
])
def test_a_damaged_link_says_so(app, site, hash, words):
    page = app
    fresh(page, site.url + case_fragment(CASES["own-points-only"]))
    wait_result(page)
    page.goto("about:blank")
    page.goto(site.url + hash)
    page.wait_for_selector("#case-message:has-text('damaged')")
    text = message(page)
    assert words in text
    assert "the case you last worked on" in text                  # never passed off as the link's
    wait_result(page)


def test_malformed_points_are_refused_not_dropped(app, site):
    page = app
    fresh(page, site.url + case_fragment(CASES["own-points-only"]))
    wait_result(page)
    bad = dict(CASES["anisometropia"], points=["distance", 7, {"name": "x", "right": {"in_mm": 1}}])
    page.goto("about:blank")
    page.goto(site.url + case_fragment(bad))
    page.wait_for_selector("#case-message:has-text('point of gaze 2')")
    assert "not opened" in message(page)
    wait_result(page)
    assert address_case(page) == CASES["own-points-only"]


def test_a_key_named_constructor_never_prints_code(app, site):
    page = app
    doc = dict(CASES["own-points-only"], constructor=1)
    fresh(page, site.url + case_fragment(doc))
    page.wait_for_selector("#result-status:has-text('constructor')")
    body = page.text_content("body")
    assert "native code" not in body and "function" not in body


# ---------------------------------------------------------------- the engine
def test_a_message_that_cannot_be_sent_is_answered_at_once(app):
    """postMessage throws (here: a value the browser cannot copy): the request is
    answered at once and nothing stays pending."""
    reply = app.evaluate("""async () => {
        const { Messenger } = await import(new URL('app.js', location.href).href);
        const worker = { addEventListener() {}, terminate() {},
                         postMessage(message) { structuredClone(message); } };
        const messenger = new Messenger(worker, { startTimeoutMs: 600000 });
        const reply = await messenger.request('evaluate', { name: () => 1 });
        clearTimeout(messenger.startTimer);
        return [reply.ok, reply.error.code, messenger.pending.size];
    }""")
    assert reply == [False, "send", 0]


@pytest.mark.parametrize("file", ["pyodide.asm.wasm", "python_stdlib.zip"])
def test_a_runtime_file_that_fails_to_download_fails_at_once(browser, site, file):
    watch = Watch()
    # The runtime's own report of the failed download (in the worker's console).
    watch.allowed_errors += ["Failed to load resource", "installing the standard library",
                             "pyodide.mjs"]
    ctx = browser.new_context()
    watch.attach(ctx)
    page = ctx.new_page()
    page.route(f"**/pyodide/{file}", lambda route: route.abort())
    page.goto(site.url + case_fragment(CASES["own-points-only"]))
    page.wait_for_selector("#results[data-status=failed]", timeout=20_000)   # not the 45 s time-out
    text = page.text_content("#result-body")
    assert file in text and "could not be downloaded" in text
    for raw in ("TypeError", "Error:", "at http", "wasm://"):
        assert raw not in text
    assert page.get_attribute("#engine", "data-state") == "failed"
    assert page.is_visible("#engine-action:has-text('Reload')")
    assert page.input_value("#right-sphere") == "+2.25"   # kept, written the trade's way
    page.unroute(f"**/pyodide/{file}")
    with page.expect_navigation():
        page.click("#engine-action")
    page.wait_for_selector("#engine[data-state=ready]", timeout=90_000)
    ctx.close()
    assert not watch.unexpected(), watch.unexpected()


def test_a_worker_that_dies_is_shown_in_the_header_and_restarts(browser, site):
    watch = Watch()
    watch.allowed_errors.append("worker gone")
    ctx = browser.new_context()
    ctx.set_default_timeout(90_000)
    watch.attach(ctx)
    page = ctx.new_page()
    page.goto(site.url + case_fragment(CASES["anisometropia"]))
    wait_result(page)
    page.workers[0].evaluate("() => { setTimeout(() => { throw new Error('worker gone'); }, 0); }")
    page.wait_for_selector("#engine[data-state=stopped]")
    assert "stopped" in page.text_content("#engine").lower()
    assert page.get_attribute("#results", "data-status") == "stopped"
    page.fill("#left-sphere", "-2.25")                      # typing still keeps the case
    page.wait_for_function("() => location.hash.length > 10")
    page.click("#engine-action:has-text('Restart')")
    page.wait_for_selector("#engine[data-state=ready]")
    wait_result(page)
    assert address_case(page)["left"]["sphere"] == -2.25
    assert_figures_match(page, cli_evaluate(address_case(page)))
    ctx.close()
    assert not watch.unexpected(), watch.unexpected()


def test_first_visit_on_a_slow_link_shows_what_is_fetched(browser, site):
    ctx = browser.new_context()
    page = ctx.new_page()
    cdp = ctx.new_cdp_session(page)
    cdp.send("Network.enable")
    cdp.send("Network.emulateNetworkConditions", {"offline": False, "latency": 50,
                                                  "downloadThroughput": 3_000_000,
                                                  "uploadThroughput": 1_000_000})
    page.goto(site.url)
    line = page.wait_for_selector("#first-visit .fetching:has-text('MB left')", timeout=60_000)
    assert "Fetching" in line.text_content()
    assert "later visits start in about a second" in page.text_content("#first-visit")
    cdp.send("Network.emulateNetworkConditions", {"offline": False, "latency": 0,
                                                  "downloadThroughput": -1, "uploadThroughput": -1})
    page.wait_for_selector("#engine[data-state=ready]", timeout=120_000)
    assert page.locator("#first-visit").count() == 0
    ctx.close()

