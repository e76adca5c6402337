#!/usr/bin/env python3
"""Start-up and recompute speed of the web app in headless Chromium (not a test).

    .venv/bin/python bench/web_bench.py [--runs N] [--edits N] [--no-write]

Measures, with one server on 127.0.0.1 (build.py's) and one Chromium:
  * bare Pyodide: navigation start to ``1+1`` on a tiny page (cold profile, then warm);
  * this app: navigation start to the first computed result shown (first visit
    with a cold profile, then repeat visits served by the service worker);
  * in rounds: each round runs bare Pyodide and then the app in fresh profiles, so a
    change of load on the shared machine falls on both; the cold ratio is given both as
    median over median and as the median of each round's own ratio;
  * p95 of the live recompute after an edit on a repeat visit (request sent to figures
    drawn; a new value on every edit, so nothing comes from the core's cache; the 50 ms
    typing debounce comes on top and is not counted);
  * the app's own asset size (dist/ without the Pyodide runtime files).
Appends the figures to bench/results-web.md.
"""

from __future__ import annotations

import argparse
import datetime
import json
import os
import platform
import shutil
import statistics
import subprocess
import sys
import tempfile
import threading
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests" / "e2e"))

from e2e_support import CASES, case_fragment  # noqa: E402
from playwright.sync_api import sync_playwright  # noqa: E402

import build  # noqa: E402

CHROMIUM = os.environ.get("PRISM_DESK_CHROMIUM", "/usr/bin/chromium")
ARGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking",
        "--disable-component-update", "--disable-sync"]
BARE = "bench-bare"
TIMINGS_IN = "() => window.prismEngineTimings && window.prismEngineTimings.first"
GOALS = {"repeat": 0.5, "cold": 1.1, "recompute_p95_ms": 16.0, "own_kb": 250.0}

BARE_HTML = """<!doctype html><meta charset="utf-8"><title>bare Pyodide</title>
<script type="module" src="bare.js"></script>
"""
BARE_JS = """import { loadPyodide } from "../pyodide/pyodide.mjs";
const pyodide = await loadPyodide({ indexURL: new URL("../pyodide/", import.meta.url).href });
const two = pyodide.runPython("1+1");
window.benchDone = { ms: performance.now(), two };
"""


def write_bare_page() -> None:
    """A bare page beside the app (not in the app's precache list), using the stock lock file."""
    folder = build.DIST / BARE
    folder.mkdir(exist_ok=True)
    (folder / "index.html").write_text(BARE_HTML)
    (folder / "bare.js").write_text(BARE_JS)
    shutil.copyfile(build.PYODIDE / "pyodide-lock.json",
                    build.DIST / "pyodide" / "pyodide-lock.json")


def remove_bare_page() -> None:
    shutil.rmtree(build.DIST / BARE, ignore_errors=True)
    (build.DIST / "pyodide" / "pyodide-lock.json").unlink(missing_ok=True)


def percentile(values: list[float], p: float) -> float:
    ordered = sorted(values)
    k = (len(ordered) - 1) * p
    lo, hi = int(k), min(int(k) + 1, len(ordered) - 1)
    return ordered[lo] + (ordered[hi] - ordered[lo]) * (k - lo)


class Bench:
    def __init__(self, playwright, base: str) -> None:
        self.pw = playwright
        self.base = base
        self.profiles: list[str] = []

    def profile(self):
        folder = tempfile.mkdtemp(prefix="prism-bench-")
        self.profiles.append(folder)
        return self.pw.chromium.launch_persistent_context(
            folder, executable_path=CHROMIUM, args=ARGS, headless=True,
            viewport={"width": 1024, "height": 768})

    def close(self) -> None:
        for folder in self.profiles:
            shutil.rmtree(folder, ignore_errors=True)

    @staticmethod
    def visit(ctx, url: str, done: str, value: str) -> float:
        for old in list(ctx.pages):
            old.close()
        page = ctx.new_page()
        page.goto(url)
        page.wait_for_function(done, timeout=120_000)
        ms = float(page.evaluate(value))
        return ms

    def bare(self, runs: int) -> tuple[list[float], list[float]]:
        cold, warm = [], []
        url = self.base + BARE + "/"
        for _ in range(runs):
            ctx = self.profile()
            cold.append(self.visit(ctx, url, "() => window.benchDone", "window.benchDone.ms"))
            for _ in range(2):
                warm.append(self.visit(ctx, url, "() => window.benchDone", "window.benchDone.ms"))
            ctx.close()
        return cold, warm

    def rounds(self, runs: int, edits: int) -> tuple[list[float], list[float],
                                                     dict[str, list[float]]]:
        """``runs`` rounds of bare Pyodide then the app, each in fresh profiles (the
        recompute figures in the first round only)."""
        bare_cold: list[float] = []
        bare_warm: list[float] = []
        app: dict[str, list[float]] = {}
        for run in range(runs):
            cold, warm = self.bare(1)
            bare_cold += cold
            bare_warm += warm
            found = self.app(1, edits if run == 0 else 0)
            for key, values in found.items():
                if key.startswith("engine"):
                    app[key] = values   # the last round's milestones
                else:
                    app.setdefault(key, []).extend(values)
        return bare_cold, bare_warm, app

    def app(self, runs: int, edits: int) -> dict[str, list[float]]:
        """``runs`` fresh profiles: the cold first visit, then two repeat visits each; the
        recompute figures (``edits`` > 0) on the first profile's last repeat visit."""
        done = "() => performance.getEntriesByName('pd:first-result').length > 0"
        value = "performance.getEntriesByName('pd:first-result')[0].startTime"
        out: dict[str, list[float]] = {"cold": [], "repeat": [], "recompute": [], "engine": []}
        url = self.base + case_fragment(CASES["oblique-progressive"])
        for run in range(runs):
            ctx = self.profile()
            out["cold"].append(self.visit(ctx, url, done, value))
            page = ctx.pages[0]
            page.wait_for_function(TIMINGS_IN)
            out["engine_cold"] = [page.evaluate("() => window.prismEngineTimings")]
            page.wait_for_function("() => navigator.serviceWorker.controller !== null",
                                   timeout=120_000)
            page.wait_for_selector("body[data-offline=ready]", timeout=120_000)
            for _ in range(2):
                out["repeat"].append(self.visit(ctx, url, done, value))
                page = ctx.pages[0]
                assert page.evaluate("() => navigator.serviceWorker.controller !== null")
            page.wait_for_function(TIMINGS_IN)
            out["engine"] = [page.evaluate("() => window.prismEngineTimings")]
            if run == 0 and edits > 0:
                out["recompute"], out["answer"] = self.recompute(page, edits)
            ctx.close()
        return out

    @staticmethod
    def recompute(page, edits: int) -> tuple[list[float], list[float]]:
        """Each edit's recompute (request sent to figures drawn) and, within it, its answer
        (request sent to the worker's reply in hand), in the order typed."""
        page.evaluate("() => { performance.clearMeasures('pd:recompute'); "
                      "performance.clearMeasures('pd:answer'); }")
        # A new sphere on every edit, as a person typing makes: no edit is answered from
        # the core's cache of recent results (it keeps 8).
        values = [f"{-0.5 - 0.25 * i:+.2f}" for i in range(edits)]
        for i in range(edits):
            seq = page.evaluate("() => Number(document.querySelector('#results').dataset.seq)")
            page.fill("#right-sphere", values[i])
            page.wait_for_function(
                "(seq) => Number(document.querySelector('#results').dataset.seq) > seq "
                "&& document.querySelector('#results').dataset.status === 'current'", arg=seq)
        drawn, answered = page.evaluate(
            "() => ['pd:recompute', 'pd:answer'].map("
            "(name) => performance.getEntriesByName(name).map(e => e.duration))")
        return drawn[-edits:], answered[-edits:]


def own_asset_bytes() -> int:
    runtime = {f"pyodide/{name}" for name in build.RUNTIME}
    return sum(p.stat().st_size for p in build.DIST.rglob("*")
               if p.is_file() and p.relative_to(build.DIST).as_posix() not in runtime
               and not p.relative_to(build.DIST).as_posix().startswith(BARE))


def chromium_version() -> str:
    try:
        out = subprocess.run([CHROMIUM, "--version"], capture_output=True, text=True, timeout=20)
        return out.stdout.strip()
    except OSError:
        return "unknown"


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=5,
                        help="rounds (one fresh profile each for bare Pyodide and the app)")
    parser.add_argument("--edits", type=int, default=60, help="edits for the recompute figure")
    parser.add_argument("--no-write", action="store_true", help="print only")
    args = parser.parse_args()

    if build.needs_build():
        build.build()
    load_before = os.getloadavg()[0]
    write_bare_page()
    server = build.make_server(build.DIST, 0, quiet=True)
    threading.Thread(target=server.serve_forever, daemon=True).start()
    base = f"http://127.0.0.1:{server.server_address[1]}/"
    try:
        with sync_playwright() as pw:
            bench = Bench(pw, base)
            try:
                bare_cold, bare_warm, app = bench.rounds(args.runs, args.edits)
            finally:
                bench.close()
    finally:
        server.shutdown()
        remove_bare_page()

    med = statistics.median
    figures = {
        "bare_cold_ms": med(bare_cold), "bare_warm_ms": med(bare_warm),
        "app_cold_ms": med(app["cold"]), "app_repeat_ms": med(app["repeat"]),
        "recompute_p50_ms": percentile(app["recompute"], 0.5),
        "recompute_p95_ms": percentile(app["recompute"], 0.95),
        "own_kb": own_asset_bytes() / 1024,
    }
    paired = [app_ms / bare_ms for app_ms, bare_ms in zip(app["cold"], bare_cold, strict=True)]
    ratios = {"cold": figures["app_cold_ms"] / figures["bare_cold_ms"],
              "repeat": figures["app_repeat_ms"] / figures["bare_warm_ms"]}
    verdict = {
        "repeat": ratios["repeat"] <= GOALS["repeat"],
        "cold": ratios["cold"] <= GOALS["cold"],
        "recompute_p95_ms": figures["recompute_p95_ms"] <= GOALS["recompute_p95_ms"],
        "own_kb": figures["own_kb"] <= GOALS["own_kb"],
    }
    ok = lambda key: "meets" if verdict[key] else "MISSES"  # noqa: E731
    engine = {"first visit": app.get("engine_cold", [{}])[-1], "repeat visit": app["engine"][-1]}
    lines = [
        f"## {datetime.datetime.now().isoformat(timespec='minutes')}",
        "",
        f"Machine: {platform.machine()}, {os.cpu_count()} CPUs; {chromium_version()}; "
        f"{args.runs} rounds of fresh profiles (bare, then app), medians; "
        f"{len(app['recompute'])} edits; load average "
        f"{load_before:.1f} before, {os.getloadavg()[0]:.1f} after (other work on the machine "
        "skews every figure).",
        "",
        "| figure | value | goal |",
        "| --- | --- | --- |",
        f"| bare Pyodide to `1+1`, cold | {figures['bare_cold_ms']:.0f} ms | |",
        f"| bare Pyodide to `1+1`, warm cache | {figures['bare_warm_ms']:.0f} ms | |",
        f"| app first result, first visit (cold) | {figures['app_cold_ms']:.0f} ms "
        f"({ratios['cold']:.2f}x bare cold) | <= {GOALS['cold']}x: {ok('cold')} |",
        f"| app first result, repeat visit | {figures['app_repeat_ms']:.0f} ms "
        f"({ratios['repeat']:.2f}x bare warm) | <= {GOALS['repeat']}x: {ok('repeat')} |",
        f"| recompute after an edit, p50 / p95 | {figures['recompute_p50_ms']:.1f} / "
        f"{figures['recompute_p95_ms']:.1f} ms | p95 <= {GOALS['recompute_p95_ms']:.0f} ms: "
        f"{ok('recompute_p95_ms')} |",
        f"| own assets (dist/ without the Pyodide runtime) | {figures['own_kb']:.0f} KB | "
        f"<= {GOALS['own_kb']:.0f} KB: {ok('own_kb')} |",
        "",
        "Cold ratio of each round (app cold / bare cold of the same round): "
        + ", ".join(f"{r:.2f}" for r in paired) + f"; median {statistics.median(paired):.2f}x, "
        f"{sum(r <= GOALS['cold'] for r in paired)} of {len(paired)} rounds within "
        f"{GOALS['cold']}x.",
        "",
        "Samples (ms): bare cold " + ", ".join(f"{v:.0f}" for v in bare_cold)
        + "; bare warm " + ", ".join(f"{v:.0f}" for v in bare_warm)
        + "; app cold " + ", ".join(f"{v:.0f}" for v in app["cold"])
        + "; app repeat " + ", ".join(f"{v:.0f}" for v in app["repeat"]) + ".",
        "",
        "Recompute, split: the worker's answer in hand p50 / p95 "
        f"{percentile(app['answer'], 0.5):.1f} / {percentile(app['answer'], 0.95):.1f} ms, the "
        "rest is drawing. Each edit in the order typed (ms): "
        + ", ".join(f"{v:.1f}" for v in app["recompute"]) + ".",
    ]
    lines += ["", "Worker milestones, ms since the worker started (fetched: runtime script, "
              "lock file and any saved image in hand; runtime: interpreter up; unpacked: core "
              "wheel installed; core: core imported; ready; first: first evaluate answered):"]
    lines += [f"- {name}: " + json.dumps(marks) for name, marks in engine.items()]
    text = "\n".join(lines) + "\n"
    print(text)
    if not args.no_write:
        results = ROOT / "bench" / "results-web.md"
        if not results.exists():
            results.write_text("# Web app speed\n\n"
                               "Appended by `bench/web_bench.py`; newest last.\n\n")
        with results.open("a") as handle:
            handle.write(text + "\n")
    return 0


if __name__ == "__main__":
    sys.exit(main())
