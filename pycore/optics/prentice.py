"""Prentice's rule in its matrix form: P = -F r.

``r`` is the displacement (cm) of the point of gaze from the lens's optical
centre in the examiner's frame (x to the examiner's right, y up); ``P`` is the
base vector (prism dioptres) in the same frame. For a sphere this is the
familiar P = c F; with an oblique cylinder a vertical displacement also gives
horizontal prism and vice versa.
"""

from __future__ import annotations

from pycore.optics.eyes import Eye, nasal_sign
from pycore.optics.power import PowerMatrix
from pycore.optics.prism import Prism
from pycore.spectacles.gaze import LensPoint


def induced_prism(power: PowerMatrix, point: LensPoint, eye: Eye,
                  centre_mm: tuple[float, float] = (0.0, 0.0)) -> Prism:
    """Prism a power induces at ``point`` of ``eye``'s lens when its optical centre is at
    ``centre_mm`` = (in_mm, up_mm), default the reference point."""
    sign = nasal_sign(eye)
    x = sign * point.in_mm / 10.0 - sign * centre_mm[0] / 10.0
    y = point.up_mm / 10.0 - centre_mm[1] / 10.0
    # -F r in the examiner's frame, then base in = its x component times the nasal sign.
    return Prism.trusted(-(power.xx * x + power.xy * y) * sign, -(power.xy * x + power.yy * y))


def prentice(decentration_cm: float, power_d: float) -> float:
    """The scalar rule P = c F (prism dioptres; cm and dioptres in one meridian)."""
    return decentration_cm * power_d
