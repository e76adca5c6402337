"""Remedies a dispenser can order: the slab line below the distance visual point on every
design, made segments only, order lines, lab rounding half up and no negative zero."""

from __future__ import annotations

import json
import re
from pathlib import Path
from typing import Any

import pytest
from casebook import DURHAM_BIFOCAL, FITTING
from hypothesis import given, settings
from hypothesis import strategies as st

from pycore.documents.cases import read_case
from pycore.evaluate import evaluate
from pycore.reading.remedies.finished_case import round_to_step
from pycore.rounding import fixed

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"
PAL = {"prism_reference_below_cross_mm": 4, "near_depth_mm": 16, "near_inset_mm": 2.5,
       "thinning_prism_base_down": 1.25}

# Every lens design, with unequal powers both ways round (invented cases).
DESIGNS: dict[str, dict[str, Any]] = {
    "single_vision": {},
    "round": {"add": 2.0, "segment": {"top_mm": -4, "shape": "round", "diameter_mm": 28}},
    "flat_top": {"add": 2.0, "segment": {"top_mm": -4, "shape": "flat_top", "width_mm": 28}},
    "straight_across": {"add": 2.0, "segment": {"top_mm": -4, "shape": "straight_across"}},
    "progressive": {"add": 2.0, "progressive": PAL},
    "bare_segment": {"add": 2.0, "segment": {"top_mm": -3}},
}


def designed(design: str, right: float, left: float) -> dict[str, Any]:
    extra = DESIGNS[design]
    return {"right": {"sphere": right, **json.loads(json.dumps(extra))},
            "left": {"sphere": left, **json.loads(json.dumps(extra))},
            "fitting": {"right": {"mono_pd_mm": 32, "height_mm": 24},
                        "left": {"mono_pd_mm": 32, "height_mm": 24}}}


@pytest.mark.parametrize("design", DESIGNS)
@pytest.mark.parametrize("powers", [(-6.0, -2.0), (1.0, 5.0), (-1.0, 3.5)])
def test_slab_line_leaves_the_distance_totals_alone(design: str,
                                                    powers: tuple[float, float]) -> None:
    """The slab line lies below the distance visual point, so nothing above it changes
    (the definition of a slab-off: prism only below its line): the distance totals are
    identical before and after every slab-off and reverse slab, and the line lies between
    the distance visual point and the reading point."""
    result = evaluate(read_case(designed(design, *powers)))
    zone = result["reading_zone"]
    options = {entry["id"]: entry for entry in result["remedies"]["options"]}
    tried = 0
    for remedy in ("slab_off", "reverse_slab"):
        entry = options[remedy]
        if not entry["available"]:
            continue
        tried += 1
        eye = entry["details"]["eye"]
        line = entry["details"]["line_mm"]
        distance_up = zone["geometry"]["distance_point"][eye]["up_mm"]
        reading_up = zone["geometry"]["reading_point"][eye]["up_mm"]
        assert reading_up <= line < distance_up
        finished = evaluate(read_case(entry["applied_case"]))["reading_zone"]["at_distance"]
        for key in ("vertical_base_up_right", "horizontal_base_in"):
            assert finished[key] == zone["at_distance"][key]
            assert entry["distance"][key] == zone["at_distance"][key]
    assert tried == 2


def test_slab_line_on_single_vision_is_halfway_to_the_reading_point() -> None:
    """Single vision read 10 mm down: the line 5 mm below the distance reference point
    (halfway, common practice), written as an order line."""
    slab = {e["id"]: e for e in evaluate(read_case(designed("single_vision", -6.0, -2.0)))[
        "remedies"]["options"]}["slab_off"]
    assert slab["details"]["line_mm"] == -10 / 2
    # R -6.00, L -2.00 at 10 mm: 6 - 2 = 4.0 base up needed before the right (Prentice).
    assert slab["order_lines"] == [
        f"R: slab-off {4.0:.2f} base up, line 5.0 mm below the distance reference point, "
        "halfway from the primary position to the reading point (common practice)"]


def test_slab_line_on_a_progressive_is_below_the_fitting_cross() -> None:
    """Progressive with the PRP 4 mm below the fitting cross (the primary position) and
    the near point 16 mm below the cross: halfway is 8 mm below the cross, 4 mm below the
    PRP (common practice)."""
    slab = {e["id"]: e for e in evaluate(read_case(designed("progressive", -6.0, -2.0)))[
        "remedies"]["options"]}["slab_off"]
    assert slab["details"]["line_mm"] == pytest.approx(4 - 16 / 2)
    assert "8.0 mm below the fitting cross" in slab["order_lines"][0]


def test_slab_off_order_line_on_the_worked_bifocal() -> None:
    """Durham handout case: 1.2 base up before the right, to 0.5 steps 1.0 (from memory)
    base up before the left, the line at the segment top 3 mm below the distance reference
    point (common practice)."""
    options = {e["id"]: e for e in evaluate(read_case(DURHAM_BIFOCAL))["remedies"]["options"]}
    assert options["slab_off"]["order_lines"] == [
        "L: slab-off 1.00 base up, line at the segment top (3.0 mm below the distance "
        "reference point)"]
    assert options["reverse_slab"]["order_lines"][0].startswith("R: reverse slab 1.00 base down")
    assert options["none"]["order_lines"] == []
    for entry in options.values():
        assert isinstance(entry["order_lines"], list)
        assert entry["available"] or entry["order_lines"] == []
        assert entry["centring"]


def test_lowered_centres_order_line_half_up() -> None:
    """R -6.00, L -2.00 at 10 mm: 4.0 at near; lowering 5 mm leaves 2.0 each way (Prentice's
    rule, balancing): one order line per lens."""
    entry = {e["id"]: e for e in evaluate(read_case(designed("single_vision", -6.0, -2.0)))[
        "remedies"]["options"]}["lower_centres"]
    assert entry["order_lines"] == [
        f"{e}: optical centre 5.0 mm below the fitting height (the pupil centre)"
        for e in ("R", "L")]


# Segment sizes that are made and their optical-centre rules (common practice):
# round OC at the centre, flat-top about 5 mm below the top, straight-across on the line.
MADE = {("round", d): d / 2 for d in (22, 24, 25, 28, 30, 38, 40)}
MADE.update({("flat_top", w): 5.0 for w in (25, 28, 35, 40)})
MADE[("straight_across", None)] = 0.0


@settings(max_examples=150, deadline=None)
@given(st.floats(-8, 8), st.floats(-8, 8), st.sampled_from(["round", "flat_top", "bare_segment",
                                                            "straight_across"]),
       st.floats(0.75, 3.5), st.floats(0.75, 3.5))
def test_dissimilar_segments_are_made_segments(right: float, left: float, design: str,
                                               add_right: float, add_left: float) -> None:
    """Whatever the case, the remedy proposes only segments that are made, with their OC
    where the usual rule puts it (so never 24.5 mm below the top), and one order line per
    eye naming type, size and where its OC sits."""
    document = designed(design, right, left)
    document["right"]["add"], document["left"]["add"] = add_right, add_left
    entry = {e["id"]: e for e in evaluate(read_case(document))["remedies"]["options"]}[
        "dissimilar_segments"]
    if not entry["available"]:
        return
    assert len(entry["order_lines"]) == 2
    for eye, line in zip(("right", "left"), entry["order_lines"], strict=True):
        assert line.startswith("R: " if eye == "right" else "L: ")
        assert "optical centre" in line
        segment = entry["applied_case"][eye]["segment"]
        changed = next(o for o in entry["details"]["options"] if o["eye"] == eye)["changed"]
        if changed:
            size = segment.get("diameter_mm", segment.get("width_mm"))
            assert (segment["shape"], size) in MADE
            assert segment["optical_centre_below_top_mm"] == MADE[(segment["shape"], size)]


def test_round_half_up_not_to_even() -> None:
    """Laboratory rounding (common practice): halves go up in size, never to even, as
    Python's round and format would (2.25 -> 2.2, 0.125 -> 0.12)."""
    assert round_to_step(1.25, 0.5) == 1.5
    assert round_to_step(0.25, 0.5) == 0.5  # round(0.5) * 0.5 would give 0.0
    assert round_to_step(2.25, 0.5) == 2.5
    assert round_to_step(-2.25, 0.5) == -2.5
    assert fixed(2.25, 1) == "2.3" and fixed(0.125, 2) == "0.13" and fixed(2.675, 2) == "2.68"
    assert fixed(-0.001) == "0.00" and fixed(-0.001, sign=True) == "+0.00"
    assert round_to_step(-0.1, 0.5) == 0.0 and str(round_to_step(-0.1, 0.5)) == "0.0"


NEGATIVE_ZERO = re.compile(r"-0(?:\.0+)?(?![\d.])")


def _walk(value: Any, path: str, found: list[str]) -> None:
    if isinstance(value, float) and value == 0 and str(value).startswith("-"):
        found.append(path)
    elif isinstance(value, str) and NEGATIVE_ZERO.search(value):
        found.append(f"{path}: {value}")
    elif isinstance(value, dict):
        for key, item in value.items():
            _walk(item, f"{path}.{key}", found)
    elif isinstance(value, list):
        for index, item in enumerate(value):
            _walk(item, f"{path}.{index}", found)


@pytest.mark.parametrize("example", sorted(p.name for p in EXAMPLES.glob("*.json")))
def test_no_negative_zero_anywhere_in_an_example(example: str) -> None:
    """No "-0.0" (as a number or written in words) anywhere in the evaluation of every
    example, nor of every remedy's finished case."""
    document = json.loads((EXAMPLES / example).read_text(encoding="utf-8"))
    result = evaluate(read_case(document))
    found: list[str] = []
    _walk(result, "", found)
    for entry in result["remedies"]["options"]:
        if entry["applied_case"] is not None:
            _walk(evaluate(read_case(entry["applied_case"])), entry["id"], found)
    assert found == []


def test_no_negative_zero_in_a_case_built_to_make_one() -> None:
    """Equal lenses with base-down prism before both eyes: every induced figure is
    0 - 0 or a sum with a negative zero in it, which must come out as 0.0."""
    document = {"right": {"sphere": 0.0, "prism": {"base_in": 0, "base_up": -0.0}},
                "left": {"sphere": 0.0, "prism": {"base_in": -0.0, "base_up": 0}},
                "fitting": FITTING, "points": ["distance", "near"]}
    found: list[str] = []
    _walk(evaluate(read_case(document)), "", found)
    assert found == []
