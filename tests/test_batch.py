"""Batch runs: generated case files with some bad rows, through the CLI and back.

The reference for every net is ``evaluate`` on the same case document (the
core's single entry point); the verdicts are checked against ``verify``.
"""

from __future__ import annotations

import contextlib
import csv
import io
import json
import random
import subprocess
import sys
from pathlib import Path
from typing import Any

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import pycore.interfaces.commands.batch as batch_cli
from pycore.documents.batch import CSV_COLUMNS, run_csv_text
from pycore.documents.cases import read_case
from pycore.documents.csv_cases import check_header, row_document
from pycore.errors import CaseError
from pycore.evaluate import evaluate
from pycore.interfaces.bridge import handle
from pycore.interfaces.cli import main

ROOT = Path(__file__).resolve().parent.parent
HEADER = ["name", "right.rx", "left.rx", "right.prism", "fitting.right.mono_pd_mm",
          "fitting.left.mono_pd_mm", "fitting.right.height_mm", "fitting.left.height_mm",
          "points.0", "points.1.name", "points.1.right.in_mm", "points.1.right.up_mm",
          "points.1.left.in_mm", "points.1.left.up_mm",
          "verification.standard", "verification.measured.right.prism",
          "verification.measured.left.prism"]
# (bad cell values, the column they go in): each must be refused naming that column
BAD_CELLS = [
    ("+2.00 / -1.00 x 200", "right.rx"),
    ("+2.00 y 90", "left.rx"),
    ("3 BX", "right.prism"),
    ("sixty", "fitting.right.mono_pd_mm"),
    ("70", "fitting.left.mono_pd_mm"),
    ("far", "points.0"),
    ("99", "points.1.right.in_mm"),
    ("ansi-1999", "verification.standard"),
    ("0.5 BQ", "verification.measured.left.prism"),
]


def good_row(rng: random.Random, index: int) -> list[str]:
    sphere = rng.choice([x / 4 for x in range(-24, 25)])
    cyl = rng.choice([0, -0.5, -1.25])
    axis = rng.randint(1, 180)
    left = rng.choice([x / 4 for x in range(-24, 25)])
    verify = rng.random() < 0.6
    return [f"job {index}", f"{sphere:+.2f} / {cyl:+.2f} x {axis}", f"{left:+.2f} DS",
            rng.choice(["", "1 BI", "0.5 BU"]), str(rng.randint(28, 35)),
            str(rng.randint(28, 35)), "20", "20", "near", "reading",
            str(rng.randint(0, 4)), str(-rng.randint(6, 12)), str(rng.randint(0, 4)),
            str(-rng.randint(6, 12)),
            rng.choice(["ansi-z80.1-2015", "iso-21987-2009", "bs-2738-1985"]) if verify else "",
            rng.choice(["0.25 BU", "0.5 BI", "0"]) if verify else "",
            rng.choice(["0.25 BD", "0"]) if verify else ""]


def generated(tmp_path: Path, rows: int = 40, seed: int = 7) -> tuple[Path, dict[int, str]]:
    """A CSV of generated cases; every fifth row carries one bad cell. Returns the path
    and, by line, the column each bad row must be refused on."""
    rng = random.Random(seed)
    bad: dict[int, str] = {}
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(HEADER)
    for index in range(rows):
        row = good_row(rng, index)
        if index % 5 == 4:
            value, column = BAD_CELLS[(index // 5) % len(BAD_CELLS)]
            position = HEADER.index(column)
            if column.startswith("verification.measured") and not row[position]:
                row[HEADER.index("verification.standard")] = "ansi-z80.1-2015"
                row[HEADER.index("verification.measured.right.prism")] = "0"
            row[position] = value
            bad[index + 2] = column
        writer.writerow(row)
    path = tmp_path / "jobs.csv"
    path.write_text(out.getvalue())
    return path, bad


def documents(path: Path) -> dict[int, dict[str, Any]]:
    with path.open() as handle:
        rows = list(csv.reader(handle))
    paths = check_header(rows[0])
    found = {}
    for line, row in enumerate(rows[1:], start=2):
        with contextlib.suppress(CaseError):
            found[line] = row_document(paths, row)
    return found


def cli(*args: str) -> subprocess.CompletedProcess[str]:
    return subprocess.run([sys.executable, "-m", "pycore", *args], capture_output=True,
                          text=True, cwd=ROOT, timeout=120)


def test_csv_round_trip_jsonl(tmp_path: Path) -> None:
    path, bad = generated(tmp_path)
    report = tmp_path / "report.jsonl"
    proc = cli("batch", str(path), "--output", str(report))
    assert proc.returncode == 1, proc.stderr  # some rows refused
    assert proc.stdout == ""
    assert "batch: done, 40 cases, 8 refused" in proc.stderr
    entries = [json.loads(line) for line in report.read_text().splitlines()]
    assert [e["line"] for e in entries] == list(range(2, 42))
    docs = documents(path)
    for entry in entries:
        if entry["line"] in bad:
            assert entry["status"] == "refused"
            assert entry["error"]["field"].startswith(bad[entry["line"]]), entry
            assert entry["error"]["message"]
            continue
        assert entry["status"] == "ok", entry
        reference = evaluate(read_case(docs[entry["line"]]))
        assert len(entry["points"]) == len(reference["points"]) == 2
        for got, want in zip(entry["points"], reference["points"], strict=True):
            assert got["name"] == want["name"]
            assert got["net_horizontal_base_in"] == want["net"]["horizontal_base_in"]
            assert got["net_vertical_base_up_right"] == want["net"]["vertical_base_up_right"]
            assert got["right_base_up"] == want["right"]["base_up"]
        if "verification" in reference:
            assert entry["verification"]["result"] == reference["verification"]["result"]
            assert entry["verification"]["unverified"] == (
                reference["verification"]["standard"]["id"] == "iso-21987-2009")
        else:
            assert entry["verification"] is None


def test_csv_report_one_row_per_point(tmp_path: Path) -> None:
    path, bad = generated(tmp_path, rows=15)
    proc = cli("batch", str(path), "--quiet")
    assert proc.returncode == 1 and proc.stderr == ""
    rows = list(csv.DictReader(io.StringIO(proc.stdout)))
    assert list(rows[0]) == list(CSV_COLUMNS)
    refused = [r for r in rows if r["status"] == "refused"]
    assert {int(r["line"]) for r in refused} == set(bad)
    assert all(r["field"] and r["message"] and not r["point"] for r in refused)
    ok = [r for r in rows if r["status"] == "ok"]
    assert len(ok) == 2 * (15 - len(bad))
    for row in ok:
        float(row["net_horizontal_base_in"])
        if row["verification_standard"]:
            assert row["verification_result"] in ("pass", "fail", "incomplete")
            assert "vertical" in row["verification_detail"]


def test_folder_of_case_files(tmp_path: Path) -> None:
    folder = tmp_path / "cases"
    folder.mkdir()
    path, bad = generated(tmp_path, rows=6)
    docs = documents(path)
    for line, doc in docs.items():
        (folder / f"case{line:03d}.json").write_text(json.dumps(doc))
    (folder / "zz-broken.json").write_text('{"right": ')
    (folder / "notes.txt").write_text("ignored")
    proc = cli("batch", str(folder), "--format", "jsonl")
    assert proc.returncode == 1
    entries = [json.loads(line) for line in proc.stdout.splitlines()]
    assert [e["source"] for e in entries][-1] == "zz-broken.json"
    assert entries[-1]["status"] == "refused" and "JSON" in entries[-1]["error"]["message"]
    assert all(e["line"] is None for e in entries)
    assert sum(e["status"] == "ok" for e in entries) == len(docs) - len(bad) == 5


def test_text_report_and_progress(tmp_path: Path, capsys: pytest.CaptureFixture[str],
                                  monkeypatch: pytest.MonkeyPatch) -> None:
    path, _ = generated(tmp_path, rows=10)
    monkeypatch.setattr(batch_cli, "PROGRESS_EVERY_S", -1.0)
    assert main(["batch", str(path), "--text"]) == 1
    out, err = capsys.readouterr()
    assert "jobs.csv line 2: job 0" in out and "REFUSED" in out
    assert "batch: 1/10 cases" in err and "batch: 10/10 cases" in err


@pytest.mark.parametrize(("content", "needle"), [
    ("", "empty"),
    ("right.rx,right.rx\n-1 DS,-1 DS\n", "appears twice"),
    ("right..rx\n-1 DS\n", "header column 1"),
    ("0.rx\n-1 DS\n", "header column 1"),
])
def test_refused_input_files(tmp_path: Path, content: str, needle: str,
                             capsys: pytest.CaptureFixture[str]) -> None:
    path = tmp_path / "in.csv"
    path.write_text(content)
    assert main(["batch", str(path)]) == 2
    out, err = capsys.readouterr()
    assert out == "" and needle in err and err.count("\n") == 1


def test_missing_input_and_empty_folder(tmp_path: Path,
                                        capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["batch", str(tmp_path / "nothing.csv")]) == 2
    assert capsys.readouterr().out == ""
    assert main(["batch", str(tmp_path)]) == 2
    out, err = capsys.readouterr()
    assert out == "" and "no case files" in err


@pytest.mark.parametrize(("header", "row", "field"), [
    (["right.sphere", "right"], ["-1", "x"], "right"),
    (["points.1.name"], ["far"], "points.0"),
    (["name"], ["a", "b"], ""),
])
def test_row_catalogue(header: list[str], row: list[str], field: str) -> None:
    with pytest.raises(CaseError) as caught:
        row_document(check_header(header), row)
    assert caught.value.field == field


@settings(max_examples=40, deadline=None)
@given(st.lists(st.tuples(st.sampled_from([x / 4 for x in range(-40, 41)]),
                          st.sampled_from([x / 4 for x in range(-40, 41)]),
                          st.integers(-5, 5), st.integers(-15, 5)), min_size=1, max_size=10))
def test_batch_equals_evaluate_property(rows: list[tuple[float, float, int, int]]) -> None:
    """Whatever the rows, each batch net equals evaluate's on the same document."""
    lines = ["right.sphere,left.sphere,points.0.right.in_mm,points.0.right.up_mm,"
             "points.0.left.in_mm,points.0.left.up_mm"]
    lines += [f"{r},{le},{i},{u},{i},{u}" for r, le, i, u in rows]
    report = run_csv_text("\n".join(lines) + "\n", "jsonl")
    assert report["cases"] == len(rows) and report["refused"] == 0
    for entry, (r, le, i, u) in zip(report["report"].splitlines(), rows, strict=True):
        got = json.loads(entry)["points"][0]
        doc = {"right": {"sphere": r}, "left": {"sphere": le},
               "points": [{"right": {"in_mm": i, "up_mm": u}, "left": {"in_mm": i, "up_mm": u}}]}
        want = evaluate(read_case(doc))["points"][0]["net"]
        assert got["net_horizontal_base_in"] == want["horizontal_base_in"]
        assert got["net_vertical_base_up_right"] == want["vertical_base_up_right"]


def test_worker_action(tmp_path: Path) -> None:
    path, bad = generated(tmp_path, rows=10)
    reply = json.loads(handle(json.dumps({"action": "batch", "payload": {
        "csv": path.read_text(), "format": "csv"}})))
    assert reply["ok"] and reply["result"]["refused"] == len(bad)
    reply = json.loads(handle(json.dumps({"action": "batch", "payload": {
        "csv": "right..rx\n"}})))
    assert not reply["ok"] and reply["error"]["field"] == "header"


def test_lensmeter_reading_columns_judge_the_whole_pair() -> None:
    """A lab's day: the reading per job in columns named after the case format's keys, and
    every verdict per job (ANSI QRG: sphere 0.13 D, add 0.12 D, segment height 1.0 mm)."""
    header = ["name", "right.rx", "left.rx", "right.add", "left.add", "right.segment.top_mm",
              "left.segment.top_mm", "fitting.right.mono_pd_mm", "fitting.left.mono_pd_mm",
              "fitting.right.height_mm", "fitting.left.height_mm",
              "verification.measured.right.rx", "verification.measured.left.rx",
              "verification.measured.right.prism", "verification.measured.left.prism",
              "verification.measured.right.add", "verification.measured.left.add",
              "verification.measured.right.segment.height_mm",
              "verification.measured.left.segment.height_mm"]
    good = ["job ok", "-2.00 / -1.00 x 180", "-2.25 DS", "2", "2", "-4", "-4", "32", "32",
            "22", "22", "-3.00 / +1.00 x 90", "-2.25 DS", "0", "0", "2.12", "2.00", "18",
            "18.5"]
    bad = ["job bad", "-2.00 / -1.00 x 180", "-2.25 DS", "2", "2", "-4", "-4", "32", "32",
           "22", "22", "-2.00 / -1.00 x 174", "-2.50 DS", "0", "0", "2.25", "2.00", "18",
           "19.5"]
    text = "\n".join(",".join(row) for row in (header, good, bad)) + "\n"
    report = run_csv_text(text, "jsonl")
    entries = [json.loads(line) for line in report["report"].splitlines()]
    assert [e["verification"]["result"] for e in entries] == ["pass", "fail"]
    failed = {(v["criterion"], v["eye"]) for v in entries[1]["verification"]["verdicts"]
              if v["status"] == "fail"}
    # axis 6 deg on a 1.00 D cylinder (3 allowed), left sphere 0.25 off, add 0.25 off,
    # left segment 1.5 mm high and 1.5 mm above the right
    assert failed == {("axis", "right"), ("meridian_power", "left"), ("add", "right"),
                      ("segment_height", "left"), ("segment_height_difference", None)}
    csv_report = run_csv_text(text, "csv")["report"]
    assert "meridian_power right pass" in csv_report and "axis right fail" in csv_report
