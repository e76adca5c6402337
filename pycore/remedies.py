"""Remedies for a vertical imbalance at the reading point, quantified side by side.

For the same case each remedy says what it changes, what it leaves at distance
and at the reading point (net prism dioptres, signs as in the case format), and
carries ``applied_case``: the case document with the remedy applied through the
case keys, so that evaluating it gives the finished figures everywhere.

Facts of the trade used (shared/domain-sources.md, "Remedies"):

- slab-off about 1.5 to 6 prism dioptres (common practice); the conventional
  kind is base up on the lens with the most minus / least plus in the vertical
  meridian, a reverse slab base down on the most plus lens; how much to correct
  is a clinical decision (many correct two-thirds to all: common practice);
  grinding steps often 0.5 prism dioptre (from memory);
- dissimilar round segments: diameter difference (mm) = 20 x imbalance / add
  (common practice, from the segment optical-centre geometry);
- lowering both distance optical centres by h leaves dF (r - h)/10 at the
  reading level and makes dF h/10 at distance (derived from Prentice's rule).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

from .cases import Case
from .errors import CaseError
from .evaluate import EXTRA_RESULTS
from .eyes import EYES, Eye, other
from .gaze import LensPoint
from .imbalance_map import NetSampler, threshold_drop_mm
from .lens import SLAB_OFF_LIMIT
from .prentice import induced_prism
from .prism import Prism
from .reading_options import ReadingZoneOptions, options_of
from .remedy_cases import (
    Figures,
    copy_document,
    eye_document,
    finished,
    make_single_vision,
    near_prescription,
    set_prism,
    set_section,
    with_written_points,
)
from .segments import image_jump

SLAB_OFF_USUAL = (1.5, 6.0)  # prism dioptres, common practice
ROUND_SEGMENT_SIZES_MM = (20.0, 45.0)  # from memory: round segments commonly made
LOWERING_LIMIT_MM = 10.0

CAUTIONS = (
    "Whether to correct, and how much, is a clinical decision for the practitioner.",
    "A slab-off is a clinical and laboratory decision: confirm it with the laboratory and "
    "verify the prism on the finished lenses.",
    "Verify every figure on the finished spectacles and with the wearer.",
)

ORDER = ("none", "slab_off", "reverse_slab", "dissimilar_segments", "lower_centres",
         "near_prism_split", "reading_spectacles", "contact_lenses")
"""Every remedy id, in the order shown."""
_PREFERENCE = ("slab_off", "dissimilar_segments", "lower_centres", "reverse_slab",
               "near_prism_split", "reading_spectacles", "contact_lenses")


@dataclass
class Remedy:
    """One remedy's figures and words (built here; shown as a dict)."""

    id: str
    name: str
    summary: str = ""
    available: bool = True
    why_not: str | None = None
    changes: list[str] = field(default_factory=list)
    details: dict[str, Any] = field(default_factory=dict)
    warnings: list[str] = field(default_factory=list)
    applied: dict[str, Any] | None = None
    figures: Figures | None = None
    distance_from: str = "finished case"

    def as_dict(self, threshold: float) -> dict[str, Any]:
        result: dict[str, Any] = {
            "id": self.id, "name": self.name, "available": self.available,
            "why_not": self.why_not, "summary": self.summary, "changes": self.changes,
            "details": self.details, "warnings": self.warnings,
            "distance": None, "near": None, "within_threshold": None,
            "applied_case": self.applied if self.available else None,
        }
        if self.available and self.figures is not None:
            f = self.figures
            result["distance"] = {"vertical_base_up_right": f.distance_vertical,
                                  "horizontal_base_in": f.distance_horizontal,
                                  "from": self.distance_from}
            result["near"] = {"vertical_base_up_right": f.near_vertical,
                              "horizontal_base_in": f.near_horizontal,
                              "from": "finished case"}
            result["within_threshold"] = {"distance": abs(f.distance_vertical) < threshold,
                                          "near": abs(f.near_vertical) < threshold}
        return result

    def refuse(self, reason: str) -> Remedy:
        self.available, self.why_not = False, reason
        return self


@dataclass(frozen=True)
class Baseline:
    """The case as it is: its figures, settings and the imbalance to correct."""

    case: Case
    options: ReadingZoneOptions
    figures: Figures

    @property
    def near(self) -> float:
        return self.figures.near_vertical


def round_to_step(value: float, step: float) -> float:
    """``value`` to the nearest multiple of ``step`` (halves away from zero)."""
    return math.copysign(math.floor(abs(value) / step + 0.5) * step, value)


def _with_figures(remedy: Remedy, document: dict[str, Any], baseline: Baseline,
                  distance_from_original: bool = False) -> Remedy:
    try:
        case = finished(document)
        figures = Figures.of(case)
    except CaseError as exc:
        return remedy.refuse(f"The finished case would not be valid: {exc.message}")
    if distance_from_original:
        base = baseline.figures
        figures = Figures(base.distance_vertical, base.distance_horizontal,
                          figures.near_vertical, figures.near_horizontal, figures.geometry)
        remedy.distance_from = "the distance spectacles, unchanged"
    remedy.applied, remedy.figures = document, figures
    return remedy


# --------------------------------------------------------------------------- the remedies


def doing_nothing(base: Baseline) -> Remedy:
    remedy = Remedy("none", "No change")
    threshold = base.options.threshold
    under = abs(base.near) < threshold and abs(base.figures.distance_vertical) < threshold
    remedy.summary = (f"The vertical imbalance stays under {threshold:.2f} prism dioptre at "
                      "distance and at the reading point." if under else
                      f"The vertical imbalance reaches {threshold:.2f} prism dioptre or more; "
                      "leaving it is a choice for the practitioner and the wearer.")
    remedy.changes = ["Nothing: the spectacles as ordered."]
    remedy.details = {"under_threshold": under}
    return _with_figures(remedy, copy_document(base.case), base)


def _slab(base: Baseline, reverse: bool) -> Remedy:
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
    return _with_figures(remedy, document, base)


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
    return _with_figures(remedy, document, base)


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
    return _with_figures(remedy, document, base)


def _near_only_document(base: Baseline, worn_as: str) -> dict[str, Any]:
    case = base.case
    document = copy_document(case)
    for eye in EYES:
        make_single_vision(eye_document(document, eye), near_prescription(case, eye))
    set_section(document, reading_point="distance_reference", worn_as=worn_as,
                reading_depth_mm=base.figures.geometry.reading_drop_mm)
    return document


def near_prism_split(base: Baseline) -> Remedy:
    remedy = Remedy("near_prism_split", "Near-only spectacles with vertical prism split")
    options = base.options
    document = _near_only_document(base, "spectacles")
    try:
        plain = Figures.of(with_written_points(document, ("near",)))
    except CaseError as exc:
        return remedy.refuse(f"The near-only spectacles cannot be worked out: {exc.message}")
    total = round_to_step(plain.near_vertical, options.lab_step)
    if total == 0:
        return remedy.refuse("Near-only spectacles would leave too little imbalance to "
                             "prescribe prism for.")
    share = {"right": Prism(0.0, -total / 2.0), "left": Prism(0.0, total / 2.0)}
    for eye in EYES:
        eye_doc = eye_document(document, eye)
        set_prism(eye_doc, base.case.lens(eye).prism + share[eye])
    remedy.details = {"imbalance_without_prism": plain.near_vertical, "prism_total": total,
                      "lab_step": options.lab_step,
                      "prism": {eye: share[eye].as_dict(eye) for eye in EYES}}
    remedy.summary = (f"Reading spectacles made up to the near prescription, with "
                      f"{abs(total) / 2:.2f} base {'down' if total > 0 else 'up'} before the "
                      f"right eye and {abs(total) / 2:.2f} base {'up' if total > 0 else 'down'} "
                      "before the left.")
    remedy.changes = [
        "Near only: distance vision through the distance spectacles, which stay as they are.",
        f"The imbalance of {abs(plain.near_vertical):.2f} at the reading point is prescribed "
        "as prism, half before each eye (total rounded to the laboratory step).",
    ]
    return _with_figures(remedy, document, base, distance_from_original=True)


def reading_spectacles(base: Baseline) -> Remedy:
    remedy = Remedy("reading_spectacles", "Separate reading spectacles")
    document = _near_only_document(base, "reading_spectacles")
    try:
        with_written_points(document, ("near",))
    except CaseError as exc:
        return remedy.refuse(f"The reading spectacles cannot be worked out: {exc.message}")
    case = base.case
    vertical = {eye: near_prescription(case, eye).power_matrix.yy for eye in EYES}
    per_mm = abs(vertical["right"] - vertical["left"]) / 10.0
    remedy.details = {"near_prescription": {eye: near_prescription(case, eye).written()
                                            for eye in EYES},
                      "vertical_change_per_mm_from_reading_point": per_mm}
    remedy.summary = ("Single-vision reading spectacles centred on the near visual points: "
                      "no induced imbalance where the eyes read.")
    remedy.changes = [
        "The optical centres sit at the near visual points, so the reading point has no "
        "induced prism.",
        f"Looking away from it, the imbalance grows by {per_mm:.2f} prism dioptres per mm "
        "up or down.",
        "Two pairs of spectacles: distance vision through the distance pair, unchanged.",
    ]
    return _with_figures(remedy, document, base, distance_from_original=True)


def contact_lenses(base: Baseline) -> Remedy:
    remedy = Remedy("contact_lenses", "Contact lenses")
    case = base.case
    document = copy_document(case)
    had_prism = False
    for eye in EYES:
        eye_doc = eye_document(document, eye)
        had_prism = had_prism or case.lens(eye).prism.amount > 0
        make_single_vision(eye_doc, case.lens(eye).prescription)
        eye_doc.pop("prism", None)
    set_section(document, worn_as="contact_lenses", reading_point="distance_reference",
                reading_depth_mm=base.figures.geometry.reading_drop_mm)
    try:
        with_written_points(document, ("distance", "near"))
    except CaseError as exc:
        return remedy.refuse(f"The contact-lens case cannot be worked out: {exc.message}")
    remedy.summary = ("Contact lenses move with the eyes, so the eyes always look through "
                      "their optical centres: no induced imbalance anywhere.")
    remedy.changes = [
        "The induced imbalance goes, at distance and at near.",
        "Powers are the spectacle prescription here; the contact-lens powers differ with "
        "vertex distance, more so for high powers.",
        "Near vision then needs equal-add multifocal contact lenses or reading spectacles "
        "worn over them.",
    ]
    if had_prism:
        remedy.warnings.append("The prescribed prism cannot be carried by contact lenses in "
                               "the usual way; the finished case leaves it out.")
    return _with_figures(remedy, document, base)


_BUILDERS: dict[str, Callable[[Baseline], Remedy]] = {
    "none": doing_nothing,
    "slab_off": lambda base: _slab(base, reverse=False),
    "reverse_slab": lambda base: _slab(base, reverse=True),
    "dissimilar_segments": dissimilar_segments,
    "lower_centres": lower_centres,
    "near_prism_split": near_prism_split,
    "reading_spectacles": reading_spectacles,
    "contact_lenses": contact_lenses,
}


def all_remedies(case: Case) -> tuple[Baseline, list[Remedy]]:
    """Every remedy for the case, in ``ORDER``."""
    base = Baseline(case, options_of(case), Figures.of(case))
    return base, [_BUILDERS[key](base) for key in ORDER]


def recommended(base: Baseline, remedies: list[Remedy]) -> str:
    """A suggestion, not a decision: "none" when the case is already under the threshold
    at distance and at the reading point; else the first remedy, in the order of
    preference, that brings the reading point under it without leaving distance over it
    (or worse than it was), preferring one with no warnings."""
    threshold = base.options.threshold
    before = abs(base.figures.distance_vertical)
    if abs(base.near) < threshold and before < threshold:
        return "none"

    def good(remedy: Remedy) -> bool:
        figures = remedy.figures
        if not remedy.available or figures is None:
            return False
        distance = abs(figures.distance_vertical)
        return abs(figures.near_vertical) < threshold and (
            distance < threshold or distance <= before + 1e-9)

    by_id = {remedy.id: remedy for remedy in remedies}
    for strict in (True, False):
        for key in _PREFERENCE:
            if good(by_id[key]) and not (strict and by_id[key].warnings):
                return key
    return "none"


def remedies_section(case: Case, result: dict[str, Any]) -> dict[str, Any] | None:
    """The ``remedies`` result: every remedy side by side and the suggested one."""
    if not case.document:
        return None
    base, remedies = all_remedies(case)
    threshold = base.options.threshold
    choice = recommended(base, remedies)
    entries = [remedy.as_dict(threshold) for remedy in remedies]
    for entry in entries:
        entry["recommended"] = entry["id"] == choice
    return {
        "threshold": threshold,
        "before": {"distance": base.figures.distance_vertical, "near": base.near},
        "order": list(ORDER),
        "recommended": choice,
        "options": entries,
        "cautions": list(CAUTIONS),
        "summary_lines": _summary(base, entries, choice),
    }


def _summary(base: Baseline, entries: list[dict[str, Any]], choice: str) -> list[str]:
    lines = [f"Remedies (vertical imbalance, threshold {base.options.threshold:.2f}; "
             "+ = base up before the right eye)",
             f"  {'':46} {'distance':>9} {'near':>9}"]
    for entry in entries:
        mark = "*" if entry["recommended"] else " "
        if entry["available"]:
            lines.append(f" {mark}{entry['name'][:46]:46} "
                         f"{entry['distance']['vertical_base_up_right']:+9.2f} "
                         f"{entry['near']['vertical_base_up_right']:+9.2f}")
            lines.append(f"     {entry['summary']}")
        else:
            lines.append(f" {mark}{entry['name'][:46]:46} {'-':>9} {'-':>9}  ({entry['why_not']})")
    lines.append(f"  * suggested: {choice.replace('_', ' ')}; "
                 "the choice is a clinical decision.")
    lines.extend(f"  ! {caution}" for caution in CAUTIONS)
    return lines


EXTRA_RESULTS["remedies"] = remedies_section
