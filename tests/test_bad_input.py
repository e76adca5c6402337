"""A catalogue of bad inputs: each is refused with exit status 2, nothing on standard
output, and one sentence on standard error that names the field (docs/case-format.md)."""

from __future__ import annotations

import json
from typing import Any

import pytest
from cli_runner import run_cli

GOOD_EYE = {"sphere": -1.0}
POINT = {"name": "reading", "right": {"in_mm": 2, "up_mm": -10},
         "left": {"in_mm": 2, "up_mm": -10}}


def case(**changes: Any) -> dict[str, Any]:
    doc: dict[str, Any] = {"right": dict(GOOD_EYE), "left": dict(GOOD_EYE), "points": [POINT]}
    for key, value in changes.items():
        if value is None:
            doc.pop(key, None)
        else:
            doc[key] = value
    return doc


def eye(**fields: Any) -> dict[str, Any]:
    return {"sphere": -1.0, **fields}


def nested(depth: int) -> str:
    return "[" * depth + "]" * depth


FITTING = {"right": {"mono_pd_mm": 32}, "left": {"mono_pd_mm": 31}}

# (name, document or raw text, the field the message must name)
CATALOGUE: list[tuple[str, Any, str]] = [
    ("not json", "this is not json", "JSON"),
    ("truncated json", '{"right": {"sphere": -1', "JSON"),
    ("empty input", "", "empty"),
    ("only whitespace", "   \n", "empty"),
    ("top level is a list", [1, 2], "case"),
    ("top level is a number", 42, "case"),
    ("top level is null", None, "case"),
    ("right eye missing", case(right=None), "right"),
    ("left eye missing", case(left=None), "left"),
    ("eye is a string", case(right="-1.00 DS"), "right"),
    ("sphere missing", case(right={"cylinder": -1, "axis": 90}), "right.sphere"),
    ("sphere is unreadable text", case(right={"sphere": "minus one"}), "right.sphere"),
    ("sphere is boolean", case(left={"sphere": True}), "left.sphere"),
    ("sphere is null", case(left={"sphere": None}), "left.sphere"),
    ("sphere absurd", case(right={"sphere": -75}), "right.sphere"),
    ("cylinder absurd", case(right=eye(cylinder=22, axis=90)), "right.cylinder"),
    ("axis above 180", case(right=eye(cylinder=-1, axis=181)), "right.axis"),
    ("axis negative", case(left=eye(cylinder=-1, axis=-5)), "left.axis"),
    ("axis is a list", case(left=eye(cylinder=-1, axis=[90])), "left.axis"),
    ("NaN sphere", '{"right": {"sphere": NaN}, "left": {"sphere": 0}, "points": []}', "NaN"),
    ("Infinity cylinder", '{"right": {"sphere": 0, "cylinder": Infinity}, "left": {"sphere": 0}}',
     "Infinity"),
    ("negative infinity", '{"right": {"sphere": -Infinity}, "left": {"sphere": 0}}', "Infinity"),
    ("huge number", '{"right": {"sphere": 1e400}, "left": {"sphere": 0}, "points": []}',
     "right.sphere"),
    ("unknown eye field", case(right=eye(cyl=-1)), "right.cyl"),
    ("unknown top field", case(poinst=[POINT]), "poinst"),
    ("duplicate key", '{"right": {"sphere": 1, "sphere": 2}, "left": {"sphere": 0}}', "sphere"),
    ("prism is a number", case(right=eye(prism=2)), "right.prism"),
    ("prism component text", case(right=eye(prism={"base_in": "2"})), "right.prism.base_in"),
    ("prism too strong", case(left=eye(prism={"base_up": 45})), "left.prism.base_up"),
    ("prism unknown word", case(right=eye(prism="2 BX")), "right.prism"),
    ("prism unknown unit", case(right=eye(prism="2 cm BI")), "right.prism"),
    ("prism direction above 360", case(left=eye(prism={"amount": 2, "base_360": 400})),
     "left.prism.base_360"),
    ("prism direction without amount", case(left=eye(prism={"base_360": 90})),
     "left.prism.amount"),
    ("prism negative amount", case(right=eye(prism="-2 BI")), "right.prism"),
    ("written rx cylinder unsigned", case(right={"rx": "+2.00 / 0.75 x 180"}), "right.rx"),
    ("written rx axis without cylinder", case(left={"rx": "+2.00 x 90"}), "left.rx"),
    ("written rx nonsense", case(right={"rx": "minus two"}), "right.rx"),
    ("written rx and sphere both", case(right={"rx": "-2.00 DS", "sphere": -2}), "right.rx"),
    ("written rx too long", case(right={"rx": "+" * 500}), "right.rx"),
    ("add negative", case(right=eye(add=-1)), "right.add"),
    ("add absurd", case(right=eye(add=12)), "right.add"),
    ("segment without add", case(right=eye(segment={"top_mm": -3})), "right.add"),
    ("segment without top", case(right=eye(add=2, segment={"optical_centre_below_top_mm": 5})),
     "right.segment.top_mm"),
    ("segment top far off", case(right=eye(add=2, segment={"top_mm": -90})),
     "right.segment.top_mm"),
    ("slab-off too strong", case(left=eye(slab_off={"base_up": 25, "line_mm": -3})),
     "left.slab_off.base_up"),
    ("slab-off without line", case(left=eye(slab_off={"base_up": 3})), "left.slab_off.line_mm"),
    ("points not a list", case(points={"name": "x"}), "points"),
    ("points empty", case(points=[]), "points"),
    ("points and fitting both missing", case(points=None), "points"),
    ("point missing an eye", case(points=[{"name": "x", "right": {"in_mm": 0}}]),
     "points.0.left"),
    ("point far off the lens", case(points=[{**POINT, "left": {"in_mm": 2, "up_mm": -400}}]),
     "points.0.left.up_mm"),
    ("point coordinate text", case(points=[{**POINT, "right": {"in_mm": "2"}}]),
     "points.0.right.in_mm"),
    ("point name not text", case(points=[{**POINT, "name": 7}]), "points.0.name"),
    ("named point without fitting", case(points=["near"]), "points.0"),
    ("unknown named point", case(fitting=FITTING, points=["sideways"]), "points.0"),
    ("too many points", case(points=[POINT] * 500), "points"),
    ("fitting without PD", case(fitting={"right": {}, "left": {"mono_pd_mm": 31}}),
     "fitting.right.mono_pd_mm"),
    ("PD absurd", case(fitting={"right": {"mono_pd_mm": 320}, "left": {"mono_pd_mm": 31}}),
     "fitting.right.mono_pd_mm"),
    ("working distance in metres", case(fitting={**FITTING, "working_distance_mm": 0.4}),
     "fitting.working_distance_mm"),
    ("reading depth negative", case(fitting={**FITTING, "reading_depth_mm": -10}),
     "fitting.reading_depth_mm"),
    ("frame without bridge", case(frame={"a_mm": 52}), "frame.dbl_mm"),
    ("frame ED below A", case(frame={"a_mm": 52, "dbl_mm": 18, "ed_mm": 40}), "frame.ed_mm"),
    ("deeply nested document", nested(100_000), "nested"),
    ("moderately nested document", json.dumps({"right": {"sphere": 0}, "left": {"sphere": 0},
                                               "notes": json.loads(nested(40))}), "nested"),
    ("huge document", " " * 1_100_000 + "{}", "too large"),
    ("not utf-8", b"\xff\xfe{\x00}", "UTF-8"),
    ("name too long", case(name="x" * 1000), "name"),
]


@pytest.mark.parametrize("name, document, field", CATALOGUE, ids=[c[0] for c in CATALOGUE])
def test_refused_with_a_sentence_naming_the_field(name: str, document: Any, field: str) -> None:
    if isinstance(document, bytes | str):
        stdin: str | bytes = document
    else:
        stdin = json.dumps(document)
    run = run_cli("evaluate", "-", stdin=stdin)
    assert run.code == 2, (name, run.stdout[:200], run.stderr)
    assert run.stdout == ""
    message = run.stderr.strip()
    assert "Traceback" not in message
    assert message.count("\n") == 0, message
    assert field.lower() in message.lower(), message
    assert message.endswith(".")


def test_catalogue_is_large_enough() -> None:
    assert len(CATALOGUE) >= 40
    assert len({c[0] for c in CATALOGUE}) == len(CATALOGUE)


def test_missing_file_is_refused_plainly() -> None:
    run = run_cli("evaluate", "/nonexistent/case.json")
    assert run.code == 2 and run.stdout == "" and "no file" in run.stderr


def test_usage_error_exits_2() -> None:
    run = run_cli("evaluate")
    assert run.code == 2 and run.stdout == "" and "Traceback" not in run.stderr
