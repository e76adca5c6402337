"""Heights as order forms give them: millimetres above the lowest point of the lens shape.

- The fitting height (``fitting.<eye>.height_mm``) is the height of the point
  before the pupil in the primary position: the distance reference point of a
  single-vision lens or bifocal, the *fitting cross* of a progressive (as
  written on an order; common practice).
- A progressive's prism reference point (PRP, the case's distance reference
  point) lies ``prism_reference_below_cross_mm`` below the fitting cross, the
  distance the design states: PRP height = fitting height - that distance.
- A segment height is the segment top above the lowest point of the lens
  shape; the case's ``top_mm`` = segment height - fitting height.
- The boxing centre lies half the box depth B above the lowest point, so the
  fitting height above the boxing centre is fitting height - B / 2.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from pycore.optics.eyes import EYES, Eye
from pycore.spectacles.lens import Lens

if TYPE_CHECKING:
    from pycore.documents.cases import Case

MEASURED_FROM = "the lowest point of the lens shape"


def reference_point_height_mm(lens: Lens, fitting_height_mm: float | None) -> float | None:
    """Height of the distance reference point (the PRP of a progressive) above the lowest
    point of the lens shape, from the fitting height (mm; None without one)."""
    if fitting_height_mm is None:
        return None
    if lens.progressive is not None:
        return fitting_height_mm - lens.progressive.prism_reference_below_cross_mm
    return fitting_height_mm


def fitting_height_of(case: Case, eye: Eye) -> float | None:
    if case.fitting is None:
        return None
    return (case.fitting.right if eye == "right" else case.fitting.left).height_mm


def describe_heights(case: Case) -> dict[str, Any]:
    """Each eye's heights, all mm above the lowest point of the lens shape unless named
    otherwise (see the module docstring; null where the case does not give them)."""
    half_b = (case.frame.b_mm / 2.0 if case.frame is not None and case.frame.b_mm is not None
              else None)
    result: dict[str, Any] = {"measured_from": MEASURED_FROM, "boxing_centre_height_mm": half_b}
    for eye in EYES:
        lens = case.lens(eye)
        height = fitting_height_of(case, eye)
        entry: dict[str, Any] = {
            "fitting_height_mm": height,
            "fitting_height_is": ("the fitting cross (progressive)" if lens.progressive
                                  is not None else "the distance reference point"),
            "fitting_height_above_boxing_centre_mm": (
                height - half_b if height is not None and half_b is not None else None),
            "reference_point_height_mm": reference_point_height_mm(lens, height),
        }
        if lens.progressive is not None:
            entry["prism_reference_point_below_fitting_cross_mm"] = (
                lens.progressive.prism_reference_below_cross_mm)
        if lens.segment is not None:
            entry["segment_top_from_reference_point_mm"] = lens.segment.top_mm
            entry["segment_height_mm"] = (height + lens.segment.top_mm
                                          if height is not None else None)
        result[eye] = entry
    return result
