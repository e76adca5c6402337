"""Offline use, updates, and the promise that nothing leaves the app's own origin.

Each test serves its own copy of dist/, so it can stop the server or publish
a new release without disturbing other tests.
"""

from __future__ import annotations

import shutil
import urllib.error
import urllib.request

import build
import pytest
from conftest import Site
from e2e_support import CASES, address_case, assert_figures_match, case_fragment, cli_evaluate, wait_result


@pytest.fixture
def own_site(dist, tmp_path):
    root = tmp_path / "site"
    shutil.copytree(dist, root)
    served = Site(root)
    yield served
    if served.thread.is_alive():
        served.stop()


def wait_offline_ready(page):
    page.wait_for_selector("body[data-offline=ready]")
    page.wait_for_function("() => navigator.serviceWorker.controller !== null")


def cache_names(page):
    return sorted(page.evaluate("() => caches.keys()"))


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
    assert sorted(cache_names(page)) == sorted(first + [f"prism-desk-{version}"])

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
    assert page.input_value("#right-sphere") == "2.25"
    page.fill("#right-sphere", "2.5")                   # still editable, still kept
    page.wait_for_function("() => location.hash.length > 10")
    page.wait_for_timeout(300)
    assert address_case(page)["right"]["sphere"] == 2.5
