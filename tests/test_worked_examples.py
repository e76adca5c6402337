"""The core against worked examples published in the trade's literature.

Each check value names its source (see docs/sources.md).
"""

from __future__ import annotations

import json

import pytest

from pycore.documents.cases import read_case
from pycore.evaluate import evaluate
from pycore.optics.power import Prescription
from pycore.optics.prentice import induced_prism, prentice
from pycore.optics.prism import Prism
from pycore.spectacles.decentration import decentration_per_eye_mm, frame_pd_mm, minimum_blank_mm
from pycore.spectacles.fitting import EyeFitting, Fitting, near_inset_mm
from pycore.spectacles.gaze import LensPoint
from pycore.spectacles.lens import Lens


def test_oblique_sphero_cylinder_jalie() -> None:
    """Jalie, Principles of Ophthalmic Lenses, 6th ed. (reproduced in The Indian Optician,
    Nov-Dec 2024): right +6.00 / -3.00 x 140, visual point 11 mm below and 2.5 mm nasal
    of the optical centre: 5.03 base up and 2.81 base out."""
    prism = induced_prism(Prescription(6.0, -3.0, 140).power_matrix, LensPoint(2.5, -11), "right")
    assert prism.base_up == pytest.approx(5.03, abs=0.005)
    assert prism.base_in == pytest.approx(-2.81, abs=0.01)
    assert prism.in_words() == "2.82 base out, 5.03 base up"


def test_oblique_example_same_in_plus_cylinder_form() -> None:
    """Jalie's example again, transposed to +3.00 / +3.00 x 50: the prism is the same."""
    prism = induced_prism(Prescription(3.0, 3.0, 50).power_matrix, LensPoint(2.5, -11), "right")
    assert prism.base_up == pytest.approx(5.0328, abs=1e-4)
    assert prism.base_in == pytest.approx(-2.8151, abs=1e-4)


def test_prentice_scalar_rule() -> None:
    """Prentice's rule P = c F (published law): 5 mm through a 4 D lens is 2 prism dioptres."""
    assert prentice(0.5, 4.0) == pytest.approx(2.0)


@pytest.mark.parametrize("eye, written, amount, direction", [
    # Durham Technical Community College opticianry handout on compounding and
    # resolving prism: R 1.5 BU with 2 BI = 2.5 at 37; L 1.5 BD with 2 BI = 2.5 at 217.
    ("right", (2.0, 1.5), 2.5, 37),
    ("left", (2.0, -1.5), 2.5, 217),
    # Derived with the same rule (docs/sources.md): R 3 BO with 4 BU = 5 at 127.
    ("right", (-3.0, 4.0), 5.0, 127),
])
def test_360_degree_notation(eye: str, written: tuple[float, float], amount: float,
                             direction: float) -> None:
    prism = Prism(*written)
    assert prism.amount == pytest.approx(amount)
    assert round(prism.direction_360(eye)) == direction  # type: ignore[arg-type]
    back = Prism.from_direction(amount, prism.direction_360(eye), eye)  # type: ignore[arg-type]
    assert back.base_in == pytest.approx(written[0])
    assert back.base_up == pytest.approx(written[1])


@pytest.mark.parametrize("power, near_cd", [
    # Derived in docs/sources.md from near CD = PD - PD / [1 + W (1/s - F/1000)]:
    # PD 63, W 400 mm, s 27 mm: plano 59.02, F -9: 59.76, F +5: 58.44.
    (0.0, 59.02), (-9.0, 59.76), (5.0, 58.44),
])
def test_near_centration_distance(power: float, near_cd: float) -> None:
    fitting = Fitting(EyeFitting(31.5), EyeFitting(31.5), 400, 27)
    assert fitting.near_centration_distance_mm(power, power) == pytest.approx(near_cd, abs=0.005)
    # Common practice form for a plano lens: inset = mono PD x s / (W + s).
    assert near_inset_mm(31.5, 400, 27) == pytest.approx(31.5 * 27 / 427)


def test_near_centration_against_ray_trace() -> None:
    """The closed form against an independent numpy ray trace (tests/reference.py)."""
    from reference import near_centration_distance

    for power in (-12.0, -4.0, 0.0, 3.0, 8.0):
        fitting = Fitting(EyeFitting(32), EyeFitting(32), 350, 25)
        assert fitting.near_centration_distance_mm(power, power) == pytest.approx(
            near_centration_distance(64, 350, 25, power), abs=1e-9)


def test_frame_decentration() -> None:
    """Common practice: frame PD = A + DBL; frame PD 70 with wearer PD 64 gives 3 mm in
    per eye; minimum blank = ED + 2 x decentration + 2 mm."""
    assert frame_pd_mm(52, 18) == 70
    assert decentration_per_eye_mm(52, 18, 32) == pytest.approx(3.0)
    assert minimum_blank_mm(56, 3.0) == pytest.approx(64.0)


def test_plus_lens_base_toward_centre() -> None:
    """Published law: looking down through a plus lens meets base up; through a minus
    lens, base down (base toward the centre of a plus lens, away for a minus)."""
    below = LensPoint(0, -10)
    assert Lens(Prescription(3.0)).prism_at(below, "right").total.base_up > 0
    assert Lens(Prescription(-3.0)).prism_at(below, "left").total.base_up < 0


BIFOCAL_CASE = {
    # Durham Technical Community College opticianry handout on bifocal prism: OD +5.00
    # add +3.00, OS +2.00 add +1.00, R22 segments with tops 3 mm below the distance OCs
    # (segment OCs 14 mm below), reading 8 mm below the distance OCs.
    "right": {"sphere": 5.0, "add": 3.0,
              "segment": {"top_mm": -3, "optical_centre_below_top_mm": 11}},
    "left": {"sphere": 2.0, "add": 1.0,
             "segment": {"top_mm": -3, "optical_centre_below_top_mm": 11}},
    "points": [{"name": "reading", "right": {"in_mm": 0, "up_mm": -8},
                "left": {"in_mm": 0, "up_mm": -8}}],
}


def test_bifocal_worked_example_through_evaluate(cli) -> None:  # type: ignore[no-untyped-def]
    """Same handout: totals OD 2.2 BU, OS 1.0 BU, net 1.2 base up before the right eye;
    distance parts 4.0 and 1.6 BU, segment parts 1.8 and 0.6 BD."""
    run = cli("evaluate", "-", stdin=json.dumps(BIFOCAL_CASE))
    assert run.code == 0, run.stderr
    point = run.json()["points"][0]
    assert point["right"]["base_up"] == pytest.approx(2.2)
    assert point["left"]["base_up"] == pytest.approx(1.0)
    assert point["net"]["vertical_base_up_right"] == pytest.approx(1.2)
    assert point["right"]["parts"]["induced"]["base_up"] == pytest.approx(4.0)
    assert point["left"]["parts"]["induced"]["base_up"] == pytest.approx(1.6)
    assert point["right"]["parts"]["from_add"]["base_up"] == pytest.approx(-1.8)
    assert point["left"]["parts"]["from_add"]["base_up"] == pytest.approx(-0.6)
    assert point["net"]["vertical_in_words"].startswith("1.20 prism dioptres, base up before "
                                                        "the right eye")


def test_above_the_segment_nothing_changes() -> None:
    """docs/case-format.md: points above the segment top line meet the distance prism only."""
    case = json.loads(json.dumps(BIFOCAL_CASE))
    case["points"] = [{"name": "just above", "right": {"in_mm": 0, "up_mm": -2.9},
                       "left": {"in_mm": 0, "up_mm": -2.9}}]
    point = evaluate(read_case(case))["points"][0]
    assert point["right"]["base_up"] == pytest.approx(5.0 * 0.29)
    assert point["right"]["zone"] == "distance"


def test_slab_off_adds_below_its_line_only() -> None:
    """docs/case-format.md: points at or below the slab line gain (0, base_up)."""
    case = {"right": {"sphere": -1.0, "slab_off": {"base_up": 3.0, "line_mm": -3}},
            "left": {"sphere": -1.0},
            "points": [{"name": "below", "right": {"up_mm": -3}, "left": {"up_mm": -3}},
                       {"name": "above", "right": {"up_mm": -2}, "left": {"up_mm": -2}}]}
    below, above = evaluate(read_case(case))["points"]
    assert below["net"]["vertical_base_up_right"] == pytest.approx(3.0)
    assert above["net"]["vertical_base_up_right"] == pytest.approx(0.0)
