"""Prism before one eye: components, amount and direction, and the trade's words.

A ``Prism`` holds two signed components in prism dioptres: ``base_in``
(negative = base out) and ``base_up`` (negative = base down). The direction,
where one angle is wanted, is the 360-degree base notation seen by the
examiner: right eye base in = 0, left eye base in = 180, base up = 90, base
down = 270.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import dataclass

from pycore.optics.eyes import Eye, nasal_sign
from pycore.validation import finite_number, in_range

PRISM_LIMIT = 30.0
"""Largest prism component accepted before one eye, prism dioptres."""

_WORDS_EPSILON = 0.005


@dataclass(frozen=True)
class Prism:
    """Prism before one eye (prism dioptres): base in (+) / out (-), up (+) / down (-).

    >>> p = Prism.from_direction(2.5, 36.87, "right")
    >>> round(p.base_in, 2), round(p.base_up, 2)
    (2.0, 1.5)
    """

    base_in: float = 0.0
    base_up: float = 0.0

    def __post_init__(self) -> None:
        base_in, base_up = self.base_in, self.base_up
        # Finite floats (x - x is 0 only for them) pass at once; anything else is checked
        # and refused by finite_number with its message.
        if not (base_in.__class__ is float and base_up.__class__ is float
                and base_in - base_in == 0.0 and base_up - base_up == 0.0):
            base_in = finite_number(base_in, "base_in", "prism dioptres")
            base_up = finite_number(base_up, "base_up", "prism dioptres")
        # Stored without a negative zero (-0.0 + 0.0 is 0.0), so none reaches a result.
        _set(self, "base_in", base_in + 0.0)
        _set(self, "base_up", base_up + 0.0)

    @classmethod
    def prescribed(cls, base_in: float, base_up: float) -> Prism:
        """A prescribed prism, each component within the accepted limit."""
        in_range(base_in, "base_in", -PRISM_LIMIT, PRISM_LIMIT, "prism dioptres")
        in_range(base_up, "base_up", -PRISM_LIMIT, PRISM_LIMIT, "prism dioptres")
        return cls(base_in, base_up)

    @classmethod
    def from_direction(cls, amount: float, direction_360: float, eye: Eye) -> Prism:
        """From an amount and a base direction in 360-degree notation for ``eye``."""
        amount = in_range(amount, "amount", 0, PRISM_LIMIT, "prism dioptres")
        direction = in_range(direction_360, "base_360", 0, 360, "degrees")
        rad = math.radians(direction)
        x, y = amount * math.cos(rad), amount * math.sin(rad)
        return cls(x * nasal_sign(eye), y)

    @classmethod
    def from_examiner_frame(cls, x: float, y: float, eye: Eye) -> Prism:
        """From a base vector in the examiner's frame (x to the examiner's right, y up)."""
        return cls(x * nasal_sign(eye), y)

    @classmethod
    def trusted(cls, base_in: float, base_up: float) -> Prism:
        """A prism from components that are finite floats already (sums and products of
        validated values): built without checking them again; no negative zero."""
        prism = _new(cls)
        _set(prism, "base_in", base_in + 0.0)
        _set(prism, "base_up", base_up + 0.0)
        return prism

    def examiner_frame(self, eye: Eye) -> tuple[float, float]:
        """The base vector (x to the examiner's right, y up) for ``eye``."""
        return (self.base_in * nasal_sign(eye), self.base_up)

    @property
    def amount(self) -> float:
        """Resultant prism, prism dioptres."""
        return math.hypot(self.base_in, self.base_up)

    def direction_360(self, eye: Eye) -> float:
        """Base direction in 360-degree notation for ``eye`` (0 for no prism)."""
        x, y = self.examiner_frame(eye)
        if x == 0 and y == 0:
            return 0.0
        angle = math.degrees(math.atan2(y, x)) % 360.0
        return 0.0 if angle >= 359.9999999 else angle

    def __add__(self, other: Prism) -> Prism:
        return Prism.trusted(self.base_in + other.base_in, self.base_up + other.base_up)

    def __sub__(self, other: Prism) -> Prism:
        return Prism.trusted(self.base_in - other.base_in, self.base_up - other.base_up)

    def __neg__(self) -> Prism:
        return Prism.trusted(-self.base_in, -self.base_up)

    def scaled(self, factor: float) -> Prism:
        return Prism(self.base_in * factor, self.base_up * factor)

    def in_words(self) -> str:
        """The trade's words: ``2.00 base in, 1.50 base up`` (or ``no prism``)."""
        parts = []
        if abs(self.base_in) >= _WORDS_EPSILON:
            parts.append(f"{abs(self.base_in):.2f} base {'in' if self.base_in > 0 else 'out'}")
        if abs(self.base_up) >= _WORDS_EPSILON:
            parts.append(f"{abs(self.base_up):.2f} base {'up' if self.base_up > 0 else 'down'}")
        return ", ".join(parts) if parts else "no prism"

    def in_360_words(self, eye: Eye) -> str:
        """Amount and direction: ``2.50 at 37°`` (360-degree notation)."""
        if self.amount < _WORDS_EPSILON:
            return "no prism"
        return f"{self.amount:.2f} at {self.direction_360(eye):.0f}°"

    def as_dict(self, eye: Eye) -> dict[str, float | str]:
        """Components, amount, direction and words (a new dict each call)."""
        base_in, base_up = self.base_in, self.base_up
        if not base_in and not base_up:
            return dict(_NO_PRISM_DICT)  # the most usual part: the same every time
        amount = math.hypot(base_in, base_up)
        direction = self.direction_360(eye)
        return {
            "base_in": base_in,
            "base_up": base_up,
            "amount": amount,
            "direction_360": direction,
            "in_words": self.in_words(),
            "in_360_words": (f"{amount:.2f} at {direction:.0f}°" if amount >= _WORDS_EPSILON
                             else "no prism"),
        }


_new = object.__new__
_set = object.__setattr__


_NO_PRISM_DICT: dict[str, float | str] = {
    "base_in": 0.0, "base_up": 0.0, "amount": 0.0, "direction_360": 0.0,
    "in_words": "no prism", "in_360_words": "no prism"}
"""``Prism().as_dict(eye)``, the same for either eye."""


def combine(prisms: Iterable[Prism]) -> Prism:
    """Several thin prisms before one eye: their components add (vector sum).

    Loose trial prisms stacked in the same direction do not add this way;
    this is the rule for prism worked into or induced by a lens.
    """
    total = Prism()
    for prism in prisms:
        total = total + prism
    return total


def split_between_eyes(
    net_horizontal_base_in: float, net_vertical_base_up_right: float, right_share: float = 0.5
) -> tuple[Prism, Prism]:
    """Split a binocular prism between the eyes, ``right_share`` of it before the right.

    Horizontal: base in before both eyes adds up, so each eye takes its share
    of the base-in total. Vertical: base up before the right eye is the same as
    base down before the left, so the right takes base up and the left base
    down. Returns (right, left).
    """
    share = in_range(right_share, "right_share", 0, 1)
    right = Prism(net_horizontal_base_in * share, net_vertical_base_up_right * share)
    left = Prism(
        net_horizontal_base_in * (1 - share), -net_vertical_base_up_right * (1 - share)
    )
    return right, left
