"""Remedies side by side: what each leaves at distance and at the reading point, and the
finished case each carries (evaluated again, it gives the same figures)."""

from __future__ import annotations

import copy
import json
from typing import Any

import pytest
from casebook import DURHAM_BIFOCAL, FITTING
from cli_runner import run_cli
from hypothesis import given, settings
from hypothesis import strategies as st

from pycore.documents.cases import read_case
from pycore.evaluate import evaluate
from pycore.interfaces.bridge import handle
from pycore.reading.remedies.finished_case import round_to_step
from pycore.reading.remedies.side_by_side import ORDER

DURHAM = DURHAM_BIFOCAL



def remedies_of(document: dict[str, Any]) -> dict[str, dict[str, Any]]:
    section = evaluate(read_case(document))["remedies"]
    return {entry["id"]: entry for entry in section["options"]}


def near_of(document: dict[str, Any]) -> float:
    value: float = evaluate(read_case(document))["reading_zone"]["at_reading_point"][
        "vertical_base_up_right"]
    return value


def test_every_remedy_is_listed_with_its_cautions() -> None:
    section = evaluate(read_case(DURHAM))["remedies"]
    assert [entry["id"] for entry in section["options"]] == list(ORDER)
    assert any("slab-off is a clinical and laboratory decision" in caution
               for caution in section["cautions"])
    assert section["before"]["near"] == pytest.approx(1.2)
    assert sum(entry["recommended"] for entry in section["options"]) == 1
    for entry in section["options"]:
        assert any("clinical decision" in caution for caution in entry["cautions"])
        assert any("finished" in caution for caution in entry["cautions"])
        assert any("laboratory" in c for c in entry["cautions"]) == ("slab" in entry["id"])
    assert any("suggested" in line for line in section["summary_lines"])


def test_slab_off_on_the_worked_example() -> None:
    """Durham handout, 1.2 base up before the right eye: conventional slab-off base up
    before the left (the least plus vertically: common practice), reverse slab base down
    before the right (the most plus). Raw 1.2, rounded to 0.5 steps (from memory) 1.0,
    the line at the segment top (common practice); under the usual 1.5 (common practice)."""
    remedies = remedies_of(DURHAM)
    slab = remedies["slab_off"]
    assert slab["details"]["eye"] == "left" and slab["details"]["base"] == "up"
    assert slab["details"]["raw"] == pytest.approx(1.2)
    assert slab["details"]["rounded"] == pytest.approx(1.0)
    assert slab["details"]["line_mm"] == pytest.approx(-3.0)
    assert slab["applied_case"]["left"]["slab_off"] == {"base_up": 1.0, "line_mm": -3}
    assert slab["near"]["vertical_base_up_right"] == pytest.approx(0.2)
    assert slab["distance"]["vertical_base_up_right"] == pytest.approx(0.0)
    assert any("usual 1.5-6" in warning for warning in slab["warnings"])
    reverse = remedies["reverse_slab"]
    assert reverse["details"]["eye"] == "right"
    assert reverse["applied_case"]["right"]["slab_off"]["base_up"] == pytest.approx(-1.0)
    assert reverse["near"]["vertical_base_up_right"] == pytest.approx(0.2)


def test_slab_off_goes_on_the_most_minus_lens() -> None:
    """Common practice: conventional slab-off on the most minus lens in the vertical
    meridian. R -6.00 / -1.00 x 180 (vertical -6), L -2.00: at 10 mm the right meets 4
    more base down, 4.0 base up before the left (Prentice's rule)."""
    document = {"right": {"sphere": -5.0, "cylinder": -1.0, "axis": 180},
                "left": {"sphere": -2.0}, "fitting": FITTING}
    slab = remedies_of(document)["slab_off"]
    assert slab["details"]["eye"] == "right"
    assert slab["details"]["usual_lens_by_vertical_power"] == "right"
    assert slab["details"]["rounded"] == pytest.approx(4.0)
    assert slab["warnings"] == []
    assert slab["near"]["vertical_base_up_right"] == pytest.approx(0.0, abs=1e-9)
    line = slab["details"]["line_mm"]
    # Halfway from the primary position to the 10 mm reading point (common practice).
    assert line == pytest.approx(-10 / 2)
    assert remedies_of(document)["reverse_slab"]["details"]["eye"] == "left"


def test_correct_fraction_and_lab_step() -> None:
    """Two-thirds of 4.0 (common practice: many correct two-thirds to all) is 2.67 raw;
    to 0.25 steps 2.75."""
    document = {"right": {"sphere": -6.0}, "left": {"sphere": -2.0}, "fitting": FITTING,
                "reading_zone": {"correct_fraction": 2 / 3, "lab_step": 0.25}}
    slab = remedies_of(document)["slab_off"]["details"]
    assert slab["raw"] == pytest.approx(8 / 3)
    assert slab["rounded"] == pytest.approx(2.75)


def test_round_to_step() -> None:
    assert round_to_step(1.2, 0.5) == 1.0
    assert round_to_step(1.25, 0.5) == 1.5
    assert round_to_step(-3.74, 0.25) == -3.75


@st.composite
def unbalanced_cases(draw: st.DrawFn) -> dict[str, Any]:
    right, left = draw(st.floats(-10, 10)), draw(st.floats(-10, 10))
    cylinder, axis = draw(st.floats(-3, 0)), draw(st.floats(0, 180))
    document: dict[str, Any] = {
        "right": {"sphere": right, "cylinder": cylinder, "axis": axis},
        "left": {"sphere": left}, "fitting": FITTING,
        "reading_zone": {"reading_depth_mm": draw(st.floats(6, 14))}}
    if draw(st.booleans()):
        add = draw(st.floats(1, 3))
        for eye in ("right", "left"):
            document[eye].update(add=add, segment={"top_mm": -4, "diameter_mm": 28})
        document["reading_zone"] = {"reading_point": "segment_top"}
    return document


@settings(max_examples=150, deadline=None)
@given(unbalanced_cases())
def test_the_recommended_slab_off_brings_the_near_residual_under_the_threshold(
        document: dict[str, Any]) -> None:
    """With the full correction and 0.5 steps the residual is at most a quarter prism
    dioptre, under the 1.0 threshold, and the finished case gives the same figure."""
    before = near_of(document)
    if not 1.0 <= abs(before) <= 9.5:
        return
    slab = remedies_of(document)["slab_off"]
    assert slab["available"], slab["why_not"]
    residual = slab["near"]["vertical_base_up_right"]
    assert abs(residual) <= 0.25 + 1e-9
    assert residual == pytest.approx(before - (1 if before > 0 else -1) * slab["details"][
        "rounded"], abs=1e-9)
    assert near_of(slab["applied_case"]) == pytest.approx(residual, abs=1e-9)


def test_dissimilar_segments_on_the_worked_example() -> None:
    """Durham handout case: 1.2 to cancel with the right's +3.00 add needs the right
    segment OC 10 x 1.2 / 3 = 4 mm lower (Prentice's rule), 11 + 4 = 15 mm below the top:
    a round segment has its OC at its centre (common practice), so R30, a size that is
    made (common practice). The left stays R22."""
    remedy = remedies_of(DURHAM)["dissimilar_segments"]
    options = {o["eye"]: o for o in remedy["details"]["options"]}
    needed_below = 22 / 2 + 10 * 1.2 / 3.0
    assert options["right"]["to_mm"] == pytest.approx(needed_below)
    assert options["right"]["kind"] == f"round {2 * needed_below:g} mm"
    assert options["left"]["changed"] is False
    assert remedy["applied_case"]["right"]["segment"]["diameter_mm"] == 2 * needed_below
    assert remedy["near"]["vertical_base_up_right"] == pytest.approx(0.0, abs=1e-9)
    assert options["right"]["image_jump"] == pytest.approx(4.5)  # 3 x 1.5 cm (Durham rule)
    assert remedy["order_lines"] == [
        "R: round 30 mm segment, top 3.0 mm below the distance reference point, optical "
        "centre at its centre, 15.0 mm below its top (common practice)",
        "L: round 22 mm segment as ordered, top 3.0 mm below the distance reference point, "
        "optical centre 11.0 mm below its top"]
    assert remedy["recommended"]


def test_dissimilar_segments_need_segments() -> None:
    document = {"right": {"sphere": -6.0}, "left": {"sphere": -2.0}, "fitting": FITTING}
    remedy = remedies_of(document)["dissimilar_segments"]
    assert remedy["available"] is False and remedy["applied_case"] is None


def test_flat_top_pair_gets_a_made_round_segment() -> None:
    """Flat-tops (OC about 5 mm below the top, common practice): R -5.00, L -3.00 read
    10 mm down meet 5 and 3 base down, 2.0 base up before the left (Prentice's rule);
    with +2.00 adds one segment OC must sit 10 mm deeper before the left: 5 + 10 = 15 mm,
    the centre of a round 30 (common practice), which is made."""
    document = {"right": {"sphere": -5.0, "add": 2.0, "segment": {"top_mm": -4,
                                                                  "width_mm": 28}},
                "left": {"sphere": -3.0, "add": 2.0, "segment": {"top_mm": -4,
                                                                 "width_mm": 28}},
                "fitting": FITTING, "reading_zone": {"reading_depth_mm": 10}}
    remedy = remedies_of(document)["dissimilar_segments"]
    assert remedy["details"]["chosen"] == "left"
    segment = remedy["applied_case"]["left"]["segment"]
    assert segment["shape"] == "round" and segment["diameter_mm"] == 2 * (5 + 10 * 2.0 / 2.0)
    assert segment["optical_centre_below_top_mm"] - 5.0 == pytest.approx(10.0)
    assert remedy["near"]["vertical_base_up_right"] == pytest.approx(0.0, abs=1e-9)


@settings(max_examples=100, deadline=None)
@given(st.floats(-8, 8), st.floats(-8, 8), st.floats(6, 14), st.floats(-5, 10))
def test_lowering_the_centres_trades_near_for_distance_linearly(
        right: float, left: float, reading: float, lowered: float) -> None:
    """docs/sources.md, derived from Prentice's rule: lowering both distance
    centres by h leaves dF (r - h) / 10 at the reading level and makes dF h / 10 at
    distance (here signed: dF = right - left vertical power, net base up before the
    right positive)."""
    if abs(right - left) < 0.25:
        return
    document = {"right": {"sphere": right}, "left": {"sphere": left}, "fitting": FITTING,
                "reading_zone": {"reading_depth_mm": reading, "lower_centres_mm": lowered}}
    remedy = remedies_of(document)["lower_centres"]
    if lowered == 0:
        assert remedy["available"] is False
        return
    d_f = right - left
    assert remedy["near"]["vertical_base_up_right"] == pytest.approx(
        d_f * (reading - lowered) / 10, abs=1e-9)
    assert remedy["distance"]["vertical_base_up_right"] == pytest.approx(
        -d_f * lowered / 10, abs=1e-9)
    for row in remedy["details"]["trade"]:
        h = row["lowered_mm"]
        assert row["near"] == pytest.approx(d_f * (reading - h) / 10, abs=1e-9)
        assert row["distance"] == pytest.approx(-d_f * h / 10, abs=1e-9)


def test_lowering_by_default_balances_near_and_distance() -> None:
    """R -6.00, L -2.00 at 10 mm: 4.0 at near; lowering 5 mm leaves 2.0 each way."""
    document = {"right": {"sphere": -6.0}, "left": {"sphere": -2.0}, "fitting": FITTING}
    remedy = remedies_of(document)["lower_centres"]
    assert remedy["details"]["lowered_mm"] == pytest.approx(5.0)
    assert remedy["near"]["vertical_base_up_right"] == pytest.approx(-2.0)
    assert remedy["distance"]["vertical_base_up_right"] == pytest.approx(2.0)
    applied = remedy["applied_case"]
    assert "prism" not in applied["right"] and "prism" not in applied["left"]
    assert applied["right"]["optical_centre_mm"] == {"in_mm": 0.0, "up_mm": -5.0}
    # -6.00 with its centre 5 mm below the pupil: 3.0 base up (Prentice's rule; a minus
    # lens has its base away from the centre), induced, not prescribed.
    right = evaluate(read_case(applied), ("points",))["points"][0]["right"]
    assert right["parts"]["induced"]["base_up"] == pytest.approx(3.0)
    assert right["parts"]["prescribed"]["amount"] == 0.0


def test_lowered_centres_applied_keep_the_prescribed_prism_and_show_what_they_do() -> None:
    """Lowered centres on a wearer with prescribed vertical prism: once applied, the
    finished case carries the same prescribed prism, and evaluated again its induced
    imbalance at the reading point and at distance is what the remedy promised. Check
    values by Prentice's rule with numpy (P = -F (r - c), r and c in cm): lowering both
    centres by h changes the net vertical prism by -(F_yy,R - F_yy,L) h / 10 at every
    point (oblique cylinders: the yy entry of each power matrix)."""
    import numpy as np

    document = {"right": {"rx": "-5.50 / -1.00 x 30", "prism": {"base_in": 0, "base_up": 1.5}},
                "left": {"rx": "-1.25 DS", "prism": {"base_in": 0, "base_up": -1.5}},
                "fitting": FITTING}
    before = evaluate(read_case(document))
    remedy = next(o for o in before["remedies"]["options"] if o["id"] == "lower_centres")
    drop = remedy["details"]["lowered_mm"]
    applied = remedy["applied_case"]
    assert applied["right"]["prism"] == document["right"]["prism"]
    assert applied["left"]["prism"] == document["left"]["prism"]
    after = evaluate(read_case(applied))
    zone_before, zone_after = before["reading_zone"], after["reading_zone"]

    def yy(rx_eye: str) -> float:
        power = before["eyes"][rx_eye]["power_matrix"]
        return float(np.array([[power["xx"], power["xy"]], [power["xy"], power["yy"]]])[1, 1])

    change = -(yy("right") - yy("left")) * drop / 10.0
    assert abs(change) > 0.5
    for where in ("at_reading_point", "at_distance"):
        induced_before = zone_before[where]["induced_vertical_base_up_right"]
        induced_after = zone_after[where]["induced_vertical_base_up_right"]
        assert induced_after == pytest.approx(induced_before + change, abs=1e-9), where
    assert zone_after["at_reading_point"]["induced_vertical_base_up_right"] == pytest.approx(
        remedy["near"]["induced_vertical_base_up_right"], abs=1e-9)
    assert zone_after["at_distance"]["induced_vertical_base_up_right"] == pytest.approx(
        remedy["distance"]["induced_vertical_base_up_right"], abs=1e-9)
    # The prescribed prism is still the wearer's: the totals differ from the induced
    # parts by exactly its net (1.5 BU R, 1.5 BD L: +3.0 up(R) - up(L)).
    assert (zone_after["at_distance"]["vertical_base_up_right"]
            - zone_after["at_distance"]["induced_vertical_base_up_right"]) == pytest.approx(3.0)


def test_near_only_spectacles_centred_for_near_need_no_split_prism() -> None:
    """Durham case as near-only spectacles centred at the near visual points: the eyes read
    through the optical centres, where Prentice's rule gives no prism, so there is nothing
    to split (a prism would only make up for distance centring, which the pair need not
    have)."""
    remedy = remedies_of(DURHAM)["near_prism_split"]
    assert remedy["available"] is False and remedy["why_not"].startswith("Not needed")
    assert remedy["centring"] == "optical centres at the near visual points"
    assert remedy["details"]["imbalance_without_prism"] == pytest.approx(0.0, abs=1e-9)
    assert remedy["order_lines"] == [] and remedy["applied_case"] is None


def test_reading_spectacles_and_contact_lenses() -> None:
    remedies = remedies_of(DURHAM)
    readers = remedies["reading_spectacles"]
    assert readers["near"]["vertical_base_up_right"] == pytest.approx(0.0, abs=1e-9)
    assert readers["applied_case"]["reading_zone"]["worn_as"] == "reading_spectacles"
    # Near powers +8.00 and +3.00: 0.5 per mm away from the reading point (Prentice).
    assert readers["details"]["vertical_change_per_mm_from_reading_point"] == \
        pytest.approx(0.5)
    lenses = remedies["contact_lenses"]
    assert lenses["near"]["vertical_base_up_right"] == 0.0
    assert lenses["distance"]["vertical_base_up_right"] == 0.0
    assert lenses["applied_case"]["reading_zone"]["worn_as"] == "contact_lenses"


def test_near_only_spectacles_need_no_split_prism() -> None:
    """Near-only spectacles centred at the near visual points meet no induced imbalance
    at the reading point (Prentice's rule: r = 0 at each optical centre), so split prism
    is never proposed for them."""
    entry = remedies_of(DURHAM)["near_prism_split"]
    assert not entry["available"] and entry["applied_case"] is None


def test_nothing_to_do_under_the_threshold() -> None:
    document = {"right": {"sphere": -2.5}, "left": {"sphere": -2.0}, "fitting": FITTING}
    section = evaluate(read_case(document))["remedies"]
    assert section["recommended"] == "none"
    none = next(entry for entry in section["options"] if entry["id"] == "none")
    assert none["within_threshold"] == {"distance": True, "near": True}


@pytest.mark.parametrize("remedy", [r for r in ORDER if r != "near_prism_split"])
def test_every_finished_case_evaluates_to_its_figures(remedy: str) -> None:
    """Each applied_case passes the CLI's validation and gives the remedy's own figures."""
    entry = remedies_of(DURHAM)[remedy]
    assert entry["available"], entry["why_not"]
    run = run_cli("evaluate", "-", stdin=json.dumps(entry["applied_case"]))
    assert run.code == 0, run.stderr
    zone = run.json()["reading_zone"]
    assert zone["at_reading_point"]["vertical_base_up_right"] == pytest.approx(
        entry["near"]["vertical_base_up_right"])
    if entry["distance"]["from"] == "finished case":
        assert zone["at_distance"]["vertical_base_up_right"] == pytest.approx(
            entry["distance"]["vertical_base_up_right"])


def test_remedies_without_a_fitting_write_their_points_out() -> None:
    document = copy.deepcopy(DURHAM)
    del document["fitting"]
    document["points"] = [{"name": "reading", "right": {"up_mm": -8}, "left": {"up_mm": -8}}]
    readers = remedies_of(document)["reading_spectacles"]
    assert readers["applied_case"]["points"][0]["right"] == {"in_mm": 0.0, "up_mm": 0.0}


# --------------------------------------------------------------------------- CLI and worker


def test_cli_apply_remedy_writes_the_finished_case() -> None:
    run = run_cli("apply-remedy", "slab_off", "-", stdin=json.dumps(DURHAM))
    assert run.code == 0, run.stderr
    assert run.json()["left"]["slab_off"] == {"base_up": 1.0, "line_mm": -3}
    run = run_cli("apply-remedy", "dissimilar_segments", "-", "--evaluate",
                  stdin=json.dumps(DURHAM))
    assert run.json()["reading_zone"]["at_reading_point"]["vertical_base_up_right"] == \
        pytest.approx(0.0, abs=1e-9)
    run = run_cli("apply-remedy", "slab_off", "-", "--text", stdin=json.dumps(DURHAM))
    assert "Remedies" in run.stdout and "Reading zone" in run.stdout


@pytest.mark.parametrize("args, document, field", [
    (("apply-remedy", "bogus", "-"), DURHAM, "remedy"),
    (("apply-remedy", "dissimilar_segments", "-"),
     {"right": {"sphere": -6}, "left": {"sphere": -2}, "fitting": FITTING}, "remedy"),
    (("apply-remedy", "slab_off", "-"), {"right": {"sphere": -6}}, "left"),
])
def test_cli_apply_remedy_refusals(args: tuple[str, ...], document: dict[str, Any],
                                   field: str) -> None:
    run = run_cli(*args, stdin=json.dumps(document))
    assert run.code == 2 and run.stdout == ""
    assert field in run.stderr and "Traceback" not in run.stderr


def test_evaluate_text_prints_the_remedies_table() -> None:
    run = run_cli("evaluate", "--text", "-", stdin=json.dumps(DURHAM))
    assert run.code == 0
    assert "Remedies" in run.stdout and "Slab-off" in run.stdout
    assert "image jump at the right segment top: 3.30 base down" in run.stdout


def test_worker_actions() -> None:
    reply = json.loads(handle(json.dumps({"action": "reading_zone", "payload": DURHAM})))
    assert reply["ok"], reply
    assert reply["result"]["remedies"]["recommended"] == "dissimilar_segments"
    assert reply["result"]["reading_zone"]["at_reading_point"]["vertical_base_up_right"] == \
        pytest.approx(1.2)
    reply = json.loads(handle(json.dumps({"action": "apply_remedy",
                                          "payload": {"case": DURHAM, "remedy": "slab_off"}})))
    assert reply["ok"], reply
    assert reply["result"]["case"]["left"]["slab_off"]["base_up"] == 1.0
    assert reply["result"]["result"]["reading_zone"]["at_reading_point"][
        "vertical_base_up_right"] == pytest.approx(0.2)
    assert "applied_case" not in reply["result"]["remedy"]
    reply = json.loads(handle(json.dumps({"action": "apply_remedy",
                                          "payload": {"case": DURHAM, "remedy": "x"}})))
    assert reply["ok"] is False and reply["error"]["field"] == "remedy"
