"""Invariants of the core, checked with Hypothesis (over 10,000 examples a run)."""

from __future__ import annotations

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from pycore.optics.eyes import Eye
from pycore.optics.notation import parse_prescription, parse_prism
from pycore.optics.power import Prescription
from pycore.optics.prentice import induced_prism
from pycore.optics.prism import Prism, split_between_eyes
from pycore.spectacles.binocular import NetPrism
from pycore.spectacles.decentration import decentration_for_prism
from pycore.spectacles.gaze import LensPoint
from pycore.spectacles.lens import Lens

EXAMPLES = 1500

spheres = st.floats(-20, 20, allow_nan=False)
cylinders = st.floats(-6, 6, allow_nan=False)
axes = st.floats(0, 180, allow_nan=False)
mm = st.floats(-20, 20, allow_nan=False)
eyes: st.SearchStrategy[Eye] = st.sampled_from(["right", "left"])
prescriptions = st.builds(Prescription, spheres, cylinders, axes)
points = st.builds(LensPoint, mm, mm)
prisms = st.builds(Prism, st.floats(-10, 10), st.floats(-10, 10))

TOL = 1e-9


def close(a: float, b: float, scale: float = 1.0) -> bool:
    return math.isclose(a, b, abs_tol=TOL * max(1.0, scale))


@settings(max_examples=EXAMPLES, deadline=None)
@given(prescriptions, points, points, st.floats(-1.5, 1.5), eyes)
def test_induced_prism_is_linear_in_displacement(rx: Prescription, p: LensPoint, q: LensPoint,
                                                 k: float, eye: Eye) -> None:
    f = rx.power_matrix
    combined = LensPoint((p.in_mm + k * q.in_mm) / 2.5, (p.up_mm + k * q.up_mm) / 2.5)
    lhs = induced_prism(f, combined, eye)
    rhs = (induced_prism(f, p, eye) + induced_prism(f, q, eye).scaled(k)).scaled(1 / 2.5)
    assert close(lhs.base_in, rhs.base_in, 100) and close(lhs.base_up, rhs.base_up, 100)


@settings(max_examples=EXAMPLES, deadline=None)
@given(spheres, cylinders, axes, points)
def test_mirror_symmetry_between_eyes(s: float, c: float, a: float, p: LensPoint) -> None:
    """A right lens S/C x a and its mirror image, the left lens S/C x (180 - a), give the
    same base in and base up at the same nasal/up position."""
    right = induced_prism(Prescription(s, c, a).power_matrix, p, "right")
    left = induced_prism(Prescription(s, c, (180 - a) % 180).power_matrix, p, "left")
    assert close(right.base_in, left.base_in, 100) and close(right.base_up, left.base_up, 100)


@settings(max_examples=EXAMPLES, deadline=None)
@given(prescriptions, points, eyes)
def test_transposition_changes_nothing(rx: Prescription, p: LensPoint, eye: Eye) -> None:
    a = induced_prism(rx.power_matrix, p, eye)
    b = induced_prism(rx.transposed().power_matrix, p, eye)
    assert close(a.base_in, b.base_in, 100) and close(a.base_up, b.base_up, 100)
    assert rx.transposed().transposed() == rx or rx.cylinder == 0 or close(
        rx.transposed().transposed().axis % 180, rx.axis % 180)


@settings(max_examples=EXAMPLES, deadline=None)
@given(prescriptions, prescriptions, prisms, prisms, points, points)
def test_swapping_eyes_negates_the_vertical_net(r: Prescription, l_: Prescription,
                                                 pr: Prism, pl: Prism, a: LensPoint,
                                                 b: LensPoint) -> None:
    """Put the right lens before the left eye and vice versa (mirrored, so each eye meets
    the same prism as before): the vertical net changes sign, the horizontal one stays."""
    right, left = Lens(r, pr), Lens(l_, pl)
    net = NetPrism.between(right.prism_at(a, "right").total, left.prism_at(b, "left").total)
    mirrored_r = Lens(Prescription(r.sphere, r.cylinder, (180 - r.axis) % 180), pr)
    mirrored_l = Lens(Prescription(l_.sphere, l_.cylinder, (180 - l_.axis) % 180), pl)
    swapped = NetPrism.between(mirrored_l.prism_at(b, "right").total,
                               mirrored_r.prism_at(a, "left").total)
    assert close(swapped.vertical_base_up_right, -net.vertical_base_up_right, 100)
    assert close(swapped.horizontal_base_in, net.horizontal_base_in, 100)


@settings(max_examples=EXAMPLES, deadline=None)
@given(st.floats(0, 25), st.floats(0, 359.99), eyes)
def test_compound_resolve_round_trip(amount: float, direction: float, eye: Eye) -> None:
    prism = Prism.from_direction(amount, direction, eye)
    assert close(prism.amount, amount, 25)
    again = Prism.from_direction(prism.amount, prism.direction_360(eye), eye)
    assert close(again.base_in, prism.base_in, 25) and close(again.base_up, prism.base_up, 25)
    if amount > 1e-6:
        diff = abs(prism.direction_360(eye) - direction) % 360
        assert min(diff, 360 - diff) < 1e-6


@settings(max_examples=EXAMPLES, deadline=None)
@given(prescriptions, st.floats(-4, 4), st.floats(-4, 4), eyes)
def test_decentration_round_trip(rx: Prescription, base_in: float, base_up: float,
                                 eye: Eye) -> None:
    """Decentring as computed produces the prescribed prism at the reference point."""
    f = rx.power_matrix
    if abs(f.determinant) < 0.25:  # near-singular lenses are tested separately
        return
    wanted = Prism(base_in, base_up)
    try:
        shift = decentration_for_prism(rx, wanted, eye)
    except ValueError:
        return  # would leave the lens: refused, by design
    # The optical centre at `shift`; the reference point is at 0 relative to it.
    got = induced_prism(f, LensPoint(-shift.in_mm, -shift.up_mm), eye)
    assert close(got.base_in, base_in, 10) and close(got.base_up, base_up, 10)


@settings(max_examples=EXAMPLES, deadline=None)
@given(st.integers(-80, 80), st.integers(-24, 24), st.integers(1, 180), st.booleans())
def test_written_prescription_round_trip(s4: int, c4: int, axis: int, transpose: bool) -> None:
    rx = Prescription(s4 / 4, c4 / 4, axis)
    if transpose:
        rx = rx.transposed()
    again = parse_prescription(rx.written())
    assert again.sphere == pytest.approx(rx.sphere)
    assert again.cylinder == pytest.approx(rx.cylinder)
    if rx.cylinder:
        assert again.axis % 180 == pytest.approx(rx.axis % 180)


@settings(max_examples=EXAMPLES, deadline=None)
@given(st.floats(-8, 8), st.floats(-8, 8), st.floats(0, 1), eyes)
def test_written_prism_and_split_round_trip(h: float, v: float, share: float,
                                            eye: Eye) -> None:
    prism = Prism(round(h, 2), round(v, 2))
    again = parse_prism(prism.in_words(), eye)
    assert again.base_in == pytest.approx(prism.base_in, abs=0.0051)
    assert again.base_up == pytest.approx(prism.base_up, abs=0.0051)
    right, left = split_between_eyes(h, v, share)
    net = NetPrism.between(right, left)
    assert close(net.horizontal_base_in, h, 10) and close(net.vertical_base_up_right, v, 10)
