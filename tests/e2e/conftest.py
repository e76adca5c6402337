"""Browser tests of the offline app: a real HTTP server on 127.0.0.1 and Chromium.

dist/ is built if it is missing or older than its sources. Each test module
launches Chromium once; each test gets a fresh browser context whose page
errors and console errors fail the test.
"""

from __future__ import annotations

import os
import shutil
import sys
import threading
from collections.abc import Iterator
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(Path(__file__).resolve().parent))

import build  # noqa: E402

playwright_api = pytest.importorskip("playwright.sync_api")

CHROMIUM = os.environ.get("PRISM_DESK_CHROMIUM", "/usr/bin/chromium")
CHROMIUM_ARGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking",
                 "--disable-component-update", "--disable-sync"]


def pytest_collection_modifyitems(config: pytest.Config, items: list[pytest.Item]) -> None:
    here = Path(__file__).resolve().parent
    for item in items:
        if here in Path(str(item.fspath)).resolve().parents:
            item.add_marker(pytest.mark.e2e)


class Site:
    """dist/ (or another folder) served on 127.0.0.1 at a port the system picks."""

    def __init__(self, root: Path) -> None:
        self.root = root
        self.server = build.make_server(root, 0, quiet=True)
        self.url = f"http://127.0.0.1:{self.server.server_address[1]}/"
        self.thread = threading.Thread(target=self.server.serve_forever, daemon=True)
        self.thread.start()

    def stop(self) -> None:
        self.server.shutdown()
        self.server.server_close()
        self.thread.join(5)


class Watch:
    """What a context did: page errors, console errors, every request's URL."""

    def __init__(self) -> None:
        self.errors: list[str] = []
        self.requests: list[str] = []
        self.allowed_errors: list[str] = []

    def attach(self, context: object) -> None:
        context.on("request", lambda request: self.requests.append(request.url))
        context.on("page", self.attach_page)
        for page in context.pages:
            self.attach_page(page)

    def attach_page(self, page: object) -> None:
        page.on("pageerror", lambda error: self.errors.append(f"page error: {error}"))
        page.on("console", lambda msg: msg.type == "error"
                and self.errors.append(f"console error: {msg.text}"))

    def unexpected(self) -> list[str]:
        return [e for e in self.errors if not any(a in e for a in self.allowed_errors)]


@pytest.fixture(scope="session")
def dist() -> Path:
    if build.needs_build():
        build.build()
    return build.DIST


@pytest.fixture(scope="module")
def site(dist: Path) -> Iterator[Site]:
    served = Site(dist)
    yield served
    served.stop()


@pytest.fixture(scope="module")
def browser() -> Iterator[object]:
    if not Path(CHROMIUM).exists():
        pytest.skip(f"no Chromium at {CHROMIUM} (set PRISM_DESK_CHROMIUM)")
    with playwright_api.sync_playwright() as p:
        launched = p.chromium.launch(executable_path=CHROMIUM, args=CHROMIUM_ARGS)
        yield launched
        launched.close()


@pytest.fixture
def watch() -> Watch:
    return Watch()


@pytest.fixture
def context(browser: object, watch: Watch) -> Iterator[object]:
    ctx = browser.new_context(viewport={"width": 1024, "height": 768}, accept_downloads=True)
    ctx.set_default_timeout(60_000)
    watch.attach(ctx)
    yield ctx
    ctx.close()
    problems = watch.unexpected()
    assert not problems, "errors in the page:\n" + "\n".join(problems)


@pytest.fixture
def page(context: object) -> object:
    return context.new_page()


@pytest.fixture
def own_site(dist: Path, tmp_path: Path) -> Iterator[Site]:
    """A copy of the built site on a server of its own, for tests that stop the server."""
    root = tmp_path / "site"
    shutil.copytree(dist, root)
    served = Site(root)
    yield served
    if served.thread.is_alive():
        served.stop()
