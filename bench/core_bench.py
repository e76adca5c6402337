"""Native timing of case evaluations (parse, validate, evaluate, serialise to JSON).

Not a test: run ``python bench/core_bench.py [--record]``; with --record the
figures are appended to bench/results-core.md with the date, machine and load.
Each case is timed three ways: the basic sections (points, eyes, fitting, frame);
the live request after a keystroke (``LIVE_SECTIONS``: each point's totals, the
lenses, the reading zone's band figures and the suggested remedy); and the whole
result (``WHOLE_SECTIONS``: map, path, sensitivity, every remedy's finished case).

Every timed run reads a different case text: as a person typing does, each run
edits one field of the one before (the right sphere, the left sphere, the right
axis, the fitting heights or else the right PD, the left PD, in turn), each field cycling through a
prime number of values (at least 37), so no two runs of one timing read the same
text and no cache of the core can answer in place of the evaluation. The bridge's
result cache is not used.

``--code DIR`` times the pycore of another tree (the same edited texts);
``--clock cpu`` times with time.process_time instead of the wall clock;
``--compare OLD_DIR`` runs this tree and OLD_DIR alternately in fresh processes
(``--rounds`` times each) and prints the pooled figures of both side by side.
Goals: the live request p95 <= 0.3 ms; the whole result p95 <= 1.5 ms.
"""

from __future__ import annotations

import argparse
import datetime
import json
import os
import platform
import re
import statistics
import subprocess
import sys
import time
from collections.abc import Callable
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parent.parent
CASES = sorted((ROOT / "examples").glob("*.json"))
KINDS = (("basic", "points, eyes, fitting, frame", None),
         ("live", "live request (LIVE_SECTIONS of the tree timed)", 0.3),
         ("whole", "whole result: every section", 1.5))

# One field a person might type in, the number of values it cycles through (a prime, so
# the whole case repeats only after their product), and how one value is written.
_FIELDS = (("right sphere", 37), ("left sphere", 41), ("right axis", 43),
           ("heights", 47), ("left PD", 53))


def _set_sphere(lens: dict[str, Any], offset: float) -> None:
    if "rx" in lens:
        lens["rx"] = re.sub(r"^\s*(plano|[+-]?\d+(?:\.\d+)?)",
                            lambda m: f"{_number(m.group(1)) + offset:+.2f}", lens["rx"])
    else:
        lens["sphere"] = round(float(lens.get("sphere", 0.0)) + offset, 2)


def _set_axis(lens: dict[str, Any], offset: float) -> None:
    if "rx" in lens:
        lens["rx"] = re.sub(r"x\s*(\d+)", lambda m: f"x {(int(m.group(1)) + offset) % 180:g}",
                            lens["rx"])
    else:
        lens["axis"] = (float(lens.get("axis", 0.0)) + offset) % 180


def _number(text: str) -> float:
    return 0.0 if text == "plano" else float(text)


def edited_texts(text: str, count: int) -> list[str]:
    """``count`` case texts, each the one before with one field typed anew (see above)."""
    original = json.loads(text)
    state = [0] * len(_FIELDS)
    texts = []
    for run in range(count):
        field = run % len(_FIELDS)
        state[field] = (state[field] + 1) % _FIELDS[field][1]
        doc = json.loads(json.dumps(original))
        # Values on either side of the original: index k of n is offset k - n // 2 steps.
        steps = [k - n // 2 for k, (_name, n) in zip(state, _FIELDS, strict=True)]
        _set_sphere(doc["right"], 0.125 * steps[0])
        _set_sphere(doc["left"], 0.125 * steps[1])
        _set_axis(doc["right"], 2.0 * steps[2])
        fitting = doc.get("fitting")
        if isinstance(fitting, dict):
            heights = [fitting[eye] for eye in ("right", "left") if "height_mm" in fitting[eye]]
            for eye_fitting in heights:
                eye_fitting["height_mm"] += 0.25 * steps[3]
            if not heights:  # no heights to type: the right PD instead
                fitting["right"]["mono_pd_mm"] += 0.125 * steps[3]
            fitting["left"]["mono_pd_mm"] += 0.125 * steps[4]
        texts.append(json.dumps(doc, indent=2))
    assert len(set(texts)) == len(texts), "edited texts repeat"
    return texts


def measure(texts: list[str], sections: tuple[str, ...],
            clock: Callable[[], float]) -> list[float]:
    from pycore.documents.cases import read_case_text
    from pycore.evaluate import evaluate

    times = []
    for text in texts:
        start = clock()
        json.dumps(evaluate(read_case_text(text), sections), allow_nan=False)
        times.append((clock() - start) * 1000.0)
    return times


def percentiles(times: list[float]) -> tuple[float, float]:
    ordered = sorted(times)
    return statistics.median(ordered), ordered[int(0.95 * len(ordered)) - 1]


def timings(runs: int, clock: Callable[[], float]) -> dict[str, dict[str, list[float]]]:
    """Per case and kind, the times (ms) of ``runs`` edited texts after a warm-up."""
    import pycore.evaluate as pipeline

    # An older tree (--code, --compare) may predate WHOLE_SECTIONS: its whole is SECTIONS.
    whole = getattr(pipeline, "WHOLE_SECTIONS", pipeline.SECTIONS)
    sections = {"basic": pipeline.BASIC_SECTIONS, "live": pipeline.LIVE_SECTIONS, "whole": whole}
    found: dict[str, dict[str, list[float]]] = {}
    for path in CASES:
        texts = edited_texts(path.read_text(), runs + 50)
        found[path.stem] = {}
        for key, _label, _goal in KINDS:
            measure(texts[-50:], sections[key], clock)  # warm up on texts not timed
            found[path.stem][key] = measure(texts[:runs], sections[key], clock)
    return found


def header(runs: int, load_before: tuple[float, ...], load_after: tuple[float, ...],
           what: str) -> str:
    return (f"## {datetime.datetime.now().isoformat(timespec='minutes')}: {platform.machine()}, "
            f"{os.cpu_count()} cores ({platform.processor() or 'cpu unknown'}), "
            f"Python {platform.python_version()}, {runs} runs each, {what}; load average "
            f"(1/5/15 min) {'/'.join(f'{v:.2f}' for v in load_before)} at the start, "
            f"{'/'.join(f'{v:.2f}' for v in load_after)} at the end (shared machine)")


def compare(old: Path, runs: int, rounds: int) -> str:
    """This tree and ``old`` alternately, CPU time, pooled per kind over the cases."""
    pooled: dict[str, dict[str, list[float]]] = {"old": {}, "new": {}}
    load_before = os.getloadavg()
    for _ in range(rounds):
        for name, code in (("old", old), ("new", ROOT)):
            out = subprocess.run([sys.executable, __file__, "--code", str(code), "--runs",
                                  str(runs), "--clock", "cpu", "--raw"],
                                 check=True, capture_output=True, text=True).stdout
            for per_kind in json.loads(out).values():
                for key, times in per_kind.items():
                    pooled[name].setdefault(key, []).extend(times)
    lines = [header(runs, load_before, os.getloadavg(),
                    f"CPU time, {rounds} alternating rounds of old ({old}) and new code, "
                    "all cases pooled"), "",
             "| sections | old p50 / p95 ms | new p50 / p95 ms | speed-up p50 / p95 |",
             "|---|---|---|---|"]
    for key, label, _goal in KINDS:
        (o50, o95), (n50, n95) = percentiles(pooled["old"][key]), percentiles(pooled["new"][key])
        lines.append(f"| {label} | {o50:.3f} / {o95:.3f} | {n50:.3f} / {n95:.3f} | "
                     f"{o50 / n50:.1f}x / {o95 / n95:.1f}x |")
    return "\n".join(lines) + "\n"


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__)
    parser.add_argument("--runs", type=int, default=2000)
    parser.add_argument("--record", action="store_true")
    parser.add_argument("--code", type=Path, default=ROOT)
    parser.add_argument("--clock", choices=("wall", "cpu"), default="wall")
    parser.add_argument("--compare", type=Path)
    parser.add_argument("--rounds", type=int, default=5)
    parser.add_argument("--raw", action="store_true", help=argparse.SUPPRESS)
    args = parser.parse_args()
    if args.compare is not None:
        report = compare(args.compare.resolve(), args.runs, args.rounds)
    else:
        sys.path.insert(0, str(args.code.resolve()))
        clock = time.process_time if args.clock == "cpu" else time.perf_counter
        load_before = os.getloadavg()
        found = timings(args.runs, clock)
        if args.raw:
            print(json.dumps(found))
            return
        code = "" if args.code.resolve() == ROOT else f", the pycore of {args.code}"
        lines = [header(args.runs, load_before, os.getloadavg(),
                        f"{args.clock} clock, a differently edited case text each run{code}"),
                 "",
                 "| case | sections | p50 ms | p95 ms | p95 goal met |",
                 "|---|---|---|---|---|"]
        for case, per_kind in found.items():
            for key, label, goal in KINDS:
                p50, p95 = percentiles(per_kind[key])
                verdict = "-" if goal is None else (f"yes (<= {goal})" if p95 <= goal
                                                    else f"NO: {p95 - goal:.3f} over {goal}")
                lines.append(f"| {case} | {label} | {p50:.3f} | {p95:.3f} | {verdict} |")
        report = "\n".join(lines) + "\n"
    print(report)
    if args.record:
        out = ROOT / "bench" / "results-core.md"
        with out.open("a") as handle:
            handle.write("\n" + report)


if __name__ == "__main__":
    main()
