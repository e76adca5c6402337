"""Remedies that change the spectacles themselves: slab-off and reverse slab,
dissimilar or compensating segments, and lowered distance optical centres.

Facts of the trade used (shared/domain-sources.md, "Remedies"): slab-off about
1.5 to 6 prism dioptres (common practice); the conventional kind base up on the
lens with the most minus / least plus in the vertical meridian, a reverse slab
base down on the most plus lens; how much to correct is a clinical decision
(many correct two-thirds to all: common practice); grinding steps often 0.5
prism dioptre (from memory). Dissimilar round segments: diameter difference
(mm) = 20 x imbalance / add (common practice). Lowering both distance optical
centres by h leaves dF (r - h)/10 at the reading level and makes dF h/10 at
distance (derived from Prentice's rule).
"""

from __future__ import annotations

import math
from typing import Any

from pycore.optics.eyes import EYES, Eye, other
from pycore.optics.prentice import induced_prism
from pycore.reading.imbalance_map import NetSampler, threshold_drop_mm
from pycore.reading.remedies.finished_case import (
    Baseline,
    Remedy,
    copy_document,
    eye_document,
    round_to_step,
    set_prism,
    with_figures,
)
from pycore.spectacles.gaze import LensPoint
from pycore.spectacles.lens import SLAB_OFF_LIMIT
from pycore.spectacles.segments import image_jump

SLAB_OFF_USUAL = (1.5, 6.0)  # prism dioptres, common practice
ROUND_SEGMENT_SIZES_MM = (20.0, 45.0)  # from memory: round segments commonly made
LOWERING_LIMIT_MM = 10.0


def slab_off(base: Baseline, reverse: bool = False) -> Remedy:
    """Conventional slab-off (base up) or reverse slab (base down) on the lens it belongs."""
    name = "Reverse slab" if reverse else "Slab-off"
    remedy = Remedy("reverse_slab" if reverse else "slab_off", name)
    case, options = base.case, base.options
    if abs(base.near) < 1e-9:
        return remedy.refuse("There is no vertical imbalance at the reading point.")
    # Net base up before the right eye is cancelled by base up before the left or base
    # down before the right.
    needs_base_up: Eye = "left" if base.near > 0 else "right"
    eye = other(needs_base_up) if reverse else needs_base_up
    sign = -1.0 if reverse else 1.0
    raw = options.correct_fraction * abs(base.near)
    rounded = round_to_step(raw, options.lab_step)
    powers = {e: case.lens(e).power.yy for e in EYES}
    trade_eye = min(EYES, key=lambda e: powers[e]) if not reverse else max(
        EYES, key=lambda e: powers[e])
    remedy.details = {
        "eye": eye, "base": "down" if reverse else "up",
        "raw": raw, "rounded": rounded, "lab_step": options.lab_step,
        "correct_fraction": options.correct_fraction,
        "vertical_powers": powers,
        "usual_lens_by_vertical_power": trade_eye if powers["right"] != powers["left"] else None,
    }
    if rounded == 0:
        return remedy.refuse(f"{raw:.2f} prism dioptres rounds to nothing at the "
                             f"{options.lab_step:g} laboratory step.")
    if rounded > SLAB_OFF_LIMIT:
        return remedy.refuse(f"{rounded:.2f} prism dioptres is beyond what the tool accepts "
                             f"for a slab-off ({SLAB_OFF_LIMIT:g}).")
    line, where = _slab_line(base, eye, rounded)
    lens = case.lens(eye)
    existing = lens.slab_off.base_up if lens.slab_off is not None else 0.0
    amount = existing + sign * rounded
    remedy.details.update({"line_mm": line, "line_placed": where, "base_up": amount})
    document = copy_document(case)
    eye_document(document, eye)["slab_off"] = {"base_up": amount, "line_mm": line}
    kind = "reverse slab" if reverse else "slab-off"
    remedy.summary = (f"{kind.capitalize()} on the {eye} lens: {rounded:.2f} base "
                      f"{'down' if reverse else 'up'} below a line at {line:.1f} mm "
                      f"({raw:.2f} raw, rounded to {options.lab_step:g} steps).")
    remedy.changes = [
        f"The {eye} lens gets {rounded:.2f} prism dioptres base {'down' if reverse else 'up'} "
        f"below the {kind} line, {where}.",
        "Above the line nothing changes; a faint line shows across the lens.",
    ]
    low, high = SLAB_OFF_USUAL
    if not low <= rounded <= high:
        remedy.warnings.append(f"{rounded:.2f} prism dioptres is outside the usual "
                               f"{low:g}-{high:g} range for a {kind} (common practice).")
    if powers["right"] != powers["left"] and trade_eye != eye:
        remedy.warnings.append(
            f"The usual rule puts a {kind} on the {trade_eye} lens (the "
            f"{'most plus' if reverse else 'most minus / least plus'} vertically), but here "
            f"the adds turn the imbalance the other way: the {eye} lens is the one that "
            "corrects it.")
    if existing:
        remedy.warnings.append(f"The {eye} lens already had {existing:.2f} of slab-off; the "
                               "finished case carries the total.")
    return with_figures(remedy, document, base)


def _slab_line(base: Baseline, eye: Eye, amount: float) -> tuple[float, str]:
    """Where the slab line goes on ``eye``'s lens (mm from its reference point)."""
    case, geometry = base.case, base.figures.geometry
    lens = case.lens(eye)
    reading_up = geometry.coords(eye, geometry.reading_drop_mm)[1]
    if lens.segment is not None and lens.add and reading_up <= lens.segment.top_mm:
        return lens.segment.top_mm, "at the segment top (common practice)"
    # No segment line to follow: put it where the imbalance reaches half the correction,
    # so that neither side of the line is left with more than half of it.
    drop = threshold_drop_mm(NetSampler(case, geometry), amount / 2.0,
                             geometry.reading_drop_mm)
    if drop is None:
        drop = geometry.reading_drop_mm / 2.0
    return (geometry.coords(eye, drop)[1],
            "where the imbalance down the reading path reaches half the correction")


def dissimilar_segments(base: Baseline) -> Remedy:
    remedy = Remedy("dissimilar_segments", "Dissimilar or compensating segments")
    case = base.case
    segments = {eye: case.lens(eye).segment for eye in EYES}
    if any(segments[eye] is None or not case.lens(eye).add for eye in EYES):
        return remedy.refuse("Both lenses need bifocal segments for this remedy.")
    if abs(base.near) < 1e-9:
        return remedy.refuse("There is no vertical imbalance at the reading point.")
    options = []
    for eye in EYES:
        segment = segments[eye]
        assert segment is not None
        add = case.lens(eye).add
        # Lowering a segment's optical centre by d changes that eye's base up by
        # -add d / 10: the right must go down by 10 V / add, the left up by as much.
        move = (10.0 * base.near / add) * (1.0 if eye == "right" else -1.0)
        below = segment.optical_centre_below_top_mm + move
        outline = segment.outline
        option: dict[str, Any] = {"eye": eye, "optical_centre_move_down_mm": move}
        if outline is not None and outline.shape == "round":
            diameter = float(round(2.0 * below))
            low, high = ROUND_SEGMENT_SIZES_MM
            option.update({"kind": "round segment diameter", "from_mm": outline.size_mm,
                           "to_mm": diameter, "diameter_change_mm": 2.0 * move,
                           "feasible": low <= diameter <= high})
            option["segment"] = {"shape": "round", "diameter_mm": diameter,
                                 "optical_centre_below_top_mm": diameter / 2.0}
        else:
            placed = round(below * 2.0) / 2.0
            option.update({"kind": "segment optical centre placed by the laboratory",
                           "from_mm": segment.optical_centre_below_top_mm, "to_mm": placed,
                           "feasible": 0.0 <= placed <= 25.0})
            option["segment"] = {"optical_centre_below_top_mm": placed}
        option["image_jump"] = abs(image_jump(add, option["segment"][
            "optical_centre_below_top_mm"]))
        options.append(option)
    feasible = [o for o in options if o["feasible"]]
    remedy.details = {"options": options}
    if not feasible:
        return remedy.refuse("Neither segment can be changed enough within usual sizes "
                             f"(round {ROUND_SEGMENT_SIZES_MM[0]:g}-"
                             f"{ROUND_SEGMENT_SIZES_MM[1]:g} mm, from memory).")
    chosen = min(feasible, key=lambda o: abs(o["optical_centre_move_down_mm"]))
    eye = chosen["eye"]
    document = copy_document(case)
    eye_document(document, eye)["segment"].update(chosen["segment"])
    remedy.details["chosen"] = eye
    if chosen["kind"] == "round segment diameter":
        remedy.summary = (f"A {chosen['to_mm']:.0f} mm round segment before the {eye} eye "
                          f"instead of {chosen['from_mm']:.0f} mm.")
    else:
        remedy.summary = (f"The {eye} segment's optical centre placed "
                          f"{chosen['to_mm']:.1f} mm below its top instead of "
                          f"{chosen['from_mm']:.1f} mm.")
    remedy.changes = [
        "The segment's own prism changes by the same amount everywhere in the segment, "
        "so the correction holds wherever the eyes read through both segments.",
        f"The image jump at the {eye} segment top becomes {chosen['image_jump']:.2f} prism "
        "dioptres.",
    ]
    if chosen["kind"] == "round segment diameter":
        remedy.changes.append("Diameter difference = 20 x imbalance / add (common practice).")
    return with_figures(remedy, document, base)


def lower_centres(base: Baseline) -> Remedy:
    remedy = Remedy("lower_centres", "Lowered distance optical centres")
    case, options = base.case, base.options
    if any(case.lens(eye).progressive is not None for eye in EYES):
        return remedy.refuse("A progressive lens's distance centre is tied to its fitting "
                             "cross; lowering it lowers the near zone too.")
    per_mm = {eye: induced_prism(case.lens(eye).power, LensPoint(0.0, 0.0), eye,
                                 centre_mm=(0.0, -1.0)) for eye in EYES}
    slope = per_mm["right"].base_up - per_mm["left"].base_up  # net vertical per mm lowered
    if abs(slope) < 1e-9:
        return remedy.refuse("The lenses have the same vertical power, so lowering both "
                             "centres changes nothing between the eyes.")
    distance = base.figures.distance_vertical
    if options.lower_centres_mm is not None:
        drop, chosen_by = options.lower_centres_mm, "as set in reading_zone.lower_centres_mm"
    else:
        # Balance: the same size of imbalance left at distance and at the reading point.
        drop = round(-(base.near + distance) / (2.0 * slope) * 2.0) / 2.0
        drop = max(-LOWERING_LIMIT_MM, min(LOWERING_LIMIT_MM, drop))
        chosen_by = "balancing what is left at distance against the reading point"
    if drop == 0:
        return remedy.refuse("Lowering the centres would not reduce the imbalance here.")
    document = copy_document(case)
    for eye in EYES:
        lens = case.lens(eye)
        set_prism(eye_document(document, eye), lens.prism + per_mm[eye].scaled(drop))
    reading = base.figures.geometry.reading_drop_mm
    trade = [{"lowered_mm": float(h), "distance": distance + slope * h,
              "near": base.near + slope * h} for h in range(0, math.ceil(reading) + 1)]
    remedy.details = {"lowered_mm": drop, "chosen_by": chosen_by,
                      "vertical_change_per_mm": slope, "trade": trade,
                      "prism_by_decentration": {
                          eye: per_mm[eye].scaled(drop).as_dict(eye) for eye in EYES}}
    way = "lowered" if drop > 0 else "raised"
    remedy.summary = (f"Both distance optical centres {way} {abs(drop):.1f} mm: the reading "
                      "point's imbalance falls and the same amount appears at distance.")
    remedy.changes = [
        f"Each lens's optical centre sits {abs(drop):.1f} mm {'below' if drop > 0 else 'above'} "
        "the pupil; the finished case carries it as the prism this decentration gives at "
        "the distance reference point.",
        f"Each mm trades {abs(slope):.2f} prism dioptres of vertical imbalance between near "
        "and distance.",
    ]
    if case.lens("right").segment is not None or case.lens("left").segment is not None:
        remedy.changes.append("The segments stay where they are.")
    return with_figures(remedy, document, base)
