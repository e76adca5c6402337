"""Prescriptions as they are written: the notation reader over many written forms, the
sphere field, the trade's way of writing figures, and the add and prism on the rx line.

Sources: the written forms are common practice (how prescriptions and orders are
written in the trade); the 360-degree prism notation follows ISO 8429 as commonly
taught (examiner's view: right eye base in = 0, left eye base in = 180, base up = 90),
with the check values from the Durham Technical Community College opticianry notes on
compounding and resolving prism (R 1.5 BU with 2 BI = 2.5 at 37; L 1.5 BD with 2 BI
= 2.5 at 217) and one derived with the same rule (R 3 BO with 4 BU = 5 at 127).
Expected components of a prism written by angle are derived here from that rule.
"""

from __future__ import annotations

import json
import math
from typing import Any

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from pycore.documents.cases import read_case
from pycore.errors import CaseError
from pycore.interfaces.bridge import handle
from pycore.optics.eyes import Eye
from pycore.optics.notation import parse_prism, parse_sphere, parse_written
from pycore.optics.power import Prescription, written_axis, written_dioptres, written_sphere


def by_angle(amount: float, angle: float, eye: Eye) -> tuple[float, float]:
    """(base_in, base_up) of a prism written as amount @ angle, by the ISO 8429 rule:
    the angle is counted from the examiner's right, which is nasal for the right eye."""
    x, y = amount * math.cos(math.radians(angle)), amount * math.sin(math.radians(angle))
    return (x if eye == "right" else -x, y)


NO = None
# (written, sphere, cylinder, axis, add, (base_in, base_up) or None); right eye.
ACCEPTED: list[tuple[str, float, float, float, float | None, Any]] = [
    # plano
    ("pl", 0, 0, 0, NO, NO),
    ("PL", 0, 0, 0, NO, NO),
    ("plano", 0, 0, 0, NO, NO),
    ("Plano", 0, 0, 0, NO, NO),
    ("0", 0, 0, 0, NO, NO),
    ("0.00", 0, 0, 0, NO, NO),
    ("+0.00", 0, 0, 0, NO, NO),
    ("pl DS", 0, 0, 0, NO, NO),
    # spheres with or without sign, with DS, D or sph
    ("+2.00", 2, 0, 0, NO, NO),
    ("2.00", 2, 0, 0, NO, NO),
    ("2", 2, 0, 0, NO, NO),
    ("-1.25 DS", -1.25, 0, 0, NO, NO),
    ("-1.25DS", -1.25, 0, 0, NO, NO),
    ("1.50 D", 1.5, 0, 0, NO, NO),
    ("+0.50 sph", 0.5, 0, 0, NO, NO),
    ("-3.375 DS", -3.375, 0, 0, NO, NO),
    ("\u22123,25 DS", -3.25, 0, 0, NO, NO),
    ("- 2.00 DS", -2, 0, 0, NO, NO),
    ("+1.00 D.S.", 1, 0, 0, NO, NO),
    # cylinder and axis after x, X, the multiplication sign or *
    ("+2.00 / -0.75 x 180", 2, -0.75, 180, NO, NO),
    ("+2.00 -0.75 X 180", 2, -0.75, 180, NO, NO),
    ("+2.00 -0.75 \u00d7 180", 2, -0.75, 180, NO, NO),
    ("+2.00 -0.75 * 180", 2, -0.75, 180, NO, NO),
    ("-2.00/-1.00x10", -2, -1, 10, NO, NO),
    ("-2.00-1.00x10", -2, -1, 10, NO, NO),
    ("plano / -0.50 x 90", 0, -0.5, 90, NO, NO),
    ("pl -0.50 x 90", 0, -0.5, 90, NO, NO),
    ("1.50 -0.50 x 45", 1.5, -0.5, 45, NO, NO),
    ("+0.25 / +1.25 x 95\u00b0", 0.25, 1.25, 95, NO, NO),
    ("-1.00 / -0.50 axis 90", -1, -0.5, 90, NO, NO),
    ("-1.00 -0.50 @ 90", -1, -0.5, 90, NO, NO),
    ("\u22123,25 / \u22120,75 \u00d7 20", -3.25, -0.75, 20, NO, NO),
    ("-4.00 / -0.50 DC x 180", -4, -0.5, 180, NO, NO),
    # an add on the same line
    ("+1.00 / -0.50 x 90 add +2.50", 1, -0.5, 90, 2.5, NO),
    ("+1.00 DS ADD 2.50", 1, 0, 0, 2.5, NO),
    ("+2.00 ADD2.50", 2, 0, 0, 2.5, NO),
    ("pl Add: +1.75", 0, 0, 0, 1.75, NO),
    ("-1.00 / -0.25 x 5 / add +2.00", -1, -0.25, 5, 2.0, NO),
    ("+3.00 add +2.25 D", 3, 0, 0, 2.25, NO),
    # prism on the same line
    ("-1.00 DS 1.5 BU", -1, 0, 0, NO, (0, 1.5)),
    ("pl 2 BI 1 BU", 0, 0, 0, NO, (2, 1)),
    ("-3.00 DS 3 base out 4 base up", -3, 0, 0, NO, (-3, 4)),
    ("+1.00 / -0.50 x 90, add +2.50, 1.50 BU", 1, -0.5, 90, 2.5, (0, 1.5)),
    ("+0.75 1\u0394 BD", 0.75, 0, 0, NO, (0, -1)),
    ("+0.75 1.5BO", 0.75, 0, 0, NO, (-1.5, 0)),
    ("+0.75 2 base-in", 0.75, 0, 0, NO, (2, 0)),
    ("pl 2.5 @ 37", 0, 0, 0, NO, by_angle(2.5, 37, "right")),
    ("pl 2.5 at 37", 0, 0, 0, NO, by_angle(2.5, 37, "right")),
    ("pl 5 @ 127", 0, 0, 0, NO, by_angle(5, 127, "right")),
    ("+2.00 add +2.00 1 BU + 2 BI", 2, 0, 0, 2.0, (2, 1)),
]

# (written, part of the refusal); each names the field and quotes what it could not read.
REFUSED: list[tuple[str, str]] = [
    ("", "is empty"),
    ("minus two", 'could not read "minus two" as a sphere'),
    ("+2.00 / 0.75 x 180", 'the cylinder "0.75" has no sign'),
    ("+2.00 x 90", '"x 90" gives an axis but no cylinder'),
    ("-2.00 -0.50", 'the cylinder "-0.50" has no axis'),
    ("+2.00 / -0.75 y 90", 'could not read "y 90" after the cylinder "-0.75"'),
    ("+2.00 -0.5 x", "the axis after"),
    ("+2.00 -0.5 x ninety", "the axis after"),
    ("+1.00 / -0.50 x 190", "axis must be between 0 and 180"),
    ("+45.00 DS", "sphere must be between -30 and 30"),
    ("+1.00 add", '"add" needs the add in dioptres'),
    ("+1.00 add 2 add 2", "the add is written twice"),
    ("+1.00 add 7", 'the add "add 7" is outside 0.25 to 6 dioptres'),
    ("1.5 BU", '"1.5 BU" is a prism, not a sphere'),
    ("BU 1.5", 'the line starts with "BU 1.5"'),
    ("+1.00 2 BX", 'could not read "BX" after the prism amount "2"'),
    ("+1.00 -1 BU", 'a prism amount cannot be negative ("-1 BU")'),
    ("+2.00 1.5", 'the prism "1.5" has no base'),
    ("+1 -1 x 90 -1 x 80", '"-1 x 80" is a second cylinder'),
    ("+1.00 DS please", 'could not read "please"'),
    ("+1.00 45 BU", "base_up must be between -30 and 30"),
    ("+" * 250, "too long"),
]


@pytest.mark.parametrize("text, sphere, cylinder, axis, add, prism", ACCEPTED)
def test_accepted_written_forms(text: str, sphere: float, cylinder: float, axis: float,
                                add: float | None, prism: Any) -> None:
    line = parse_written(text, "rx", "right")
    rx = line.prescription
    assert (rx.sphere, rx.cylinder, rx.axis) == pytest.approx((sphere, cylinder, axis))
    assert line.add == (None if add is None else pytest.approx(add))
    if prism is None:
        assert line.prism is None
    else:
        assert line.prism is not None
        assert (line.prism.base_in, line.prism.base_up) == pytest.approx(prism, abs=1e-9)


@pytest.mark.parametrize("text, part", REFUSED)
def test_refused_written_forms(text: str, part: str) -> None:
    with pytest.raises(CaseError) as refused:
        parse_written(text, "right.rx", "right")
    message = refused.value.message
    assert refused.value.field == "right.rx"
    assert message.startswith("right.rx") and part in message, message
    assert message.endswith(".") and "\n" not in message and "Traceback" not in message


def test_at_least_sixty_written_forms() -> None:
    assert len(ACCEPTED) + len(REFUSED) >= 60
    assert len({text for text, *_ in ACCEPTED}) == len(ACCEPTED)


@pytest.mark.parametrize("text", [text for text, *_ in ACCEPTED])
def test_written_back_reads_the_same(text: str) -> None:
    """What the tool writes, it reads back as the same lens, add and prism (to the two
    decimals and whole degrees it writes)."""
    first = parse_written(text, "rx", "right")
    again = parse_written(first.written(), "rx", "right")
    a, b = again.prescription, first.prescription
    assert (a.sphere, a.cylinder) == pytest.approx((b.sphere, b.cylinder), abs=0.005)
    assert a.axis % 180 == pytest.approx(b.axis % 180, abs=0.5)
    assert again.add == first.add
    if first.prism is None:
        assert again.prism is None
    else:
        assert again.prism is not None
        # Written to two decimals: within half a hundredth in each component.
        assert again.prism.base_in == pytest.approx(first.prism.base_in, abs=0.005)
        assert again.prism.base_up == pytest.approx(first.prism.base_up, abs=0.005)


@pytest.mark.parametrize("eye, text, amount, direction", [
    ("right", "1.5 BU 2 BI", 2.5, 37),     # Durham notes
    ("left", "1.5 BD 2 BI", 2.5, 217),     # Durham notes
    ("right", "3 BO 4 BU", 5.0, 127),      # derived with the same rule
])
def test_360_degree_check_values_written(eye: Eye, text: str, amount: float,
                                         direction: float) -> None:
    prism = parse_prism(text, eye)
    assert prism.amount == pytest.approx(amount)
    assert round(prism.direction_360(eye)) == direction
    # ... and the same prism written by its angle reads back to the same components.
    angled = parse_written(f"pl {amount} @ {prism.direction_360(eye)}", "rx", eye).prism
    assert angled is not None
    assert (angled.base_in, angled.base_up) == pytest.approx((prism.base_in, prism.base_up))


def test_360_degree_prism_needs_the_eye() -> None:
    with pytest.raises(CaseError, match="depends on the eye"):
        parse_written("pl 2.5 @ 37", "text")
    left = parse_written("pl 2.5 @ 37", "text", "left").prism
    assert left is not None
    assert (left.base_in, left.base_up) == pytest.approx(by_angle(2.5, 37, "left"))


@pytest.mark.parametrize("text, sphere", [
    ("pl", 0), ("plano", 0), ("0.00", 0), ("+2.00", 2), ("2.00 DS", 2), ("-1.25 D", -1.25),
    ("+0.50 sph", 0.5), ("\u22120,75", -0.75),
])
def test_sphere_field_accepts_written_spheres(text: str, sphere: float) -> None:
    assert parse_sphere(text, "right.sphere") == pytest.approx(sphere)


@pytest.mark.parametrize("text, part", [
    ("+2.00 / -0.50 x 90", "does not belong in the sphere field"),
    ("abc", 'could not read "abc" as a sphere'),
    ("", "is empty"),
    ("+40", "between -30 and 30"),
])
def test_sphere_field_refusals(text: str, part: str) -> None:
    with pytest.raises(CaseError) as refused:
        parse_sphere(text, "right.sphere")
    assert refused.value.field == "right.sphere" and part in refused.value.message


@pytest.mark.parametrize("value, written", [
    (1.0, "+1.00"), (-0.25, "-0.25"), (0.125, "+0.13"), (-0.125, "-0.13"), (2.5, "+2.50"),
    (-0.001, "+0.00"), (10.0, "+10.00"),
])
def test_dioptres_written_the_trade_way(value: float, written: str) -> None:
    """Common practice: sign always, two decimals; half up, never "-0.00"."""
    assert written_dioptres(value) == written


def test_prescriptions_written_the_trade_way() -> None:
    """Common practice: "+1.00 / -0.50 x 90"; "-1.25 DS"; zero sphere "plano"; the axis a
    whole number of degrees, 180 rather than 0."""
    assert Prescription(1, -0.5, 90).written() == "+1.00 / -0.50 x 90"
    assert Prescription(-1.25).written() == "-1.25 DS"
    assert Prescription(0).written() == "plano"
    assert Prescription(0, -0.5, 0).written() == "plano / -0.50 x 180"
    assert Prescription(2, -0.75, 89.5).written() == "+2.00 / -0.75 x 90"
    assert written_sphere(0.0) == "plano" and written_sphere(-0.0) == "plano"
    assert written_axis(0.4) == "180" and written_axis(179.5) == "180"


@settings(max_examples=3000, deadline=None)
@given(st.floats(allow_nan=False, allow_infinity=False, min_value=-1e6, max_value=1e6)
       | st.integers(-40000, 40000).map(lambda n: n / 1000)
       | st.integers(-4000, 4000).map(lambda n: n / 200))
def test_written_figures_round_as_decimal_does(value: float) -> None:
    """Powers and axes are rounded half up in integers; Python's decimal module
    (ROUND_HALF_UP on the shortest decimal form, the General Decimal Arithmetic
    specification) is the independent reference. Thousandths and exact halves of a
    hundredth are where half up and float rounding part."""
    from decimal import ROUND_HALF_UP, Decimal

    exact = Decimal(repr(value)).quantize(Decimal("0.01"), rounding=ROUND_HALF_UP)
    assert written_dioptres(value) == ("+0.00" if exact == 0 else f"{exact:+.2f}")
    if 0 <= value <= 180:
        whole = int(Decimal(repr(value)).quantize(Decimal("1"), rounding=ROUND_HALF_UP))
        assert written_axis(value) == str(180 if whole == 0 else whole)


# --------------------------------------------------------------------------- in a case

POINT = {"name": "reading", "right": {"in_mm": 2, "up_mm": -10},
         "left": {"in_mm": 2, "up_mm": -10}}


def case_with(right: dict[str, Any]) -> dict[str, Any]:
    return {"right": right, "left": {"sphere": -1.0}, "points": [POINT]}


def test_rx_line_carries_add_and_prism_into_the_lens() -> None:
    lens = read_case(case_with({"rx": "+1.00 / -0.50 x 90 add +2.00 1.5 BU"})).right
    assert lens.add == pytest.approx(2.0)
    assert (lens.prism.base_in, lens.prism.base_up) == pytest.approx((0, 1.5))
    # Agreeing separate fields are accepted.
    same = read_case(case_with({"rx": "+1.00 ADD 2.00 1.5 BU", "add": 2.0,
                                "prism": {"base_up": 1.5}})).right
    assert same.add == pytest.approx(2.0) and same.prism.base_up == pytest.approx(1.5)


@pytest.mark.parametrize("right, field, parts", [
    ({"rx": "+1.00 add 2.50", "add": 2.0}, "right.add", ("2.00", "2.50")),
    ({"rx": "+1.00 1.5 BU", "prism": "1 BU"}, "right.prism", ("1.00 base up", "1.50 base up")),
])
def test_rx_line_conflicts_name_both(right: dict[str, Any], field: str,
                                     parts: tuple[str, str]) -> None:
    with pytest.raises(CaseError) as refused:
        read_case(case_with(right))
    assert refused.value.field == field
    assert all(part in refused.value.message for part in parts), refused.value.message
    assert "right.rx" in refused.value.message


def test_sphere_field_as_text_in_a_case() -> None:
    assert read_case(case_with({"sphere": "pl", "cylinder": -0.5, "axis": 90})).right \
        .prescription == Prescription(0, -0.5, 90)
    assert read_case(case_with({"sphere": "+2.00 DS"})).right.prescription == Prescription(2)


def reply(action: str, payload: dict[str, Any]) -> dict[str, Any]:
    answer: dict[str, Any] = json.loads(handle(json.dumps({"action": action,
                                                           "payload": payload})))
    return answer


def test_describe_prescription_action() -> None:
    answer = reply("describe_prescription", {"text": "2 -0.5x90 ADD 2.50 1.5 BU",
                                             "eye": "right"})
    assert answer["ok"], answer
    result = answer["result"]
    assert (result["sphere"], result["cylinder"], result["axis"]) == (2.0, -0.5, 90.0)
    assert result["add"] == 2.5 and result["prism"]["base_up"] == 1.5
    assert result["written"] == "+2.00 / -0.50 x 90"
    assert result["written_line"] == "+2.00 / -0.50 x 90, add +2.50, 1.50 BU"
    # Transposition (common practice): sphere + cylinder, cylinder sign changed, axis +90.
    assert result["transposed_written"] == "+1.50 / +0.50 x 180"
    # Meridian powers: S + C sin^2(meridian - axis).
    assert result["horizontal_power"] == pytest.approx(2 - 0.5)
    assert result["vertical_power"] == pytest.approx(2.0)
    plain = reply("describe_prescription", {"text": "-1.25 DS"})["result"]
    assert plain["add"] is None and plain["prism"] is None
    refused = reply("describe_prescription", {"text": "+2.00 x 90"})
    assert not refused["ok"] and '"x 90"' in refused["error"]["message"]


def test_describe_sphere_action() -> None:
    assert reply("describe_sphere", {"text": "2 DS"})["result"] == \
        {"sphere": 2.0, "written": "+2.00"}
    assert reply("describe_sphere", {"text": "pl"})["result"]["written"] == "plano"
    assert not reply("describe_sphere", {"text": "two"})["ok"]
