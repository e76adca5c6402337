"""Remedies that change the spectacles themselves: slab-off and reverse slab,
dissimilar segments, and lowered distance optical centres.

Each corrects the induced vertical imbalance at the reading point (the total
minus the net of the prescribed prism, which no remedy touches). Facts of the
trade used, with their sources in docs/sources.md: slab-off about 1.5 to 6 prism
dioptres (common practice); the conventional kind base up on the lens with the
most minus / least plus in the vertical meridian, a reverse slab base down on the
most plus lens; how much to correct is a clinical decision (many correct
two-thirds to all: common practice); grinding steps often 0.5 prism dioptre
(from memory). The slab line lies below the distance visual point so that
nothing above it changes: at the segment top on a bifocal, else halfway from the
primary position to the reading point (common practice). Dissimilar segments
are chosen only from segments that are made (pycore.spectacles.segments, common practice).
Lowering both distance optical centres by h leaves dF (r - h)/10 at the reading
level and makes dF h/10 at distance (derived from Prentice's rule).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache
from typing import Any

from pycore.optics.eyes import EYES, Eye, other
from pycore.optics.prentice import induced_prism
from pycore.reading.remedies.finished_case import (
    Baseline,
    Remedy,
    copy_document,
    eye_document,
    round_to_step,
    shifted,
    with_figures,
)
from pycore.rounding import fixed, half_up, half_up_steps
from pycore.spectacles.gaze import LENS_REACH_MM, LensPoint
from pycore.spectacles.lens import CENTRE_MOVE_UP_MM, SLAB_OFF_LIMIT, Lens
from pycore.spectacles.segments import SegmentOutline, image_jump

SLAB_OFF_USUAL = (1.5, 6.0)  # prism dioptres, common practice
LOWERING_LIMIT_MM = 10.0
LINE_STEP_MM = 0.5
"""Slab lines and segment centres are given to the half millimetre (rounded half up)."""
_LETTER = {"right": "R", "left": "L"}

MADE_SEGMENTS: dict[str, tuple[float | None, ...]] = {
    "round": (22.0, 24.0, 25.0, 28.0, 30.0, 38.0, 40.0),
    "flat_top": (25.0, 28.0, 35.0, 40.0),
    "straight_across": (None,),
}
"""Segments the dissimilar-segment remedy chooses from (sizes in mm: round diameters,
flat-top widths; common practice, docs/sources.md). Their optical centres follow the
usual rules of pycore.spectacles.segments."""


def slab_off(base: Baseline, reverse: bool = False) -> Remedy:
    """Conventional slab-off (base up) or reverse slab (base down) on the lens it belongs,
    for the induced imbalance at the reading point."""
    name = "Reverse slab" if reverse else "Slab-off"
    remedy = Remedy("reverse_slab" if reverse else "slab_off", name)
    case, options = base.case, base.options
    if abs(base.near) < 1e-9:
        return remedy.refuse("There is no induced vertical imbalance at the reading point.")
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
        return remedy.refuse(f"{fixed(raw)} prism dioptres rounds to nothing at the "
                             f"{options.lab_step:g} laboratory step.")
    if rounded > SLAB_OFF_LIMIT:
        return remedy.refuse(f"{fixed(rounded)} prism dioptres is beyond what the tool "
                             f"accepts for a slab-off ({SLAB_OFF_LIMIT:g}).")
    placed = slab_line(base, eye)
    if placed is None:
        return remedy.refuse("The reading point is not below the distance visual point, so "
                             "no slab line can lie between them.")
    line, where = placed
    lens = case.lens(eye)
    existing = lens.slab_off.base_up if lens.slab_off is not None else 0.0
    amount = existing + sign * rounded
    remedy.details.update({"line_mm": line, "line_placed": where, "base_up": amount})
    document = copy_document(case)
    eye_document(document, eye)["slab_off"] = {"base_up": amount, "line_mm": line}
    # The line lies below the distance visual point and at or above the reading point:
    # the slab's prism reaches the reading point only (nothing else moves).
    closed = None
    if lens.slab_off is None and abs(line) <= LENS_REACH_MM:
        closed = shifted(base.figures, near_vertical=amount if eye == "right" else -amount)
    kind = "reverse slab" if reverse else "slab-off"
    way = "down" if reverse else "up"
    remedy.summary = (f"{kind.capitalize()} on the {eye} lens: {fixed(rounded)} base {way} "
                      f"below a line {_below_words(line)} ({fixed(raw)} raw, rounded to "
                      f"{options.lab_step:g} steps).")
    remedy.changes = [
        f"The {eye} lens gets {fixed(rounded)} prism dioptres base {way} below the {kind} "
        f"line, {where}.",
        "Above the line nothing changes, the distance visual point included; a faint line "
        "shows across the lens.",
        "The prescribed prism stays as prescribed.",
    ]
    remedy.order_lines = [f"{_LETTER[eye]}: {kind} {fixed(rounded)} base {way}, line "
                          f"{_line_words(lens, line, where)}"]
    low, high = SLAB_OFF_USUAL
    if not low <= rounded <= high:
        remedy.warnings.append(f"{fixed(rounded)} prism dioptres is outside the usual "
                               f"{low:g}-{high:g} range for a {kind} (common practice).")
    if powers["right"] != powers["left"] and trade_eye != eye:
        remedy.warnings.append(
            f"The usual rule puts a {kind} on the {trade_eye} lens (the "
            f"{'most plus' if reverse else 'most minus / least plus'} vertically), but here "
            f"the adds turn the imbalance the other way: the {eye} lens is the one that "
            "corrects it.")
    if existing:
        remedy.warnings.append(f"The {eye} lens already had {fixed(existing)} of slab-off; "
                               "the finished case carries the total.")
    return with_figures(remedy, document, base, closed_form=closed)


SEGMENT_TOP_RULE = "at the segment top (common practice)"
HALFWAY_RULE = "halfway from the primary position to the reading point (common practice)"


def slab_line(base: Baseline, eye: Eye) -> tuple[float, str] | None:
    """Where the slab line goes on ``eye``'s lens (mm from its reference point) and the
    rule that put it there, always below the distance visual point and at or above the
    reading point; None when the reading point is not below the distance visual point."""
    case, geometry = base.case, base.figures.geometry
    lens = case.lens(eye)
    distance_up = geometry.coords(eye, 0.0)[1]
    reading_up = geometry.coords(eye, geometry.reading_drop_mm)[1]
    if reading_up >= distance_up:
        return None
    segment = lens.segment
    if segment is not None and lens.add and reading_up <= segment.top_mm < distance_up:
        return segment.top_mm, SEGMENT_TOP_RULE
    halfway = (distance_up + reading_up) / 2.0
    line = half_up(halfway, LINE_STEP_MM)
    if not reading_up <= line < distance_up:
        line = halfway
    return line, HALFWAY_RULE


def _below_words(line_mm: float) -> str:
    if line_mm == 0:
        return "at the distance reference point"
    way = "below" if line_mm < 0 else "above"
    return f"{fixed(abs(line_mm), 1)} mm {way} the distance reference point"


def _line_words(lens: Lens, line_mm: float, rule: str) -> str:
    place = _below_words(line_mm)
    if lens.progressive is not None:
        below_cross = lens.progressive.fitting_cross_up_mm - line_mm
        place = (f"{place} (the prism reference point; {fixed(below_cross, 1)} mm below the "
                 "fitting cross)")
    if rule == SEGMENT_TOP_RULE:
        return f"at the segment top ({place})"
    return f"{place}, {rule}"


# --------------------------------------------------------------------------- segments


@dataclass(frozen=True)
class MadeSegment:
    """A segment that is made: its shape, size (mm; None for straight-across) and where its
    optical centre sits below its top by the usual rule (mm)."""

    shape: str
    size_mm: float | None

    @property
    def outline(self) -> SegmentOutline:
        return _made_outline(self.shape, self.size_mm)

    @property
    def centre_below_top_mm(self) -> float:
        return self.outline.usual_optical_centre_below_top_mm

    def words(self) -> str:
        shape = self.shape.replace("_", "-")
        size = f" {self.size_mm:g} mm" if self.size_mm is not None else ""
        return f"{shape}{size}"

    def document(self, top_mm: float) -> dict[str, Any]:
        """The case's ``segment`` for this segment at ``top_mm``."""
        found: dict[str, Any] = {"top_mm": top_mm, "shape": self.shape,
                                 "optical_centre_below_top_mm": self.centre_below_top_mm}
        key = self.outline.size_key
        if key is not None:
            found[key] = self.size_mm
        return found


@lru_cache(maxsize=32)
def _made_outline(shape: str, size_mm: float | None) -> SegmentOutline:
    """The outline of a made segment (a few, each checked once)."""
    return SegmentOutline(shape, size_mm)  # type: ignore[arg-type]


@lru_cache(maxsize=1)
def made_segments() -> tuple[MadeSegment, ...]:
    """Every segment the remedy chooses from (pycore.spectacles.segments.MADE_SEGMENTS)."""
    return tuple(MadeSegment(shape, size) for shape, sizes in MADE_SEGMENTS.items()
                 for size in sizes)


def _current(lens: Lens) -> MadeSegment | None:
    segment = lens.segment
    assert segment is not None
    outline = segment.outline
    if outline is None:
        return None
    made = MadeSegment(outline.shape, outline.size_mm)
    if abs(made.centre_below_top_mm - segment.optical_centre_below_top_mm) > 1e-9:
        return None
    return made


def dissimilar_segments(base: Baseline) -> Remedy:
    """Segments whose optical centres sit at different depths below equal tops, chosen from
    made segments, so that their own prism cancels the induced imbalance at the reading
    point (lowering a segment's centre by d changes that eye's base up by -add d / 10,
    Prentice's rule)."""
    remedy = Remedy("dissimilar_segments", "Dissimilar segments")
    case, geometry = base.case, base.figures.geometry
    lenses = {eye: case.lens(eye) for eye in EYES}
    if any(lenses[eye].segment is None or not lenses[eye].add for eye in EYES):
        return remedy.refuse("Both lenses need bifocal segments for this remedy.")
    if abs(base.near) < 1e-9:
        return remedy.refuse("There is no induced vertical imbalance at the reading point.")
    reading = {eye: geometry.coords(eye, geometry.reading_drop_mm) for eye in EYES}
    for eye in EYES:
        segment = lenses[eye].segment
        assert segment is not None
        if not segment.covers(LensPoint(*reading[eye])):
            return remedy.refuse(f"The reading point is not within the {eye} segment, so its "
                                 "segment's prism does not reach it.")

    def fits(eye: Eye, made: MadeSegment) -> bool:
        segment = lenses[eye].segment
        assert segment is not None
        in_mm, up_mm = reading[eye]
        return made.outline.contains(in_mm - segment.optical_centre_in_mm,
                                     segment.top_mm - up_mm)

    def change(eye: Eye, made: MadeSegment | None) -> float:
        """Change of the net vertical at the reading point with ``made`` before ``eye``."""
        segment = lenses[eye].segment
        assert segment is not None
        if made is None:
            return 0.0
        move = made.centre_below_top_mm - segment.optical_centre_below_top_mm
        per_eye = -lenses[eye].add * move / 10.0
        return per_eye if eye == "right" else -per_eye

    def jump(eye: Eye, made: MadeSegment | None) -> float:
        """The image jump (amount) at ``eye``'s segment top with ``made`` (0 unchanged)."""
        if made is None:
            return 0.0
        return abs(image_jump(lenses[eye].add, made.centre_below_top_mm))

    current = {eye: _current(lenses[eye]) for eye in EYES}
    # Each choice with its change of the net and its image jump, worked out once.
    choices = {eye: [(made, change(eye, made), jump(eye, made)) for made in
                     (None, *[m for m in made_segments() if m != current[eye] and fits(eye, m)])]
               for eye in EYES}
    near = base.near
    # Every pair but leaving both: (right, left, residual, how many change, their jumps).
    pairs = [(right, left, near + right_change + left_change,
              (right is not None) + (left is not None), right_jump + left_jump)
             for right, right_change, right_jump in choices["right"]
             for left, left_change, left_jump in choices["left"]
             if right is not None or left is not None]
    # The smallest residual to the thousandth (halves up), then the fewest changed, then
    # the smallest jumps; the first such pair.
    best = min(pairs, default=None,
               key=lambda pair: (half_up_steps(pair[2], 0.001), pair[3], pair[4]))
    remedy.details = {
        "made_segments": {shape: list(sizes) for shape, sizes in MADE_SEGMENTS.items()},
        "made_segments_source": "common practice",
        "optical_centre_rules": {m.shape: m.outline.rule for m in made_segments()},
    }
    if best is None or abs(best[2]) >= abs(base.near) - 1e-9:
        return remedy.refuse("No pair of made segments covering the reading point reduces "
                             "the induced imbalance.")
    right, left, residual = best[:3]
    chosen: dict[Eye, MadeSegment | None] = {"right": right, "left": left}
    document = copy_document(case)
    entries = []
    for eye in EYES:
        segment = lenses[eye].segment
        assert segment is not None
        made = chosen[eye]
        below = made.centre_below_top_mm if made is not None else \
            segment.optical_centre_below_top_mm
        entry: dict[str, Any] = {
            "eye": eye, "changed": made is not None,
            "kind": made.words() if made is not None else "unchanged",
            "from_mm": segment.optical_centre_below_top_mm, "to_mm": below,
            "optical_centre_move_down_mm": below - segment.optical_centre_below_top_mm,
            "feasible": True,
            "image_jump": abs(image_jump(lenses[eye].add, below)),
        }
        entries.append(entry)
        if made is not None:
            eye_doc = eye_document(document, eye)
            kept = {k: v for k, v in eye_doc["segment"].items() if k == "optical_centre_in_mm"}
            eye_doc["segment"] = {**made.document(segment.top_mm), **kept}
    changed_eyes = [eye for eye in EYES if chosen[eye] is not None]
    remedy.details.update({"options": entries,
                           "chosen": changed_eyes[0] if len(changed_eyes) == 1 else "both",
                           "residual_near": residual})
    remedy.order_lines = [_segment_order_line(eye, lenses[eye], chosen[eye]) for eye in EYES]
    said = " and ".join(f"a {made.words()} segment before the {e} eye"
                        for e in changed_eyes if (made := chosen[e]) is not None)
    remedy.summary = (f"Equal segment tops with {said}: the segment optical centres sit at "
                      "different depths, so the segments' own prism cancels the induced "
                      f"imbalance (about {fixed(abs(residual))} left).")
    remedy.changes = [
        "The segment's own prism changes by the same amount everywhere in the segment, "
        "so the correction holds wherever the eyes read through both segments.",
        *[f"The image jump at the {e['eye']} segment top becomes "
          f"{fixed(e['image_jump'])} prism dioptres." for e in entries if e["changed"]],
        "Chosen only from made segments: round "
        f"{'/'.join(f'{v:g}' for v in MADE_SEGMENTS['round'])} mm, flat-top "
        f"{'/'.join(f'{v:g}' for v in MADE_SEGMENTS['flat_top'])} mm, straight-across "
        "(common practice).",
    ]
    return with_figures(remedy, document, base)


def _segment_order_line(eye: Eye, lens: Lens, made: MadeSegment | None) -> str:
    segment = lens.segment
    assert segment is not None
    top = _below_words(segment.top_mm)
    if made is None:
        current = _current(lens)
        what = current.words() if current is not None else "segment"
        return (f"{_LETTER[eye]}: {what} segment as ordered, top {top}, optical centre "
                f"{fixed(segment.optical_centre_below_top_mm, 1)} mm below its top")
    if made.shape == "straight_across":
        centre = "on the dividing line"
    elif made.shape == "round":
        centre = (f"at its centre, {fixed(made.centre_below_top_mm, 1)} mm below its top "
                  "(common practice)")
    else:
        centre = f"about {fixed(made.centre_below_top_mm, 1)} mm below its top (common practice)"
    return f"{_LETTER[eye]}: {made.words()} segment, top {top}, optical centre {centre}"


def lower_centres(base: Baseline) -> Remedy:
    """Both distance optical centres lowered (or raised) by the same amount: the induced
    imbalance moves between the reading point and distance."""
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
    distance = base.distance
    if options.lower_centres_mm is not None:
        drop, chosen_by = options.lower_centres_mm, "as set in reading_zone.lower_centres_mm"
    else:
        # Balance: the same size of induced imbalance left at distance and at the reading
        # point, to the half millimetre (rounded half up).
        drop = half_up(-(base.near + distance) / (2.0 * slope), LINE_STEP_MM)
        drop = max(-LOWERING_LIMIT_MM, min(LOWERING_LIMIT_MM, drop))
        chosen_by = "balancing what is left at distance against the reading point"
    if drop == 0:
        return remedy.refuse("Lowering the centres would not reduce the imbalance here.")
    # The finished case moves each optical centre (optical_centre_mm): the prism that
    # gives is induced, so the prescribed prism stays as written.
    document = copy_document(case)
    for eye in EYES:
        centre_in, centre_up = case.lens(eye).centre_mm
        eye_document(document, eye)["optical_centre_mm"] = {"in_mm": centre_in,
                                                            "up_mm": centre_up - drop}
    reading = base.figures.geometry.reading_drop_mm
    trade = [{"lowered_mm": float(h), "distance": distance + slope * h,
              "near": base.near + slope * h} for h in range(0, math.ceil(reading) + 1)]
    remedy.details = {"lowered_mm": drop, "chosen_by": chosen_by,
                      "vertical_change_per_mm": slope, "trade": trade,
                      "prism_by_decentration": {
                          eye: per_mm[eye].scaled(drop).as_dict(eye) for eye in EYES}}
    remedy.centring = (f"optical centres {fixed(abs(drop), 1)} mm "
                       f"{'below' if drop > 0 else 'above'} the distance visual points")
    way = "lowered" if drop > 0 else "raised"
    place = "below" if drop > 0 else "above"
    remedy.summary = (f"Both distance optical centres {way} {fixed(abs(drop), 1)} mm: the "
                      "reading point's induced imbalance falls and the same amount appears "
                      "at distance.")
    remedy.changes = [
        f"Each lens's optical centre sits {fixed(abs(drop), 1)} mm {place} the pupil; the "
        "finished case carries it as each lens's optical-centre position, and the prism "
        "that decentration gives counts as induced (the prescribed prism is unchanged).",
        f"Each mm trades {fixed(abs(slope))} prism dioptres of vertical imbalance between "
        "near and distance.",
    ]
    remedy.order_lines = [
        f"{_LETTER[eye]}: optical centre {fixed(abs(drop), 1)} mm {place} the fitting "
        f"height (the pupil centre){_prescribed_words(case.lens(eye))}" for eye in EYES]
    if case.lens("right").segment is not None or case.lens("left").segment is not None:
        remedy.changes.append("The segments stay where they are.")
    # The decentration prism is the same at every point of gaze (closed form), where the
    # moved centres are ones a case may carry.
    added = {eye: per_mm[eye].scaled(drop) for eye in EYES}
    low, high = CENTRE_MOVE_UP_MM
    closed = None
    if all(low <= case.lens(eye).centre_mm[1] - drop <= high for eye in EYES):
        vertical = added["right"].base_up - added["left"].base_up
        closed = shifted(base.figures, vertical, vertical,
                         added["right"].base_in + added["left"].base_in)
    return with_figures(remedy, document, base, closed_form=closed)


def _prescribed_words(lens: Lens) -> str:
    if lens.prism.amount < 0.005:
        return ""
    return f", prescribed prism {lens.prism.in_words()} unchanged"
