"""Bad inputs for the lens-design and reading-zone fields: each refused by
``python -m pycore evaluate -`` with exit status 2, nothing on standard output and one
sentence on standard error naming the field (docs/case-format.md)."""

from __future__ import annotations

import json
from typing import Any

import pytest
from cli_runner import run_cli

FITTING = {"right": {"mono_pd_mm": 32}, "left": {"mono_pd_mm": 32}}
PAL = {"near_depth_mm": 16}


def case(right: dict[str, Any] | None = None, left: dict[str, Any] | None = None,
         **top: Any) -> dict[str, Any]:
    return {"right": right or {"sphere": 1.0}, "left": left or {"sphere": 1.0},
            "fitting": FITTING, **top}


def seg(**fields: Any) -> dict[str, Any]:
    return {"sphere": 1.0, "add": 2.0, "segment": {"top_mm": -3, **fields}}


def pal(**fields: Any) -> dict[str, Any]:
    return {"sphere": 1.0, "add": 2.0, "progressive": {**PAL, **fields}}


CATALOGUE: list[tuple[str, Any, str]] = [
    ("segment shape unknown", case(seg(shape="oval")), "right.segment.shape"),
    ("segment shape not text", case(seg(shape=3)), "right.segment.shape"),
    ("round segment without diameter", case(seg(shape="round")), "right.segment.diameter_mm"),
    ("flat-top without width", case(left=seg(shape="flat_top")), "left.segment.width_mm"),
    ("round diameter absurd", case(seg(diameter_mm=80)), "right.segment.diameter_mm"),
    ("round diameter text", case(seg(diameter_mm="22")), "right.segment.diameter_mm"),
    ("flat-top width too small", case(seg(width_mm=8)), "right.segment.width_mm"),
    ("width on a round segment", case(seg(shape="round", width_mm=28)),
     "right.segment.width_mm"),
    ("diameter on a flat-top", case(seg(shape="flat_top", diameter_mm=28)),
     "right.segment.diameter_mm"),
    ("size on a straight-across", case(seg(shape="straight_across", width_mm=30)),
     "right.segment.width_mm"),
    ("diameter and width both", case(seg(diameter_mm=22, width_mm=28)),
     "right.segment.width_mm"),
    ("segment unknown key", case(seg(radius_mm=11)), "right.segment.radius_mm"),
    ("progressive without add", case({"sphere": 1.0, "progressive": PAL}), "right.add"),
    ("progressive with a segment",
     case({**seg(), "progressive": PAL}), "right.progressive"),
    ("progressive not an object", case({"sphere": 1.0, "add": 2, "progressive": True}),
     "right.progressive"),
    ("progressive unknown key", case(pal(corridor=12)), "right.progressive.corridor"),
    ("progressive corridor too short", case(pal(near_depth_mm=9,
                                                prism_reference_below_cross_mm=6)),
     "right.progressive.near_depth_mm"),
    ("progressive near depth absurd", case(left=pal(near_depth_mm=60)),
     "left.progressive.near_depth_mm"),
    ("progressive PRP offset absurd", case(pal(prism_reference_below_cross_mm=-4)),
     "right.progressive.prism_reference_below_cross_mm"),
    ("thinning prism negative", case(left=pal(thinning_prism_base_down=-1)),
     "left.progressive.thinning_prism_base_down"),
    ("near inset text", case(pal(near_inset_mm="2.5")), "right.progressive.near_inset_mm"),
    ("reading zone not an object", case(reading_zone=[1]), "reading_zone"),
    ("reading zone unknown key", case(reading_zone={"treshold": 1}), "reading_zone.treshold"),
    ("threshold zero", case(reading_zone={"threshold": 0}), "reading_zone.threshold"),
    ("threshold text", case(reading_zone={"threshold": "1"}), "reading_zone.threshold"),
    ("reading point unknown", case(reading_zone={"reading_point": "chin"}),
     "reading_zone.reading_point"),
    ("reading point a number", case(reading_zone={"reading_point": 8}),
     "reading_zone.reading_point"),
    ("segment top rule without segments", case(reading_zone={"reading_point": "segment_top"}),
     "reading_zone.reading_point"),
    ("near zone rule without a progressive", case(reading_zone={"reading_point": "near_zone"}),
     "reading_zone.reading_point"),
    ("reading depth absurd", case(reading_zone={"reading_depth_mm": 80}),
     "reading_zone.reading_depth_mm"),
    ("worn as unknown", case(reading_zone={"worn_as": "monocle"}), "reading_zone.worn_as"),
    ("correct fraction over one", case(reading_zone={"correct_fraction": 2}),
     "reading_zone.correct_fraction"),
    ("lab step zero", case(reading_zone={"lab_step": 0}), "reading_zone.lab_step"),
    ("lowering absurd", case(reading_zone={"lower_centres_mm": 40}),
     "reading_zone.lower_centres_mm"),
    ("map step too fine", case(reading_zone={"map_step_mm": 0.01}),
     "reading_zone.map_step_mm"),
    ("map depth boolean", case(reading_zone={"map_depth_mm": True}),
     "reading_zone.map_depth_mm"),
    ("below segment top negative",
     case(seg(), seg(), reading_zone={"reading_point": "segment_top",
                                      "below_segment_top_mm": -2}),
     "reading_zone.below_segment_top_mm"),
    ("reading point below the lens",
     case(seg(top_mm=-30), seg(top_mm=-30),
          reading_zone={"reading_point": "segment_top", "below_segment_top_mm": 20}),
     "reading_zone.reading_point"),
]


@pytest.mark.parametrize("name, document, field", CATALOGUE, ids=[c[0] for c in CATALOGUE])
def test_refused_with_a_sentence_naming_the_field(name: str, document: Any, field: str) -> None:
    run = run_cli("evaluate", "-", stdin=json.dumps(document))
    assert run.code == 2, (name, run.stdout[:200], run.stderr)
    assert run.stdout == ""
    message = run.stderr.strip()
    assert "Traceback" not in message
    assert message.count("\n") == 0, message
    assert field in message, message
    assert message.endswith(".")


def test_catalogue_names_are_unique() -> None:
    assert len({c[0] for c in CATALOGUE}) == len(CATALOGUE) >= 30
