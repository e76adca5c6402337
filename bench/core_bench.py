"""Native timing of case evaluations (parse, validate, evaluate, serialise to JSON).

Not a test: run ``python bench/core_bench.py [--record]``; with --record the
figures are appended to bench/results-core.md with the date, machine and load.
Each case is timed three ways: the basic sections (points, eyes, fitting, frame);
the live request after a keystroke (``LIVE_SECTIONS``: the basics, the reading
zone's band figures and the suggested remedy); and the whole result with every
section (map, path, sensitivity, every remedy's finished case). The bridge's result
cache is not used: every run computes afresh, as after an edit.
Goals: the live request p95 <= 0.3 ms; the whole result p95 <= 1.5 ms.
"""

from __future__ import annotations

import argparse
import datetime
import json
import os
import platform
import statistics
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from pycore.documents.cases import read_case_text  # noqa: E402
from pycore.evaluate import BASIC_SECTIONS, LIVE_SECTIONS, SECTIONS, evaluate  # noqa: E402

CASES = sorted((ROOT / "examples").glob("*.json"))


KINDS = (("basic", "points, eyes, fitting, frame", BASIC_SECTIONS, None),
         ("live", "live request: + reading-zone band, suggested remedy", LIVE_SECTIONS, 0.3),
         ("whole", "whole result: every section", SECTIONS, 1.5))


def measure(text: str, runs: int, sections: tuple[str, ...]) -> list[float]:
    times = []
    for _ in range(runs):
        start = time.perf_counter()
        json.dumps(evaluate(read_case_text(text), sections), allow_nan=False)
        times.append((time.perf_counter() - start) * 1000.0)
    return times


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__)
    parser.add_argument("--runs", type=int, default=2000)
    parser.add_argument("--record", action="store_true")
    args = parser.parse_args()
    load_before = os.getloadavg()
    lines = []
    for path in CASES:
        text = path.read_text()
        for _key, label, sections, goal in KINDS:
            measure(text, 50, sections)  # warm up
            times = sorted(measure(text, args.runs, sections))
            p50 = statistics.median(times)
            p95 = times[int(0.95 * len(times)) - 1]
            verdict = "-" if goal is None else (f"yes (<= {goal})" if p95 <= goal
                                                else f"NO: {p95 - goal:.3f} over {goal}")
            lines.append(f"| {path.stem} | {label} | {p50:.3f} | {p95:.3f} | {verdict} |")
    load_after = os.getloadavg()
    header = [
        f"## {datetime.datetime.now().isoformat(timespec='minutes')}: {platform.machine()}, "
        f"{os.cpu_count()} cores ({platform.processor() or 'cpu unknown'}), "
        f"Python {platform.python_version()}, {args.runs} runs each; load average "
        f"(1/5/15 min) {'/'.join(f'{v:.2f}' for v in load_before)} at the start, "
        f"{'/'.join(f'{v:.2f}' for v in load_after)} at the end (shared machine)",
        "",
        "| case | sections | p50 ms | p95 ms | p95 goal met |",
        "|---|---|---|---|---|",
    ]
    report = "\n".join(header + lines) + "\n"
    print(report)
    if args.record:
        out = ROOT / "bench" / "results-core.md"
        if not out.exists():
            out.write_text("# Core benchmark: case evaluations, native\n\n")
        with out.open("a") as handle:
            handle.write("\n" + report)

if __name__ == "__main__":
    main()
