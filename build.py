#!/usr/bin/env python3
"""Build the Prism Desk web app into dist/, serve it, test everything.

    python3 build.py                  build dist/ (runs `npm ci` first if node_modules is missing)
    python3 build.py serve [--port N] build if needed, then serve dist/ on 127.0.0.1
    python3 build.py test             .venv with the pinned tools, npm ci, Chromium; ruff, mypy,
                                      then every test (core, CLI, and the app in Chromium)
    python3 build.py --check          build, then verify dist/ against its own precache list

Standard library only, but for the pinned esbuild (package.json) that bundles and minifies
the page's JS and CSS; the browser's wheel of the core is written here with ``zipfile``.
"""

from __future__ import annotations

import argparse
import base64
import contextlib
import hashlib
import http.server
import json
import os
import shutil
import socket
import struct
import subprocess
import sys
import tempfile
import zlib
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parent
WEB = ROOT / "web"
DIST = ROOT / "dist"
CACHE = ROOT / "build" / "cache"
VENV = ROOT / ".venv"
PYODIDE = ROOT / "node_modules" / "pyodide"
CHROMIUM = Path("/usr/bin/chromium")
RUNTIME = ["pyodide.mjs", "pyodide.asm.mjs", "pyodide.asm.wasm", "python_stdlib.zip"]
APP_NAME = "Prism Desk"
THEME = "#12355b"
ACCENT = "#f5c542"

# One policy for the <meta> in index.html and the server's header. The meta
# cannot carry frame-ancestors, so the header adds it.
CSP = ("default-src 'self'; script-src 'self' 'wasm-unsafe-eval'; worker-src 'self'; "
       "connect-src 'self'; img-src 'self'; style-src 'self'; font-src 'self'; "
       "manifest-src 'self'; object-src 'none'; base-uri 'none'; form-action 'none'")
CSP_HEADER = CSP + "; frame-ancestors 'none'"

MIME = {".wasm": "application/wasm", ".mjs": "text/javascript; charset=utf-8",
        ".js": "text/javascript; charset=utf-8",
        ".webmanifest": "application/manifest+json", ".json": "application/json",
        ".whl": "application/zip", ".zip": "application/zip", ".svg": "image/svg+xml",
        ".png": "image/png", ".css": "text/css; charset=utf-8",
        ".html": "text/html; charset=utf-8"}


def sha256(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def run(*cmd: str | Path, **kwargs: Any) -> int:
    print("build.py: $", " ".join(str(c) for c in cmd), flush=True)
    return subprocess.run([str(c) for c in cmd], cwd=ROOT, check=False, **kwargs).returncode


# ---------------------------------------------------------------- npm packages
def npm_ready() -> bool:
    """node_modules holds the versions package.json pins (Pyodide, axe-core)."""
    wanted = json.loads((ROOT / "package.json").read_text())
    pins = {**wanted.get("dependencies", {}), **wanted.get("devDependencies", {})}
    for name, version in pins.items():
        installed = ROOT / "node_modules" / name / "package.json"
        if not installed.exists() or json.loads(installed.read_text())["version"] != version:
            return False
    return True


def ensure_npm() -> None:
    if npm_ready():
        return
    if not shutil.which("npm"):
        sys.exit("build.py: node_modules is incomplete and npm is missing: install Node.js 20+")
    if run("npm", "ci", "--no-audit", "--no-fund") != 0:
        sys.exit("build.py: npm ci failed")


# ---------------------------------------------------------------- the wheel
WEB_LEFT_OUT = ("pycore/__main__.py", "pycore/interfaces/cli.py", "pycore/interfaces/commands/",
                "pycore/py.typed")
"""What the browser never runs: the command line (the worker imports pycore.interfaces.bridge)."""
CORE_NAME = "prism-desk"


def core_sources() -> list[Path]:
    files = [ROOT / "pyproject.toml", *sorted((ROOT / "pycore").rglob("*"))]
    return [f for f in files if f.is_file() and "__pycache__" not in f.parts
            and f.suffix in (".py", ".json", ".toml", ".typed")]


def _without_docstring(body: list[Any]) -> list[Any]:
    import ast

    if (body and isinstance(body[0], ast.Expr) and isinstance(body[0].value, ast.Constant)
            and isinstance(body[0].value.value, str)):
        return body[1:] or [ast.Pass()]
    return body


def strip_python(source: str) -> str:
    """The same module without what only a reader or a type checker uses: docstrings,
    comments, the annotations of function parameters and results, and three of each
    four spaces of indentation.

    The rest of the syntax tree is kept exactly: parse, drop each docstring (a lone
    ``pass`` where it was the whole body) and each function's annotations, and write the
    tree back out. Class-level annotations stay (dataclasses read them), and so do
    annotated assignments.
    """
    import ast

    tree = ast.parse(source)
    for node in ast.walk(tree):
        if isinstance(node, ast.Module | ast.ClassDef | ast.FunctionDef | ast.AsyncFunctionDef):
            node.body = _without_docstring(node.body)
        if isinstance(node, ast.FunctionDef | ast.AsyncFunctionDef):
            node.returns = None
            args = node.args
            for arg in [*args.posonlyargs, *args.args, *args.kwonlyargs,
                        *(a for a in (args.vararg, args.kwarg) if a is not None)]:
                arg.annotation = None
    written = ast.unparse(tree)
    tight = _tight_spacing(written)
    if ast.dump(ast.parse(tight)) != ast.dump(ast.parse(written)):   # never expected
        tight = written
    return _one_space_indents(tight) + "\n"


def _tight_spacing(source: str) -> str:
    """The same tokens with a space between two only where they would otherwise run
    together (two words, a number and what follows, a name and a string: ``x=a+b``,
    ``return(x)``); indentation and each f-string are kept as written."""
    import io
    import tokenize

    starts = [0]
    for line in source.splitlines(keepends=True):
        starts.append(starts[-1] + len(line))

    def at(row_col: tuple[int, int]) -> int:
        return starts[row_col[0] - 1] + row_col[1]

    out: list[str] = []
    prev: tuple[int, str] | None = None   # (token type, text) before this one on its line
    depth, begun = 0, (0, 0)
    for tok in tokenize.generate_tokens(io.StringIO(source).readline):
        kind, text, start = tok.type, tok.string, tok.start
        name = tokenize.tok_name[kind]
        if name == "FSTRING_START" or depth:   # Python 3.12+ splits f-strings into tokens
            depth += {"FSTRING_START": 1, "FSTRING_END": -1}.get(name, 0)
            begun = start if name == "FSTRING_START" and depth == 1 else begun
            if depth:
                continue
            kind, text, start = tokenize.STRING, source[at(begun):at(tok.end)], begun
        if kind in (tokenize.INDENT, tokenize.DEDENT, tokenize.ENDMARKER):
            continue
        if kind in (tokenize.NEWLINE, tokenize.NL):
            out.append("\n")
            prev = None
            continue
        if prev is None:
            out.append(source[at((start[0], 0)):at(start)])   # the line's indentation
        elif _run_together(prev, kind, text):
            out.append(" ")
        out.append(text)
        prev = (kind, text)
    return "".join(out)


def _run_together(prev: tuple[int, str], kind: int, text: str) -> bool:
    """Whether two tokens written with nothing between them would read differently."""
    import tokenize

    def word(char: str) -> bool:
        return char.isalnum() or char == "_"
    prev_kind, prev_text = prev
    return ((word(prev_text[-1]) and word(text[0]))
            or (prev_kind == tokenize.NUMBER and (word(text[0]) or text[0] == "."))
            or (prev_kind == tokenize.NAME and kind == tokenize.STRING))


def _one_space_indents(source: str) -> str:
    """Each indentation level as one space instead of four. ``ast.unparse`` writes every
    string on one line (docstrings, its only triple-quoted strings, are gone), so
    leading spaces are always indentation; the tests compare the syntax trees."""
    lines = []
    for line in source.split("\n"):
        depth = len(line) - len(line.lstrip(" "))
        lines.append(" " * (depth // 4) + line[depth:] if depth % 4 == 0 else line)
    return "\n".join(lines)


def web_core_files() -> dict[str, bytes]:
    """Path in the wheel -> bytes for the core as the browser runs it (data tables compacted)."""
    files: dict[str, bytes] = {}
    for path in core_sources():
        name = path.relative_to(ROOT).as_posix()
        if not name.startswith("pycore/") or name.startswith(WEB_LEFT_OUT):
            continue
        data = path.read_bytes()
        if path.suffix == ".py":
            data = strip_python(data.decode()).encode()
        elif path.suffix == ".json":
            data = json.dumps(json.loads(data), ensure_ascii=False,
                              separators=(",", ":")).encode()
        files[name] = data
    return files


def _record_hash(data: bytes) -> str:
    return base64.urlsafe_b64encode(hashlib.sha256(data).digest()).decode().rstrip("=")


def build_wheel() -> Path:
    """The core as a wheel for the browser (pure Python, py3-none-any), written directly:
    only what runs there, as ``web_core_files`` gives it. The bytes depend on the content
    only (fixed times and modes, files sorted, deflate level 9). Cached by content."""
    import tomllib
    import zipfile

    version = tomllib.loads((ROOT / "pyproject.toml").read_text())["project"]["version"]
    files = web_core_files()
    key = sha256(b"".join(n.encode() + b"\0" + d for n, d in sorted(files.items())))[:16]
    wheel = CACHE / f"wheel-{key}" / f"prism_desk-{version}-py3-none-any.whl"
    if wheel.exists():
        return wheel
    info = f"prism_desk-{version}.dist-info"
    files[f"{info}/METADATA"] = (f"Metadata-Version: 2.1\nName: {CORE_NAME}\n"
                                 f"Version: {version}\n").encode()
    files[f"{info}/WHEEL"] = (b"Wheel-Version: 1.0\nGenerator: build.py\n"
                              b"Root-Is-Purelib: true\nTag: py3-none-any\n")
    record = [f"{name},sha256={_record_hash(data)},{len(data)}"
              for name, data in sorted(files.items())]
    files[f"{info}/RECORD"] = ("\n".join([*record, f"{info}/RECORD,,"]) + "\n").encode()
    wheel.parent.mkdir(parents=True, exist_ok=True)
    part = wheel.with_suffix(f".{os.getpid()}.part")
    with zipfile.ZipFile(part, "w", zipfile.ZIP_DEFLATED, compresslevel=9) as archive:
        for name, data in sorted(files.items()):
            entry = zipfile.ZipInfo(name, date_time=(2020, 1, 1, 0, 0, 0))
            entry.compress_type = zipfile.ZIP_DEFLATED
            entry.external_attr = 0o644 << 16
            archive.writestr(entry, data)
    part.replace(wheel)   # several builds may overlap: the last identical file wins
    return wheel


def lock_file(wheel: Path) -> dict[str, Any]:
    """A lock file listing only this app's own wheel (no CDN, nothing else to fetch); the
    worker takes the wheel's name and sha256 from it."""
    upstream = json.loads((PYODIDE / "pyodide-lock.json").read_text())
    version = wheel.name.split("-")[1]
    return {"info": upstream["info"], "packages": {CORE_NAME: {
        "name": CORE_NAME, "version": version, "file_name": wheel.name,
        "install_dir": "site", "sha256": sha256(wheel.read_bytes()),
        "package_type": "package", "imports": ["pycore"], "depends": [],
        "unvendored_tests": False}}}


# ---------------------------------------------------------------- icons
Point = tuple[float, float]

# The mark, in units of the icon's side: an amber prism refracting a pale ray
# toward its base. Everything sits inside the maskable safe circle (r = 0.4).
PRISM: list[Point] = [(0.50, 0.24), (0.76, 0.70), (0.24, 0.70)]
RAYS: list[tuple[Point, Point]] = [((0.12, 0.47), (0.38, 0.47)), ((0.38, 0.47), (0.62, 0.53)),
                                   ((0.62, 0.53), (0.88, 0.66))]
RAY_HALF_WIDTH = 0.022


def png(width: int, pixels: bytearray) -> bytes:
    """An opaque PNG from RGBA pixels: indexed colour (type 3) when the image has at
    most 256 colours, as the anti-aliased mark has, else RGB (type 2)."""
    rgb = [bytes(pixels[i:i + 3]) for i in range(0, len(pixels), 4)]
    palette = sorted(set(rgb))
    if len(palette) <= 256:
        index = {colour: i for i, colour in enumerate(palette)}
        data, stride, kind = bytes(index[c] for c in rgb), width, 3
    else:
        data, stride, kind = b"".join(rgb), width * 3, 2
    rows = b"".join(b"\0" + data[y * stride:(y + 1) * stride] for y in range(width))

    def chunk(name: bytes, body: bytes) -> bytes:
        crc = struct.pack(">I", zlib.crc32(name + body))
        return struct.pack(">I", len(body)) + name + body + crc
    header = struct.pack(">IIBBBBB", width, width, 8, kind, 0, 0, 0)
    colours = chunk(b"PLTE", b"".join(palette)) if kind == 3 else b""
    return (b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", header) + colours
            + chunk(b"IDAT", zlib.compress(rows, 9)) + chunk(b"IEND", b""))


def _segment_distance(px: float, py: float, a: Point, b: Point) -> float:
    (ax, ay), (bx, by) = a, b
    dx, dy = bx - ax, by - ay
    t = max(0.0, min(1.0, ((px - ax) * dx + (py - ay) * dy) / (dx * dx + dy * dy)))
    return float(((px - ax - t * dx) ** 2 + (py - ay - t * dy) ** 2) ** 0.5)


def _blend(colour: list[float], over: bytes, cover: float) -> list[float]:
    return [c + (f - c) * cover for c, f in zip(colour, over, strict=True)]


def icon_pixels(size: int) -> bytearray:
    """The mark drawn with edge-distance anti-aliasing (no supersampling needed)."""
    bg, fg, ray = bytes.fromhex(THEME[1:]), bytes.fromhex(ACCENT[1:]), b"\xff\xff\xff"
    edges = []
    for i in range(3):
        (x1, y1), (x2, y2) = PRISM[i], PRISM[(i + 1) % 3]
        length = ((x2 - x1) ** 2 + (y2 - y1) ** 2) ** 0.5
        edges.append((x1, y1, (y2 - y1) / length, -(x2 - x1) / length))   # outward normal
    out = bytearray(size * size * 4)
    px_size = 1.0 / size
    for y in range(size):
        fy = (y + 0.5) * px_size
        for x in range(size):
            fx = (x + 0.5) * px_size
            colour = [float(c) for c in bg]
            inside = -max((fx - x1) * nx + (fy - y1) * ny for x1, y1, nx, ny in edges)
            cover = max(0.0, min(1.0, inside / px_size + 0.5))
            if cover:
                colour = _blend(colour, fg, cover)
            dist = min(_segment_distance(fx, fy, a, b) for a, b in RAYS) - RAY_HALF_WIDTH
            cover = max(0.0, min(1.0, -dist / px_size + 0.5)) * (0.55 if inside > 0 else 1.0)
            if cover:
                colour = _blend(colour, ray, cover)
            at = (y * size + x) * 4
            out[at:at + 4] = bytes(round(c) for c in colour) + b"\xff"
    return out


def icon_svg() -> str:
    def pts(points: list[Point]) -> str:
        return " ".join(f"{x * 512:g},{y * 512:g}" for x, y in points)
    rays = "".join(f'<line x1="{a[0] * 512:g}" y1="{a[1] * 512:g}" x2="{b[0] * 512:g}" '
                   f'y2="{b[1] * 512:g}"/>' for a, b in RAYS)
    return ('<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 512 512">'
            f'<rect width="512" height="512" rx="96" fill="{THEME}"/>'
            f'<polygon points="{pts(PRISM)}" fill="{ACCENT}"/>'
            f'<g stroke="#fff" stroke-width="{RAY_HALF_WIDTH * 1024:g}" stroke-linecap="round">'
            f'{rays}</g></svg>\n')


def write_icons(dest: Path) -> None:
    """PNG icons are slow-ish to draw in pure Python, so they are cached by design."""
    design = sha256(repr((PRISM, RAYS, RAY_HALF_WIDTH, THEME, ACCENT, "indexed")).encode())[:12]
    dest.mkdir(parents=True, exist_ok=True)
    for size in (192, 512):
        cached = CACHE / f"icon-{size}-{design}.png"
        if not cached.exists():
            CACHE.mkdir(parents=True, exist_ok=True)
            cached.write_bytes(png(size, icon_pixels(size)))
        shutil.copyfile(cached, dest / f"icon-{size}.png")
    (dest / "icon.svg").write_text(icon_svg())


def manifest() -> dict[str, Any]:
    icons: list[dict[str, str]] = [
        {"src": f"icons/icon-{s}.png", "sizes": f"{s}x{s}", "type": "image/png", "purpose": p}
        for p in ("any", "maskable") for s in (192, 512)]
    icons.append({"src": "icons/icon.svg", "sizes": "any", "type": "image/svg+xml"})
    return {
        "name": APP_NAME, "short_name": APP_NAME, "id": "./", "start_url": "./",
        "scope": "./", "display": "standalone", "background_color": "#fbfbf8",
        "theme_color": THEME, "lang": "en", "icons": icons,
        "description": "Prism before each eye and binocular imbalance, by Prentice's rule. "
                       "Works offline."}


# ---------------------------------------------------------------- the build
def build() -> None:
    ensure_npm()
    wheel = build_wheel()
    CACHE.mkdir(parents=True, exist_ok=True)
    tmp = Path(tempfile.mkdtemp(prefix="dist-", dir=CACHE.parent))   # swapped in whole at the end
    (tmp / "pyodide").mkdir()
    (tmp / "wheels").mkdir()
    for name in RUNTIME:
        shutil.copyfile(PYODIDE / name, tmp / "pyodide" / name)
    shutil.copyfile(wheel, tmp / "wheels" / wheel.name)
    (tmp / "pyodide-lock.json").write_text(json.dumps(lock_file(wheel), indent=1) + "\n")
    for src in sorted(WEB.rglob("*")):
        if src.is_file() and src.suffix != ".js":
            (tmp / src.relative_to(WEB)).parent.mkdir(parents=True, exist_ok=True)
            shutil.copyfile(src, tmp / src.relative_to(WEB))
    bundle(tmp)
    html = tmp / "index.html"
    html.write_text(page_html(html.read_text()))
    (tmp / "manifest.webmanifest").write_text(json.dumps(manifest(), separators=(",", ":")) + "\n")
    write_icons(tmp / "icons")
    version, count = write_service_worker(tmp)
    tmp.chmod(0o755)
    for _ in range(3):   # another build may swap its own dist/ in meanwhile
        shutil.rmtree(DIST, ignore_errors=True)
        with contextlib.suppress(OSError):
            tmp.rename(DIST)
            break
    else:
        sys.exit("build.py: could not replace dist/")
    print(f"build.py: dist/ ready, version {version}, {count} precached files")


PAGE_ENTRY = "views.js"
"""The page's second module script; it imports app.js first, so bundling from it keeps
the order the two scripts run in (app.js's modules, then the check screens')."""
SEPARATE_JS = ("boot.js", "worker.js")
"""Scripts that stay files of their own (sw.js is written by write_service_worker)."""


def esbuild(*args: str | Path, source: str | None = None, cwd: Path = ROOT) -> str:
    """Run the pinned esbuild (minifying) on files, or on ``source`` given on its standard
    input (its imports found from ``cwd``); returns what it writes to standard output."""
    tool = ROOT / "node_modules" / ".bin" / "esbuild"
    if not tool.exists():
        sys.exit("build.py: esbuild is missing from node_modules: run npm ci")
    cmd = [str(tool), *map(str, args), "--minify", "--log-level=warning", "--charset=utf8",
           "--legal-comments=none", "--target=es2020,chrome100,safari15"]
    done = subprocess.run(cmd, cwd=cwd, input=source, capture_output=True, text=True,
                          check=False)
    if done.returncode != 0:
        sys.exit("build.py: esbuild could not bundle or minify the app's files: "
                 + done.stderr.strip())
    return done.stdout


def minified_script(source: str) -> str:
    """A classic script minified (its top-level names kept)."""
    return esbuild("--loader=js", source=source)


def bundle(root: Path) -> None:
    """The page's modules as one minified app.js (the pinned esbuild, package.json), which
    also exports the Messenger class (the e2e tests try the shipped class on its own); the
    boot script and the worker minified as files of their own (the worker imports the
    runtime's loader at its own URL); the CSS files minified in place."""
    entry = f'import "./{PAGE_ENTRY}";\nexport {{ Messenger }} from "./messenger.js";\n'
    esbuild("--bundle", "--format=esm", "--sourcefile=page-bundle.js",
            f"--outfile={root / 'app.js'}", source=entry, cwd=WEB)
    esbuild(*(WEB / name for name in SEPARATE_JS), f"--outdir={root}")
    esbuild(*sorted(root.rglob("*.css")), f"--outdir={root}", f"--outbase={root}",
            "--allow-overwrite")


def page_html(html: str) -> str:
    """index.html as shipped: the policy filled in, one module script (the bundle), and
    no indentation (no <pre> or <textarea> in the page, so leading spaces never show)."""
    second = f'<script type="module" src="{PAGE_ENTRY}"></script>\n'
    if second not in html or "<pre" in html or "<textarea" in html:
        sys.exit("build.py: index.html is not as bundle() expects")
    html = html.replace(second, "").replace("__CSP__", CSP)
    return "\n".join(line.strip() for line in html.splitlines() if line.strip()) + "\n"


def write_service_worker(root: Path) -> tuple[str, int]:
    """sw.js for the files under root: the precache list and cache version come from
    the files' own hashes, so a release can never ship a stale list."""
    skip = {"sw.js", "build-info.json"}
    files = sorted(p for p in root.rglob("*")
                   if p.is_file() and p.relative_to(root).as_posix() not in skip)
    entries = [["./" + p.relative_to(root).as_posix(),
                "sha256-" + base64.b64encode(hashlib.sha256(p.read_bytes()).digest()).decode()]
               for p in files]
    version = sha256(json.dumps(entries).encode())[:12]
    head: list[str] = []
    rest: list[str] = []
    for line in (WEB / "sw.js").read_text().splitlines(keepends=True):
        (head if line.startswith(("const VERSION =", "const PRECACHE =")) else rest).append(line)
    if len(head) != 2:
        sys.exit("build.py: sw.js must declare VERSION and PRECACHE on lines of their own")
    # The two filled-in lines stay as written (check() and the tests read them); the rest
    # is minified (globals keep their names in a classic script).
    listed = json.dumps(entries, separators=(",", ":"))
    sw = "".join(head).replace("__VERSION__", version).replace("__PRECACHE__", listed)
    (root / "sw.js").write_text(sw + minified_script("".join(rest)))
    info = {"version": version, "files": len(entries)}
    (root / "build-info.json").write_text(json.dumps(info) + "\n")
    return version, len(entries)


def check() -> int:
    """Every precached file exists with the listed hash, and nothing points off-origin."""
    sw = (DIST / "sw.js").read_text()
    listed = json.loads(sw[sw.index("/*PRECACHE*/") + 12:sw.index("/*END*/")])
    bad = []
    for url, integrity in listed:
        path = DIST / url[2:]
        digest = base64.b64encode(hashlib.sha256(path.read_bytes()).digest()).decode()
        if "sha256-" + digest != integrity:
            bad.append(url)
    for path in WEB.rglob("*"):
        text = path.read_text(errors="replace") if path.is_file() else ""
        for bad_word in ("innerHTML", "insertAdjacentHTML", "document.write", "eval("):
            if bad_word in text:
                bad.append(f"{path.name}: {bad_word}")
        for scheme in ("http://", "https://"):
            for part in text.split(scheme)[1:]:
                if not part.startswith("www.w3.org/"):
                    bad.append(f"{path.name}: {scheme}{part[:30]}")
    print("build.py --check:", "ok" if not bad else "\n  ".join(["problems:", *bad]))
    return 1 if bad else 0


def needs_build() -> bool:
    if not (DIST / "sw.js").exists() or not npm_ready():
        return True
    built = (DIST / "sw.js").stat().st_mtime
    sources = [*WEB.rglob("*"), *core_sources(), Path(__file__), PYODIDE / "package.json"]
    return any(p.is_file() and p.stat().st_mtime > built for p in sources)


# ---------------------------------------------------------------- the server
SERVER_TIMEOUT_S = 15.0
"""An idle or half-sent connection is closed after this many seconds without progress."""
LISTEN_QUEUE = 1024
"""Connections waiting to be accepted (the socketserver default of 5 drops bursts)."""


class Handler(http.server.SimpleHTTPRequestHandler):
    """Serves dist/ only: no listings, nothing outside it (symlinks included), only to
    requests addressed to 127.0.0.1 or localhost at the server's port."""

    extensions_map = {**http.server.SimpleHTTPRequestHandler.extensions_map, **MIME}  # noqa: RUF012
    quiet = False
    timeout = SERVER_TIMEOUT_S

    def parse_request(self) -> bool:
        if not super().parse_request():
            return False
        if "\0" in self.path or "%00" in self.path:
            self.send_error(400, "Bad request: NUL in the path")
            return False
        port = int(getattr(self.server, "server_port", 0))
        host = (self.headers.get("Host") or "").strip().lower()
        if host not in (f"127.0.0.1:{port}", f"localhost:{port}"):
            self.send_error(403, "Forbidden: this server answers 127.0.0.1 and localhost only")
            return False
        return True

    def send_head(self) -> Any:
        path = self.translate_path(self.path)
        paths = [path]
        if os.path.isdir(path):
            paths += [os.path.join(path, "index.html"), os.path.join(path, "index.htm")]
        if not all(_inside(self.directory, p) for p in paths if os.path.lexists(p)):
            self.send_error(404, "File not found")
            return None
        return super().send_head()

    def list_directory(self, path: str | os.PathLike[str]) -> None:
        self.send_error(404, "File not found")

    def copyfile(self, source: Any, outputfile: Any) -> None:
        self.connection.sendfile(source)   # the kernel copies; large runtime files stay fast

    def end_headers(self) -> None:
        self.send_header("Content-Security-Policy", CSP_HEADER)
        self.send_header("X-Content-Type-Options", "nosniff")
        self.send_header("Referrer-Policy", "no-referrer")
        self.send_header("Cache-Control", "no-cache")
        super().end_headers()

    def log_message(self, format: str, *args: Any) -> None:
        if not self.quiet:
            super().log_message(format, *args)


def _inside(root: str, path: str) -> bool:
    """Whether ``path``, every symlink followed, lies within ``root``."""
    real_root = os.path.realpath(root)
    real = os.path.realpath(path)
    return real == real_root or real.startswith(real_root + os.sep)


class Server(http.server.ThreadingHTTPServer):
    daemon_threads = True
    request_queue_size = LISTEN_QUEUE

    def handle_error(self, request: socket.socket | tuple[bytes, socket.socket],
                     client_address: Any) -> None:
        if not isinstance(sys.exc_info()[1], (ConnectionError, TimeoutError)):
            super().handle_error(request, client_address)   # a browser hanging up is no error


def make_server(root: Path, port: int = 0, quiet: bool = False,
                timeout: float = SERVER_TIMEOUT_S) -> Server:
    """A server on 127.0.0.1 (port 0: the system picks one); run serve_forever() yourself."""
    handler: type[Handler] = type("RootHandler", (Handler,), {"quiet": quiet,
                                                              "timeout": timeout})

    def factory(*args: Any, **kwargs: Any) -> Handler:
        return handler(*args, directory=str(root), **kwargs)
    return Server(("127.0.0.1", port), factory)


# ---------------------------------------------------------------- everything, tested
def test() -> int:
    """Set up what a fresh machine lacks, then ruff, mypy and every test."""
    python = VENV / "bin" / "python"
    if not python.exists() and run(sys.executable, "-m", "venv", VENV) != 0:
        return 1
    if run(python, "-m", "pip", "install", "--quiet", "-r", "requirements-dev.txt") != 0:
        return 1
    ensure_npm()
    if not CHROMIUM.exists():
        if os.geteuid() != 0 or not shutil.which("apt-get"):
            sys.exit(f"build.py: {CHROMIUM} is missing: install Debian's chromium package")
        env = dict(os.environ, DEBIAN_FRONTEND="noninteractive")
        if run("apt-get", "update", "-qq", env=env) or run("apt-get", "install", "-y", "-qq",
                                                           "chromium", env=env):
            return 1
    build()
    if check():
        return 1
    failures = [name for name, code in (
        ("ruff", run(python, "-m", "ruff", "check", ".")),
        ("mypy", run(python, "-m", "mypy", "pycore", "build.py")),
        ("pytest", run(python, "-m", "pytest", "-q", "tests")),
    ) if code]
    print("build.py test:", "all passed" if not failures else "FAILED: " + ", ".join(failures))
    return 1 if failures else 0


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=(__doc__ or "").splitlines()[0])
    parser.add_argument("command", nargs="?", choices=["build", "serve", "test"], default="build")
    parser.add_argument("--port", type=int, default=8000, help="port for serve (0: any free port)")
    parser.add_argument("--quiet", action="store_true", help="serve without a request log")
    parser.add_argument("--check", action="store_true", help="verify dist/ after building")
    args = parser.parse_args(argv)
    if args.command == "test":
        return test()
    if args.command == "build" or needs_build():
        build()
    if args.check:
        return check()
    if args.command == "serve":
        server = make_server(DIST, args.port, args.quiet)
        print(f"Serving dist/ at http://127.0.0.1:{server.server_address[1]}/  (Ctrl+C stops)",
              flush=True)
        with contextlib.suppress(KeyboardInterrupt):
            server.serve_forever()
    return 0


if __name__ == "__main__":
    sys.exit(main())
