"""Fitting-error sensitivity: how 1 and 2 mm of height or PD error change the
imbalance at distance and at the reading point, and where a small error matters.

A lens fitted e mm too high puts the eye e mm lower on the lens (its points of
gaze move down by e); a lens centred e mm too far out (a monocular PD measured e
mm too large) puts the eye e mm nasal of where it should be (points move in by
e). Net values as in the case format (prism dioptres).

When a small error matters (criteria from ANSI Z80.1-2015 as summarised in the
"Quick Reference Guide - ANSI Z80.1-2015" and the OptiCampus summary of
Z80.1-2010): 1 mm changing the vertical imbalance by 0.33 prism dioptre or more
(the standard's vertical limit, and the reason it holds heights to 1.0 mm beyond
+-3.375 D); 2 mm in one PD changing the horizontal net by 0.67 or more (its
horizontal total); or an error of 1 or 2 mm taking an imbalance under the
threshold over it.
"""

from __future__ import annotations

from typing import Any

from pycore.documents.cases import Case
from pycore.optics.eyes import EYES, Eye
from pycore.reading.reading_point import ReadingGeometry
from pycore.spectacles.sampler import LensSampler

ERRORS_MM = (-2.0, -1.0, 1.0, 2.0)
VERTICAL_PER_MM_LIMIT = 0.33
HORIZONTAL_TWO_MM_LIMIT = 0.67

# kind -> (eyes it moves, direction of the shift per mm of error: (in_mm, up_mm))
_KINDS: dict[str, tuple[tuple[Eye, ...], tuple[float, float]]] = {
    "both_heights": (("right", "left"), (0.0, -1.0)),
    "right_height": (("right",), (0.0, -1.0)),
    "left_height": (("left",), (0.0, -1.0)),
    "right_pd": (("right",), (1.0, 0.0)),
    "left_pd": (("left",), (1.0, 0.0)),
}


def _describe(kind: str, error: float) -> str:
    amount = f"{abs(error):g} mm"
    if kind.endswith(("height", "heights")):
        which = "both lenses" if kind == "both_heights" else f"the {kind.split('_')[0]} lens"
        return f"{which} fitted {amount} too {'high' if error > 0 else 'low'}"
    eye = kind.split("_")[0]
    way = "far out (monocular PD too large)" if error > 0 else "far in (monocular PD too small)"
    return f"the {eye} lens centred {amount} too {way}"


def sensitivity(case: Case, geometry: ReadingGeometry, threshold: float) -> dict[str, Any]:
    """The table of errors and the warnings it gives rise to."""
    samplers = {eye: LensSampler(case.lens(eye), eye) for eye in EYES}
    places = {"distance": 0.0, "near": geometry.reading_drop_mm}

    def net(drop: float, moved: tuple[Eye, ...], shift: tuple[float, float],
            error: float) -> tuple[float, float]:
        values = {}
        for eye in EYES:
            in_mm, up_mm = geometry.coords(eye, drop)
            if eye in moved:
                in_mm, up_mm = in_mm + shift[0] * error, up_mm + shift[1] * error
            values[eye] = samplers[eye].at(in_mm, up_mm)
        right, left = values["right"], values["left"]
        return right[1] - left[1], right[0] + left[0]

    nominal = {place: net(drop, (), (0.0, 0.0), 0.0) for place, drop in places.items()}
    rows: list[dict[str, Any]] = []
    warnings: list[str] = []
    for kind, (moved, shift) in _KINDS.items():
        worst_per_mm = {"distance": 0.0, "near": 0.0}
        crossing: list[str] = []
        horizontal_two_mm = 0.0
        for error in ERRORS_MM:
            row: dict[str, Any] = {"kind": kind, "error_mm": error,
                                   "description": _describe(kind, error)}
            for place, drop in places.items():
                vertical, horizontal = net(drop, moved, shift, error)
                base_v, base_h = nominal[place]
                row[place] = {"vertical_base_up_right": vertical,
                              "horizontal_base_in": horizontal,
                              "vertical_change": vertical - base_v,
                              "horizontal_change": horizontal - base_h}
                if abs(error) == 1.0:
                    worst_per_mm[place] = max(worst_per_mm[place], abs(vertical - base_v))
                if abs(error) == 2.0:
                    horizontal_two_mm = max(horizontal_two_mm, abs(horizontal - base_h))
                if abs(base_v) < threshold <= abs(vertical):
                    crossing.append(f"{_describe(kind, error)} ({place})")
            rows.append(row)
        matters = [f"{_place_words(place)} by {change:.2f}"
                   for place, change in worst_per_mm.items()
                   if change >= VERTICAL_PER_MM_LIMIT - 1e-9]
        if matters:
            warnings.append(
                f"A small fitting error matters: 1 mm of error in {_kind_words(kind)} changes "
                f"the vertical imbalance at {' and at '.join(matters)} prism dioptres "
                f"(ANSI Z80.1 allows {VERTICAL_PER_MM_LIMIT:.2f}).")
        if kind.endswith("pd") and horizontal_two_mm >= HORIZONTAL_TWO_MM_LIMIT - 1e-9:
            warnings.append(
                f"2 mm of error in {_kind_words(kind)} changes the net horizontal prism by "
                f"{horizontal_two_mm:.2f} prism dioptres (ANSI Z80.1 allows "
                f"{HORIZONTAL_TWO_MM_LIMIT:.2f} in total): measure the PD carefully.")
        if crossing:
            warnings.append(f"A small fitting error would take the imbalance over the "
                            f"{threshold:.2f} threshold: {crossing[0]}.")
    return {
        "errors_mm": list(ERRORS_MM),
        "nominal": {place: {"vertical_base_up_right": v, "horizontal_base_in": h}
                    for place, (v, h) in nominal.items()},
        "rows": rows,
        "warnings": warnings,
        "criteria": ("a 1 mm error changing the vertical imbalance by 0.33 prism dioptre "
                     "or more, a 2 mm PD error changing the horizontal net by 0.67 or more "
                     "(ANSI Z80.1-2015 limits), or an error of 1-2 mm taking the imbalance "
                     "over the threshold"),
    }


def _kind_words(kind: str) -> str:
    return {"both_heights": "both fitting heights together",
            "right_height": "the right fitting height",
            "left_height": "the left fitting height",
            "right_pd": "the right monocular PD",
            "left_pd": "the left monocular PD"}[kind]


def _place_words(place: str) -> str:
    return "distance" if place == "distance" else "the reading point"
