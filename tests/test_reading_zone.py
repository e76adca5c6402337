"""The reading zone: the reading point from the fitting, the map and path of net prism as
the eyes move down and in, the threshold depth, and fitting-error sensitivity."""

from __future__ import annotations

import copy
from typing import Any

import pytest
from casebook import DURHAM_BIFOCAL, FITTING
from hypothesis import given, settings
from hypothesis import strategies as st

from pycore.documents.cases import read_case
from pycore.evaluate import evaluate, evaluate_point
from pycore.reading.options import DEFAULT_THRESHOLD
from pycore.reading.reading_point import reading_geometry
from pycore.spectacles.gaze import GazePoint, LensPoint

DURHAM = DURHAM_BIFOCAL



def zone_of(document: dict[str, Any]) -> dict[str, Any]:
    section: dict[str, Any] = evaluate(read_case(document))["reading_zone"]
    return section


def test_threshold_default_and_its_source() -> None:
    """A common rule of thumb: about 1 prism dioptre at the reading level (McCarthy,
    Optometry in Practice 2013; Optician CPD article, BS 2738 era). On screen the source
    is short: "common practice", no author names (docs/sources.md carries them)."""
    assert DEFAULT_THRESHOLD == 1.0
    threshold = zone_of(DURHAM)["threshold"]
    assert threshold["vertical"] == 1.0
    assert threshold["source"].startswith("common practice")
    assert "McCarthy" not in threshold["source"] and "rule of thumb" in threshold["source"]


def test_worked_bifocal_example_at_the_reading_point() -> None:
    """Durham handout: net 1.2 base up before the right eye, reading 5 mm below the tops.
    (The inset moves the points sideways; spherical lenses give no vertical change.)"""
    zone = zone_of(DURHAM)
    assert zone["geometry"]["rule"] == "segment_top"
    assert zone["geometry"]["reading_drop_mm"] == pytest.approx(8.0)
    assert zone["at_reading_point"]["vertical_base_up_right"] == pytest.approx(1.2)
    assert zone["at_reading_point"]["zones"] == {"right": "segment", "left": "segment"}
    assert zone["over_threshold_at_reading_point"] is True


def test_the_fitting_near_point_follows_the_reading_rule() -> None:
    document = {**DURHAM, "points": ["distance", "near"]}
    result = evaluate(read_case(document))
    near = result["points"][1]
    assert near["position"] == result["reading_zone"]["geometry"]["reading_point"]
    assert near["net"]["vertical_base_up_right"] == pytest.approx(1.2)


def test_reading_point_rules() -> None:
    """segment_top: the tops' depth plus the distance below them; distance_reference:
    the depth below the reference point (reading_zone overrides the fitting's)."""
    document = copy.deepcopy(DURHAM)
    document["reading_zone"] = {"reading_point": "segment_top", "below_segment_top_mm": 4}
    assert zone_of(document)["geometry"]["reading_drop_mm"] == pytest.approx(7.0)
    document["reading_zone"] = {"reading_point": "distance_reference"}
    assert zone_of(document)["geometry"]["reading_drop_mm"] == pytest.approx(10.0)
    document["reading_zone"] = {"reading_point": "distance_reference", "reading_depth_mm": 8}
    assert zone_of(document)["geometry"]["reading_drop_mm"] == pytest.approx(8.0)


def test_convergence_inset_at_the_reading_point() -> None:
    """The fitting's inset for the power looked through: plano, PD 63 split 31.5, W 400,
    s 27 -> near CD 59.02 (docs/sources.md, derived), so inset 1.99 each."""
    document = {"right": {"sphere": 0}, "left": {"sphere": 0},
                "fitting": {"right": {"mono_pd_mm": 31.5}, "left": {"mono_pd_mm": 31.5}},
                "reading_zone": {"reading_depth_mm": 10}}
    geometry = zone_of(document)["geometry"]
    inset = geometry["near_inset_mm"]
    assert 63 - inset["right"] - inset["left"] == pytest.approx(59.02, abs=0.005)


def test_single_vision_threshold_depth() -> None:
    """Derived from Prentice's rule: single vision R -5.00, L -1.00 meet dF x drop / 10 of
    vertical imbalance, so 1.0 is reached 2.5 mm down, 2.0 at 5 mm."""
    document = {"right": {"sphere": -5.0}, "left": {"sphere": -1.0}, "fitting": FITTING}
    zone = zone_of(document)
    assert zone["threshold_drop_mm"] == pytest.approx(2.5, abs=1e-5)
    document["reading_zone"] = {"threshold": 2.0}
    assert zone_of(document)["threshold_drop_mm"] == pytest.approx(5.0, abs=1e-5)
    document["reading_zone"] = {"threshold": 9.0, "map_depth_mm": 20}
    assert zone_of(document)["threshold_drop_mm"] is None


def test_threshold_crossing_at_a_segment_top() -> None:
    """Durham handout: the right meets a 3.3 image jump and the left 1.1 at the tops
    3 mm down, where the distance parts give 1.5 and 0.6 BU: just inside the segments the
    net is 0.9 - 2.2 = -1.3, so the 1.0 threshold is passed at the tops themselves.
    (Segments given as in the fixed core, without an outline: the converging eyes are a
    little to the side of a round segment's topmost point and would enter it a few
    hundredths of a mm lower.)"""
    document = copy.deepcopy(DURHAM)
    for eye in ("right", "left"):
        document[eye]["segment"] = {"top_mm": -3, "optical_centre_below_top_mm": 11}
    zone = zone_of(document)
    assert zone["threshold_drop_mm"] == pytest.approx(3.0, abs=1e-5)
    assert zone_of(DURHAM)["threshold_drop_mm"] == pytest.approx(3.0, abs=0.05)
    assert zone["image_jump"]["vertical_step_at_tops"] == pytest.approx(-2.2)


def test_map_shape_marks_and_agreement_with_the_lens() -> None:
    """The map's grid, its marks, and each cell against evaluate_point (Lens.prism_at)."""
    zone = zone_of(DURHAM)
    grid = zone["map"]
    rows, columns = len(grid["drop_mm"]), len(grid["lateral_mm"])
    assert rows == 13 and columns == 11  # 0-24 mm down, -10..10 mm sideways, 2 mm steps
    assert len(grid["vertical_base_up_right"]) == rows
    assert all(len(row) == columns for row in grid["horizontal_base_in"])
    assert grid["reading_point"] == {"drop_mm": pytest.approx(8.0), "lateral_mm": 0.0}
    assert grid["threshold_drop_mm"] == zone["threshold_drop_mm"]
    case = read_case(DURHAM)
    geometry = reading_geometry(case)
    for row in (0, 3, 6, 12):
        for column in (0, 3, 5, 10):
            drop, lateral = grid["drop_mm"][row], grid["lateral_mm"][column]
            gaze = geometry.gaze("cell", drop, lateral)
            net = evaluate_point(case, gaze)["net"]
            assert grid["vertical_base_up_right"][row][column] == pytest.approx(
                net["vertical_base_up_right"])
            assert grid["horizontal_base_in"][row][column] == pytest.approx(
                net["horizontal_base_in"])
    middle = grid["lateral_mm"].index(0.0)
    for row, step in enumerate(zone["path"]):
        assert step["vertical_base_up_right"] == grid["vertical_base_up_right"][row][middle]


def test_eyes_turn_together_toward_the_wearers_right() -> None:
    """Gaze to the wearer's right moves the right eye's point temporally (in_mm falls) and
    the left eye's nasally."""
    geometry = reading_geometry(read_case(DURHAM))
    straight, turned = geometry.gaze("a", 8.0), geometry.gaze("b", 8.0, 5.0)
    assert turned.right.in_mm == pytest.approx(straight.right.in_mm - 5)
    assert turned.left.in_mm == pytest.approx(straight.left.in_mm + 5)


def test_map_depth_follows_the_fitting_height() -> None:
    document = copy.deepcopy(DURHAM)
    document["fitting"] = {"right": {"mono_pd_mm": 32, "height_mm": 18},
                           "left": {"mono_pd_mm": 32, "height_mm": 20}}
    assert zone_of(document)["map"]["drop_mm"][-1] == pytest.approx(18.0)


@st.composite
def symmetric_cases(draw: st.DrawFn) -> dict[str, Any]:
    """Mirror-symmetric pairs: the same sphere and cylinder, axes mirrored (a, 180 - a),
    the same add and segment, the same PDs."""
    sphere, cylinder = draw(st.floats(-10, 10)), draw(st.floats(-4, 0))
    axis = draw(st.floats(0, 180))
    add = draw(st.sampled_from([0.0, 1.0, 2.5]))
    kind = draw(st.sampled_from(["segment", "progressive"]))
    pd = draw(st.floats(28, 36))
    eyes = {}
    for eye, eye_axis in (("right", axis), ("left", 180 - axis)):
        lens: dict[str, Any] = {"sphere": sphere, "cylinder": cylinder, "axis": eye_axis}
        if add and kind == "segment":
            lens.update(add=add, segment={"top_mm": -4, "diameter_mm": 28})
        elif add:
            lens.update(add=add, progressive={"near_depth_mm": 17,
                                              "thinning_prism_base_down": 0.6 * add})
        eyes[eye] = lens
    return {**eyes, "fitting": {"right": {"mono_pd_mm": pd}, "left": {"mono_pd_mm": pd}}}


@settings(max_examples=60, deadline=None)
@given(symmetric_cases())
def test_a_symmetric_case_has_no_imbalance_anywhere(document: dict[str, Any]) -> None:
    """Mirror symmetry: what one eye meets the other meets mirrored. Straight ahead, as the
    eyes move down and in, the vertical net is nil everywhere, the threshold is never
    reached and nothing needs doing; turned sideways by g, the net is the opposite of the
    net turned by -g (an oblique cylinder, or one eye leaving its segment first, gives
    imbalance in side gaze)."""
    result = evaluate(read_case(document))
    zone = result["reading_zone"]
    assert all(abs(step["vertical_base_up_right"]) < 1e-9 for step in zone["path"])
    grid = zone["map"]["vertical_base_up_right"]
    for row in grid:
        for column, value in enumerate(row):
            assert value == pytest.approx(-row[len(row) - 1 - column], abs=1e-9)
    assert zone["threshold_drop_mm"] is None
    assert result["remedies"]["recommended"] == "none"


def test_symmetric_spheres_have_no_imbalance_over_the_whole_map() -> None:
    document = {"right": {"sphere": 6.0, "add": 2.5, "segment": {"top_mm": -4}},
                "left": {"sphere": 6.0, "add": 2.5, "segment": {"top_mm": -4}},
                "fitting": FITTING}
    zone = zone_of(document)
    assert zone["map"]["scale"]["vertical_max_abs"] == 0.0


def test_contact_lenses_move_with_the_eyes() -> None:
    document = {"right": {"sphere": -8.0}, "left": {"sphere": -2.0}, "fitting": FITTING,
                "reading_zone": {"worn_as": "contact_lenses"}}
    zone = zone_of(document)
    assert zone["map"]["scale"]["vertical_max_abs"] == 0.0
    assert zone["threshold_drop_mm"] is None


def test_reading_spectacles_are_centred_on_the_reading_point() -> None:
    document = {"right": {"sphere": 4.0}, "left": {"sphere": 1.0}, "fitting": FITTING,
                "reading_zone": {"worn_as": "reading_spectacles", "reading_depth_mm": 10}}
    zone = zone_of(document)
    assert zone["geometry"]["reading_point"]["right"] == {"in_mm": 0.0, "up_mm": 0.0}
    assert zone["at_reading_point"]["vertical_base_up_right"] == pytest.approx(0.0)
    # 4 mm lower on the page the +4 / +1 pair meets 3 x 0.4 (Prentice's rule).
    row = zone["map"]["drop_mm"].index(14.0)
    middle = zone["map"]["lateral_mm"].index(0.0)
    assert zone["map"]["vertical_base_up_right"][row][middle] == pytest.approx(1.2)


def test_without_a_fitting_the_pds_are_assumed_and_said() -> None:
    document = {"right": {"sphere": -3.0}, "left": {"sphere": -1.0},
                "points": [{"name": "x", "right": {}, "left": {}}]}
    zone = zone_of(document)
    assert zone["geometry"]["fitting_assumed"] is True
    assert any("assumed" in line for line in zone["summary_lines"])


# --------------------------------------------------------------------------- sensitivity


def rows_of(zone: dict[str, Any], kind: str) -> dict[float, dict[str, Any]]:
    return {row["error_mm"]: row for row in zone["sensitivity"]["rows"] if row["kind"] == kind}


def test_height_error_changes_the_imbalance_by_prentice() -> None:
    """Prentice's rule: a +4.00 right lens fitted 1 mm high puts the eye 1 mm below its
    centre, 0.4 base up (net +0.4); 2 mm low, 0.8 base down. But +4.00 is beyond the
    +-3.375 D band of ANSI Z80.1-2015, where heights are held to 1.0 mm instead of 0.33
    prism dioptre: a 1 mm error is within it, so no warning, and the limit says so."""
    document = {"right": {"sphere": 4.0}, "left": {"sphere": 4.0}, "fitting": FITTING}
    zone = zone_of(document)
    rows = rows_of(zone, "right_height")
    assert rows[1.0]["distance"]["vertical_change"] == pytest.approx(0.4)
    assert rows[-2.0]["distance"]["vertical_change"] == pytest.approx(-0.8)
    assert rows_of(zone, "both_heights")[2.0]["distance"]["vertical_change"] == pytest.approx(0)
    limit = zone["sensitivity"]["limits"]["right_height"]
    assert (limit["by"], limit["value"], limit["unit"]) == ("mm", 1.0, "mm")
    assert not any("right fitting height" in w for w in zone["sensitivity"]["warnings"])


def test_height_error_within_the_power_band_is_compared_with_prism() -> None:
    """ANSI Z80.1-2015: within +-3.375 D the vertical limit is 0.33 prism dioptre. R +3.00,
    L -3.00 both fitted 1 mm high: the eyes sit 1 mm lower on both, net change
    (3 - (-3)) x 0.1 = 0.6 (Prentice's rule), over 0.33: a warning naming the prism
    limit. The right alone changes it by 0.3, under 0.33: none for it."""
    document = {"right": {"sphere": 3.0}, "left": {"sphere": -3.0}, "fitting": FITTING}
    sensitivity = zone_of(document)["sensitivity"]
    assert sensitivity["limits"]["both_heights"]["by"] == "prism"
    assert sensitivity["limits"]["both_heights"]["value"] == 0.33
    both = [w for w in sensitivity["warnings"] if "both fitting heights" in w]
    assert len(both) == 1 and f"{(3 - -3) * 0.1:.2f}" in both[0] and "0.33" in both[0]
    assert not any("the right fitting height" in w for w in sensitivity["warnings"])


def test_height_error_on_a_minus_six_lens_uses_the_millimetre_limit() -> None:
    """The case named in the review: -6.00 both eyes, the right fitted 1 mm off changes the
    imbalance by 0.6 (Prentice's rule), but at -6.00 (beyond +-3.375 D) ANSI Z80.1-2015
    allows 1.0 mm, so 1 mm is within the limit that applies and no warning is given."""
    document = {"right": {"sphere": -6.0}, "left": {"sphere": -6.0}, "fitting": FITTING}
    zone = zone_of(document)
    assert rows_of(zone, "right_height")[1.0]["distance"]["vertical_change"] == \
        pytest.approx(-0.6)
    limit = zone["sensitivity"]["limits"]["right_height"]
    assert limit["by"] == "mm" and limit["power_d"] == -6.0 and "1 mm" in limit["in_words"]
    assert not any("fitting height" in w for w in zone["sensitivity"]["warnings"])


def test_small_powers_give_no_sensitivity_warning() -> None:
    """+1.00 both eyes: 0.1 per mm, well under ANSI's 0.33; 2 mm of PD error 0.2 < 0.67."""
    document = {"right": {"sphere": 1.0}, "left": {"sphere": 1.0}, "fitting": FITTING}
    assert zone_of(document)["sensitivity"]["warnings"] == []


def test_pd_error_changes_the_horizontal_net() -> None:
    """Prentice's rule: a -5.00 right lens centred 2 mm too far out puts the eye 2 mm nasal
    of the centre: 1.0 base in. At -5.00 (beyond +-2.75 D) ANSI Z80.1-2015 holds the PD to
    2.5 mm, which a 2 mm error meets: the limit is in mm and no warning is given."""
    document = {"right": {"sphere": -5.0}, "left": {"sphere": -5.0}, "fitting": FITTING}
    zone = zone_of(document)
    assert rows_of(zone, "right_pd")[2.0]["distance"]["horizontal_change"] == pytest.approx(1.0)
    limit = zone["sensitivity"]["limits"]["right_pd"]
    assert (limit["by"], limit["value"]) == ("mm", 2.5)
    assert not any("right monocular PD" in w for w in zone["sensitivity"]["warnings"])


def test_an_error_that_crosses_the_threshold_is_named() -> None:
    """R -3.00, L -1.00 at 4 mm: 0.8 (under 1.0); the left lens 1 mm high (eye 1 mm lower)
    gives 0.8 - 0.1 and the right 1 mm high 0.8 + 0.3 = 1.1 (Prentice's rule)."""
    document = {"right": {"sphere": -1.0}, "left": {"sphere": -3.0}, "fitting": FITTING,
                "reading_zone": {"reading_depth_mm": 4}}
    zone = zone_of(document)
    assert zone["at_reading_point"]["vertical_base_up_right"] == pytest.approx(0.8)
    assert rows_of(zone, "left_height")[1.0]["near"]["vertical_base_up_right"] == \
        pytest.approx(1.1)
    assert any("over the 1.00 threshold" in w for w in zone["sensitivity"]["warnings"])


def test_gaze_points_stay_on_the_lens() -> None:
    geometry = reading_geometry(read_case(DURHAM))
    point = geometry.lens_point("right", 30.0, 15.0)
    assert isinstance(point, LensPoint) and abs(point.up_mm) <= 40
    assert isinstance(geometry.reading_point(), GazePoint)
