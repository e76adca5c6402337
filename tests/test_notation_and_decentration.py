"""Written prescriptions and prisms, powers in a meridian, and decentration for prism."""

from __future__ import annotations

import numpy as np
import pytest
from reference import power_matrix

from pycore.errors import CaseError
from pycore.optics.notation import parse_prescription, parse_prism
from pycore.optics.power import Prescription
from pycore.optics.prism import Prism, combine, split_between_eyes
from pycore.spectacles.decentration import decentration_for_prism


@pytest.mark.parametrize("text, sphere, cylinder, axis", [
    ("+2.00 / -0.75 x 180", 2.0, -0.75, 180),
    ("-1.25 DS", -1.25, 0, 0),
    ("plano / -0.50 x 90", 0, -0.5, 90),
    ("+1.50 -0.50 x 45", 1.5, -0.5, 45),
    ("-2.00/-1.00x10", -2.0, -1.0, 10),
    ("\u22123,25 / \u22120,75 \u00d7 20", -3.25, -0.75, 20),
    ("pl", 0, 0, 0),
    ("+0.25 / +1.25 x 95\u00b0", 0.25, 1.25, 95),
])
def test_written_prescriptions(text: str, sphere: float, cylinder: float, axis: float) -> None:
    rx = parse_prescription(text)
    assert (rx.sphere, rx.cylinder, rx.axis) == (sphere, cylinder, axis)


def test_transposition() -> None:
    """Common practice: sum sphere and cylinder, change the cylinder's sign, turn the
    axis by 90 degrees."""
    assert Prescription(2.0, -0.75, 180).transposed() == Prescription(1.25, 0.75, 90)
    assert Prescription(-3.0, 1.0, 100).transposed() == Prescription(-2.0, -1.0, 10)
    assert Prescription(2.0, -0.75, 180).transposed().written() == "+1.25 / +0.75 x 90"


@pytest.mark.parametrize("meridian", [0, 30, 45, 90, 120, 179])
def test_power_in_meridian_against_numpy(meridian: float) -> None:
    """n^T F n with the reference matrix (tests/reference.py) is the curvital power."""
    rx = Prescription(-2.0, -1.5, 25)
    n = np.array([np.cos(np.radians(meridian)), np.sin(np.radians(meridian))])
    assert rx.power_in_meridian(meridian) == pytest.approx(
        float(n @ power_matrix(-2.0, -1.5, 25) @ n))


@pytest.mark.parametrize("text, base_in, base_up", [
    ("1.5 BU", 0, 1.5), ("2 BI", 2, 0), ("3 BO", -3, 0), ("1 BD", 0, -1),
    ("1.5 BU 2 BI", 2, 1.5), ("3 base out, 4 base up", -3, 4), ("0.5\u0394 BD", 0, -0.5),
    ("2 BI and 2 BO", 0, 0), ("", 0, 0),
])
def test_written_prisms(text: str, base_in: float, base_up: float) -> None:
    prism = parse_prism(text, "left")
    assert prism.base_in == pytest.approx(base_in) and prism.base_up == pytest.approx(base_up)


def test_written_prism_in_360_notation_depends_on_the_eye() -> None:
    """360-degree notation (ISO 8429, examiner's view): 0 is base in for the right eye
    and base out for the left."""
    assert parse_prism("2 @ 0", "right").base_in == pytest.approx(2)
    assert parse_prism("2 @ 0", "left").base_in == pytest.approx(-2)
    assert parse_prism("2 at 270", "left").base_up == pytest.approx(-2)


def test_prisms_before_one_eye_combine_as_vectors() -> None:
    """Common practice: prisms before one eye combine by their components."""
    total = combine([Prism(2, 0), Prism(0, 1.5), Prism(-0.5, 0)])
    assert (total.base_in, total.base_up) == (1.5, 1.5)


def test_split_vertical_prism_between_the_eyes() -> None:
    """Common practice: 2 base up before the right eye split equally is 1 BU right and
    1 BD left; 4 base out in total split equally is 2 BO each."""
    right, left = split_between_eyes(-4.0, 2.0)
    assert (right.base_in, right.base_up) == (-2.0, 1.0)
    assert (left.base_in, left.base_up) == (-2.0, -1.0)


def test_decentration_for_spherical_lens() -> None:
    """Prentice's rule (published law): 2 base in from a +4.00 lens needs 5 mm in; from a
    -4.00 lens 5 mm out."""
    assert decentration_for_prism(Prescription(4), Prism(2, 0), "right").in_mm == \
        pytest.approx(5)
    assert decentration_for_prism(Prescription(-4), Prism(2, 0), "left").in_mm == \
        pytest.approx(-5)


def test_decentration_for_oblique_cylinder_solves_both_meridians() -> None:
    rx, wanted = Prescription(3, -2, 30), Prism(1, -1)
    shift = decentration_for_prism(rx, wanted, "right")
    # Independent check: F c = P with the reference matrix, c in cm (examiner's frame).
    p = power_matrix(3, -2, 30) @ np.array([shift.in_mm, shift.up_mm]) / 10
    assert p == pytest.approx([1, -1])


def test_plano_cylinder_along_its_axis_cannot_give_prism() -> None:
    with pytest.raises(CaseError, match="no power along its axis meridian"):
        decentration_for_prism(Prescription(0, 2, 90), Prism(0, 1), "right")
    shift = decentration_for_prism(Prescription(0, 2, 90), Prism(1, 0), "right")
    assert shift.in_mm == pytest.approx(5)


def test_plano_lens_cannot_give_prism() -> None:
    with pytest.raises(CaseError, match="plano lens has no power"):
        decentration_for_prism(Prescription(0), Prism(1, 0), "left")


def test_decentration_off_the_lens_is_refused() -> None:
    with pytest.raises(CaseError, match="off any lens"):
        decentration_for_prism(Prescription(0.5), Prism(5, 0), "right")


def test_power_does_not_read_notation() -> None:
    """Reading (notation) builds on power; power, which writes, never imports the reader."""
    import ast
    from pathlib import Path

    import pycore.optics.power

    tree = ast.parse(Path(pycore.optics.power.__file__).read_text())
    imported = {node.module for node in ast.walk(tree)
                if isinstance(node, ast.ImportFrom) and node.module}
    assert not any(name.endswith("notation") for name in imported)
