"""Remedies that change what is worn for reading: near-only spectacles with the vertical
prism split between the lenses, separate reading spectacles centred for near, and
contact lenses (which move with the eyes, so induce no imbalance).

Near-only lenses are the distance prescription with the add on the sphere; the
distance figures of these remedies are those of the distance spectacles, which
stay as they are.
"""

from __future__ import annotations

from typing import Any

from pycore.errors import CaseError
from pycore.optics.eyes import EYES
from pycore.optics.prism import Prism
from pycore.reading.remedies.finished_case import (
    Baseline,
    Figures,
    Remedy,
    copy_document,
    eye_document,
    make_single_vision,
    near_prescription,
    round_to_step,
    set_prism,
    set_section,
    with_figures,
    with_written_points,
)


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
    return with_figures(remedy, document, base, distance_from_original=True)


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
    return with_figures(remedy, document, base, distance_from_original=True)


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
    return with_figures(remedy, document, base)
