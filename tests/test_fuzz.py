"""A bounded, seeded fuzz run over every command, in this process (pycore.interfaces.cli.main).

Each generated input is a good document of the command's kind (invented scenarios)
with one or two changes: a value replaced by a bad one, a key removed or added, or
the text itself damaged (byte-order mark, a key given twice, NaN, numbers beyond a
double, a cut, a bad byte, deep nesting, half a UTF-16 pair). Every run must end
with exit 0, 1 or 2 and no traceback; a refusal is one sentence of at most about 300
characters that names the field. Run with ``pytest -s`` to see the counts.
"""

from __future__ import annotations

import collections
import contextlib
import copy
import io
import json
import random
import signal
import sys
import time
from collections.abc import Iterator
from pathlib import Path
from typing import Any

from pycore.interfaces.cli import main

SEED = 14
CASES = 5200
HANG_S = 5.0
MAX_REFUSAL = 300

CASE = {"name": "ferry mechanic", "right": {"rx": "+1.50 / -0.75 x 180", "add": 2.0,
                                            "segment": {"top_mm": -5}},
        "left": {"sphere": -0.5, "prism": {"base_in": 0.5, "base_up": 0}, "add": 2.0,
                 "segment": {"top_mm": -5}},
        "fitting": {"right": {"mono_pd_mm": 31.5}, "left": {"mono_pd_mm": 32}},
        "points": [{"name": "reading", "right": {"in_mm": 2, "up_mm": -9},
                    "left": {"in_mm": 2, "up_mm": -9}}, "distance"]}
VERIFICATION = {"standard": "ansi-z80.1-2015",
                "ordered": {"right": {"rx": "-3.00 DS", "mono_pd_mm": 31, "height_mm": 20},
                            "left": {"rx": "-2.50 DS", "mono_pd_mm": 31, "height_mm": 20}},
                "measured": {"right": {"prism": "0.5 BI"}, "left": {"prism": "0.25 BU"}}}
READERS = {"wearer": {"near_pd_mm": 59, "right": {"rx": "+2.00 DS"},
                      "left": {"rx": "+2.25 DS"}},
           "stock": [{"id": "K60", "power": 2.0, "oc_distance_mm": 60, "count": 4},
                     {"id": "K64", "power": 2.25, "oc_distance_mm": 64, "frame_size": "52-18",
                      "count": 1}]}
DEVIATION = {"measured": "30 BO", "fixating": "left", "right": {"rx": "+5.00 DS"},
             "left": {"rx": "+4.50 DS"}, "centre_of_rotation_mm": 26}
BATCH_CSV = ("name,right.sphere,left.sphere,points.0.right.in_mm,points.0.right.up_mm,"
             "points.0.left.in_mm,points.0.left.up_mm\n"
             "tram driver,-2,-1,2,-8,2,-8\nharbour pilot,+1.25,+0.5,0,-6,0,-6\n")
STOCK_CSV = "id,power,oc_distance_mm,frame_size,count\nK60,2.00,60,50-16,4\nK64,2.25,64,,1\n"

# (arguments, starting document or text, how the input is given)
COMMANDS: list[tuple[list[str], Any, str]] = [
    (["evaluate", "-"], CASE, "stdin"),
    (["evaluate", "-", "--text"], CASE, "stdin"),
    (["apply-remedy", "slab_off", "-"], CASE, "stdin"),
    (["verify", "-"], VERIFICATION, "stdin"),
    (["verify", "-", "--text"], VERIFICATION, "stdin"),
    (["readers", "-"], READERS, "stdin"),
    (["readers", "-", "--text"], READERS, "stdin"),
    (["deviation", "-"], DEVIATION, "stdin"),
    (["deviation", "-", "--text"], DEVIATION, "stdin"),
    (["readers", "-", "--stock", "FILE"], STOCK_CSV, "stock"),
    (["batch", "FILE", "--quiet"], BATCH_CSV, "file"),
    (["batch", "FILE", "--quiet", "--format", "text"], BATCH_CSV, "file"),
]

BAD_VALUES: list[Any] = [
    None, True, False, 0, -1, 1e308, -1e308, 10**300, 1e-320, "", " ", "x" * 5000,
    "=1+1", "-2.00", "+99 DS", "1e999", "NaN", "\u202e", "Ann \ud800", [], [1, 2], {},
    {"constructor": 1}, {"__proto__": {}}, 999999, -999999, 0.1234567890123, 180.5, "left",
    "right", "distance", "near", [[[[[[]]]]]],
]
FILE_WORDS = ("JSON", "UTF-8", "empty", "nested", "too large", "file", "document", "case",
              "standard input", "line", "header", "FILE", "stock", "request")


class Hang(Exception):
    pass


def paths(value: Any, prefix: tuple[Any, ...] = ()) -> Iterator[tuple[Any, ...]]:
    yield prefix
    if isinstance(value, dict):
        for key, item in value.items():
            yield from paths(item, (*prefix, key))
    elif isinstance(value, list):
        for index, item in enumerate(value):
            yield from paths(item, (*prefix, index))


def mutate_document(rng: random.Random, document: Any) -> tuple[Any, tuple[Any, ...]]:
    doc = copy.deepcopy(document)
    path = rng.choice([p for p in paths(doc) if p])
    parent = doc
    for part in path[:-1]:
        parent = parent[part]
    last = path[-1]
    action = rng.random()
    if action < 0.6:
        parent[last] = copy.deepcopy(rng.choice(BAD_VALUES))
    elif action < 0.75 and isinstance(parent, dict):
        del parent[last]
    elif action < 0.9 and isinstance(parent, dict):
        parent[rng.choice(["cyl", "constructor", "toString", "x" * 300, "Sphere"])] = 1
    else:
        parent[last] = [parent[last]]
    return doc, path


def raw(text: str) -> bytes:
    """UTF-8 bytes, half UTF-16 pairs kept as the (invalid) bytes they would be."""
    return text.encode("utf-8", "surrogatepass")


def damage_text(rng: random.Random, text: str) -> bytes:
    choice = rng.randrange(9)
    if choice == 0:
        return b"\xef\xbb\xbf" + raw(text)
    if choice == 1:   # a key given twice
        at = text.find('"', rng.randrange(max(len(text) - 1, 1)))
        end = text.find(",", at)
        if at > 0 and end > at and ":" in text[at:end]:
            return raw(text[:end] + ", " + text[at:end] + text[end:])
        return raw(text)
    if choice == 2:
        literal = rng.choice(["NaN", "Infinity", "-Infinity", "1e309", "9" * 400,
                              "1" + "0" * 5000, "-0", "1E-400"])
        numbers = [i for i, ch in enumerate(text) if ch.isdigit() and text[i - 1] in ": -["]
        if numbers:
            at = rng.choice(numbers)
            end = at
            while end < len(text) and (text[end].isdigit() or text[end] in ".eE+-"):
                end += 1
            return raw(text[:at] + literal + text[end:])
        return raw(text)
    if choice == 3:
        return raw(text[:rng.randrange(len(text) + 1)])
    if choice == 4:
        data = bytearray(raw(text))
        data[rng.randrange(len(data))] = rng.randrange(256)
        return bytes(data)
    if choice == 5:
        depth = rng.choice([33, 40, 1000, 100_000])
        return raw('{"notes": ' + "[" * depth + "]" * depth + ", " + text[1:])
    if choice == 6:
        at = text.find('": "')
        if at > 0:
            return raw(text[:at + 4] + "\\udc00" + text[at + 4:])
        return raw(text)
    if choice == 7:
        return rng.choice([b"", b"   ", b"[]", b"null", b"42", b'"text"', b"{"])
    return raw("\n" * rng.randrange(3) + text + " " * rng.randrange(3))


def damage_csv(rng: random.Random, text: str) -> bytes:
    lines = text.splitlines()
    choice = rng.randrange(7)
    if choice == 0:
        row = rng.randrange(len(lines))
        cells = lines[row].split(",")
        cells[rng.randrange(len(cells))] = str(rng.choice(BAD_VALUES))[:3000].replace(
            "\n", " ")
        lines[row] = ",".join(cells)
    elif choice == 1:
        return raw(text + '"unclosed,' + "y" * 200_000)
    elif choice == 2:
        return b"\xef\xbb\xbf" + raw(text)
    elif choice == 3:
        data = bytearray(raw(text))
        data[rng.randrange(len(data))] = rng.choice([0, 0xFF, 0xC3, ord('"'), ord(";")])
        return bytes(data)
    elif choice == 4:
        lines.append(",".join(["1e309"] * 7))
    elif choice == 5:
        lines[0] = lines[0] + "," + rng.choice(["right.sphere", "x..y", "constructor", "=cmd"])
    else:
        return raw(text[:rng.randrange(len(text) + 1)])
    return raw("\n".join(lines) + "\n")


def run_one(args: list[str], data: bytes) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    saved = sys.stdin
    sys.stdin = io.TextIOWrapper(io.BytesIO(data))
    try:
        with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
            try:
                code = main(args)
            except SystemExit as exc:
                code = int(exc.code or 0)
            except Hang:
                raise
            except BaseException:
                import traceback

                err.write("Traceback\n" + traceback.format_exc())
                code = -1
    finally:
        sys.stdin = saved
    return code, out.getvalue(), err.getvalue()


def field_names(*documents: Any) -> set[str]:
    """Every key in the documents (the fields a refusal may name)."""
    return {str(part)[:40] for document in documents for path in paths(document)
            for part in path if isinstance(part, str)}


def names_the_field(message: str, fields: set[str]) -> bool:
    words = set(message.replace(".", " ").replace(",", " ").replace(":", " ").split())
    return bool(words & fields) or any(word in message for word in FILE_WORDS)


def _alarm(_signum: int, _frame: Any) -> None:
    raise Hang


def test_fuzz_every_command(tmp_path: Path) -> None:
    rng = random.Random(SEED)
    file = tmp_path / "input.csv"
    counts: collections.Counter[str] = collections.Counter()
    problems: list[str] = []
    previous = signal.signal(signal.SIGALRM, _alarm)
    started = time.monotonic()
    try:
        for number in range(CASES):
            args, seed, given = COMMANDS[number % len(COMMANDS)]
            fields = field_names(seed)
            if given == "stdin":
                document: Any = seed
                for _ in range(rng.choice([1, 1, 2])):
                    document, _path = mutate_document(rng, document)
                fields |= field_names(document)
                text = json.dumps(document, ensure_ascii=rng.random() < 0.5)
                data = damage_text(rng, text) if rng.random() < 0.35 else text.encode(
                    "utf-8", "surrogatepass")
                stdin = data
            else:
                file.write_bytes(damage_csv(rng, seed))
                stdin = json.dumps({"wearer": READERS["wearer"]}).encode()
            argv = [str(file) if arg == "FILE" else arg for arg in args]
            signal.setitimer(signal.ITIMER_REAL, HANG_S)
            try:
                code, out, err = run_one(argv, stdin)
            except Hang:
                counts["hangs"] += 1
                problems.append(f"hang: {argv}")
                continue
            finally:
                signal.setitimer(signal.ITIMER_REAL, 0)
            counts["cases"] += 1
            counts[f"exit {code}"] += 1
            if "Traceback" in err or code not in (0, 1, 2):
                counts["tracebacks"] += 1
                problems.append(f"traceback {argv}: {err[-400:]}")
            elif code == 2:
                if out or err.count("\n") != 1 or len(err) > MAX_REFUSAL:
                    counts["bad refusals"] += 1
                    problems.append(f"refusal {argv}: {err[:400]!r}")
                elif not names_the_field(err, fields):
                    counts["unnamed"] += 1
                    problems.append(f"unnamed {argv}: {err!r}")
    finally:
        signal.signal(signal.SIGALRM, previous)
    seconds = time.monotonic() - started
    print(f"\nfuzz: {counts['cases']} cases, {counts['tracebacks']} tracebacks, "
          f"{counts['hangs']} hangs, {counts['bad refusals']} long or malformed refusals, "
          f"{counts['unnamed']} refusals not naming the field; "
          + ", ".join(f"{key} {value}" for key, value in sorted(counts.items())
                      if key.startswith("exit")) + f"; {seconds:.1f} s")
    assert counts["cases"] + counts["hangs"] >= 5000
    assert not problems, "\n".join(problems[:20])
