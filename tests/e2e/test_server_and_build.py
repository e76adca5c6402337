"""The built site and the dev server: types, security headers, the precache list."""

from __future__ import annotations

import base64
import hashlib
import json
import re
import urllib.request

import pytest

import build

EXPECTED_TYPES = {
    "": "text/html",
    "index.html": "text/html",
    "app.js": "text/javascript",
    "worker.js": "text/javascript",
    "sw.js": "text/javascript",
    "pyodide/pyodide.mjs": "text/javascript",
    "pyodide/pyodide.asm.mjs": "text/javascript",
    "pyodide/pyodide.asm.wasm": "application/wasm",
    "manifest.webmanifest": "application/manifest+json",
    "styles.css": "text/css",
    "icons/icon-512.png": "image/png",
}


@pytest.mark.parametrize("path", sorted(EXPECTED_TYPES))
def test_types_and_policy_headers(site, path):
    with urllib.request.urlopen(site.url + path, timeout=10) as response:
        assert response.headers.get_content_type() == EXPECTED_TYPES[path]
        policy = response.headers["Content-Security-Policy"]
    assert "frame-ancestors 'none'" in policy
    assert "'unsafe-inline'" not in policy and "'unsafe-eval'" not in policy
    assert "script-src 'self' 'wasm-unsafe-eval'" in policy


def test_page_carries_the_policy_and_no_inline_code(dist):
    html = (dist / "index.html").read_text()
    meta = re.search(r'<meta http-equiv="Content-Security-Policy" content="([^"]+)">', html)
    assert meta and meta.group(1) == build.CSP
    assert not re.search(r"<script(?![^>]*\bsrc=)[^>]*>", html), "inline script"
    tags = re.findall(r"<[a-z][^>]*>", html)
    assert not [t for t in tags if re.search(r"\s(style|on[a-z]+)=", t)], "inline style or handler"


def test_precache_list_matches_the_files(dist):
    sw = (dist / "sw.js").read_text()
    listed = json.loads(sw[sw.index("/*PRECACHE*/") + 12:sw.index("/*END*/")])
    on_disk = sorted(p.relative_to(dist).as_posix() for p in dist.rglob("*")
                     if p.is_file() and p.name not in ("sw.js", "build-info.json"))
    assert sorted(path[2:] for path, _ in listed) == on_disk
    for path, integrity in listed:
        digest = hashlib.sha256((dist / path[2:]).read_bytes()).digest()
        assert integrity == "sha256-" + base64.b64encode(digest).decode()
    version = json.loads((dist / "build-info.json").read_text())["version"]
    assert f'const VERSION = "{version}"' in sw


def test_lock_file_pins_the_wheel(dist):
    lock = json.loads((dist / "pyodide-lock.json").read_text())
    (entry,) = lock["packages"].values()
    wheel = dist / "wheels" / entry["file_name"]
    assert hashlib.sha256(wheel.read_bytes()).hexdigest() == entry["sha256"]
    assert entry["imports"] == ["pycore"]

