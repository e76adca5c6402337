#!/usr/bin/env python3
"""Does numpy speed up large batches? Measures, on generated lab files:

1. the whole batch (CSV text in, CSV report out), pure standard library;
2. where that time goes (cProfile, by stage);
3. the Prentice arithmetic alone: the core's per-point pure Python against a
   numpy vectorised P = -F r over every point of the batch at once.

The arithmetic is the only part numpy could take over (parsing, validation
and writing are string work). Its share of the whole bounds any gain.

    .venv/bin/python bench/batch_bench.py [ROWS]
"""

from __future__ import annotations

import cProfile
import csv
import io
import pstats
import random
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from pycore.documents.batch import run_csv_text
from pycore.optics.eyes import EYES
from pycore.optics.power import Prescription
from pycore.optics.prentice import induced_prism
from pycore.spectacles.gaze import LensPoint

HEADER = ["name", "right.rx", "left.rx", "fitting.right.mono_pd_mm", "fitting.left.mono_pd_mm",
          "fitting.right.height_mm", "fitting.left.height_mm",
          "verification.measured.right.prism", "verification.measured.left.prism"]


def lab_file(rows: int, seed: int = 1) -> str:
    rng = random.Random(seed)
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(HEADER)
    for index in range(rows):
        writer.writerow([
            f"job {index}",
            f"{rng.randint(-24, 24) / 4:+.2f} / {rng.choice([0, -0.5, -1.25]):+.2f} x "
            f"{rng.randint(1, 180)}",
            f"{rng.randint(-24, 24) / 4:+.2f} DS", rng.randint(28, 35), rng.randint(28, 35),
            20, 20, rng.choice(["0.25 BU", "0.5 BI", "0"]), rng.choice(["0.25 BD", "0"])])
    return out.getvalue()


def best(fn, repeat: int = 3) -> float:  # type: ignore[no-untyped-def]
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        fn()
        times.append(time.perf_counter() - start)
    return min(times)


def main() -> None:
    rows = int(sys.argv[1]) if len(sys.argv) > 1 else 20_000
    text = lab_file(rows)
    whole = best(lambda: run_csv_text(text, "csv"), repeat=2)
    print(f"rows: {rows}  (2 points each: distance and near; verification on every row)")
    print(f"whole batch, standard library: {whole:.2f} s = {rows / whole:,.0f} cases/s")

    profile = cProfile.Profile()
    profile.enable()
    run_csv_text(text, "csv")
    profile.disable()
    stats = pstats.Stats(profile)
    total = stats.total_tt  # type: ignore[attr-defined]
    by_function = {f"{path.rsplit('/', 1)[-1]}:{name}": entry[3]
                   for (path, _line, name), entry in stats.stats.items()}  # type: ignore[attr-defined]
    stages = {
        "CSV row to document (csvcases)": "csvcases.py:row_document",
        "reading and validating the case": "cases.py:read_case",
        "prism at the points (evaluate_point)": "evaluate.py:evaluate_point",
        "  of which Prentice arithmetic (induced_prism)": "prentice.py:induced_prism",
        "verification verdicts": "verification_section.py:evaluate_section",
        "writing the report": "batch.py:__call__",
    }
    print(f"\nprofile (cumulative time, {total:.2f} s profiled):")
    for label, key in stages.items():
        seconds = by_function.get(key, 0.0)
        print(f"  {label:48} {seconds:6.2f} s  {100 * seconds / total:5.1f} %")

    rng = random.Random(2)
    lenses = [Prescription(rng.randint(-24, 24) / 4, -0.5, rng.randint(0, 180)).power_matrix
              for _ in range(rows)]
    points = [LensPoint(rng.uniform(0, 3), rng.uniform(-12, 0)) for _ in range(rows)]

    def pure() -> None:
        for power, point in zip(lenses, points, strict=True):
            for eye in EYES:
                induced_prism(power, point, eye)

    pure_s = best(pure)
    print(f"\nPrentice arithmetic alone, {2 * rows} lens points:")
    print(f"  pure Python (core):       {pure_s * 1000:8.1f} ms")
    try:
        import numpy as np
    except ImportError:
        print("  numpy not installed")
        return
    f = np.array([[p.xx, p.xy, p.yy] for p in lenses])
    r = np.array([[p.in_mm / 10, p.up_mm / 10] for p in points])

    def vectorised() -> None:
        for sign in (1.0, -1.0):
            x, y = sign * r[:, 0], r[:, 1]
            px = -(f[:, 0] * x + f[:, 1] * y)
            py = -(f[:, 1] * x + f[:, 2] * y)
            _ = (sign * px, py)

    numpy_s = best(vectorised)
    print(f"  numpy vectorised:         {numpy_s * 1000:8.1f} ms  "
          f"({pure_s / numpy_s:,.0f} x faster on this part)")
    ceiling = whole / max(whole - pure_s + numpy_s, 1e-9)
    print(f"\nbest possible end-to-end gain from numpy: {ceiling:.3f} x "
          f"({100 * (1 - 1 / ceiling):.1f} % less time)")


if __name__ == "__main__":
    main()
