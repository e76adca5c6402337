"""Points on the lenses: where each eye's line of sight crosses its lens.

Millimetres from that eye's distance reference point: ``in_mm`` positive
toward the nose, ``up_mm`` positive upward.
"""

from __future__ import annotations

from dataclasses import dataclass

from pycore.optics.eyes import Eye, nasal_sign
from pycore.validation import in_range

LENS_REACH_MM = 40.0
"""Farthest a point may lie from the distance reference point, mm, either way."""


@dataclass(frozen=True)
class LensPoint:
    """A point on one lens (mm): ``in_mm`` nasal +, ``up_mm`` up +."""

    in_mm: float = 0.0
    up_mm: float = 0.0

    def __post_init__(self) -> None:
        in_range(self.in_mm, "in_mm", -LENS_REACH_MM, LENS_REACH_MM, "mm")
        in_range(self.up_mm, "up_mm", -LENS_REACH_MM, LENS_REACH_MM, "mm")
        object.__setattr__(self, "in_mm", float(self.in_mm) + 0.0)
        object.__setattr__(self, "up_mm", float(self.up_mm) + 0.0)

    def examiner_frame_cm(self, eye: Eye) -> tuple[float, float]:
        """The point in centimetres, x to the examiner's right, y up (Prentice's units)."""
        return (nasal_sign(eye) * self.in_mm / 10.0, self.up_mm / 10.0)

    def moved(self, in_mm: float = 0.0, up_mm: float = 0.0) -> LensPoint:
        return LensPoint(self.in_mm + in_mm, self.up_mm + up_mm)

    def as_dict(self) -> dict[str, float]:
        return {"in_mm": self.in_mm, "up_mm": self.up_mm}


@dataclass(frozen=True)
class GazePoint:
    """A named point of gaze: where the right and the left line of sight cross the lenses."""

    name: str
    right: LensPoint
    left: LensPoint

    def on(self, eye: Eye) -> LensPoint:
        return self.right if eye == "right" else self.left
