"""A deviation measured with prisms through spectacles, taken back to the eye.

The prism held before the non-fixating eye measures the deviation in object
space, through that eye's spectacle lens. An eye turned by u (prism dioptres)
about its centre of rotation looks through its lens d u from where it would
look straight ahead (d in metres gives cm per prism dioptre); there the lens
deviates the line of sight by -F d u (Prentice's rule), so the measurement is
m = u (1 - d F), F being the power in the meridian of the deviation:

    deviation at the eye = measured / (1 - d F)

(Scattergood, Brown & Guyton, Am J Ophthalmol 1983, on prism measurements
through spectacles.) Plus lenses make the measurement smaller than the
deviation at the eye, minus lenses larger; the lens before the fixating eye
does not change it. Check (derived): 45 measured through -10.00, d 25 mm:
45 / 1.25 = 36. In matrix form, with an oblique cylinder: u = (I - d F)^-1 m.

Signs: prisms are given as held before the non-fixating eye, base_in +
(base out -), base_up + (base down -). Base out neutralises an
eso-deviation, base in an exo-deviation, base up a hypo-, base down a
hyper-deviation of that eye.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field
from typing import Any

from pycore.cautions import CAUTIONS
from pycore.documents.cases import read_lens_point, read_prism
from pycore.documents.fields import (
    as_object,
    choice,
    has_prescription,
    only_keys,
    path_of,
    prescription,
    text,
)
from pycore.errors import CaseError
from pycore.optics.eyes import EYES, Eye, other
from pycore.optics.power import PowerMatrix, Prescription
from pycore.optics.prism import Prism
from pycore.spectacles.binocular import NetPrism
from pycore.spectacles.fitting import DEFAULT_CENTRE_OF_ROTATION_MM
from pycore.spectacles.gaze import LensPoint
from pycore.spectacles.lens import Lens
from pycore.validation import finite_number, in_range

MEASURED_LIMIT = 100.0
"""Largest deviation component accepted, prism dioptres."""
LOOSE_PRISM_LARGEST = 40.0
"""Beyond this a measurement needs more than one loose prism (common practice)."""
MIN_FACTOR = 0.2
"""Smallest 1 - d F accepted: below it the lens power and distance are implausible."""

STACKING_CAUTION = (
    "Loose prisms stacked in the same direction before one eye do not add up: 40 + 5 "
    "measured about 59 (Thompson & Guyton, Ophthalmology 1983, on ophthalmic prisms). "
    "Split a large measurement between the two eyes, or use a single prism, held as it was "
    "calibrated.")
DEVIATION_CAUTIONS = (
    "The deviation at the eye is worked out with thin-lens optics and an assumed distance "
    "from the lens to the centre of rotation; treat it as an estimate.",
)


@dataclass(frozen=True)
class ThroughSpectacles:
    """A deviation measured through spectacles (prism dioptres, mm, dioptres)."""

    measured: Prism
    fixating: Eye
    right: Lens
    left: Lens
    centre_of_rotation_mm: float = DEFAULT_CENTRE_OF_ROTATION_MM
    right_point: LensPoint = field(default_factory=LensPoint)
    left_point: LensPoint = field(default_factory=LensPoint)
    name: str = ""

    @property
    def deviating(self) -> Eye:
        return other(self.fixating)

    def lens(self, eye: Eye) -> Lens:
        return self.right if eye == "right" else self.left

    def point(self, eye: Eye) -> LensPoint:
        return self.right_point if eye == "right" else self.left_point


def deviation_at_eye(measured: Prism, power: PowerMatrix, eye: Eye,
                     centre_of_rotation_mm: float) -> Prism:
    """The deviation at the eye for a measurement through a lens of ``power`` before ``eye``.

    u = (I - d F)^-1 m, d in metres; a sphere gives the scalar rule m / (1 - d F).
    """
    d = centre_of_rotation_mm / 1000.0
    a, b, c = 1.0 - d * power.xx, -d * power.xy, 1.0 - d * power.yy
    det = a * c - b * b
    mx, my = measured.examiner_frame(eye)
    ux, uy = (c * mx - b * my) / det, (-b * mx + a * my) / det
    return Prism.from_examiner_frame(ux, uy, eye)


def through_spectacles(job: ThroughSpectacles) -> dict[str, Any]:
    """The deviation at the eye, why it differs, and the spectacles' own prism."""
    eye = job.deviating
    lens = job.lens(eye)
    power = lens.power
    true = deviation_at_eye(job.measured, power, eye, job.centre_of_rotation_mm)
    d_mm = job.centre_of_rotation_mm
    crossing = {"in_mm": -true.base_in * d_mm / 100.0, "up_mm": -true.base_up * d_mm / 100.0}
    lens_effect = job.measured - true
    meridians = {}
    for name, component, meridian_power in (("horizontal", "base_in", power.xx),
                                            ("vertical", "base_up", power.yy)):
        measured = getattr(job.measured, component)
        at_eye = getattr(true, component)
        meridians[name] = {
            "measured": measured, "at_eye": at_eye,
            "power_in_meridian_d": meridian_power,
            "factor": 1.0 / (1.0 - d_mm / 1000.0 * meridian_power),
            "why": _why(name, eye, measured, at_eye, meridian_power),
        }
    spectacle = {e: job.lens(e).prism_at(job.point(e), e).total for e in EYES}
    cautions = [STACKING_CAUTION, *DEVIATION_CAUTIONS, *CAUTIONS[1:]]
    if max(abs(job.measured.base_in), abs(job.measured.base_up)) > LOOSE_PRISM_LARGEST:
        cautions.insert(0, f"A measurement over {LOOSE_PRISM_LARGEST:g} prism dioptres needs "
                           "more than one prism: if they were stacked before one eye, the "
                           "reading is not their sum.")
    return {
        "name": job.name,
        "fixating": job.fixating,
        "deviating": eye,
        "centre_of_rotation_mm": d_mm,
        "measured": {**job.measured.as_dict(eye), "in_words": _deviation_words(job.measured,
                                                                               eye)},
        "at_eye": {**true.as_dict(eye), "in_words": _deviation_words(true, eye)},
        "meridians": meridians,
        "oblique_cylinder": abs(power.xy) > 1e-9,
        "lens_that_counts": {"eye": eye, "written": lens.prescription.written(),
                             "horizontal_power_d": power.xx, "vertical_power_d": power.yy},
        "lens_effect": lens_effect.as_dict(eye),
        "line_of_sight_on_lens_mm": crossing,
        "explanation": _explanation(job, true, lens_effect),
        "spectacle_prism": {
            "points": {e: job.point(e).as_dict() for e in EYES},
            **{e: spectacle[e].as_dict(e) for e in EYES},
            "net": NetPrism.between(spectacle["right"], spectacle["left"]).as_dict(),
        },
        "cautions": cautions,
    }


def _why(meridian: str, eye: Eye, measured: float, at_eye: float, power: float) -> str:
    if abs(measured) < 0.005:
        return f"No {meridian} deviation measured."
    if abs(power) < 0.005:
        return (f"The {eye} lens has no power in the {meridian} meridian: the measurement is "
                "the deviation at the eye.")
    kind = "plus" if power > 0 else "minus"
    effect = "smaller" if power > 0 else "larger"
    return (f"The {eye} lens is {kind} ({power:+.2f} D) in the {meridian} meridian, which makes "
            f"the measurement {effect} than the deviation at the eye: {abs(measured):.1f} "
            f"measured is {abs(at_eye):.1f} at the eye.")


def _explanation(job: ThroughSpectacles, true: Prism, lens_effect: Prism) -> list[str]:
    eye = job.deviating
    lines = [
        f"The {job.fixating} eye fixated, so the lens before the {eye} eye is the one that "
        f"changes the measurement; the {job.fixating} lens does not.",
    ]
    if true.amount >= 0.005:
        shift = true.amount * job.centre_of_rotation_mm / 100.0
        larger = job.measured.amount > true.amount
        lines.append(
            f"Turned {true.amount:.1f} prism dioptres, the {eye} eye looks through its lens "
            f"about {shift:.1f} mm from where it would look straight ahead; there the lens's "
            f"own prism (Prentice's rule) makes the deviation seen from outside about "
            f"{lens_effect.amount:.1f} prism dioptres {'larger' if larger else 'smaller'}.")
    return lines


def _deviation_words(prism: Prism, eye: Eye) -> str:
    parts = []
    if abs(prism.base_in) >= 0.005:
        kind = "eso" if prism.base_in < 0 else "exo"
        parts.append(f"{abs(prism.base_in):.1f} base {'out' if prism.base_in < 0 else 'in'} "
                     f"({kind}-deviation)")
    if abs(prism.base_up) >= 0.005:
        kind = "hypo" if prism.base_up > 0 else "hyper"
        parts.append(f"{abs(prism.base_up):.1f} base {'up' if prism.base_up > 0 else 'down'} "
                     f"({eye} {kind}-deviation)")
    return ", ".join(parts) if parts else "no deviation"


# --------------------------------------------------------------------------- reading

_DOC_KEYS = ("measured", "fixating", "right", "left", "centre_of_rotation_mm", "points",
             "name", "notes")
_LENS_KEYS = ("sphere", "cylinder", "axis", "rx", "horizontal_power", "vertical_power",
              "prism")
_TERM = re.compile(r"\s*(\d+(?:\.\d+)?)\s*(?:Δ|pd|prism\s+dioptres?)?\s*"
                   r"(bi|bo|bu|bd|base\s*in|base\s*out|base\s*up|base\s*down)\s*(?:,|and|\+)?",
                   re.IGNORECASE)
_BASES = {"bi": (1, 0), "bo": (-1, 0), "bu": (0, 1), "bd": (0, -1)}


def read_deviation(document: Any) -> ThroughSpectacles:
    """A validated measurement through spectacles (see docs/case-format.md)."""
    obj = as_object(document, "", "a deviation measured through spectacles")
    only_keys(obj, "", _DOC_KEYS)
    if "fixating" not in obj:
        raise CaseError("fixating", "fixating is missing: say which eye fixated (right or "
                                    "left) while the prism was before the other.")
    fixating = choice(obj, "", "fixating", EYES, "right")
    fixed: Eye = "right" if fixating == "right" else "left"
    if "measured" not in obj:
        raise CaseError("measured", "measured is missing: give the prism that neutralised the "
                                    "deviation, e.g. \"45 BO\" or {\"base_in\": -45}.")
    deviating = other(fixed)
    measured = _measured(obj["measured"], "measured")
    lenses = {}
    for eye in EYES:
        if eye not in obj:
            raise CaseError(eye, f"{eye} is missing: give the {eye} spectacle lens (rx, or "
                                 "horizontal_power and vertical_power).")
        lenses[eye] = _lens(obj[eye], eye)
    rotation = DEFAULT_CENTRE_OF_ROTATION_MM
    if "centre_of_rotation_mm" in obj:
        rotation = in_range(obj["centre_of_rotation_mm"], "centre_of_rotation_mm", 10, 40, "mm")
    points = {eye: LensPoint() for eye in EYES}
    if "points" in obj:
        where = "points"
        pts = as_object(obj["points"], where, "the points used (right, left)")
        only_keys(pts, where, EYES)
        for eye in EYES:
            if eye in pts:
                points[eye] = read_lens_point(pts[eye], path_of(where, eye))
    _check_factor(lenses[deviating], deviating, rotation)
    text(obj, "", "notes", 2000)
    return ThroughSpectacles(measured, fixed, lenses["right"], lenses["left"], rotation,
                             points["right"], points["left"], text(obj, "", "name", 80))


def _measured(value: Any, path: str) -> Prism:
    if isinstance(value, str):
        return _measured_text(value, path)
    obj = as_object(value, path, "a measured deviation (base_in, base_up)")
    only_keys(obj, path, ("base_in", "base_up"))
    numbers = [in_range(obj.get(key, 0), path_of(path, key), -MEASURED_LIMIT, MEASURED_LIMIT,
                        "prism dioptres") for key in ("base_in", "base_up")]
    return Prism(numbers[0], numbers[1])


def _measured_text(value: str, path: str) -> Prism:
    cleaned = value.strip().lower()
    position, x, y = 0, 0.0, 0.0
    if not cleaned or len(cleaned) > 100:
        raise CaseError(path, f"{path} must name an amount and a base, e.g. 45 BO or 6 BU.",
                        value)
    while position < len(cleaned):
        match = _TERM.match(cleaned, position)
        if not match or match.end() == position:
            raise CaseError(path, f"{path}: cannot read {cleaned[position:].strip()!r}; write "
                                  "an amount and a base, e.g. 45 BO, 20 BI, 6 BU or 4 BD.",
                            value)
        word = re.sub(r"\s+", "", match[2]).replace("base", "b")
        word = {"bin": "bi", "bout": "bo", "bup": "bu", "bdown": "bd"}.get(word, word)
        sx, sy = _BASES[word]
        amount = float(match[1])
        x, y = x + sx * amount, y + sy * amount
        position = match.end()
    for number, key in ((x, "base_in"), (y, "base_up")):
        if abs(number) > MEASURED_LIMIT:
            raise CaseError(path, f"{path}: the {key.replace('_', ' ')} part must be at most "
                                  f"{MEASURED_LIMIT:g} prism dioptres.", value)
    return Prism(x, y)


def _lens(value: Any, eye: Eye) -> Lens:
    obj = as_object(value, eye, "a spectacle lens")
    only_keys(obj, eye, _LENS_KEYS)
    meridian = [key for key in ("horizontal_power", "vertical_power") if key in obj]
    if meridian and has_prescription(obj):
        where = path_of(eye, meridian[0])
        raise CaseError(where, f"{where} and a prescription both given; give the powers one "
                               "way only.")
    if meridian:
        h = finite_number(obj.get("horizontal_power", 0), path_of(eye, "horizontal_power"),
                          "dioptres")
        v = finite_number(obj.get("vertical_power", 0), path_of(eye, "vertical_power"),
                          "dioptres")
        try:
            rx = Prescription(h, v - h, 0)
        except CaseError as exc:
            raise exc.within(eye) from None
    else:
        rx = prescription(obj, eye)
    prism = read_prism(obj["prism"], f"{eye}.prism", eye) if "prism" in obj else Prism()
    return Lens(rx, prism)


def _check_factor(lens: Lens, eye: Eye, rotation_mm: float) -> None:
    f = lens.power
    half_sum, radius = (f.xx + f.yy) / 2.0, math.hypot((f.xx - f.yy) / 2.0, f.xy)
    for value in (half_sum + radius, half_sum - radius):
        if 1.0 - rotation_mm / 1000.0 * value < MIN_FACTOR:
            raise CaseError(eye, f"{eye}: a lens of {value:+.2f} D at {rotation_mm:g} mm from "
                                 "the centre of rotation is outside what this estimate "
                                 "covers; check the power.", value)
