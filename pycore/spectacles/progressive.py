"""Progressive lenses: fitting cross, prism reference point, corridor and near zone,
and the prism the addition brings along them.

Positions are millimetres from the eye's distance reference point, ``in_mm``
toward the nose and ``up_mm`` upward. For a progressive lens the distance
reference point is its *prism reference point* (PRP): where the prescribed and
thinning prism are found and where the distance power has its optical centre,
so Prentice's rule for the distance power keeps the case format's meaning. The
*fitting cross*, the point before the pupil in the primary position, lies
``prism_reference_below_cross_mm`` above the PRP; the *near reference point*
``near_depth_mm`` below the fitting cross and ``near_inset_mm`` toward the nose.
An order gives the fitting-cross height (the case's fitting height); the PRP lies
the design's stated ``prism_reference_below_cross_mm`` below it (pycore.spectacles.heights).

The model of the addition is this project's own (designs differ and are not
published in this form). Along the corridor the add power grows with a cubic
ease, a(t) = 3t^2 - 2t^3, from nothing at the PRP (t = 0) to the full add at the
near reference point (t = 1), and stays full below it. The add is treated as
locally spherical: its vertical prism at a height y is the add power integrated
from the PRP down to y (Prentice's rule in differential form, dP/dy = -A(y)),
base up for a plus add and nothing at or above the PRP; sideways from the
corridor line, which moves toward the nose with the same ease to the near
inset, it induces horizontal prism -A(y) x (x from the corridor line, cm). Away
from the corridor real surfaces carry unwanted cylinder: figures there are
estimates.

Thinning prism is base-down prism ground equally before both eyes (yoked): it
shows at every point of each lens and cancels in the binocular vertical net.
Typical amount about 0.6 x add (Meister, 1998, on progressive lens fitting).
"""

from __future__ import annotations

from dataclasses import dataclass

from pycore.errors import CaseError
from pycore.optics.prism import Prism
from pycore.spectacles.gaze import LensPoint
from pycore.validation import in_range

DEFAULT_PRISM_REFERENCE_BELOW_CROSS_MM = 4.0
"""Common practice: the PRP is usually 2-4 mm below the fitting cross (each design
marks its own)."""
DEFAULT_NEAR_DEPTH_MM = 16.0
"""From memory: near reference points of common designs lie about 14-18 mm below the
fitting cross. A demo default; give the design's own figure."""
DEFAULT_NEAR_INSET_MM = 2.5
"""From memory: designs inset the near zone by about 2-3 mm. A demo default."""
THINNING_PRISM_PER_ADD = 0.6
"""Thinning prism about 0.6 x add, base down before both eyes (Meister, 1998)."""
MIN_CORRIDOR_MM = 4.0


def _ease(t: float) -> float:
    """Fraction of the add reached a fraction ``t`` of the way down the corridor."""
    return t * t * (3.0 - 2.0 * t)


def _ease_integral(t: float) -> float:
    """Integral of the ease from 0 to ``t`` (0 <= t <= 1): t^3 - t^4 / 2."""
    return t ** 3 - t ** 4 / 2.0


@dataclass(frozen=True)
class Progressive:
    """A progressive design before one eye (mm; prism dioptres for the thinning prism).

    >>> p = Progressive(prism_reference_below_cross_mm=4, near_depth_mm=16)
    >>> p.fitting_cross_up_mm, p.near_point_up_mm, p.corridor_mm
    (4.0, -12.0, 12.0)
    """

    prism_reference_below_cross_mm: float = DEFAULT_PRISM_REFERENCE_BELOW_CROSS_MM
    near_depth_mm: float = DEFAULT_NEAR_DEPTH_MM
    near_inset_mm: float = DEFAULT_NEAR_INSET_MM
    thinning_prism_base_down: float = 0.0

    def __post_init__(self) -> None:
        in_range(self.prism_reference_below_cross_mm, "prism_reference_below_cross_mm",
                 0, 8, "mm")
        in_range(self.near_depth_mm, "near_depth_mm", 8, 30, "mm")
        in_range(self.near_inset_mm, "near_inset_mm", 0, 6, "mm")
        in_range(self.thinning_prism_base_down, "thinning_prism_base_down", 0, 5,
                 "prism dioptres")
        if self.corridor_mm < MIN_CORRIDOR_MM:
            raise CaseError(
                "near_depth_mm",
                f"near_depth_mm ({self.near_depth_mm:g}) must be at least "
                f"{MIN_CORRIDOR_MM:g} mm more than prism_reference_below_cross_mm "
                f"({self.prism_reference_below_cross_mm:g}): the corridor runs between them.",
                self.near_depth_mm)

    @property
    def fitting_cross_up_mm(self) -> float:
        """Height of the fitting cross above the PRP (the reference point), mm."""
        return float(self.prism_reference_below_cross_mm)

    @property
    def near_point_up_mm(self) -> float:
        """Height of the near reference point relative to the PRP (negative: below), mm."""
        return self.fitting_cross_up_mm - self.near_depth_mm

    @property
    def corridor_mm(self) -> float:
        """Length of the corridor, from the PRP down to the near reference point, mm."""
        return self.near_depth_mm - self.prism_reference_below_cross_mm

    @property
    def thinning(self) -> Prism:
        """The thinning prism before this eye (base down)."""
        return Prism(0.0, -self.thinning_prism_base_down)

    def progress(self, up_mm: float) -> float:
        """How far down the corridor a height lies: 0 at and above the PRP, 1 at and below
        the near reference point."""
        return min(max(-up_mm / self.corridor_mm, 0.0), 1.0)

    def add_fraction(self, up_mm: float) -> float:
        """Fraction of the add found at a height (the corridor's ease)."""
        return _ease(self.progress(up_mm))

    def zone(self, up_mm: float) -> str:
        """``distance`` (at or above the PRP), ``corridor`` or ``near``."""
        t = self.progress(up_mm)
        return "distance" if t <= 0.0 else ("near" if t >= 1.0 else "corridor")

    def corridor_in_mm(self, up_mm: float) -> float:
        """Horizontal position of the corridor line at a height (mm, nasal +)."""
        return self.near_inset_mm * self.add_fraction(up_mm)

    def add_prism(self, point: LensPoint, add: float) -> Prism:
        """The prism the addition brings at ``point`` (see the module's model); in the
        nasal/temporal terms of ``base_in`` it is the same for either eye."""
        return Prism(*self.add_prism_components(point.in_mm, point.up_mm, add))

    def add_prism_components(self, in_mm: float, up_mm: float,
                             add: float) -> tuple[float, float]:
        """``add_prism`` as plain (base_in, base_up) numbers, for sampling many points."""
        if up_mm >= 0.0:
            return (0.0, 0.0)
        power, corridor_in, base_up = self.add_prism_at_height(up_mm, add)
        across_cm = (in_mm - corridor_in) / 10.0
        return (-power * across_cm, base_up)

    def add_prism_at_height(self, up_mm: float, add: float) -> tuple[float, float, float]:
        """What the add's prism at a height below the PRP (``up_mm`` < 0) is made of: the
        add power found there, the corridor line's place (mm, nasal +) and the base-up
        prism, the same all across. Across the lens the base-in prism is linear:
        -power x (in_mm - corridor line) / 10 (Prentice's rule, cm)."""
        corridor, depth = self.corridor_mm, -up_mm
        if depth <= corridor:
            vertical_mm = corridor * _ease_integral(depth / corridor)
        else:
            vertical_mm = corridor * _ease_integral(1.0) + (depth - corridor)
        power = add * self.add_fraction(up_mm)
        return power, self.corridor_in_mm(up_mm), add * vertical_mm / 10.0
