"""An independent numpy reference for lens prism, written from the principal meridians.

It does not use pycore's power matrix: the lens is built as S along its axis
meridian and S + C across it, F = S u u^T + (S + C) v v^T with u the axis
direction and v the meridian at right angles, in the examiner's frame (x to
the examiner's right, y up). Prism P = -F r, r in cm.
"""

from __future__ import annotations

import numpy as np


def power_matrix(sphere: float, cylinder: float, axis_deg: float) -> np.ndarray:
    a = np.radians(axis_deg)
    u = np.array([np.cos(a), np.sin(a)])
    v = np.array([-np.sin(a), np.cos(a)])
    return sphere * np.outer(u, u) + (sphere + cylinder) * np.outer(v, v)


def eye_sign(eye: str) -> float:
    return 1.0 if eye == "right" else -1.0


def lens_prism(sphere: float, cylinder: float, axis_deg: float, eye: str,
               in_mm: float, up_mm: float, prescribed_in: float = 0.0,
               prescribed_up: float = 0.0) -> tuple[float, float]:
    """(base_in, base_up) before ``eye`` at a point (mm from the reference point)."""
    r = np.array([eye_sign(eye) * in_mm, up_mm]) / 10.0
    p = -power_matrix(sphere, cylinder, axis_deg) @ r
    return (float(eye_sign(eye) * p[0] + prescribed_in), float(p[1] + prescribed_up))


def near_centration_distance(pd_mm: float, working_mm: float, rotation_mm: float,
                             power_d: float) -> float:
    """Near CD by tracing each line of sight: solve for the lens point whose refracted
    ray passes through the centre of rotation (small-angle, thin lens), with numpy."""
    half = pd_mm / 2.0
    # Unknown: lateral position x (mm from the midline) where the line of sight meets
    # the lens plane. Ray from the object (midline, working_mm in front) to x has slope
    # x / working_mm; the lens deviates it by -power * (x - half)/1000 (Prentice, in
    # radians); the refracted ray must reach the centre of rotation at `half`,
    # rotation_mm behind the lens: x + rotation_mm * slope_after = half.
    a = np.array([[1.0 + rotation_mm * (1.0 / working_mm - power_d / 1000.0)]])
    b = np.array([half - rotation_mm * power_d * half / 1000.0])
    x = float(np.linalg.solve(a, b)[0])
    return 2.0 * x
