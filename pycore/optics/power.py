"""Sphero-cylindrical prescriptions and their dioptric power matrix.

Powers in dioptres, axis in degrees (standard notation, 0-180, the same for
both eyes). The power matrix is written in a frame with x to the examiner's
right (the wearer's left) and y up:

    F = [[S + C sin^2 a, -C sin a cos a], [-C sin a cos a, S + C cos^2 a]]
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cached_property, lru_cache

from pycore.validation import in_range

SPHERE_LIMIT_D = 30.0
CYLINDER_LIMIT_D = 15.0


@dataclass(frozen=True)
class PowerMatrix:
    """A symmetric 2x2 dioptric power matrix [[xx, xy], [xy, yy]] (dioptres)."""

    xx: float
    xy: float
    yy: float

    def times(self, x: float, y: float) -> tuple[float, float]:
        """F r for a displacement r = (x, y)."""
        return (self.xx * x + self.xy * y, self.xy * x + self.yy * y)

    @property
    def determinant(self) -> float:
        return self.xx * self.yy - self.xy * self.xy

    def __add__(self, other: PowerMatrix) -> PowerMatrix:
        return PowerMatrix(self.xx + other.xx, self.xy + other.xy, self.yy + other.yy)

    def __sub__(self, other: PowerMatrix) -> PowerMatrix:
        return PowerMatrix(self.xx - other.xx, self.xy - other.xy, self.yy - other.yy)

    @classmethod
    def spherical(cls, power: float) -> PowerMatrix:
        return cls(power, 0.0, power)


@dataclass(frozen=True)
class Prescription:
    """A sphero-cylinder S / C x axis (dioptres, degrees 0-180).

    >>> Prescription(+2.0, -0.75, 180).transposed()
    Prescription(sphere=1.25, cylinder=0.75, axis=90.0)
    """

    sphere: float
    cylinder: float = 0.0
    axis: float = 0.0

    def __post_init__(self) -> None:
        in_range(self.sphere, "sphere", -SPHERE_LIMIT_D, SPHERE_LIMIT_D, "dioptres")
        in_range(self.cylinder, "cylinder", -CYLINDER_LIMIT_D, CYLINDER_LIMIT_D, "dioptres")
        in_range(self.axis, "axis", 0, 180, "degrees")
        object.__setattr__(self, "sphere", float(self.sphere) + 0.0)
        object.__setattr__(self, "cylinder", float(self.cylinder) + 0.0)
        object.__setattr__(self, "axis", float(self.axis) + 0.0)

    def transposed(self) -> Prescription:
        """The same lens with the cylinder in the other sign form."""
        if self.cylinder == 0:
            return self
        axis = self.axis + 90 if self.axis <= 90 else self.axis - 90
        return Prescription(self.sphere + self.cylinder, -self.cylinder, axis)

    def in_minus_cylinder(self) -> Prescription:
        return self.transposed() if self.cylinder > 0 else self

    def in_plus_cylinder(self) -> Prescription:
        return self.transposed() if self.cylinder < 0 else self

    @cached_property
    def power_matrix(self) -> PowerMatrix:
        """The dioptric power matrix, frame x to the examiner's right, y up (worked out
        once: the prescription is immutable)."""
        a = math.radians(self.axis)
        s, c = math.sin(a), math.cos(a)
        cyl = self.cylinder
        # + 0.0: no negative zero (-cyl s c is -0.0 for a sphere).
        return PowerMatrix(self.sphere + cyl * s * s + 0.0, -cyl * s * c + 0.0,
                           self.sphere + cyl * c * c + 0.0)

    def power_in_meridian(self, meridian_deg: float) -> float:
        """Curvital power along a meridian (degrees): S + C sin^2(meridian - axis)."""
        return self.sphere + self.cylinder * math.sin(math.radians(meridian_deg - self.axis)) ** 2

    @property
    def vertical_power(self) -> float:
        """Power in the vertical (90) meridian, dioptres."""
        return self.power_in_meridian(90)

    @property
    def horizontal_power(self) -> float:
        """Power in the horizontal (180) meridian, dioptres."""
        return self.power_in_meridian(0)

    @property
    def mean_sphere(self) -> float:
        return self.sphere + self.cylinder / 2

    def written(self) -> str:
        """The prescription the trade's way: ``+1.25 / -0.75 x 90``, ``-1.25 DS``,
        ``plano / -0.50 x 90``, ``plano`` (sign always, two decimals, axis a whole
        number of degrees with 180 for 0)."""
        sphere = written_sphere(self.sphere)
        if _is_zero(self.cylinder):
            return sphere if sphere == PLANO else f"{sphere} DS"
        return f"{sphere} / {written_dioptres(self.cylinder)} x {written_axis(self.axis)}"


PLANO = "plano"
"""How a zero sphere is written (common practice; the reader also takes pl, 0, 0.00)."""


def _is_zero(value: float) -> bool:
    return abs(value) < 0.005


def _scaled_half_up(value: float, places: int) -> int:
    """``value`` as written by ``repr`` (its shortest decimal form), times ten to the
    ``places``, rounded half away from zero: exactly what ``decimal``'s ROUND_HALF_UP
    gives, in integers (so the browser's first result need not load ``decimal``)."""
    text = repr(float(value))
    sign = -1 if text[0] == "-" else 1
    mantissa, _, exponent = text.lstrip("-").partition("e")
    whole, _, fraction = mantissa.partition(".")
    digits = int(whole + fraction)
    shift = int(exponent or 0) - len(fraction) + places   # scaled value = digits * 10**shift
    unit: int = 10 ** abs(shift)
    if shift >= 0:
        return sign * digits * unit
    kept, left = divmod(digits, unit)
    return sign * (kept + (2 * left >= unit))


@lru_cache(maxsize=32)
def written_dioptres(value: float) -> str:
    """A power the trade's way: sign always, two decimals, half up (``+1.00``,
    ``-0.13``); zero is ``+0.00``, never ``-0.00``. (The last few are kept: a lens
    writes the same powers at every keystroke that leaves it alone.)"""
    hundredths = _scaled_half_up(value, 2)
    if hundredths == 0:
        return "+0.00"
    whole, cents = divmod(abs(hundredths), 100)
    return f"{'+' if hundredths > 0 else '-'}{whole}.{cents:02d}"


def written_sphere(value: float) -> str:
    """A sphere: ``plano`` when it rounds to zero, else as ``written_dioptres``."""
    text = written_dioptres(value)
    return PLANO if text == "+0.00" else text


@lru_cache(maxsize=32)
def written_axis(axis: float) -> str:
    """An axis as a whole number of degrees, half up, 180 for 0 (common practice)."""
    whole = _scaled_half_up(axis, 0)
    return str(180 if whole == 0 else whole)
