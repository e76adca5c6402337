"""Native timing of one full case evaluation (parse, validate, evaluate, serialise).

Not a test: run ``python bench/core_bench.py [--record]``; with --record the
figures are appended to bench/results-core.md with the date, machine and load.
Each case is timed twice: the core evaluation (points, eyes, fitting, frame) and
the whole result with the reading zone, its map and the remedies.
Goal (issue: core): p95 <= 2 ms for one full case.
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
from pycore.evaluate import BASIC_SECTIONS, SECTIONS, evaluate  # noqa: E402

CASES = sorted((ROOT / "examples").glob("*.json"))


def measure(text: str, runs: int, further: bool = True) -> list[float]:
    times = []
    for _ in range(runs):
        start = time.perf_counter()
        json.dumps(evaluate(read_case_text(text), SECTIONS if further else BASIC_SECTIONS))
        times.append((time.perf_counter() - start) * 1000.0)
    return times


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__)
    parser.add_argument("--runs", type=int, default=2000)
    parser.add_argument("--record", action="store_true")
    args = parser.parse_args()
    lines = []
    for path in CASES:
        text = path.read_text()
        for further, label in ((False, "points, eyes, fitting, frame"),
                               (True, "everything: + reading zone, map, remedies")):
            measure(text, 50, further)  # warm up
            times = sorted(measure(text, args.runs, further))
            p50 = statistics.median(times)
            p95 = times[int(0.95 * len(times)) - 1]
            lines.append(f"| {path.stem} | {label} | {p50:.3f} | {p95:.3f} | "
                         f"{'yes' if p95 <= 2 else 'NO'} |")
    header = [
        f"## {datetime.date.today().isoformat()}: {platform.machine()}, {os.cpu_count()} cores, "
        f"Python {platform.python_version()}, {args.runs} runs each, "
        f"load average {os.getloadavg()[0]:.1f} at the start",
        "",
        "| case | sections | p50 ms | p95 ms | p95 <= 2 ms |",
        "|---|---|---|---|---|",
    ]
    report = "\n".join(header + lines) + "\n"
    print(report)
    if args.record:
        out = ROOT / "bench" / "results-core.md"
        if not out.exists():
            out.write_text("# Core benchmark: one full case evaluation, native\n\n")
        with out.open("a") as handle:
            handle.write("\n" + report)


if __name__ == "__main__":
    main()
