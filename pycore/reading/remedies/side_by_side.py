"""Remedies for a vertical imbalance at the reading point, quantified side by side.

For the same case each remedy says what it changes, what it leaves at distance
and at the reading point (net prism dioptres, signs as in the case format; the
totals and their induced parts), the order lines a laboratory needs, and
carries ``applied_case``: the case document with the remedy applied through the
case keys, so that evaluating it gives the finished figures everywhere.

The remedies themselves live in pycore.reading.remedies.lens_changes (slab-off, reverse
slab, dissimilar segments, lowered centres) and pycore.reading.remedies.near_wear (near-only
prism, reading spectacles, contact lenses); this module lists them side by side
and suggests one. Every judgement (under the threshold, which to suggest) is on
the induced imbalance: prescribed prism is the wearer's correction, and equal
lenses with any prescribed prism need no remedy.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from pycore.documents.cases import Case, read_case
from pycore.errors import CaseError
from pycore.reading.options import options_of
from pycore.reading.remedies.finished_case import (
    Baseline,
    Figures,
    Remedy,
    copy_document,
    with_figures,
)
from pycore.reading.remedies.lens_changes import dissimilar_segments, lower_centres, slab_off
from pycore.reading.remedies.near_wear import contact_lenses, near_prism_split, reading_spectacles
from pycore.rounding import fixed

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


def doing_nothing(base: Baseline) -> Remedy:
    remedy = Remedy("none", "No change")
    threshold = base.options.threshold
    under = abs(base.near) < threshold and abs(base.distance) < threshold
    remedy.summary = (f"The induced vertical imbalance stays under {fixed(threshold)} prism "
                      "dioptre at distance and at the reading point." if under else
                      f"The induced vertical imbalance reaches {fixed(threshold)} prism "
                      "dioptre or more; leaving it is a choice for the practitioner and the "
                      "wearer.")
    remedy.changes = ["Nothing: the spectacles as ordered."]
    remedy.details = {"under_threshold": under}
    return with_figures(remedy, copy_document(base.case), base, closed_form=base.figures)


_BUILDERS: dict[str, Callable[[Baseline], Remedy]] = {
    "none": doing_nothing,
    "slab_off": lambda base: slab_off(base),
    "reverse_slab": lambda base: slab_off(base, reverse=True),
    "dissimilar_segments": dissimilar_segments,
    "lower_centres": lower_centres,
    "near_prism_split": near_prism_split,
    "reading_spectacles": reading_spectacles,
    "contact_lenses": contact_lenses,
}


def baseline(case: Case, evaluate_finished: bool = True) -> Baseline:
    """The case as it is, for its remedies (``evaluate_finished``: see Baseline)."""
    return Baseline(case, options_of(case), Figures.of(case), evaluate_finished)


def build(base: Baseline, key: str) -> Remedy:
    """One remedy by id (see ``ORDER``)."""
    return _BUILDERS[key](base)


def all_remedies(case: Case) -> tuple[Baseline, list[Remedy]]:
    """Every remedy for the case, in ``ORDER``, each with its finished case evaluated."""
    base = baseline(case)
    return base, [build(base, key) for key in ORDER]


def recommended(base: Baseline, remedy: Callable[[str], Remedy]) -> str:
    """A suggestion, not a decision: "none" when the induced imbalance is already under
    the threshold at distance and at the reading point; else the first remedy, in the
    order of preference, that brings the reading point's induced imbalance under it
    without leaving distance over it (or worse than it was), preferring one with no
    warnings. ``remedy`` gives a remedy by id; it is asked only for those it needs."""
    threshold = base.options.threshold
    before = abs(base.distance)
    if abs(base.near) < threshold and before < threshold:
        return "none"

    def good(found: Remedy) -> bool:
        figures = found.figures
        if not found.available or figures is None:
            return False
        distance = abs(figures.distance_induced)
        return abs(figures.near_induced) < threshold and (
            distance < threshold or distance <= before + 1e-9)

    for strict in (True, False):
        for key in _PREFERENCE:
            found = remedy(key)
            if good(found) and not (strict and found.warnings):
                return key
    return "none"


def _lazy(base: Baseline) -> Callable[[str], Remedy]:
    """``build`` for ``base``, each remedy built once, when first asked for."""
    built: dict[str, Remedy] = {}

    def remedy(key: str) -> Remedy:
        if key not in built:
            built[key] = build(base, key)
        return built[key]

    return remedy


def _entry(remedy: Remedy, threshold: float, choice: str) -> dict[str, Any]:
    entry = remedy.as_dict(threshold)
    entry["recommended"] = entry["id"] == choice
    entry["cautions"] = [caution for caution in CAUTIONS
                         if "slab-off" not in caution or "slab" in entry["id"]]
    return entry


def remedies_section(case: Case, result: dict[str, Any],
                     full: bool = True) -> dict[str, Any] | None:
    """The ``remedies`` result: every remedy side by side and the suggested one
    (``full``); else the suggestion alone: ``options`` keeps every remedy's place but
    holds only the recommended remedy (the others null), its figures from closed forms
    where a remedy has one, and the remedies are built only as far as the choice needs
    (no ``summary_lines``)."""
    if not case.document:
        return None
    base = baseline(case, evaluate_finished=full)
    threshold = base.options.threshold
    remedy = _lazy(base)
    if full:
        for key in ORDER:
            remedy(key)
    choice = recommended(base, remedy)
    # Every remedy keeps its place in ``options`` (so a dotted path means the same in
    # the live and the full result); the live answer leaves the others null.
    entries = [_entry(remedy(key), threshold, choice) if full or key == choice else None
               for key in ORDER]
    section: dict[str, Any] = {
        "threshold": threshold,
        "before": {"distance": base.figures.distance_vertical,
                   "near": base.figures.near_vertical,
                   "induced_distance": base.distance, "induced_near": base.near},
        "prescribed_net": {
            "vertical_base_up_right": base.figures.prescribed.vertical_base_up_right,
            "horizontal_base_in": base.figures.prescribed.horizontal_base_in},
        "order": list(ORDER),
        "recommended": choice,
        "options": entries,
        "cautions": list(CAUTIONS),
    }
    if full:
        section["summary_lines"] = _summary(base, [e for e in entries if e is not None], choice)
    return section


def opened_remedy(case: Case, remedy_id: Any) -> dict[str, Any]:
    """One remedy's entry, its figures from its finished case read and evaluated (what
    the page shows when that remedy is opened); ``recommended`` says whether it is the
    suggestion. Refusals as CaseError."""
    if remedy_id not in ORDER:
        raise CaseError("remedy", f"remedy must be one of {', '.join(ORDER)}.", remedy_id)
    base = baseline(case)
    opened = build(base, remedy_id)
    quick = _lazy(baseline(case, evaluate_finished=False))
    return _entry(opened, base.options.threshold, recommended(base, quick))


def _summary(base: Baseline, entries: list[dict[str, Any]], choice: str) -> list[str]:
    lines = [f"Remedies (induced vertical imbalance, threshold "
             f"{fixed(base.options.threshold)}; + = base up before the right eye)",
             f"  {'':46} {'distance':>9} {'near':>9}"]
    for entry in entries:
        mark = "*" if entry["recommended"] else " "
        if entry["available"]:
            distance = fixed(entry["distance"]["induced_vertical_base_up_right"], sign=True)
            near = fixed(entry["near"]["induced_vertical_base_up_right"], sign=True)
            lines.append(f" {mark}{entry['name'][:46]:46} {distance:>9} {near:>9}")
            lines.append(f"     {entry['summary']}")
            lines.extend(f"     order: {line}" for line in entry["order_lines"])
        else:
            lines.append(f" {mark}{entry['name'][:46]:46} {'-':>9} {'-':>9}  ({entry['why_not']})")
    lines.append(f"  * suggested: {choice.replace('_', ' ')}; "
                 "the choice is a clinical decision.")
    lines.extend(f"  ! {caution}" for caution in CAUTIONS)
    return lines


def finished_case(case_document: Any, remedy_id: Any) -> tuple[dict[str, Any], dict[str, Any]]:
    """(the remedy's entry, its finished case document); refusals as CaseError."""
    if remedy_id not in ORDER:
        raise CaseError("remedy", f"remedy must be one of {', '.join(ORDER)}.", remedy_id)
    entry = opened_remedy(read_case(case_document), remedy_id)
    if not entry["available"] or entry["applied_case"] is None:
        raise CaseError("remedy", f"remedy {remedy_id} does not apply to this case: "
                                  f"{entry['why_not']}", remedy_id)
    document: dict[str, Any] = entry.pop("applied_case")
    return entry, document
