"""What a failing figure means for the wearer, where optics gives a rule.

An axis error leaves an unwanted cylinder. Two cylinders of power F whose
axes differ by alpha differ by a cross-cylinder of power 2F sin(alpha)
(obliquely crossed cylinders; the basis of the ANSI Z80.1 axis bands, see
docs/sources.md). So the axis error that leaves as much unwanted cylinder as
the cylinder tolerance C allows is asin(C / 2F): the stronger the cylinder,
the tighter the axis.
"""

from __future__ import annotations

import math
from typing import Any

from pycore.optics.power import PowerMatrix, Prescription

RULE = "obliquely crossed cylinders: unwanted cylinder = 2F sin(axis error)"
SOURCE = "common optics (crossed-cylinder result)"


def unwanted_cylinder_from_axis_error(cylinder_d: float, axis_error_deg: float) -> float:
    """Dioptres of cylinder left when a cylinder ``cylinder_d`` sits ``axis_error_deg`` off."""
    return 2.0 * abs(cylinder_d) * abs(math.sin(math.radians(axis_error_deg)))


def cylinder_of(matrix: PowerMatrix) -> float:
    """The cylinder (difference of the principal powers, >= 0) of a power matrix."""
    return 2.0 * math.hypot((matrix.xx - matrix.yy) / 2.0, matrix.xy)


def axis_error_effect(error: float, ordered: Prescription, measured: Prescription,
                      cylinder_limit_d: float | None) -> dict[str, Any]:
    """The wearer's side of an axis error (degrees): unwanted cylinder, and the whole
    residual (measured minus ordered power matrix) as a cylinder."""
    unwanted = unwanted_cylinder_from_axis_error(ordered.cylinder, error)
    residual = cylinder_of(measured.power_matrix - ordered.power_matrix)
    effect: dict[str, Any] = {
        "axis_error_deg": error,
        "unwanted_cylinder_d": unwanted,
        "residual_cylinder_d": residual,
        "rule": RULE,
        "source": SOURCE,
        "in_words": (f"an axis {error:.0f} degrees off on a {abs(ordered.cylinder):.2f} D "
                     f"cylinder leaves the wearer about {unwanted:.2f} D of unwanted cylinder "
                     f"(2 x {abs(ordered.cylinder):.2f} x sin {error:.0f} deg); with the power "
                     f"errors the lens worn differs from the order by {residual:.2f} D of "
                     "cylinder"),
    }
    if cylinder_limit_d is not None and abs(ordered.cylinder) > 0:
        ratio = min(1.0, cylinder_limit_d / (2.0 * abs(ordered.cylinder)))
        matching = math.degrees(math.asin(ratio))
        effect["axis_error_matching_cylinder_tolerance_deg"] = matching
        effect["in_words"] += (f"; an axis error of {matching:.1f} degrees would leave as much "
                               f"unwanted cylinder as the {cylinder_limit_d:.2f} D cylinder "
                               "tolerance")
    return effect
