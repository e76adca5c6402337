"""Nothing lost, nothing stuck: the JSON reader's rules, safe input files, batch reports
written whole, spreadsheet-safe CSV, and one sentence (exit 2) for every bad input.

The rules checked here are the project's own (docs/case-format.md, "Reading files");
the formula-injection prefixes are common practice for CSV written for spreadsheets.
"""

from __future__ import annotations

import csv
import errno
import io
import json
import os
import subprocess
import sys
import tracemalloc
from pathlib import Path
from typing import Any

import pytest

from pycore.checks.reader_stock import parse_stock_csv, read_stock, stock_to_csv
from pycore.documents import batch
from pycore.documents.cases import MAX_DOCUMENT_BYTES, MAX_NESTING, load_json
from pycore.documents.kinds import NAMES, read_document
from pycore.errors import ECHO, CaseError
from pycore.interfaces import bridge
from pycore.interfaces.cli import main

ROOT = Path(__file__).resolve().parent.parent
EYES_AND_POINT = {"right": {"sphere": -1.0}, "left": {"sphere": -1.5},
                  "points": [{"name": "reading", "right": {"in_mm": 2, "up_mm": -10},
                              "left": {"in_mm": 2, "up_mm": -10}}]}
READERS = {"wearer": {"near_pd_mm": 60, "right": {"rx": "+2.50 DS"},
                      "left": {"rx": "+2.50 DS"}},
           "stock": [{"id": "N60", "power": 2.5, "oc_distance_mm": 60, "count": 2}]}
DEVIATION = {"measured": "20 BO", "fixating": "right", "right": {"rx": "-4.00 DS"},
             "left": {"rx": "-4.00 DS"}}
VERIFICATION = {"ordered": {"right": {"rx": "-2.00 DS", "mono_pd_mm": 32, "height_mm": 22},
                            "left": {"rx": "-2.00 DS", "mono_pd_mm": 32, "height_mm": 22}},
                "measured": {"right": {"prism": "0.25 BU"}}}
BATCH_HEADER = "name,right.sphere,left.sphere,points.0.right.in_mm,points.0.right.up_mm," \
               "points.0.left.in_mm,points.0.left.up_mm\n"


def refusal(field: str, text: str | bytes) -> CaseError:
    with pytest.raises(CaseError) as caught:
        load_json(text)
    assert caught.value.field == field, caught.value.message
    assert len(caught.value.message) <= 300
    return caught.value


def run_main(capsys: Any, monkeypatch: Any, *args: str, stdin: bytes = b"") -> tuple[int, str,
                                                                                       str]:
    monkeypatch.setattr(sys, "stdin", io.TextIOWrapper(io.BytesIO(stdin)))
    code = main(list(args))
    out, err = capsys.readouterr()
    return code, out, err


def one_sentence(code: int, out: str, err: str) -> str:
    assert code == 2 and out == "", (code, out, err)
    assert "Traceback" not in err and err.count("\n") == 1, err
    assert len(err) <= 300
    return err


# --------------------------------------------------------------------------- the JSON reader


def test_byte_order_mark_is_accepted() -> None:
    text = json.dumps(EYES_AND_POINT)
    assert load_json(b"\xef\xbb\xbf" + text.encode()) == EYES_AND_POINT
    assert load_json("\ufeff" + text) == EYES_AND_POINT


def test_duplicate_key_is_refused_by_its_path() -> None:
    err = refusal("points.0.right.up_mm",
                  '{"points": [{"right": {"up_mm": -10, "up_mm": -12}}]}')
    assert "twice" in err.message


@pytest.mark.parametrize("literal", ["NaN", "Infinity", "-Infinity"])
def test_nan_and_infinity_name_the_field(literal: str) -> None:
    err = refusal("right.cylinder", '{"right": {"sphere": 0, "cylinder": ' + literal + "}}")
    assert err.message.startswith("right.cylinder") and literal in err.message


@pytest.mark.parametrize("number", ["1" + "0" * 310, "-" + "9" * 4400, "1e309", "-1e400"])
def test_numbers_too_large_for_a_double_are_refused(number: str) -> None:
    # A double holds at most about 1.8e308 (IEEE 754); Python converts at most 4300 digits.
    err = refusal("stock.0.count", '{"stock": [{"count": ' + number + "}]}")
    assert "too large" in err.message


def test_nesting_limit() -> None:
    assert load_json("[" * MAX_NESTING + "]" * MAX_NESTING) is not None
    err = refusal("", "[" * (MAX_NESTING + 1) + "]" * (MAX_NESTING + 1))
    assert f"nested more than {MAX_NESTING} levels deep" in err.message
    refusal("", '{"a": ' * 50_000 + "1" + "}" * 50_000)


def test_lone_surrogate_is_refused_naming_the_field() -> None:
    err = refusal("name", '{"name": "Ann \\ud800"}')
    assert "broken character" in err.message
    assert load_json('{"name": "\\ud83d\\ude00"}') == {"name": "\U0001f600"}   # a whole pair


def test_constructor_is_an_ordinary_key() -> None:
    assert load_json('{"constructor": 1, "__proto__": 2}') == {"constructor": 1, "__proto__": 2}
    with pytest.raises(CaseError) as caught:
        bridge.ACTIONS["evaluate"]({**EYES_AND_POINT, "constructor": {}})
    assert caught.value.field == "constructor"


def test_bad_values_are_echoed_short() -> None:
    long_text = "x" * 10_000
    for document in ({**EYES_AND_POINT, "right": {"sphere": long_text}},
                     {**EYES_AND_POINT, long_text: 1}):
        reply = json.loads(bridge.handle(json.dumps({"action": "evaluate",
                                                     "payload": document})))
        message = reply["error"]["message"]
        assert len(message) < 300 and "x" * (ECHO + 1) not in message, message


def test_worker_request_nesting_counts_the_document_only() -> None:
    deep = json.loads("[" * (MAX_NESTING - 1) + "]" * (MAX_NESTING - 1))
    ok = json.loads(bridge.handle(json.dumps({"action": "evaluate",
                                              "payload": {**EYES_AND_POINT, "notes": deep}})))
    assert ok["error"]["field"] == "notes"   # read, then refused as notes is not text
    reply = json.loads(bridge.handle('{"action": "evaluate", "payload": '
                                     + "[" * 5000 + "]" * 5000 + "}"))
    assert f"more than {MAX_NESTING} levels" in reply["error"]["message"]


# --------------------------------------------------------------------------- read_document


@pytest.mark.parametrize(("document", "kind"), [
    (EYES_AND_POINT, "case"), ({**EYES_AND_POINT, "verification": {}}, "case"),
    (READERS, "readers"), (DEVIATION, "deviation"), (VERIFICATION, "verification")])
def test_read_document_recognises_the_kind(document: dict[str, Any], kind: str) -> None:
    result = read_document("\ufeff" + json.dumps(document))
    assert result == {"kind": kind, "document": document}


def test_read_document_batch_and_refusals() -> None:
    text = BATCH_HEADER + "a,-1,-1,2,-10,2,-10\n"
    assert read_document(text) == {"kind": "batch", "document": {"csv": text}}
    with pytest.raises(CaseError) as caught:
        read_document(json.dumps(READERS), "case")
    assert caught.value.message == "This file is a readers request, not a case."
    with pytest.raises(CaseError):
        read_document("id,power,oc_distance_mm,count\nA,2,60,1\n")
    with pytest.raises(CaseError) as caught:
        read_document('{"right": 1, "right": 2}')
    assert caught.value.field == "right"


KIND_OF = {"case": EYES_AND_POINT, "readers": READERS, "deviation": DEVIATION,
           "verification": VERIFICATION}
COMMAND_TAKES = {"evaluate": ("case",), "apply-remedy": ("case",), "readers": ("readers",),
                 "deviation": ("deviation",), "verify": ("verification", "case")}


@pytest.mark.parametrize("command", sorted(COMMAND_TAKES))
def test_each_command_refuses_a_document_of_another_kind_by_name(command: str, capsys: Any,
                                                                 monkeypatch: Any) -> None:
    """A readers request given to evaluate (and so on) is refused by what it is, in the
    words read_document uses, not by the first field the command misses. A case has no
    key of its own (it is what a document without one is read as), so a case given to
    another command is refused by its fields, still in one sentence."""
    for kind, document in KIND_OF.items():
        if kind in COMMAND_TAKES[command]:
            continue
        args = [command, "slab_off", "-"] if command == "apply-remedy" else [command, "-"]
        err = one_sentence(*run_main(capsys, monkeypatch, *args,
                                     stdin=json.dumps(document).encode()))
        wanted = COMMAND_TAKES[command][0]
        by_kind = f"The file is {NAMES[kind]}, not {NAMES[wanted]}."
        assert (err.strip() == by_kind) == (kind != "case"), (command, err)


def test_read_document_and_cli_refuse_a_duplicate_key_alike(capsys: Any,
                                                            monkeypatch: Any) -> None:
    text = '\ufeff{"right": {"sphere": -1, "sphere": -2}, "left": {"sphere": 0}}'
    reply = json.loads(bridge.handle(json.dumps({"action": "read_document",
                                                 "payload": {"text": text}})))
    err = one_sentence(*run_main(capsys, monkeypatch, "evaluate", "-",
                                 stdin=text.encode()))
    assert err.strip() == reply["error"]["message"]
    assert reply["error"]["field"] == "right.sphere"


# --------------------------------------------------------------------------- input files


def test_fifo_with_no_writer_is_refused_at_once(tmp_path: Path) -> None:
    fifo = tmp_path / "case.json"
    os.mkfifo(fifo)
    for args in (["evaluate", str(fifo)], ["batch", str(fifo)],
                 ["readers", "-", "--stock", str(fifo)]):
        proc = subprocess.run([sys.executable, "-m", "pycore", *args], capture_output=True,
                              cwd=ROOT, timeout=30, input=json.dumps(READERS).encode())
        assert proc.returncode == 2 and proc.stdout == b"", args
        assert b"not a regular file" in proc.stderr and proc.stderr.count(b"\n") == 1


def test_a_50_mb_file_is_reported_with_its_size(tmp_path: Path, capsys: Any,
                                                monkeypatch: Any) -> None:
    big = tmp_path / "big.json"
    with open(big, "wb") as handle:
        handle.truncate(50 * 1024 * 1024)   # sparse: no disk used
    err = one_sentence(*run_main(capsys, monkeypatch, "evaluate", str(big)))
    assert "52,428,800 bytes" in err


def test_readers_stock_over_the_limit_is_refused_with_its_size(tmp_path: Path, capsys: Any,
                                                               monkeypatch: Any) -> None:
    stock = tmp_path / "stock.csv"
    rows = [f"P{i},2.50,60,50-16,1" for i in range(60_000)]
    stock.write_text("id,power,oc_distance_mm,frame_size,count\n" + "\n".join(rows) + "\n")
    size = stock.stat().st_size
    assert size > MAX_DOCUMENT_BYTES
    wearer = json.dumps({key: value for key, value in READERS.items() if key != "stock"})
    err = one_sentence(*run_main(capsys, monkeypatch, "readers", "-", "--stock", str(stock),
                                 stdin=wearer.encode()))
    assert f"{size:,} bytes" in err and "stock file" in err


@pytest.mark.parametrize(("command", "name"), [("readers", "The readers file"),
                                               ("deviation", "The deviation file"),
                                               ("verify", "The verification file")])
def test_documents_are_called_by_their_own_names(command: str, name: str, capsys: Any,
                                                 monkeypatch: Any) -> None:
    err = one_sentence(*run_main(capsys, monkeypatch, command, "-", stdin=b"{not json"))
    assert err.startswith(name) and "the case" not in err.lower()


def test_stock_count_1e309_is_refused(tmp_path: Path, capsys: Any, monkeypatch: Any) -> None:
    stock = tmp_path / "stock.csv"
    stock.write_text("id,power,oc_distance_mm,count\nA,2.50,60,1e309\n")
    wearer = json.dumps({key: value for key, value in READERS.items() if key != "stock"})
    err = one_sentence(*run_main(capsys, monkeypatch, "readers", "-", "--stock", str(stock),
                                 stdin=wearer.encode()))
    assert "count" in err
    text = json.dumps(READERS).replace('"count": 2', '"count": 1e309')
    err = one_sentence(*run_main(capsys, monkeypatch, "readers", "-", stdin=text.encode()))
    assert "stock.0.count" in err


def test_lone_surrogate_in_a_name_written_as_text(capsys: Any, monkeypatch: Any) -> None:
    text = json.dumps({**EYES_AND_POINT, "name": "Ann \ud800"})
    err = one_sentence(*run_main(capsys, monkeypatch, "evaluate", "-", "--text",
                                 stdin=text.encode()))
    assert err.startswith("name")


def test_lone_surrogate_in_a_batch_csv_report(tmp_path: Path, capsys: Any,
                                              monkeypatch: Any) -> None:
    folder = tmp_path / "cases"
    folder.mkdir()
    (folder / "a.json").write_text(json.dumps({**EYES_AND_POINT, "name": "Bo \ud800"}))
    (folder / "b.json").write_text(json.dumps(EYES_AND_POINT))
    code, out, err = run_main(capsys, monkeypatch, "batch", str(folder), "--quiet")
    assert code == 1 and "Traceback" not in err
    rows = list(csv.DictReader(io.StringIO(out)))
    assert [(row["source"], row["status"], row["field"]) for row in rows] == [
        ("a.json", "refused", "name"), ("b.json", "ok", "")]


@pytest.mark.parametrize("args", [["evaluate", "-"], ["evaluate", "-", "--text"],
                                  ["batch", "FOLDER"], ["batch", "FOLDER", "-o", "/dev/full"]])
def test_output_to_a_full_disk(tmp_path: Path, args: list[str]) -> None:
    (tmp_path / "a.json").write_text(json.dumps(EYES_AND_POINT))
    args = [str(tmp_path) if arg == "FOLDER" else arg for arg in args]
    with open("/dev/full", "wb") as full:
        proc = subprocess.run([sys.executable, "-m", "pycore", *args], stdout=full,
                              stderr=subprocess.PIPE, cwd=ROOT, timeout=60,
                              input=json.dumps(EYES_AND_POINT).encode())
    assert proc.returncode == 2, proc.stderr
    assert b"Traceback" not in proc.stderr and proc.stderr.count(b"\n") == 1, proc.stderr


# --------------------------------------------------------------------------- batch reports


def batch_csv(tmp_path: Path, rows: list[str]) -> Path:
    path = tmp_path / "cases.csv"
    path.write_text(BATCH_HEADER + "".join(row + "\n" for row in rows), encoding="utf-8")
    return path


def test_batch_refuses_its_own_input_as_output(tmp_path: Path, capsys: Any,
                                               monkeypatch: Any) -> None:
    source = batch_csv(tmp_path, ["a,-1,-1,2,-10,2,-10"])
    before = source.read_bytes()
    err = one_sentence(*run_main(capsys, monkeypatch, "batch", str(source), "-o",
                                 str(source), "--replace"))
    assert "own input" in err and source.read_bytes() == before
    folder = tmp_path / "cases"
    folder.mkdir()
    (folder / "a.json").write_text(json.dumps(EYES_AND_POINT))
    one_sentence(*run_main(capsys, monkeypatch, "batch", str(folder), "-o",
                           str(folder / "a.json"), "--replace"))
    assert json.loads((folder / "a.json").read_text()) == EYES_AND_POINT


def test_batch_replaces_a_report_only_when_asked(tmp_path: Path, capsys: Any,
                                                 monkeypatch: Any) -> None:
    source = batch_csv(tmp_path, ["a,-1,-1,2,-10,2,-10"])
    report = tmp_path / "report.csv"
    report.write_text("an earlier report\n")
    err = one_sentence(*run_main(capsys, monkeypatch, "batch", str(source), "-o", str(report)))
    assert "--replace" in err and report.read_text() == "an earlier report\n"
    code, out, _ = run_main(capsys, monkeypatch, "batch", str(source), "-o", str(report),
                            "--replace", "--quiet")
    assert code == 0 and out == "" and report.read_text().startswith("source,line,name")


def test_batch_stopping_partway_keeps_the_earlier_report(tmp_path: Path, capsys: Any,
                                                         monkeypatch: Any) -> None:
    source = batch_csv(tmp_path, ["a,-1,-1,2,-10,2,-10", "b,-2,-1,2,-10,2,-10"])
    report = tmp_path / "report.csv"
    report.write_text("an earlier report\n")
    written: list[Any] = []
    real_call = batch.ReportWriter.__call__

    def fail_on_second(self: batch.ReportWriter, entry: dict[str, Any]) -> None:
        written.append(entry)
        if len(written) == 2:
            raise OSError(errno.ENOSPC, "No space left on device")
        real_call(self, entry)

    monkeypatch.setattr(batch.ReportWriter, "__call__", fail_on_second)
    err = one_sentence(*run_main(capsys, monkeypatch, "batch", str(source), "-o", str(report),
                                 "--replace", "--quiet"))
    assert "No space left" in err
    assert report.read_text() == "an earlier report\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["cases.csv", "report.csv"]


def test_batch_checks_the_whole_input_before_writing(tmp_path: Path, capsys: Any,
                                                     monkeypatch: Any) -> None:
    good = [f"p{i},-1,-1,2,-10,2,-10" for i in range(50)]
    source = tmp_path / "cases.csv"
    source.write_bytes((BATCH_HEADER + "\n".join(good) + "\n").encode() + b"late,\xff\xfe,1\n")
    err = one_sentence(*run_main(capsys, monkeypatch, "batch", str(source), "--quiet"))
    assert "UTF-8" in err and "line 52" in err
    source.write_text(BATCH_HEADER + "\n".join(good) + "\nlong," + "9" * 200_000 + ",1\n")
    err = one_sentence(*run_main(capsys, monkeypatch, "batch", str(source), "--quiet"))
    assert "line 52" in err


def test_batch_folder_checks_each_size_before_reading(tmp_path: Path, capsys: Any,
                                                      monkeypatch: Any) -> None:
    (tmp_path / "a.json").write_text(json.dumps(EYES_AND_POINT))
    with open(tmp_path / "b.json", "wb") as handle:
        handle.truncate(50 * 1024 * 1024)
    tracemalloc.start()
    try:
        code, out, _ = run_main(capsys, monkeypatch, "batch", str(tmp_path), "--quiet")
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    assert peak < 10 * 1024 * 1024, peak   # the 50 MB file was never read
    rows = list(csv.DictReader(io.StringIO(out)))
    assert code == 1 and rows[1]["status"] == "refused"
    assert "52,428,800 bytes" in rows[1]["message"]


# --------------------------------------------------------------------------- spreadsheet safety

FORMULA_LIKE = ["=HYPERLINK(\"x\")", "+1+1", "-2+3", "@SUM(A1)", "\tlead", "\rlead"]


def test_batch_csv_report_neutralises_formulas(tmp_path: Path, capsys: Any,
                                               monkeypatch: Any) -> None:
    for index, name in enumerate(FORMULA_LIKE):
        (tmp_path / f"{index}.json").write_text(json.dumps({**EYES_AND_POINT, "name": name}))
    (tmp_path / "=cmd.json").write_text(json.dumps(EYES_AND_POINT))
    code, out, _ = run_main(capsys, monkeypatch, "batch", str(tmp_path), "--quiet")
    assert code == 0
    report = list(csv.DictReader(io.StringIO(out)))
    assert [row["name"] for row in report[:-1]] == ["'" + name for name in FORMULA_LIKE]
    assert report[-1]["source"] == "'=cmd.json"
    # Numbers stay numbers. Prentice's rule (P = c F, c in cm; common practice): a -1.00 D
    # lens seen 1.0 cm below its centre gives 1.00 base down; -1.50 D gives 1.50 base down,
    # so the net is 0.50 base up before the right eye.
    for row in report:
        assert float(row["right_base_up"]) == pytest.approx(-1.0 * 1.0)
        assert float(row["net_vertical_base_up_right"]) == pytest.approx(-1.0 - (-1.5))


def test_stock_export_neutralises_formulas_and_reads_back() -> None:
    stock = read_stock([{"id": name.strip() or name, "power": 2.0, "oc_distance_mm": 60,
                         "frame_size": "=1+1", "count": 1}
                        for name in ("=A1", "+A2", "-A3", "@A4")])
    text = stock_to_csv(stock)
    rows = list(csv.reader(io.StringIO(text)))[1:]
    assert [row[0] for row in rows] == ["'=A1", "'+A2", "'-A3", "'@A4"]
    assert {row[3] for row in rows} == {"'=1+1"}
    assert [row[1] for row in rows] == ["+2.00"] * 4   # a number, written as the trade does
    pairs, problems = parse_stock_csv(text)
    assert problems == () and pairs == stock
