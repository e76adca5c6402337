"""Decentration: placing the optical centre to grind prism, and the blank it needs.

To find prescribed prism P at the distance reference point, the optical centre
must sit at c (cm, examiner's frame) with P = -F (0 - c) = F c, so c = F^-1 P.
A lens with no power in a meridian (a plano cylinder along its axis, a plano
lens) cannot produce prism that way: the prism must be worked (ground) in.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from pycore.errors import CaseError
from pycore.optics.eyes import Eye, nasal_sign
from pycore.optics.power import Prescription
from pycore.optics.prism import Prism
from pycore.spectacles.gaze import LENS_REACH_MM
from pycore.validation import in_range

_SINGULAR = 1e-9
BLANK_MARGIN_MM = 2.0  # common practice; some laboratories add more


@dataclass(frozen=True)
class Decentration:
    """Where the optical centre goes relative to the distance reference point (mm)."""

    in_mm: float
    up_mm: float

    @property
    def total_mm(self) -> float:
        return math.hypot(self.in_mm, self.up_mm)

    def in_words(self) -> str:
        parts = []
        if abs(self.in_mm) >= 0.05:
            parts.append(f"{abs(self.in_mm):.1f} mm {'in' if self.in_mm > 0 else 'out'}")
        if abs(self.up_mm) >= 0.05:
            parts.append(f"{abs(self.up_mm):.1f} mm {'up' if self.up_mm > 0 else 'down'}")
        return ", ".join(parts) if parts else "no decentration"

    def as_dict(self) -> dict[str, float | str]:
        return {"in_mm": self.in_mm + 0.0, "up_mm": self.up_mm + 0.0, "total_mm": self.total_mm,
                "in_words": self.in_words()}


def decentration_for_prism(prescription: Prescription, prism: Prism, eye: Eye,
                           field: str = "prism") -> Decentration:
    """Optical-centre position (mm from the reference point) that gives ``prism``.

    Raises CaseError (naming ``field``) when the lens has no power in the
    meridian the prism needs, or when the decentration would leave the lens.
    """
    f = prescription.power_matrix
    px, py = prism.examiner_frame(eye)
    det = f.determinant
    scale = max(abs(f.xx), abs(f.yy), abs(f.xy), 1.0)
    if abs(det) > _SINGULAR * scale * scale:
        cx = (f.yy * px - f.xy * py) / det
        cy = (-f.xy * px + f.xx * py) / det
    else:
        cx, cy = _rank_one_solution(prescription, px, py, field)
    result = Decentration(in_mm=nasal_sign(eye) * cx * 10.0, up_mm=cy * 10.0)
    if result.total_mm > LENS_REACH_MM:
        raise CaseError(
            field,
            f"{field}: decentring for this prism would move the optical centre "
            f"{result.total_mm:.0f} mm, off any lens; have the prism worked (ground) in.",
            prism.amount,
        )
    return result


def _rank_one_solution(rx: Prescription, px: float, py: float,
                       field: str) -> tuple[float, float]:
    """Decentration for a lens with power in one meridian only (plano cylinder) or none."""
    f = rx.power_matrix
    trace = f.xx + f.yy
    if abs(trace) < _SINGULAR:
        if px == 0 and py == 0:
            return (0.0, 0.0)
        raise CaseError(
            field,
            f"{field}: a plano lens has no power, so decentring it gives no prism; "
            "the prism must be worked (ground) in.",
            None,
        )
    # F = trace * n n^T with n the unit vector of the powered meridian.
    nx, ny = math.sqrt(max(f.xx / trace, 0.0)), math.sqrt(max(f.yy / trace, 0.0))
    if f.xy / trace < 0:
        ny = -ny
    along = px * nx + py * ny
    across = -px * ny + py * nx
    if abs(across) > 1e-9 * max(1.0, abs(along)):
        axis_meridian = rx.axis if rx.cylinder else 0.0
        raise CaseError(
            field,
            f"{field}: this lens has no power along its axis meridian ({axis_meridian:g}°), "
            "so decentring cannot produce the part of the prism along that meridian; "
            "have that part worked (ground) in.",
            None,
        )
    magnitude = along / trace
    return (magnitude * nx, magnitude * ny)


def frame_pd_mm(a_mm: float, dbl_mm: float) -> float:
    """Frame PD (the distance between box centres): A + DBL, mm."""
    return a_mm + dbl_mm


def decentration_per_eye_mm(a_mm: float, dbl_mm: float, mono_pd_mm: float) -> float:
    """Inward decentration of one lens (mm): half the frame PD less the monocular PD."""
    return frame_pd_mm(a_mm, dbl_mm) / 2.0 - mono_pd_mm


def minimum_blank_mm(ed_mm: float, decentration_mm: float,
                     margin_mm: float = BLANK_MARGIN_MM) -> float:
    """Smallest uncut blank diameter: ED + 2 x |decentration| + margin (mm)."""
    in_range(ed_mm, "ed_mm", 20, 90, "mm")
    return ed_mm + 2.0 * abs(decentration_mm) + margin_mm
