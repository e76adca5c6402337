"""Remedies that change what is worn for reading: near-only spectacles with vertical
prism split between the lenses, separate reading spectacles centred for near, and
contact lenses (which move with the eyes, so induce no imbalance).

Near-only lenses are the distance prescription with the add on the sphere, with
the prescribed prism unchanged; the distance figures of these remedies are those
of the distance spectacles, which stay as they are. Each says which centring it
assumes. Near-only spectacles centred at the near visual points meet no induced
prism at the reading point, so a split prism is proposed only for what remains
there, never to make up for the option's own centring.
"""

from __future__ import annotations

from typing import Any

from pycore.documents.cases import Case
from pycore.errors import CaseError
from pycore.optics.eyes import EYES
from pycore.optics.prism import Prism
from pycore.reading.remedies.finished_case import (
    Baseline,
    Remedy,
    copy_document,
    eye_document,
    figures_of,
    make_single_vision,
    near_prescription,
    round_to_step,
    set_prism,
    set_section,
    with_figures,
    with_written_points,
)
from pycore.rounding import fixed


def _near_only_document(base: Baseline, worn_as: str) -> dict[str, Any]:
    case = base.case
    document = copy_document(case)
    for eye in EYES:
        make_single_vision(eye_document(document, eye), near_prescription(case, eye))
    set_section(document, reading_point="distance_reference", worn_as=worn_as,
                reading_depth_mm=base.figures.geometry.reading_drop_mm)
    return document


def _near_only(base: Baseline) -> tuple[dict[str, Any], Case]:
    """The near-only spectacles centred at the near visual points (a document of their
    own to edit, the reading point written in) and the case read from it: read once for
    the baseline, since the split prism and the reading spectacles both start there."""
    if "near_only" not in base.shared:
        document = _near_only_document(base, "reading_spectacles")
        base.shared["near_only"] = (document, with_written_points(document, ("near",),
                                                                  base.case))
    document, case = base.shared["near_only"]
    copied = dict(document)
    for eye in EYES:
        copied[eye] = dict(document[eye])
    return copied, case


NEAR_CENTRING = "optical centres at the near visual points"
_LETTER = {"right": "R", "left": "L"}


def near_prism_split(base: Baseline) -> Remedy:
    """Near-only spectacles centred at the near visual points, with vertical prism split
    between the lenses for any induced imbalance left at the reading point."""
    remedy = Remedy("near_prism_split", "Near-only spectacles with vertical prism split")
    remedy.centring = NEAR_CENTRING
    options = base.options
    try:
        document, near_only = _near_only(base)
        plain = figures_of(base, near_only)
    except CaseError as exc:
        return remedy.refuse(f"The near-only spectacles cannot be worked out: {exc.message}")
    total = round_to_step(plain.near_induced, options.lab_step)
    remedy.details = {"centring": NEAR_CENTRING,
                      "imbalance_without_prism": plain.near_induced, "lab_step": options.lab_step}
    if total == 0:
        return remedy.refuse(
            "Not needed: near-only spectacles centred at the near visual points meet "
            f"{fixed(abs(plain.near_induced))} induced imbalance at the reading point, so a "
            "split prism would only make up for another centring; the separate reading "
            "spectacles are this pair without it.")
    share = {"right": Prism(0.0, -total / 2.0), "left": Prism(0.0, total / 2.0)}
    for eye in EYES:
        eye_doc = eye_document(document, eye)
        set_prism(eye_doc, base.case.lens(eye).prism + share[eye])
    remedy.details.update({"prism_total": total,
                           "prism": {eye: share[eye].as_dict(eye) for eye in EYES}})
    remedy.summary = (f"Reading spectacles made up to the near prescription, with "
                      f"{fixed(abs(total) / 2)} base {'down' if total > 0 else 'up'} before "
                      f"the right eye and {fixed(abs(total) / 2)} base "
                      f"{'up' if total > 0 else 'down'} before the left.")
    remedy.changes = [
        "Near only: distance vision through the distance spectacles, which stay as they are.",
        f"The induced imbalance of {fixed(abs(plain.near_induced))} left at the reading point "
        "is prescribed as prism, half before each eye (total rounded to the laboratory "
        "step), on top of the prescribed prism.",
    ]
    remedy.order_lines = [
        f"{_LETTER[eye]}: single vision {near_prescription(base.case, eye).written()} for "
        f"near, {(base.case.lens(eye).prism + share[eye]).in_words()}, optical centre at the "
        "near visual point" for eye in EYES]
    return with_figures(remedy, document, base, distance_from_original=True)


def reading_spectacles(base: Baseline) -> Remedy:
    remedy = Remedy("reading_spectacles", "Separate reading spectacles")
    remedy.centring = NEAR_CENTRING
    try:
        document, read = _near_only(base)
    except CaseError as exc:
        return remedy.refuse(f"The reading spectacles cannot be worked out: {exc.message}")
    case, geometry = base.case, base.figures.geometry
    vertical = {eye: near_prescription(case, eye).power_matrix.yy for eye in EYES}
    per_mm = abs(vertical["right"] - vertical["left"]) / 10.0
    remedy.details = {"near_prescription": {eye: near_prescription(case, eye).written()
                                            for eye in EYES},
                      "vertical_change_per_mm_from_reading_point": per_mm,
                      "centring": NEAR_CENTRING}
    remedy.summary = ("Single-vision reading spectacles centred on the near visual points: "
                      "no induced imbalance where the eyes read.")
    remedy.changes = [
        "The optical centres sit at the near visual points, so the reading point has no "
        "induced prism; the prescribed prism stays as prescribed.",
        f"Looking away from it, the imbalance grows by {fixed(per_mm)} prism dioptres per mm "
        "up or down.",
        "Two pairs of spectacles: distance vision through the distance pair, unchanged.",
    ]
    lines = []
    for eye in EYES:
        in_mm, up_mm = geometry.coords(eye, geometry.reading_drop_mm)
        distance_up = geometry.coords(eye, 0.0)[1]
        prism = case.lens(eye).prism
        lines.append(
            f"{_LETTER[eye]}: single vision {near_prescription(case, eye).written()} for near"
            + (f", prism {prism.in_words()} as prescribed" if prism.amount >= 0.005 else "")
            + f", optical centre at the near visual point ({fixed(in_mm, 1)} mm in, "
            f"{fixed(distance_up - up_mm, 1)} mm below the distance visual point)")
    remedy.order_lines = lines
    return with_figures(remedy, document, base, distance_from_original=True, read=read)


def contact_lenses(base: Baseline) -> Remedy:
    remedy = Remedy("contact_lenses", "Contact lenses")
    remedy.centring = "on the eye: the lenses move with it"
    case = base.case
    document = copy_document(case)
    had_prism = False
    for eye in EYES:
        eye_doc = eye_document(document, eye)
        had_prism = had_prism or case.lens(eye).prism.amount > 0
        make_single_vision(eye_doc, case.lens(eye).prescription)
    set_section(document, worn_as="contact_lenses", reading_point="distance_reference",
                reading_depth_mm=base.figures.geometry.reading_drop_mm)
    try:
        read = with_written_points(document, ("distance", "near"), base.case)
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
    remedy.order_lines = [
        f"{_LETTER[eye]}: contact lens for the spectacle prescription "
        f"{case.lens(eye).prescription.written()} (allow for vertex distance)" for eye in EYES]
    if had_prism:
        remedy.warnings.append("The prescribed prism stays the wearer's correction: contact "
                               "lenses carry it only in small vertical amounts, so it may "
                               "need spectacles worn with them; the finished case keeps it.")
    return with_figures(remedy, document, base, read=read)
