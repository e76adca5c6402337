"""Fitting-error sensitivity: how 1 and 2 mm of height or PD error change the
imbalance at distance and at the reading point, and where a small error matters.

A lens fitted e mm too high puts the eye e mm lower on the lens (its points of
gaze move down by e); a lens centred e mm too far out (a monocular PD measured e
mm too large) puts the eye e mm nasal of where it should be (points move in by
e). Net values as in the case format (prism dioptres).

When a small error matters, each error is compared with the limit ANSI
Z80.1-2015 sets at that lens's power (docs/sources.md), and the warning says
which limit it used:

- heights: within +-3.375 D in the vertical meridian the limit is 0.33 prism
  dioptre of vertical imbalance, so 1 mm that changes it by 0.33 or more
  matters; beyond that band the standard holds heights to 1.0 mm instead, so a
  1 mm error is within it whatever prism it makes;
- monocular PD: within +-2.75 D in the horizontal meridian the limit is 0.67
  prism dioptre horizontal in total, so 2 mm that changes the net by 0.67 or
  more matters; beyond it the standard allows 2.5 mm, so a 2 mm error is within.

The stronger of the lenses the error moves decides the band. An error of 1 or 2
mm taking the induced imbalance (total minus the prescribed prism's net) over
the threshold is named too.
"""

from __future__ import annotations

from typing import Any

from pycore.documents.cases import Case
from pycore.optics.eyes import Eye
from pycore.reading.imbalance_map import prescribed_net
from pycore.reading.reading_point import ReadingGeometry
from pycore.rounding import fixed
from pycore.spectacles.sampler import LensSampler

ERRORS_MM = (-2.0, -1.0, 1.0, 2.0)
STANDARD = "ANSI Z80.1-2015"
VERTICAL_PER_MM_LIMIT = 0.33
"""Vertical imbalance limit (prism dioptres) within the vertical power band."""
VERTICAL_BAND_D = 3.375
"""Vertical power band (dioptres) within which the prism limit applies."""
HEIGHT_LIMIT_MM = 1.0
"""Beyond the vertical band: heights within 1.0 mm."""
HORIZONTAL_TWO_MM_LIMIT = 0.67
"""Horizontal prism limit (prism dioptres, total) within the horizontal power band."""
HORIZONTAL_BAND_D = 2.75
"""Horizontal power band (dioptres) within which the prism limit applies."""
PD_LIMIT_MM = 2.5
"""Beyond the horizontal band: within 2.5 mm of the specified PD."""

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


_DESCRIPTIONS = {(kind, error): _describe(kind, error) for kind in _KINDS for error in ERRORS_MM}
"""Each row's description, written once."""


def sensitivity(case: Case, geometry: ReadingGeometry, threshold: float) -> dict[str, Any]:
    """The table of errors and the warnings it gives rise to."""
    right_at = LensSampler(case.right, "right").at
    left_at = LensSampler(case.left, "left").at
    places = {"distance": 0.0, "near": geometry.reading_drop_mm}
    coords = {drop: (geometry.coords("right", drop), geometry.coords("left", drop))
              for drop in places.values()}

    def net(drop: float, moved: tuple[Eye, ...], shift: tuple[float, float],
            error: float) -> tuple[float, float]:
        (right_in, right_up), (left_in, left_up) = coords[drop]
        if "right" in moved:
            right_in, right_up = right_in + shift[0] * error, right_up + shift[1] * error
        if "left" in moved:
            left_in, left_up = left_in + shift[0] * error, left_up + shift[1] * error
        right, left = right_at(right_in, right_up), left_at(left_in, left_up)
        return right[1] - left[1], right[0] + left[0]

    nominal = {place: net(drop, (), (0.0, 0.0), 0.0) for place, drop in places.items()}
    prescribed = prescribed_net(case).vertical_base_up_right
    rows: list[dict[str, Any]] = []
    warnings: list[str] = []
    limits: dict[str, dict[str, Any]] = {}
    for kind, (moved, shift) in _KINDS.items():
        limit = limit_at_power(case, kind, moved)
        limits[kind] = limit
        worst_per_mm = {"distance": 0.0, "near": 0.0}
        crossing: list[str] = []
        horizontal_two_mm = 0.0
        for error in ERRORS_MM:
            row: dict[str, Any] = {"kind": kind, "error_mm": error,
                                   "description": _DESCRIPTIONS[kind, error]}
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
                if abs(base_v - prescribed) < threshold <= abs(vertical - prescribed):
                    crossing.append(f"{_DESCRIPTIONS[kind, error]} ({place})")
            rows.append(row)
        matters = [f"{_place_words(place)} by {fixed(change)}"
                   for place, change in worst_per_mm.items()
                   if change >= VERTICAL_PER_MM_LIMIT - 1e-9]
        if kind.endswith(("height", "heights")) and matters and limit["by"] == "prism":
            warnings.append(
                f"A small fitting error matters: 1 mm of error in {_kind_words(kind)} changes "
                f"the vertical imbalance at {' and at '.join(matters)} prism dioptres; "
                f"{limit['in_words']}.")
        if kind.endswith("pd") and horizontal_two_mm >= HORIZONTAL_TWO_MM_LIMIT - 1e-9 \
                and limit["by"] == "prism":
            warnings.append(
                f"2 mm of error in {_kind_words(kind)} changes the net horizontal prism by "
                f"{fixed(horizontal_two_mm)} prism dioptres; {limit['in_words']}: measure "
                "the PD carefully.")
        if crossing:
            warnings.append(f"A small fitting error would take the induced imbalance over "
                            f"the {fixed(threshold)} threshold: {crossing[0]}.")
    return {
        "errors_mm": list(ERRORS_MM),
        "nominal": {place: {"vertical_base_up_right": v, "horizontal_base_in": h}
                    for place, (v, h) in nominal.items()},
        "rows": rows,
        "limits": limits,
        "warnings": warnings,
        "criteria": ("the limit that applies at the lens power: within the power band a "
                     "1 mm height error changing the vertical imbalance by 0.33 prism "
                     "dioptre or more, or a 2 mm PD error changing the horizontal net by "
                     "0.67 or more; beyond it the millimetre limits (1.0 mm heights, "
                     f"2.5 mm PD), which 1-2 mm errors meet ({STANDARD}); or an error of "
                     "1-2 mm taking the induced imbalance over the threshold"),
    }


def limit_at_power(case: Case, kind: str, moved: tuple[Eye, ...]) -> dict[str, Any]:
    """The limit a fitting error of ``kind`` is compared with, chosen by the power of the
    lenses it moves (the strongest one): a prism limit within the standard's power band,
    a millimetre limit beyond it."""
    vertical = kind.endswith(("height", "heights"))
    powers = [case.lens(eye).power.yy if vertical else case.lens(eye).power.xx
              for eye in moved]
    power = max(powers, key=abs)
    band = VERTICAL_BAND_D if vertical else HORIZONTAL_BAND_D
    meridian = "vertical" if vertical else "horizontal"
    if abs(power) <= band + 1e-9:
        value = VERTICAL_PER_MM_LIMIT if vertical else HORIZONTAL_TWO_MM_LIMIT
        words = (f"{STANDARD} allows {fixed(value)} prism dioptre "
                 f"{'vertical imbalance' if vertical else 'horizontal in total'} at "
                 f"{fixed(power, 2, sign=True)} D in the {meridian} meridian (within "
                 f"+-{band:g} D)")
        return {"by": "prism", "value": value, "unit": "prism dioptres", "power_d": power,
                "band_d": band, "in_words": words, "source": f"{STANDARD}, mounted pair"}
    value = HEIGHT_LIMIT_MM if vertical else PD_LIMIT_MM
    words = (f"{STANDARD} holds {'heights' if vertical else 'the PD'} to {value:g} mm at "
             f"{fixed(power, 2, sign=True)} D in the {meridian} meridian (beyond "
             f"+-{band:g} D), which a {'1' if vertical else '2'} mm error meets")
    return {"by": "mm", "value": value, "unit": "mm", "power_d": power, "band_d": band,
            "in_words": words, "source": f"{STANDARD}, mounted pair"}


def _kind_words(kind: str) -> str:
    return {"both_heights": "both fitting heights together",
            "right_height": "the right fitting height",
            "left_height": "the left fitting height",
            "right_pd": "the right monocular PD",
            "left_pd": "the left monocular PD"}[kind]


def _place_words(place: str) -> str:
    return "distance" if place == "distance" else "the reading point"
