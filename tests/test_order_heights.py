"""Heights as order forms give them: fitting and segment heights above the lowest point
of the lens shape, the boxing centre from the B size, the progressive's prism reference
point below the fitting cross, and one reading depth.

Sources (common practice, as written on order forms): the fitting height and the
segment height are both measured up from the lowest point of the lens shape (the
bottom of the box), so the segment top lies (segment height - fitting height) mm from
the distance reference point; the boxing centre lies half the box depth B above that
line; a progressive is ordered by its fitting-cross height and its prism reference
point lies below the cross by the distance the design states (usually 2-4 mm, each
design marks its own). Expected values are derived here from those rules.
"""

from __future__ import annotations

import copy
import json
from typing import Any

import pytest

from pycore.documents.cases import read_case
from pycore.errors import CaseError
from pycore.evaluate import evaluate

FITTING_HEIGHT = {"right": 20.0, "left": 21.0}
SEGMENT_HEIGHT = {"right": 16.0, "left": 18.5}


def bifocal(segment: dict[str, dict[str, Any]], heights: bool = True) -> dict[str, Any]:
    fitting: dict[str, Any] = {eye: {"mono_pd_mm": 32} for eye in ("right", "left")}
    if heights:
        for eye in ("right", "left"):
            fitting[eye]["height_mm"] = FITTING_HEIGHT[eye]
    return {"right": {"sphere": 4.0, "add": 2.5, "segment": {"diameter_mm": 22,
                                                             **segment["right"]}},
            "left": {"sphere": 1.0, "add": 2.5, "segment": {"diameter_mm": 22,
                                                            **segment["left"]}},
            "fitting": fitting, "frame": {"a_mm": 52, "dbl_mm": 18, "b_mm": 38}}


def by_height() -> dict[str, Any]:
    return bifocal({eye: {"height_mm": SEGMENT_HEIGHT[eye]} for eye in ("right", "left")})


def test_segment_height_becomes_the_top_from_the_reference_point() -> None:
    case = read_case(by_height())
    for eye in ("right", "left"):
        segment = case.lens(eye).segment  # type: ignore[arg-type]
        assert segment is not None
        assert segment.top_mm == pytest.approx(SEGMENT_HEIGHT[eye] - FITTING_HEIGHT[eye])


def test_both_height_forms_give_the_same_figures() -> None:
    tops = {eye: {"top_mm": SEGMENT_HEIGHT[eye] - FITTING_HEIGHT[eye]}
            for eye in ("right", "left")}
    from_heights = evaluate(read_case(by_height()))
    from_tops = evaluate(read_case(bifocal(tops)))
    assert from_heights["points"] == from_tops["points"]
    assert from_heights["reading_zone"]["at_reading_point"] == \
        from_tops["reading_zone"]["at_reading_point"]


def test_heights_reported_from_the_lens_bottom_and_the_boxing_centre() -> None:
    heights = evaluate(read_case(by_height()))["fitting"]["heights"]
    assert heights["boxing_centre_height_mm"] == pytest.approx(38 / 2)
    for eye in ("right", "left"):
        entry = heights[eye]
        assert entry["fitting_height_mm"] == FITTING_HEIGHT[eye]
        assert entry["fitting_height_above_boxing_centre_mm"] == \
            pytest.approx(FITTING_HEIGHT[eye] - 38 / 2)
        assert entry["segment_height_mm"] == pytest.approx(SEGMENT_HEIGHT[eye])
        assert entry["segment_top_from_reference_point_mm"] == \
            pytest.approx(SEGMENT_HEIGHT[eye] - FITTING_HEIGHT[eye])


def test_segment_height_and_top_both_given_is_refused() -> None:
    document = by_height()
    document["left"]["segment"]["top_mm"] = -3
    with pytest.raises(CaseError) as refused:
        read_case(document)
    assert refused.value.field == "left.segment.height_mm"
    assert "both given" in refused.value.message
    assert "lowest point of the lens shape" in refused.value.message


@pytest.mark.parametrize("fitting_heights", [False, True])
def test_segment_height_needs_the_fitting_height(fitting_heights: bool) -> None:
    document = bifocal({eye: {"height_mm": SEGMENT_HEIGHT[eye]} for eye in ("right", "left")},
                       heights=fitting_heights)
    if fitting_heights:
        del document["fitting"]["right"]["height_mm"]
    with pytest.raises(CaseError) as refused:
        read_case(document)
    assert refused.value.field == "right.segment.height_mm"
    assert "fitting.right.height_mm" in refused.value.message
    assert "fitting height" in refused.value.message


def test_cli_accepts_both_forms_and_refuses_both_at_once(cli: Any) -> None:
    ok = cli("evaluate", "-", stdin=json.dumps(by_height()))
    assert ok.code == 0, ok.stderr
    document = by_height()
    document["right"]["segment"]["top_mm"] = -4
    refused = cli("evaluate", "-", stdin=json.dumps(document))
    assert refused.code == 2 and refused.stdout == ""
    assert "right.segment.height_mm" in refused.stderr and refused.stderr.count("\n") <= 1


# --------------------------------------------------------------------------- progressive

PRP_BELOW = 3.0
CROSS_HEIGHT = 22.0
B_SIZE = 36.0


def progressive() -> dict[str, Any]:
    design = {"prism_reference_below_cross_mm": PRP_BELOW, "near_depth_mm": 16}
    return {"right": {"sphere": -2.0, "add": 2.0, "progressive": dict(design)},
            "left": {"sphere": -2.5, "add": 2.0, "progressive": dict(design)},
            "fitting": {"right": {"mono_pd_mm": 32, "height_mm": CROSS_HEIGHT},
                        "left": {"mono_pd_mm": 31, "height_mm": CROSS_HEIGHT}},
            "frame": {"a_mm": 50, "dbl_mm": 18, "b_mm": B_SIZE}}


def test_progressive_fitting_height_is_the_fitting_cross() -> None:
    result = evaluate(read_case(progressive()))
    for eye in ("right", "left"):
        entry = result["fitting"]["heights"][eye]
        assert entry["fitting_height_is"].startswith("the fitting cross")
        assert entry["prism_reference_point_below_fitting_cross_mm"] == PRP_BELOW
        assert entry["reference_point_height_mm"] == pytest.approx(CROSS_HEIGHT - PRP_BELOW)
        design = result["reading_zone"]["designs"][eye]
        assert design["prism_reference_point_below_fitting_cross_mm"] == PRP_BELOW
        assert design["fitting_cross"]["up_mm"] - design["prism_reference_point"]["up_mm"] \
            == pytest.approx(PRP_BELOW)
        # The optical centre is at the PRP: its height from the boxing centre.
        centre = result["frame"][eye]["optical_centre_from_box_centre"]
        assert centre["up_mm"] == pytest.approx(CROSS_HEIGHT - PRP_BELOW - B_SIZE / 2)
    # The fitting's distance point is the fitting cross, PRP_BELOW above the PRP.
    distance = next(p for p in result["points"] if p["name"] == "distance")
    assert distance["position"]["right"]["up_mm"] == pytest.approx(PRP_BELOW)


# --------------------------------------------------------------------------- reading depth


def with_depth(fitting_depth: float | None, zone_depth: float | None) -> dict[str, Any]:
    document = copy.deepcopy(by_height())
    if fitting_depth is not None:
        document["fitting"]["reading_depth_mm"] = fitting_depth
    if zone_depth is not None:
        document["reading_zone"] = {"reading_depth_mm": zone_depth}
    return document


def test_older_reading_depth_key_is_the_same_field() -> None:
    documented = evaluate(read_case(with_depth(8, None)))
    older = evaluate(read_case(with_depth(None, 8)))
    both = evaluate(read_case(with_depth(8, 8)))
    for result in (older, both):
        assert result["points"] == documented["points"]
        assert result["fitting"]["reading_depth_mm"] == 8
        assert result["reading_zone"]["geometry"]["reading_drop_mm"] == \
            documented["reading_zone"]["geometry"]["reading_drop_mm"]


def test_two_different_reading_depths_are_refused() -> None:
    with pytest.raises(CaseError) as refused:
        read_case(with_depth(8, 10))
    assert refused.value.field == "reading_zone.reading_depth_mm"
    assert "fitting.reading_depth_mm" in refused.value.message
    assert "8 mm" in refused.value.message and "10 mm" in refused.value.message


def test_remedies_keep_one_reading_depth() -> None:
    """Near-only remedies write the reading depth into the fitting, so a case with its
    own reading depth still gets them."""
    document = with_depth(12, None)
    document["reading_zone"] = {"reading_point": "segment_top"}
    options = evaluate(read_case(document))["remedies"]["options"]
    # Near-only spectacles are centred at the near visual points and need no split prism
    # (common practice), so of the two near-only options only the readers apply.
    near_only = [o for o in options if o["id"] == "reading_spectacles"]
    assert near_only and all(o["available"] for o in near_only), \
        [o["why_not"] for o in near_only]
    for option in near_only:
        applied = option["applied_case"]
        assert "reading_depth_mm" not in applied.get("reading_zone", {})
        evaluate(read_case(applied))
