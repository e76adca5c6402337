"""Where the eyes look through the lenses: distance and near points from a fitting.

Near visual points: the eyes converge on a point on the midline at the
working distance W (mm, from the lens plane); each line of sight turns about
the eye's centre of rotation, s mm behind the lens. The inset of the near
visual point from the distance reference point, for a lens of horizontal
power F (dioptres), is

    inset = mono PD / (1 + W (1/s - F/1000))

which for a plano lens is mono PD x s / (W + s). Plus lenses push the near
points farther in, minus lenses less.
"""

from __future__ import annotations

from dataclasses import dataclass

from pycore.spectacles.gaze import LENS_REACH_MM, GazePoint, LensPoint
from pycore.validation import in_range

DEFAULT_WORKING_DISTANCE_MM = 400.0
DEFAULT_CENTRE_OF_ROTATION_MM = 27.0  # common practice: 25-27 mm
DEFAULT_READING_DEPTH_MM = 10.0  # common practice: about 10 mm (some use 8)


def near_inset_mm(mono_pd_mm: float, working_distance_mm: float,
                  centre_of_rotation_mm: float, horizontal_power_d: float = 0.0) -> float:
    """Inset (mm, toward the nose) of one eye's near visual point from its distance point."""
    vergence_term = working_distance_mm * (1.0 / centre_of_rotation_mm
                                           - horizontal_power_d / 1000.0)
    denominator = 1.0 + vergence_term
    if denominator <= 0:
        raise ValueError("the lens power is too high for the near inset at this distance")
    return mono_pd_mm / denominator


@dataclass(frozen=True)
class EyeFitting:
    """One eye's fitting: monocular PD (mm) and, optionally, the fitting height: mm above
    the lowest point of the lens shape of the point before the pupil (the distance
    reference point; a progressive's fitting cross), as an order form gives it."""

    mono_pd_mm: float
    height_mm: float | None = None

    def __post_init__(self) -> None:
        in_range(self.mono_pd_mm, "mono_pd_mm", 20, 45, "mm")
        if self.height_mm is not None:
            in_range(self.height_mm, "height_mm", 5, 45, "mm")


@dataclass(frozen=True)
class Fitting:
    """Both eyes' fitting and the near-vision geometry (all mm)."""

    right: EyeFitting
    left: EyeFitting
    working_distance_mm: float = DEFAULT_WORKING_DISTANCE_MM
    centre_of_rotation_mm: float = DEFAULT_CENTRE_OF_ROTATION_MM
    reading_depth_mm: float = DEFAULT_READING_DEPTH_MM

    def __post_init__(self) -> None:
        in_range(self.working_distance_mm, "working_distance_mm", 150, 2000, "mm")
        in_range(self.centre_of_rotation_mm, "centre_of_rotation_mm", 15, 40, "mm")
        in_range(self.reading_depth_mm, "reading_depth_mm", 0, LENS_REACH_MM, "mm")

    @property
    def distance_pd_mm(self) -> float:
        return self.right.mono_pd_mm + self.left.mono_pd_mm

    def near_insets_mm(self, right_power_d: float = 0.0,
                       left_power_d: float = 0.0) -> tuple[float, float]:
        """Each eye's near inset (mm) for lenses of the given horizontal powers."""
        return (
            near_inset_mm(self.right.mono_pd_mm, self.working_distance_mm,
                          self.centre_of_rotation_mm, right_power_d),
            near_inset_mm(self.left.mono_pd_mm, self.working_distance_mm,
                          self.centre_of_rotation_mm, left_power_d),
        )

    def near_centration_distance_mm(self, right_power_d: float = 0.0,
                                    left_power_d: float = 0.0) -> float:
        right, left = self.near_insets_mm(right_power_d, left_power_d)
        return self.distance_pd_mm - right - left

    def distance_point(self) -> GazePoint:
        return GazePoint("distance", LensPoint(0.0, 0.0), LensPoint(0.0, 0.0))

    def near_point(self, right_power_d: float = 0.0, left_power_d: float = 0.0,
                   depth_mm: float | None = None) -> GazePoint:
        """The near visual points at the reading depth, with the convergence inset."""
        depth = self.reading_depth_mm if depth_mm is None else depth_mm
        right, left = self.near_insets_mm(right_power_d, left_power_d)
        return GazePoint("near", LensPoint(right, -depth), LensPoint(left, -depth))
