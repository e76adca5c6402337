"""The ``reading_zone`` result section: where the eyes read, what each lens design is,
the imbalance down the reading path and over the lower half of the lenses, the depth
where it passes the threshold, the image jump at each segment top and the
fitting-error sensitivity.

Net values as in the case format (prism dioptres): ``vertical_base_up_right`` =
base_up(right) - base_up(left), ``horizontal_base_in`` = base_in(right) +
base_in(left). Gaze as in pycore.reading.reading_point (mm on the lens plane). Beside
each total its induced part (``induced_...``: the total minus the net of the
prescribed prism); the threshold, its depth and the over-threshold flag are
judged on the induced part, since prescribed prism is the wearer's correction.
"""

from __future__ import annotations

from collections.abc import Iterable
from typing import Any

from pycore.documents.cases import Case
from pycore.optics.eyes import EYES, Eye
from pycore.reading.fitting_errors import sensitivity
from pycore.reading.imbalance_map import (
    GazeNet,
    imbalance_map,
    last_row_mm,
    map_depth_mm,
    own_nets,
    reading_path,
    threshold_drop_mm,
)
from pycore.reading.options import THRESHOLD_SOURCE, options_of
from pycore.reading.reading_point import ReadingGeometry, reading_geometry
from pycore.rounding import fixed
from pycore.spectacles.lens import Lens
from pycore.spectacles.progressive import THINNING_PRISM_PER_ADD

IMAGE_JUMP_SOURCE = ("image jump = add x distance from the segment top to the segment "
                     "optical centre in cm (Prentice's rule; common practice)")
THINNING_SOURCE = "about 0.6 x add, base down before both eyes (common practice)"
_INSET_MISMATCH_MM = 1.0


def describe_design(lens: Lens, eye: Eye, geometry: ReadingGeometry) -> dict[str, Any]:
    """What the lens is and where its parts lie (mm from the distance reference point)."""
    if lens.progressive is not None:
        design = lens.progressive
        index = 0 if eye == "right" else 1
        return {
            "kind": "progressive",
            "add": lens.add,
            "fitting_cross": {"in_mm": 0.0, "up_mm": design.fitting_cross_up_mm},
            "prism_reference_point": {"in_mm": 0.0, "up_mm": 0.0},
            "prism_reference_point_below_fitting_cross_mm":
                design.prism_reference_below_cross_mm,
            "fitting_height_is": "the fitting cross; the prism reference point lies "
                                 "below it by the design's stated distance",
            "near_reference_point": {"in_mm": design.near_inset_mm,
                                     "up_mm": design.near_point_up_mm},
            "corridor_mm": design.corridor_mm,
            "near_inset_mm": design.near_inset_mm,
            "convergence_inset_mm": geometry.near_inset_mm[index],
            "thinning_prism_base_down": design.thinning_prism_base_down,
        }
    if lens.segment is not None and lens.add:
        segment = lens.segment
        outline = segment.outline
        usual = outline.usual_optical_centre_below_top_mm if outline is not None else None
        if usual is not None and abs(usual - segment.optical_centre_below_top_mm) < 1e-9:
            rule = f"by the usual rule: {outline.rule}" if outline is not None else ""
        else:
            rule = "as given in the case (manual placement)"
        centre_in, centre_up = segment.optical_centre_mm
        return {
            "kind": "bifocal",
            "add": lens.add,
            "shape": outline.shape if outline is not None else None,
            "size_mm": outline.size_mm if outline is not None else None,
            "segment_depth_mm": outline.depth_mm if outline is not None else None,
            "top_mm": segment.top_mm,
            "optical_centre": {"in_mm": centre_in, "up_mm": centre_up},
            "optical_centre_below_top_mm": segment.optical_centre_below_top_mm,
            "optical_centre_rule": rule,
        }
    return {"kind": "single_vision", "add": lens.add}


def image_jumps(case: Case) -> dict[str, Any]:
    """Prism met crossing each segment top (prism dioptres; base down for a plus add with
    the segment optical centre below the top)."""
    jumps: dict[str, Any] = {"source": IMAGE_JUMP_SOURCE}
    amounts = {}
    for eye in EYES:
        lens = case.lens(eye)
        if lens.segment is None or not lens.add:
            jumps[eye] = None
            continue
        jump = lens.segment.image_jump(lens.add)
        amounts[eye] = jump
        way = "base down" if jump > 0 else ("base up" if jump < 0 else "none")
        jumps[eye] = {"amount": abs(jump), "base_up": -jump + 0.0, "at_up_mm": lens.segment.top_mm,
                      "in_words": f"{fixed(abs(jump))} {way}" if jump else "no image jump"}
    step = None
    if len(amounts) == 2 and case.right.segment is not None and case.left.segment is not None \
            and abs(case.right.segment.top_mm - case.left.segment.top_mm) < 1e-9:
        step = -(amounts["right"] - amounts["left"]) + 0.0
    jumps["vertical_step_at_tops"] = step
    return jumps


def design_warnings(case: Case, geometry: ReadingGeometry) -> list[str]:
    warnings = []
    designs = [case.lens(eye).progressive for eye in EYES]
    right, left = designs
    if right is not None and left is not None \
            and abs(right.thinning_prism_base_down - left.thinning_prism_base_down) > 1e-9:
        differ = right.thinning_prism_base_down - left.thinning_prism_base_down
        warnings.append(f"The thinning prism differs between the eyes by {fixed(abs(differ))} "
                        "prism dioptres: it is meant to be yoked (equal), and the difference "
                        "is a vertical imbalance everywhere.")
    if (right is None) != (left is None):
        warnings.append("Only one lens is a progressive: the eyes meet different add prism "
                        "below the fitting cross.")
    for index, eye in enumerate(EYES):
        design = designs[index]
        if design is not None and geometry.worn_as == "spectacles" and abs(
                design.near_inset_mm - geometry.near_inset_mm[index]) >= _INSET_MISMATCH_MM:
            warnings.append(
                f"The {eye} near zone is inset {fixed(design.near_inset_mm, 1)} mm but the eye "
                f"converges {fixed(geometry.near_inset_mm[index], 1)} mm at this working distance: "
                "the add adds horizontal prism at the reading point.")
    return warnings


PARTS = ("band", "map", "sensitivity")
"""The parts of the section that can be asked for alone (pycore.evaluate names them
``reading_zone``, ``reading_map`` and ``sensitivity``): the band figures; the map and
the path down it; the fitting-error table with its warnings."""


def reading_zone_section(case: Case, result: dict[str, Any],
                         parts: Iterable[str] = PARTS) -> dict[str, Any]:
    """The reading-zone result for a case (see the module docstring): the band figures,
    and ``path``/``map`` and ``sensitivity`` (with its warnings) where asked for, in
    the same order of keys as the whole section; ``summary_lines`` (text for the command
    line) only with every part."""
    wanted = set(parts)
    options = options_of(case)
    geometry = reading_geometry(case)
    sampler, distance, reading = own_nets(case, geometry)
    depth = map_depth_mm(case, options.map_depth_mm, geometry)
    crossing = threshold_drop_mm(sampler, options.threshold, depth)
    warnings = design_warnings(case, geometry)
    errors = None
    if "sensitivity" in wanted:
        errors = sensitivity(case, geometry, options.threshold)
        warnings += errors["warnings"]
    section: dict[str, Any] = {
        "threshold": {"vertical": options.threshold, "source": THRESHOLD_SOURCE},
        "geometry": geometry.as_dict(),
        "designs": {eye: describe_design(case.lens(eye), eye, geometry) for eye in EYES},
        "prescribed_net": {"vertical_base_up_right": sampler.prescribed.vertical_base_up_right,
                           "horizontal_base_in": sampler.prescribed.horizontal_base_in},
        "at_distance": _net(distance),
        "at_reading_point": {**_net(reading),
                             "in_words": vertical_words(reading.induced_vertical)},
        "threshold_drop_mm": crossing,
        "threshold_point": ({eye: geometry.lens_point(eye, crossing).as_dict() for eye in EYES}
                            if crossing is not None else None),
        "over_threshold_at_reading_point": abs(reading.induced_vertical) >= options.threshold,
    }
    if "map" in wanted:
        section["path"] = reading_path(sampler, depth, options.map_step_mm)
        section["map"] = imbalance_map(sampler, depth, options.map_half_width_mm,
                                       options.map_step_mm)
        section["map"]["reading_point"] = {"drop_mm": geometry.reading_drop_mm,
                                           "lateral_mm": 0.0}
        section["map"]["threshold_drop_mm"] = crossing
    section["image_jump"] = image_jumps(case)
    section["thinning_prism"] = _thinning(case)
    if errors is not None:
        section["sensitivity"] = errors
    section["warnings"] = warnings
    if wanted >= set(PARTS):   # the text lines are the command line's, for the whole section
        section["summary_lines"] = _summary(section, options.threshold,
                                            last_row_mm(depth, options.map_step_mm))
    return section


def _net(net: GazeNet) -> dict[str, Any]:
    return {"vertical_base_up_right": net.vertical, "horizontal_base_in": net.horizontal,
            "induced_vertical_base_up_right": net.induced_vertical,
            "induced_horizontal_base_in": net.induced_horizontal,
            "zones": {"right": net.zones[0], "left": net.zones[1]}}


def _thinning(case: Case) -> dict[str, Any] | None:
    adds = [case.lens(eye).add for eye in EYES if case.lens(eye).progressive is not None]
    if not adds:
        return None
    return {"suggested_base_down": THINNING_PRISM_PER_ADD * max(adds),
            "given": {eye: (case.lens(eye).progressive.thinning_prism_base_down  # type: ignore[union-attr]
                            if case.lens(eye).progressive is not None else None)
                      for eye in EYES},
            "source": THINNING_SOURCE,
            "note": "yoked thinning prism shows before each eye and cancels in the net"}


def vertical_words(value: float) -> str:
    """A net vertical prism in words: "2.75 base up before the right eye" ("none" under
    0.005 prism dioptre)."""
    if abs(value) < 0.005:
        return "none"
    eye = "right" if value > 0 else "left"
    return f"{fixed(abs(value))} base up before the {eye} eye"


def _summary(section: dict[str, Any], threshold: float, last_row: float) -> list[str]:
    geometry = section["geometry"]
    reading = geometry["reading_point"]
    lines = ["Reading zone",
             f"  reading point ({geometry['rule'].replace('_', ' ')}): "
             f"R {fixed(reading['right']['in_mm'], 1)} in, "
             f"{fixed(reading['right']['up_mm'], 1)} up; "
             f"L {fixed(reading['left']['in_mm'], 1)} in, {fixed(reading['left']['up_mm'], 1)} up"
             + ("  (fitting assumed: PD 32/32 mm)" if geometry["fitting_assumed"] else "")]
    distance, near = section["at_distance"], section["at_reading_point"]
    lines.append(f"  induced imbalance at distance: "
                 f"{vertical_words(distance['induced_vertical_base_up_right'])}; "
                 f"at the reading point: {near['in_words']}")
    prescribed = section["prescribed_net"]["vertical_base_up_right"]
    if abs(prescribed) >= 0.005:
        lines.append(f"  prescribed vertical prism (kept, not an imbalance): "
                     f"{vertical_words(prescribed)}; totals at distance "
                     f"{vertical_words(distance['vertical_base_up_right'])}, at the reading "
                     f"point {vertical_words(near['vertical_base_up_right'])}")
    drop = section["threshold_drop_mm"]
    if drop is None:
        lines.append(f"  the induced vertical imbalance stays under {fixed(threshold)} down "
                     f"to {fixed(last_row, 0)} mm")
    elif drop == 0:
        lines.append(f"  the induced vertical imbalance is {fixed(threshold)} (rule of thumb) "
                     "or more already in the primary position")
    else:
        lines.append(f"  the induced vertical imbalance reaches {fixed(threshold)} (rule of "
                     f"thumb) {fixed(drop, 1)} mm below the primary position")
    for eye in EYES:
        jump = section["image_jump"][eye]
        if jump:
            lines.append(f"  image jump at the {eye} segment top: {jump['in_words']}")
    lines.extend(f"  ! {warning}" for warning in section["warnings"])
    return lines


