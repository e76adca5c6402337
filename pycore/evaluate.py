"""Evaluating a case: the prism before each eye and the net at every point of gaze.

The one entry point shared by the CLI, the browser worker and the tests. The
result is plain JSON-ready data, numbers unrounded.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from .binocular import NetPrism
from .cases import Case, Frame
from .decentration import (
    decentration_for_prism,
    decentration_per_eye_mm,
    frame_pd_mm,
    minimum_blank_mm,
)
from .errors import CaseError
from .eyes import EYES, Eye
from .fitting import Fitting
from .gaze import GazePoint
from .lens import Lens
from .rounding import without_negative_zero

CAUTIONS = (
    "A check aid only: verify every figure by measurement on the finished spectacles.",
    "Judge results against the standards and regulations in force locally.",
    "Clinical decisions (prescribing prism, slab-off, remedies) belong to licensed "
    "practitioners.",
)

FittingPointFinder = Callable[[Case, str], GazePoint | None]
FITTING_POINT_FINDERS: list[FittingPointFinder] = []
"""Lens designs and the reading zone may place the fitting's named points
(``distance``, ``near``) themselves; a finder answers None to leave it to the rule below."""

ExtraEvaluator = Callable[[Case, dict[str, Any]], dict[str, Any] | None]
EXTRA_RESULTS: dict[str, ExtraEvaluator] = {}
"""Further result sections (remedies, verification, ...) register an evaluator here;
each receives the case and the result so far, and its answer goes under its key."""


def near_horizontal_power(case: Case, eye: Eye) -> float:
    """Horizontal power the eye looks through at near (dioptres): the distance power in
    the horizontal meridian, plus the add where the near point is in the segment or
    the lens is a progressive."""
    lens = case.lens(eye)
    power = lens.power.xx
    in_segment = (case.fitting is not None and lens.segment is not None
                  and -case.fitting.reading_depth_mm <= lens.segment.top_mm)
    if lens.add and (in_segment or lens.progressive is not None):
        power += lens.add
    return power


def resolve_points(case: Case) -> list[GazePoint]:
    """The case's points of gaze, with ``distance`` and ``near`` found from the fitting."""
    resolved = []
    for point in case.points:
        found = point if isinstance(point, GazePoint) else _found_by_finders(case, point)
        if found is not None:
            resolved.append(found)
        elif point == "distance":
            assert case.fitting is not None
            resolved.append(case.fitting.distance_point())
        else:
            resolved.append(_near_point(case, case.fitting))
    return resolved


def _found_by_finders(case: Case, name: str) -> GazePoint | None:
    for finder in FITTING_POINT_FINDERS:
        found = finder(case, name)
        if found is not None:
            return found
    return None


def _near_point(case: Case, fitting: Fitting | None) -> GazePoint:
    assert fitting is not None
    try:
        return fitting.near_point(near_horizontal_power(case, "right"),
                                  near_horizontal_power(case, "left"))
    except (ValueError, CaseError):
        raise CaseError("fitting.working_distance_mm",
                        "fitting.working_distance_mm: the near visual points cannot be found "
                        "for these powers at this distance; check the powers and the "
                        "working distance.") from None


def evaluate_point(case: Case, point: GazePoint) -> dict[str, Any]:
    parts = {eye: case.lens(eye).prism_at(point.on(eye), eye) for eye in EYES}
    net = NetPrism.between(parts["right"].total, parts["left"].total)
    result: dict[str, Any] = {"name": point.name}
    result["position"] = {eye: point.on(eye).as_dict() for eye in EYES}
    for eye in EYES:
        part = parts[eye]
        entry: dict[str, Any] = dict(part.total.as_dict(eye))
        entry["zone"] = part.zone
        entry["parts"] = {
            "prescribed": part.prescribed.as_dict(eye),
            "induced": part.induced.as_dict(eye),
            "from_add": part.from_add.as_dict(eye),
            "from_slab_off": part.from_slab_off.as_dict(eye),
            "from_thinning": part.from_thinning.as_dict(eye),
        }
        result[eye] = entry
    # The induced part: the total net minus the net of the prescribed prism, which is
    # the wearer's correction and not an imbalance (docs/case-format.md, "Output").
    prescribed = NetPrism.between(parts["right"].prescribed, parts["left"].prescribed)
    result["net"] = net.as_dict()
    result["net"]["induced_vertical_base_up_right"] = (net.vertical_base_up_right
                                                       - prescribed.vertical_base_up_right)
    result["net"]["induced_horizontal_base_in"] = (net.horizontal_base_in
                                                   - prescribed.horizontal_base_in)
    return result


def describe_lens(lens: Lens, eye: Eye) -> dict[str, Any]:
    rx = lens.prescription
    info: dict[str, Any] = {
        "sphere": rx.sphere,
        "cylinder": rx.cylinder,
        "axis": rx.axis,
        "written": rx.written(),
        "transposed_written": rx.transposed().written(),
        "horizontal_power": rx.horizontal_power,
        "vertical_power": rx.vertical_power,
        "power_matrix": {"xx": lens.power.xx, "xy": lens.power.xy, "yy": lens.power.yy},
        "add": lens.add,
        "prism": lens.prism.as_dict(eye),
    }
    if lens.prism.amount > 0:
        try:
            info["decentration_for_prism"] = decentration_for_prism(
                rx, lens.prism, eye, f"{eye}.prism").as_dict()
        except CaseError as exc:
            info["decentration_for_prism"] = {"impossible": exc.message}
    if lens.segment is not None:
        info["image_jump"] = lens.segment.image_jump(lens.add)
    return info


def describe_fitting(case: Case) -> dict[str, Any] | None:
    fitting = case.fitting
    if fitting is None:
        return None
    powers = (near_horizontal_power(case, "right"), near_horizontal_power(case, "left"))
    try:
        near = _found_by_finders(case, "near") or _near_point(case, fitting)
    except CaseError:
        return {"distance_pd_mm": fitting.distance_pd_mm, "near_inset_mm": None}
    # The insets are read off the near point itself, so they agree with `points`.
    insets = (near.right.in_mm, near.left.in_mm)
    return {
        "distance_pd_mm": fitting.distance_pd_mm,
        "near_inset_mm": {"right": insets[0], "left": insets[1]},
        "near_centration_distance_mm": fitting.distance_pd_mm - insets[0] - insets[1],
        "horizontal_power_at_near": {"right": powers[0], "left": powers[1]},
        "working_distance_mm": fitting.working_distance_mm,
        "centre_of_rotation_mm": fitting.centre_of_rotation_mm,
        "reading_depth_mm": fitting.reading_depth_mm,
    }


def describe_frame(case: Case, frame: Frame | None) -> dict[str, Any] | None:
    if frame is None:
        return None
    result: dict[str, Any] = {"frame_pd_mm": frame_pd_mm(frame.a_mm, frame.dbl_mm)}
    if case.fitting is None:
        return result
    for eye in EYES:
        fit = case.fitting.right if eye == "right" else case.fitting.left
        inward = decentration_per_eye_mm(frame.a_mm, frame.dbl_mm, fit.mono_pd_mm)
        up = 0.0
        if frame.b_mm is not None and fit.height_mm is not None:
            up = fit.height_mm - frame.b_mm / 2.0
        lens = case.lens(eye)
        prism_in, prism_up = 0.0, 0.0
        if lens.prism.amount > 0:
            try:
                shift = decentration_for_prism(lens.prescription, lens.prism, eye)
                prism_in, prism_up = shift.in_mm, shift.up_mm
            except CaseError:
                pass
        # Optical centre relative to the box centre: the pupil is `inward` mm nasal of
        # it and `up` mm above; the prism moves the centre further by the prism shift.
        total_in, total_up = inward + prism_in, up + prism_up
        entry: dict[str, Any] = {
            "decentration_in_mm": inward,
            "optical_centre_from_box_centre": {"in_mm": total_in, "up_mm": total_up},
        }
        if frame.ed_mm is not None:
            entry["minimum_blank_mm"] = minimum_blank_mm(
                frame.ed_mm, (total_in ** 2 + total_up ** 2) ** 0.5)
        result[eye] = entry
    return result


def evaluate(case: Case, further_sections: bool = True) -> dict[str, Any]:
    """The full result for a case (see docs/case-format.md, "Output").

    ``further_sections=False`` leaves out the registered further sections (reading
    zone, remedies, verification): the points, eyes, fitting and frame only.
    """
    points = [evaluate_point(case, point) for point in resolve_points(case)]
    result: dict[str, Any] = {
        "points": points,
        "eyes": {eye: describe_lens(case.lens(eye), eye) for eye in EYES},
        "fitting": describe_fitting(case),
        "frame": describe_frame(case, case.frame),
        "cautions": list(CAUTIONS),
    }
    for key, evaluator in (EXTRA_RESULTS.items() if further_sections else ()):
        section = evaluator(case, result)
        if section is not None:
            result[key] = section
    without_negative_zero(result)
    return result
