"""Prescribed prism is the wearer's correction: the reading zone and the remedies judge
the induced part (total net minus the net of the prescribed prism), and no remedy
changes the prescribed prism (common practice; follows from the definition of
differential prismatic effect, docs/sources.md)."""

from __future__ import annotations

import copy
from typing import Any

import pytest
from casebook import DURHAM_BIFOCAL, FITTING
from hypothesis import given, settings
from hypothesis import strategies as st

from pycore.documents.cases import read_case
from pycore.evaluate import evaluate
from pycore.reading.remedies.side_by_side import remedies_section
from pycore.reading.zone import reading_zone_section

HYPERPHORIA = {
    # Two equal -3.00 DS lenses, 1.00 BD before the right and 1.00 BU before the left: a
    # correction for a left hyper deviation (invented case).
    "right": {"sphere": -3.0, "prism": {"base_in": 0, "base_up": -1.0}},
    "left": {"sphere": -3.0, "prism": {"base_in": 0, "base_up": 1.0}},
    "fitting": FITTING,
    "points": ["distance", "near"],
}


def test_equal_lenses_with_prescribed_vertical_prism_need_no_remedy() -> None:
    """The worked case of the issue. Prescribed net = up(R) - up(L) = -1 - 1 = -2.00 (the
    case format's sign rule); equal powers induce nothing (Prentice's rule), so the totals
    are -2.00 everywhere, the induced part 0, nothing is over the threshold and no remedy
    is proposed."""
    result = evaluate(read_case(HYPERPHORIA))
    prescribed = -1.0 - 1.0
    zone, remedies = result["reading_zone"], result["remedies"]
    assert zone["prescribed_net"]["vertical_base_up_right"] == pytest.approx(prescribed)
    for place in ("at_distance", "at_reading_point"):
        assert zone[place]["vertical_base_up_right"] == pytest.approx(prescribed)
        assert zone[place]["induced_vertical_base_up_right"] == pytest.approx(0.0, abs=1e-12)
    assert zone["at_reading_point"]["in_words"] == "none"
    assert zone["over_threshold_at_reading_point"] is False
    assert zone["threshold_drop_mm"] is None
    assert remedies["recommended"] == "none"
    assert remedies["before"]["distance"] == pytest.approx(prescribed)
    assert remedies["before"]["induced_near"] == pytest.approx(0.0, abs=1e-12)
    for point in result["points"]:
        assert point["net"]["vertical_base_up_right"] == pytest.approx(prescribed)
        assert point["net"]["induced_vertical_base_up_right"] == pytest.approx(0.0, abs=1e-12)
    for row in zone["map"]["induced_vertical_base_up_right"]:
        assert all(abs(cell) < 1e-12 for cell in row)
    by_id = {entry["id"]: entry for entry in remedies["options"]}
    assert by_id["slab_off"]["available"] is False


def test_in_words_names_the_induced_imbalance_at_the_reading_point() -> None:
    """Durham handout case: 1.2 base up before the right eye at the reading point."""
    zone = evaluate(read_case(DURHAM_BIFOCAL))["reading_zone"]
    assert zone["at_reading_point"]["in_words"] == f"{1.2:.2f} base up before the right eye"


COARSE_MAP = {"map_half_width_mm": 0, "map_step_mm": 5}


@st.composite
def cases_and_prism(draw: st.DrawFn) -> tuple[dict[str, Any], dict[str, float], dict[str, float]]:
    """A case with unequal powers (sometimes bifocal) and a prescribed prism to add to it."""
    right, left = draw(st.floats(-8, 8)), draw(st.floats(-8, 8))
    document: dict[str, Any] = {
        "right": {"sphere": right, "cylinder": draw(st.floats(-2, 0)),
                  "axis": draw(st.floats(0, 180))},
        "left": {"sphere": left}, "fitting": FITTING,
        # A coarse map keeps 1,000 examples quick; the map is not what is checked here.
        "reading_zone": {"reading_depth_mm": draw(st.floats(6, 14)), **COARSE_MAP}}
    if draw(st.booleans()):
        add = draw(st.floats(1, 3))
        for eye in ("right", "left"):
            document[eye].update(add=add, segment={"top_mm": -4, "diameter_mm": 28})
        document["reading_zone"] = {"reading_point": "segment_top", **COARSE_MAP}
    prism = st.floats(-3, 3)
    return (document, {"base_in": draw(prism), "base_up": draw(prism)},
            {"base_in": draw(prism), "base_up": draw(prism)})


def _same(first: Any, second: Any) -> bool:
    """Equal, numbers to 1e-9 (a remedy's amounts, in any nesting)."""
    if isinstance(first, dict) and isinstance(second, dict):
        return first.keys() == second.keys() and all(_same(first[k], second[k])
                                                     for k in first)
    if isinstance(first, list) and isinstance(second, list):
        return len(first) == len(second) and all(map(_same, first, second))
    if isinstance(first, float) or isinstance(second, float):
        return bool(abs(first - second) <= 1e-9)
    return bool(first == second)


@settings(max_examples=1000, deadline=None)
@given(cases_and_prism())
def test_adding_prescribed_prism_changes_no_remedy_and_shifts_every_total(
        drawn: tuple[dict[str, Any], dict[str, float], dict[str, float]]) -> None:
    """Adding the same prescribed prism to a case changes no remedy amount, no threshold
    depth and no recommendation, and shifts every total by exactly the prescribed net
    (vertical up(R) - up(L), horizontal in(R) + in(L): the case format's rules)."""
    plain, right_prism, left_prism = drawn
    with_prism = copy.deepcopy(plain)
    with_prism["right"]["prism"], with_prism["left"]["prism"] = right_prism, left_prism
    vertical = right_prism["base_up"] - left_prism["base_up"]
    horizontal = right_prism["base_in"] + left_prism["base_in"]
    cases = [read_case(plain), read_case(with_prism)]
    zones = [reading_zone_section(case, {}) for case in cases]
    remedies = [remedies_section(case, {}) for case in cases]
    assert zones[1]["threshold_drop_mm"] == zones[0]["threshold_drop_mm"]
    assert zones[1]["over_threshold_at_reading_point"] == \
        zones[0]["over_threshold_at_reading_point"]
    for place in ("at_distance", "at_reading_point"):
        assert zones[1][place]["vertical_base_up_right"] == pytest.approx(
            zones[0][place]["vertical_base_up_right"] + vertical, abs=1e-9)
        assert zones[1][place]["horizontal_base_in"] == pytest.approx(
            zones[0][place]["horizontal_base_in"] + horizontal, abs=1e-9)
        assert zones[1][place]["induced_vertical_base_up_right"] == pytest.approx(
            zones[0][place]["induced_vertical_base_up_right"], abs=1e-9)
    first, second = remedies
    assert first is not None and second is not None
    assert second["recommended"] == first["recommended"]
    for before, after in zip(first["options"], second["options"], strict=True):
        assert after["available"] == before["available"]
        assert _same(after["details"], before["details"]), after["id"]
        assert after["order_lines"] == before["order_lines"] or after["id"] in (
            "lower_centres", "near_prism_split", "reading_spectacles"), after["id"]
        if not before["available"]:
            continue
        for place in ("distance", "near"):
            assert after[place]["vertical_base_up_right"] == pytest.approx(
                before[place]["vertical_base_up_right"] + vertical, abs=1e-9)
            assert after[place]["horizontal_base_in"] == pytest.approx(
                before[place]["horizontal_base_in"] + horizontal, abs=1e-9)


@settings(max_examples=200, deadline=None)
@given(cases_and_prism())
def test_a_remedy_keeps_the_prescribed_prism(
        drawn: tuple[dict[str, Any], dict[str, float], dict[str, float]]) -> None:
    """After a remedy that keeps the distance spectacles' centring (slab-off, reverse
    slab, dissimilar segments), the total at distance is what it was, and at near the
    induced part is smaller (or no larger) than before; the prescribed prism written in the
    finished case is the one prescribed."""
    document, right_prism, left_prism = drawn
    document["right"]["prism"], document["left"]["prism"] = right_prism, left_prism
    section = remedies_section(read_case(document), {})
    assert section is not None
    before = section["before"]
    for entry in section["options"]:
        if entry["id"] not in ("slab_off", "reverse_slab", "dissimilar_segments") \
                or not entry["available"]:
            continue
        assert entry["distance"]["vertical_base_up_right"] == pytest.approx(
            before["distance"], abs=1e-9)
        assert abs(entry["near"]["induced_vertical_base_up_right"]) <= \
            abs(before["induced_near"]) + 1e-9
        for eye, prism in (("right", right_prism), ("left", left_prism)):
            assert entry["applied_case"][eye]["prism"] == prism
