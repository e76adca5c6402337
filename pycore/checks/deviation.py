"""A deviation measured with prisms through spectacles, taken back to the eye.

The prism held before the non-fixating eye measures the deviation in object
space, through that eye's spectacle lens. An eye turned by u (prism dioptres)
about its centre of rotation looks through its lens d u from where it would
look straight ahead (d in metres gives cm per prism dioptre); there the lens's
power deviates the line of sight by -F d u (Prentice's rule) and any prism
prescribed in the lens by P. The loose prism m and the prescribed prism P
together neutralise what the rotation shows in object space:

    m + P = u (1 - d F),  so  measured = u (1 - d F) - P

(P with the sign of a prism base, as written before that eye: the prescribed
prism enters with the sign of the deviation it corrects). Hence

    the eye's rotation u = (m + P) / (1 - d F)
    left uncorrected by the spectacles, at the eye = m / (1 - d F)

F being the power in the meridian of the deviation (Scattergood, Brown & Guyton,
Am J Ophthalmol 1983, where no prism is prescribed; the prism term follows from
the same ray trace, docs/sources.md). In matrix form, with an oblique cylinder:
u = (I - d F)^-1 (m + P), and each meridian's factor is read off that result.
Plus lenses make the measurement smaller than the deviation at the eye, minus
lenses larger; the lens before the fixating eye does not change it. Check
(derived): 45 measured through -10.00, d 25 mm: 45 / 1.25 = 36. The line of
sight crosses the lens d u from the straight-ahead point, following the
rotation.

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
from pycore.rounding import fixed
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
    "measured about 59 (a published measurement). "
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
    """The eye's rotation, the deviation the spectacles leave uncorrected, why they differ
    from the measurement, and the spectacles' own prism."""
    eye = job.deviating
    lens = job.lens(eye)
    power = lens.power
    prescribed = lens.prism
    rotation = deviation_at_eye(job.measured + prescribed, power, eye, job.centre_of_rotation_mm)
    uncorrected = deviation_at_eye(job.measured, power, eye, job.centre_of_rotation_mm)
    d_mm = job.centre_of_rotation_mm
    crossing = {"in_mm": -rotation.base_in * d_mm / 100.0 + 0.0,
                "up_mm": -rotation.base_up * d_mm / 100.0 + 0.0}
    neutralised = job.measured + prescribed
    lens_effect = neutralised - rotation
    oblique = abs(power.xy) > 1e-9
    meridians = {}
    for name, component, meridian_power in (("horizontal", "base_in", power.xx),
                                            ("vertical", "base_up", power.yy)):
        measured = getattr(job.measured, component)
        total = getattr(neutralised, component)
        at_eye = getattr(rotation, component)
        diagonal = 1.0 / (1.0 - d_mm / 1000.0 * meridian_power)
        meridians[name] = {
            "measured": measured,
            "prescribed": getattr(prescribed, component),
            "at_eye": at_eye,
            "uncorrected_at_eye": getattr(uncorrected, component),
            "power_in_meridian_d": meridian_power,
            # The factor the matrix result gives in this meridian (what the words use).
            "factor": at_eye / total if abs(total) > 1e-12 else diagonal,
            "why": _why(name, eye, measured, total, at_eye, meridian_power, oblique),
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
                                                                               eye),
                     "label": "measured through the spectacles (loose prism)"},
        "at_eye": {**rotation.as_dict(eye), "in_words": _deviation_words(rotation, eye),
                   "label": "the eye's rotation behind the lens"},
        "uncorrected": {**uncorrected.as_dict(eye),
                        "in_words": _deviation_words(uncorrected, eye),
                        "label": "the deviation the spectacles leave uncorrected, at the eye"},
        "prescribed_prism": {**prescribed.as_dict(eye),
                             "label": f"prism prescribed before the {eye} eye"},
        "meridians": meridians,
        "oblique_cylinder": oblique,
        "lens_that_counts": {"eye": eye, "written": lens.prescription.written(),
                             "horizontal_power_d": power.xx, "vertical_power_d": power.yy},
        "lens_effect": lens_effect.as_dict(eye),
        "line_of_sight_on_lens_mm": crossing,
        "explanation": _explanation(job, rotation, uncorrected, lens_effect),
        "spectacle_prism": {
            "points": {e: job.point(e).as_dict() for e in EYES},
            **{e: spectacle[e].as_dict(e) for e in EYES},
            "net": NetPrism.between(spectacle["right"], spectacle["left"]).as_dict(),
        },
        "cautions": cautions,
    }


def _why(meridian: str, eye: Eye, measured: float, total: float, at_eye: float, power: float,
         oblique: bool) -> str:
    if abs(total) < 0.005:
        return f"No {meridian} deviation measured."
    if abs(power) < 0.005 and not oblique:
        return (f"The {eye} lens has no power in the {meridian} meridian: the measurement"
                f"{' with the prescribed prism' if abs(total - measured) >= 0.005 else ''} "
                "is the deviation at the eye.")
    effect = "smaller" if abs(total) < abs(at_eye) else "larger"
    kind = "plus" if power > 0 else "minus" if power < 0 else "plano"
    prism = (f" (with the prescribed prism, {fixed(abs(total), 1)})"
             if abs(total - measured) >= 0.005 else "")
    coupling = (" The oblique cylinder also carries part of the other meridian's deviation "
                "into this one (power matrix)." if oblique else "")
    return (f"The {eye} lens is {kind} ({fixed(power, 2, sign=True)} D) in the {meridian} "
            f"meridian; here it makes the measurement {effect} than the eye's rotation: "
            f"{fixed(abs(measured), 1)} measured{prism} is {fixed(abs(at_eye), 1)} at the eye "
            f"(factor {fixed(at_eye / total, 3)}).{coupling}")


def _explanation(job: ThroughSpectacles, rotation: Prism, uncorrected: Prism,
                 lens_effect: Prism) -> list[str]:
    eye = job.deviating
    lines = [
        f"The {job.fixating} eye fixated, so the lens before the {eye} eye is the one that "
        f"changes the measurement; the {job.fixating} lens does not.",
    ]
    if rotation.amount >= 0.005:
        shift = rotation.amount * job.centre_of_rotation_mm / 100.0
        larger = (job.measured + job.lens(eye).prism).amount > rotation.amount
        lines.append(
            f"Turned {fixed(rotation.amount, 1)} prism dioptres, the {eye} eye looks through "
            f"its lens about {fixed(shift, 1)} mm from where it would look straight ahead; "
            f"there the lens's power (Prentice's rule) makes the deviation seen from outside "
            f"about {fixed(lens_effect.amount, 1)} prism dioptres "
            f"{'larger' if larger else 'smaller'}.")
    if job.lens(eye).prism.amount >= 0.005:
        lines.append(
            f"The {eye} lens carries {job.lens(eye).prism.in_words()} prescribed: the "
            f"measurement is what is left beyond it. The eye's rotation is "
            f"{_deviation_words(rotation, eye)}; the spectacles leave "
            f"{_deviation_words(uncorrected, eye)} uncorrected (at the eye).")
    return lines


def _deviation_words(prism: Prism, eye: Eye) -> str:
    parts = []
    if abs(prism.base_in) >= 0.005:
        kind = "eso" if prism.base_in < 0 else "exo"
        parts.append(f"{fixed(abs(prism.base_in), 1)} base "
                     f"{'out' if prism.base_in < 0 else 'in'} "
                     f"({kind}-deviation)")
    if abs(prism.base_up) >= 0.005:
        kind = "hypo" if prism.base_up > 0 else "hyper"
        parts.append(f"{fixed(abs(prism.base_up), 1)} base "
                     f"{'up' if prism.base_up > 0 else 'down'} "
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
