"""Offline use, updates, and the promise that nothing leaves the app's own origin.

Each test serves its own copy of dist/, so it can stop the server or publish
a new release without disturbing other tests.
"""

from __future__ import annotations

import urllib.error
import urllib.request

import pytest
from e2e_support import (
    CASES,
    address_case,
    assert_figures_match,
    case_fragment,
    cli_evaluate,
    wait_result,
)

import build


def wait_offline_ready(page):
    page.wait_for_selector("body[data-offline=ready]")
    page.wait_for_function("() => navigator.serviceWorker.controller !== null")


def cache_names(page):
    """The service worker's caches (not the interpreter image the worker keeps)."""
    return sorted(n for n in page.evaluate("() => caches.keys()") if n.startswith("prism-desk-"))


def test_bookmark_computes_offline_after_first_visit(context, own_site, watch):
    page = context.new_page()
    page.goto(own_site.url + case_fragment(CASES["oblique-progressive"]))
    wait_result(page)
    wait_offline_ready(page)
    assert page.is_visible(".notice:has-text('works offline')")

    own_site.stop()
    with pytest.raises(urllib.error.URLError):
        urllib.request.urlopen(own_site.url, timeout=2)

    bookmark = own_site.url + case_fragment(CASES["crossed-obliques"])
    offline = context.new_page()
    offline.goto(bookmark)
    wait_result(offline)
    assert_figures_match(offline, cli_evaluate(address_case(offline)))
    offline.reload()
    wait_result(offline)
    assert_figures_match(offline, cli_evaluate(address_case(offline)))


def test_nothing_leaves_the_origin(context, own_site, watch):
    page = context.new_page()
    page.goto(own_site.url + case_fragment(CASES["crossed-obliques"]))
    wait_result(page)
    wait_offline_ready(page)
    page.fill("#right-sphere", "5")
    page.reload()
    wait_result(page)
    assert watch.requests, "no requests were recorded"
    outside = [url for url in watch.requests
               if not url.startswith(own_site.url) and not url.startswith(("data:", "blob:"))]
    assert outside == []
    fetched = {url.split("#")[0].removeprefix(own_site.url) for url in watch.requests}
    assert {"worker.js", "pyodide/pyodide.asm.wasm", "pyodide-lock.json", "sw.js"} <= fetched
    assert any(u.startswith("wheels/") and u.endswith(".whl") for u in fetched)


def test_update_waits_for_the_user_then_replaces_the_cache(context, own_site, watch):
    page = context.new_page()
    page.goto(own_site.url + case_fragment(CASES["anisometropia"]))
    wait_result(page)
    wait_offline_ready(page)
    first = cache_names(page)
    assert len(first) == 1

    # Publish a new release: one file changes, so the precache list and version change.
    styles = own_site.root / "styles.css"
    styles.write_text(styles.read_text() + "\n/* next release */\n")
    version, _ = build.write_service_worker(own_site.root)
    page.evaluate("() => navigator.serviceWorker.getRegistration().then((r) => r.update())")
    page.wait_for_selector(".notice:has-text('new version')")
    # The new cache is complete before anything is dropped; the old one still serves.
    assert sorted(cache_names(page)) == sorted([*first, f"prism-desk-{version}"])

    with page.expect_navigation():
        page.click(".notice button:has-text('Reload to update')")
    wait_result(page)
    assert cache_names(page) == [f"prism-desk-{version}"]
    assert address_case(page)["right"] == {"rx": "-6.00 / -1.50 x 65"}
    assert_figures_match(page, cli_evaluate(address_case(page)))


def test_engine_failure_is_explained_and_input_kept(context, site, watch):
    watch.allowed_errors.append("404")
    page = context.new_page()
    page.route("**/pyodide-lock.json", lambda route: route.fulfill(status=404, body="gone"))
    page.goto(site.url + case_fragment(CASES["own-points-only"]))
    page.wait_for_selector("#results[data-status=failed]")
    text = page.text_content("#result-body")
    assert "could not start" in text and "WebAssembly" in text
    assert page.input_value("#right-sphere") == "+2.25"   # kept, written the trade's way
    page.fill("#right-sphere", "2.5")                   # still editable, still kept
    page.wait_for_function("() => location.hash.length > 10")
    page.wait_for_timeout(300)
    assert address_case(page)["right"]["sphere"] == 2.5


IMAGE_KEYS = """async () => {
    if (!(await caches.has('pd-interpreter-image'))) return [];
    const cache = await caches.open('pd-interpreter-image');
    return (await cache.keys()).map((r) => r.url);
}"""


def wait_image(page, check="true", seconds=30):
    """The key of the one interpreter image, once it is there (and `check` holds for it)."""
    for _ in range(seconds * 10):
        keys = page.evaluate(IMAGE_KEYS)
        if len(keys) == 1 and page.evaluate(f"""async (key) => {{
                const response = await (await caches.open('pd-interpreter-image')).match(key);
                const size = response ? (await response.arrayBuffer()).byteLength : 0;
                return {check};
            }}""", keys[0]):
            return keys[0]
        page.wait_for_timeout(100)
    raise AssertionError("no interpreter image was kept")


def test_repeat_visit_restores_the_interpreter_image(context, site, watch):
    page = context.new_page()
    page.goto(site.url + case_fragment(CASES["oblique-progressive"]))
    wait_result(page)
    assert page.get_attribute("body", "data-engine-start") == "boot"
    wait_image(page)
    page.close()

    again = context.new_page()
    again.goto(site.url + case_fragment(CASES["crossed-obliques"]))
    wait_result(again)
    assert again.get_attribute("body", "data-engine-start") == "image"
    assert_figures_match(again, cli_evaluate(address_case(again)))
    again.fill("#left-axis", "181")                       # refusals still work
    wait_result(again, status="stale")
    assert "Left axis" in again.text_content("#left-axis-error")   # in words
    again.fill("#left-axis", "45")
    again.click("#add-point")
    again.locator("#custom-points li").last.locator("[data-field='left.up_mm']").fill("-12")
    wait_result(again)
    assert_figures_match(again, cli_evaluate(address_case(again)))


def test_damaged_image_is_replaced_and_the_app_still_starts(context, site, watch):
    page = context.new_page()
    page.goto(site.url + case_fragment(CASES["anisometropia"]))
    wait_result(page)
    key = wait_image(page)
    page.evaluate("""async (key) => {
        const cache = await caches.open('pd-interpreter-image');
        await cache.put(key, new Response(new Uint8Array(4096).fill(7)));
    }""", key)
    page.close()

    again = context.new_page()
    again.goto(site.url + case_fragment(CASES["anisometropia"]))
    wait_result(again)
    assert again.get_attribute("body", "data-engine-start") == "boot"
    assert_figures_match(again, cli_evaluate(address_case(again)))
    assert wait_image(again, check="size > 1e6") == key


def test_without_decompression_stream_python_unpacks_the_wheel(context, site, watch):
    """A browser without DecompressionStream (older Safari): the worker cannot inflate
    the wheel itself and has Python's zipfile unpack it; the core is whole either way."""
    served = []

    def older_browser(route):
        served.append(route.request.url)
        original = route.fetch()
        route.fulfill(response=original,
                      body="globalThis.DecompressionStream = undefined;\n" + original.text())

    page = context.new_page()
    page.route("**/worker.js", older_browser)
    page.goto(site.url + case_fragment(CASES["crossed-obliques"]))
    wait_result(page)
    assert served, "the worker script was not served through the route"
    assert page.get_attribute("body", "data-engine-start") == "boot"
    assert_figures_match(page, cli_evaluate(address_case(page)))


def test_installable(context, own_site, watch):
    page = context.new_page()
    page.goto(own_site.url)
    wait_result(page, status="error")                  # an empty form is enough here
    page.fill("#right-sphere", "0")
    page.fill("#left-sphere", "0")
    page.fill("#right-pd", "32")
    page.fill("#left-pd", "32")
    wait_result(page)
    wait_offline_ready(page)
    cdp = context.new_cdp_session(page)
    errors = cdp.send("Page.getInstallabilityErrors")["installabilityErrors"]
    # Test contexts are incognito-like, which alone would stop installing.
    assert [e for e in errors if e["errorId"] != "in-incognito"] == []
    manifest = cdp.send("Page.getAppManifest")
    assert not manifest.get("errors")
