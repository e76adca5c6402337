"""Bifocal segment shapes: where a segment's optical centre lies by the usual rules,
and which points of the lens its outline covers.

Millimetres. ``below_top_mm`` is measured down from the segment's top line,
``across_mm`` sideways from the vertical line through the segment's optical
centre (either way: outlines are symmetric).

The usual optical-centre rules (common practice, docs/sources.md): a round
segment has its optical centre at its geometric centre, half the diameter below
the top (R22: 11 mm); a flat-top about 5 mm below the top (stated for D28, used
here for every width); a straight-across segment on its dividing line. The case
may override the optical centre (a compensated or
prism-controlled segment); the outline stays where the shape puts it.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal

from pycore.errors import CaseError
from pycore.validation import in_range

SegmentShape = Literal["round", "flat_top", "straight_across"]
SEGMENT_SHAPES: tuple[SegmentShape, ...] = ("round", "flat_top", "straight_across")

FLAT_TOP_CENTRE_BELOW_TOP_MM = 5.0
"""Flat-top segment: optical centre (and the centre of the circle the outline is cut
from) below the top line, mm. Common practice ("D28 about 5 mm below the top"),
applied to every width."""

ROUND_DIAMETER_MM = (10.0, 50.0)
FLAT_TOP_WIDTH_MM = (12.0, 45.0)

_RULES = {
    "round": "round segment: optical centre at the geometric centre, half the diameter "
             "below the top (common practice)",
    "flat_top": f"flat-top segment: optical centre about {FLAT_TOP_CENTRE_BELOW_TOP_MM:g} mm "
                "below the top (common practice)",
    "straight_across": "straight-across segment: optical centre on the dividing line "
                       "(common practice)",
}


@dataclass(frozen=True)
class SegmentOutline:
    """A segment's shape and size: ``size_mm`` is the diameter of a round segment, the
    width of a flat-top, and None for a straight-across segment (full lens width)."""

    shape: SegmentShape
    size_mm: float | None = None

    def __post_init__(self) -> None:
        if self.shape not in SEGMENT_SHAPES:
            raise CaseError("shape", f"shape must be one of {', '.join(SEGMENT_SHAPES)}.",
                            self.shape)
        if self.shape == "round":
            self._need_size("diameter_mm", *ROUND_DIAMETER_MM)
        elif self.shape == "flat_top":
            self._need_size("width_mm", *FLAT_TOP_WIDTH_MM)
        elif self.size_mm is not None:
            raise CaseError("width_mm", "width_mm is not used with a straight_across segment, "
                                        "which spans the lens; leave it out.", self.size_mm)

    def _need_size(self, key: str, low: float, high: float) -> None:
        if self.size_mm is None:
            raise CaseError(key, f"{key} is missing: a {self.shape} segment needs its size "
                                 f"in mm ({low:g} to {high:g}).")
        in_range(self.size_mm, key, low, high, "mm")

    @property
    def size_key(self) -> str | None:
        """The case key that carries the size (``diameter_mm``, ``width_mm`` or None)."""
        return {"round": "diameter_mm", "flat_top": "width_mm"}.get(self.shape)

    @property
    def usual_optical_centre_below_top_mm(self) -> float:
        """Where the usual rule puts the optical centre below the top line (mm)."""
        if self.shape == "round":
            assert self.size_mm is not None
            return self.size_mm / 2.0
        if self.shape == "flat_top":
            return FLAT_TOP_CENTRE_BELOW_TOP_MM
        return 0.0

    @property
    def rule(self) -> str:
        """The rule behind ``usual_optical_centre_below_top_mm``, in words with its source."""
        return _RULES[self.shape]

    @property
    def depth_mm(self) -> float | None:
        """Height of the segment from its top line to its lowest point (None: to the rim)."""
        if self.shape == "round":
            return self.size_mm
        if self.shape == "flat_top":
            assert self.size_mm is not None
            return FLAT_TOP_CENTRE_BELOW_TOP_MM + self.size_mm / 2.0
        return None

    @property
    def circle_centre_below_top_mm(self) -> float:
        """How far below the top line the centre of the outline's circle lies (mm; the
        radius is half the size); 0 for straight-across, which has no circle."""
        if self.size_mm is None:
            return 0.0
        return self.size_mm / 2.0 if self.shape == "round" else FLAT_TOP_CENTRE_BELOW_TOP_MM

    def contains(self, across_mm: float, below_top_mm: float) -> bool:
        """Whether a point ``below_top_mm`` under the top line and ``across_mm`` from the
        segment's centre line lies within the outline (the top line counts as inside)."""
        if below_top_mm < 0:
            return False
        if self.shape == "straight_across":
            return True
        assert self.size_mm is not None
        radius = self.size_mm / 2.0
        centre_below = self.circle_centre_below_top_mm
        return math.hypot(across_mm, below_top_mm - centre_below) <= radius + 1e-9

    def width_at_mm(self, below_top_mm: float) -> float:
        """Width of the segment at a depth below its top line (mm; inf for straight-across)."""
        if below_top_mm < 0:
            return 0.0
        if self.shape == "straight_across":
            return math.inf
        assert self.size_mm is not None
        radius = self.size_mm / 2.0
        centre_below = radius if self.shape == "round" else FLAT_TOP_CENTRE_BELOW_TOP_MM
        offset = below_top_mm - centre_below
        return 2.0 * math.sqrt(max(radius * radius - offset * offset, 0.0))


def image_jump(add: float, optical_centre_below_top_mm: float) -> float:
    """Prism (prism dioptres) met on crossing into the segment at its top line:
    add x (distance from the top to the segment optical centre, cm). With the centre
    below the top and a plus add it is base down (docs/sources.md)."""
    return add * optical_centre_below_top_mm / 10.0
