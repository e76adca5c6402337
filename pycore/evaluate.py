"""Evaluating a case: the one pipeline shared by the CLI, the browser worker and the tests.

``evaluate(case, sections)`` computes the result sections in one visible order:

1. ``points``: the prism before each eye and the net at every point of gaze;
   ``point_totals``: each point's name, each eye's total and the net (key
   ``point_totals``), for a screen that shows those but not each eye's parts;
2. ``eyes``: each lens as ordered (powers, transposed form, prism, decentration);
3. ``fitting``: the distance and near centration;
4. ``frame``: frame PD, decentration and the smallest blank;
5. ``reading_zone``: the answer band's figures of the reading zone (the imbalance at
   distance and at the reading point, the threshold depth, the designs), and, asked
   for by name, its folded parts in the same result key: ``reading_map`` (``path``
   and ``map``) and ``sensitivity`` (the fitting-error table and its warnings);
6. ``remedies``: the suggested remedy with its order lines (closed-form figures, the
   remedies built only as far as the choice needs); ``remedies_full``: every remedy
   side by side, each with its finished case read and evaluated (same result key);
7. ``verification``: the verdicts, for a case with a verification section.

``cautions`` is always present. The result is plain JSON-ready data, numbers unrounded.
By default the whole result is computed (``WHOLE_SECTIONS``); the page's live request
asks for ``LIVE_SECTIONS`` and the folded sections as they are opened.
"""

from __future__ import annotations

from collections.abc import Iterable
from typing import Any

from pycore.cautions import CAUTIONS
from pycore.documents.cases import Case, Frame
from pycore.errors import CaseError
from pycore.optics.eyes import EYES, Eye
from pycore.reading.reading_point import find_fitting_point
from pycore.reading.remedies.side_by_side import remedies_section
from pycore.reading.zone import reading_zone_section
from pycore.spectacles.binocular import NetPrism
from pycore.spectacles.decentration import (
    decentration_for_prism,
    decentration_per_eye_mm,
    frame_pd_mm,
    minimum_blank_mm,
)
from pycore.spectacles.fitting import Fitting
from pycore.spectacles.gaze import GazePoint
from pycore.spectacles.heights import describe_heights, reference_point_height_mm
from pycore.spectacles.lens import Lens, PrismAtPoint

SECTIONS = ("points", "point_totals", "eyes", "fitting", "frame", "reading_zone", "reading_map",
            "sensitivity", "remedies", "remedies_full", "verification")
"""Every result section, in the order ``evaluate`` computes them."""

WHOLE_SECTIONS = tuple(name for name in SECTIONS if name != "point_totals")
"""The whole result (the command line's, Print's): every section but ``point_totals``,
whose figures ``points`` already holds."""

LIVE_SECTIONS = ("point_totals", "eyes", "reading_zone", "remedies")
"""What the case screen shows after each keystroke with its sections folded: the answer
band (the reading zone's figures, the suggested remedy, the points' nets when there is no
reading zone) and the transposed form beside each prescription (docs/worker-protocol.md).
The page adds the folded sections' own as they are opened."""

_ZONE_PARTS = {"reading_zone": "band", "reading_map": "map", "sensitivity": "sensitivity"}

BASIC_SECTIONS = ("points", "eyes", "fitting", "frame")
"""The sections that need no lens-design analysis (fast enough for every keystroke)."""

__all__ = ["BASIC_SECTIONS", "CAUTIONS", "LIVE_SECTIONS", "SECTIONS", "WHOLE_SECTIONS", "evaluate",
           "evaluate_point", "point_totals_at", "resolve_points"]


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
        found = point if isinstance(point, GazePoint) else find_fitting_point(case, point)
        if found is not None:
            resolved.append(found)
        elif point == "distance":
            assert case.fitting is not None
            resolved.append(case.fitting.distance_point())
        else:
            resolved.append(_near_point(case, case.fitting))
    return resolved


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


def _prism_at_point(case: Case, point: GazePoint) -> dict[Eye, PrismAtPoint]:
    return {eye: case.lens(eye).prism_at(point.on(eye), eye) for eye in EYES}


def _net_with_induced(parts: dict[Eye, PrismAtPoint]) -> dict[str, Any]:
    """The net between the eyes and, beside each total, the induced part: the total net
    minus the net of the prescribed prism, which is the wearer's correction and not an
    imbalance (docs/case-format.md, "Induced and prescribed")."""
    net = NetPrism.between(parts["right"].total, parts["left"].total)
    prescribed = NetPrism.between(parts["right"].prescribed, parts["left"].prescribed)
    found = net.as_dict()
    found["induced_vertical_base_up_right"] = (net.vertical_base_up_right
                                               - prescribed.vertical_base_up_right)
    found["induced_horizontal_base_in"] = (net.horizontal_base_in
                                           - prescribed.horizontal_base_in)
    return found


def evaluate_point(case: Case, point: GazePoint) -> dict[str, Any]:
    parts = _prism_at_point(case, point)
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
    result["net"] = _net_with_induced(parts)
    return result


def point_totals_at(case: Case, point: GazePoint) -> dict[str, Any]:
    """``evaluate_point`` without the position, zones and parts: the name, each eye's
    total and the net (the same numbers), for ``point_totals``."""
    parts = _prism_at_point(case, point)
    return {"name": point.name, "right": parts["right"].total.as_dict("right"),
            "left": parts["left"].total.as_dict("left"), "net": _net_with_induced(parts)}


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
    if lens.centre_mm != (0.0, 0.0):
        info["optical_centre_mm"] = {"in_mm": lens.centre_mm[0], "up_mm": lens.centre_mm[1]}
    return info


def describe_fitting(case: Case) -> dict[str, Any] | None:
    fitting = case.fitting
    if fitting is None:
        return None
    powers = (near_horizontal_power(case, "right"), near_horizontal_power(case, "left"))
    try:
        near = find_fitting_point(case, "near") or _near_point(case, fitting)
    except CaseError:
        return {"distance_pd_mm": fitting.distance_pd_mm, "near_inset_mm": None,
                "heights": describe_heights(case)}
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
        "heights": describe_heights(case),
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
        lens = case.lens(eye)
        up = 0.0
        # The optical centre sits at the distance reference point: the PRP of a
        # progressive, below the fitting cross (pycore.spectacles.heights).
        centre_height = reference_point_height_mm(lens, fit.height_mm)
        if frame.b_mm is not None and centre_height is not None:
            up = centre_height - frame.b_mm / 2.0
        prism_in, prism_up = 0.0, 0.0
        if lens.prism.amount > 0:
            try:
                shift = decentration_for_prism(lens.prescription, lens.prism, eye)
                prism_in, prism_up = shift.in_mm, shift.up_mm
            except CaseError:
                pass
        # Optical centre relative to the box centre: the pupil is `inward` mm nasal of
        # it and `up` mm above; the prism moves the centre further by the prism shift,
        # and a centre moved on purpose (lowered centres) by that move.
        total_in = inward + prism_in + lens.centre_mm[0]
        total_up = up + prism_up + lens.centre_mm[1]
        entry: dict[str, Any] = {
            "decentration_in_mm": inward,
            "optical_centre_from_box_centre": {"in_mm": total_in, "up_mm": total_up},
        }
        if frame.ed_mm is not None:
            entry["minimum_blank_mm"] = minimum_blank_mm(
                frame.ed_mm, (total_in ** 2 + total_up ** 2) ** 0.5)
        result[eye] = entry
    return result


def evaluate(case: Case, sections: Iterable[str] = WHOLE_SECTIONS) -> dict[str, Any]:
    """The result for a case: the named ``sections`` (see SECTIONS), in pipeline order.

    A section the case cannot have (``fitting`` without a fitting, ``verification``
    without its section) is None or absent, as documented in docs/case-format.md.
    """
    wanted = set(sections)
    unknown = wanted - set(SECTIONS)
    if unknown:
        raise CaseError("sections", f"Unknown result sections: {', '.join(sorted(unknown))}; "
                                    f"known: {', '.join(SECTIONS)}.")
    result: dict[str, Any] = {}
    if "points" in wanted:
        result["points"] = [evaluate_point(case, point) for point in resolve_points(case)]
    if "point_totals" in wanted:
        result["point_totals"] = [point_totals_at(case, point) for point in resolve_points(case)]
    if "eyes" in wanted:
        result["eyes"] = {eye: describe_lens(case.lens(eye), eye) for eye in EYES}
    if "fitting" in wanted:
        result["fitting"] = describe_fitting(case)
    if "frame" in wanted:
        result["frame"] = describe_frame(case, case.frame)
    result["cautions"] = list(CAUTIONS)
    parts = [part for name, part in _ZONE_PARTS.items() if name in wanted]
    if parts:
        result["reading_zone"] = reading_zone_section(case, result, parts)
    if "remedies" in wanted or "remedies_full" in wanted:
        result["remedies"] = remedies_section(case, result, full="remedies_full" in wanted)
    if "verification" in wanted and "verification" in case.extras:
        # Imported here: the pair check's nine modules are not needed for a case without
        # a verification section (most of them), nor at the browser's start.
        from pycore.checks.verification_section import evaluate_section as verification_section

        verdicts = verification_section(case, result)
        if verdicts is not None:
            result["verification"] = verdicts
    return result
