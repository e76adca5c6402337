"""The ``reading_zone`` case section: where the reading point is, how the lenses are
worn, the imbalance threshold, and the settings the remedies use.

Every key is optional; docs/case-format.md, "Lens designs and the reading zone",
describes them. Lengths in mm, prism in prism dioptres.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from pycore.documents.fields import as_object as _object
from pycore.documents.fields import only_keys as _only_keys
from pycore.documents.fields import within as _within
from pycore.errors import CaseError
from pycore.validation import finite_number, in_range

if TYPE_CHECKING:
    from pycore.documents.cases import Case

SECTION = "reading_zone"

READING_POINT_RULES = ("auto", "distance_reference", "segment_top", "near_zone")
"""How the reading point is found: ``distance_reference`` a depth below the distance
reference point; ``segment_top`` a distance below the segment tops; ``near_zone`` the
progressive's near reference point; ``auto`` the near zone for progressives, else the
depth below the distance reference point."""

WORN_AS = ("spectacles", "reading_spectacles", "contact_lenses")
"""``spectacles``: fitted for distance, the eyes look down and in through them;
``reading_spectacles``: centred on the near visual points (the reading point is each
lens's reference point); ``contact_lenses``: the lens moves with the eye."""

DEFAULT_THRESHOLD = 1.0
THRESHOLD_SOURCE = "common practice (rule of thumb); tolerance differs between wearers"
"""About 1 prism dioptre of induced vertical imbalance at the reading level is the usual
trigger to act; published sources in docs/sources.md."""
DEFAULT_BELOW_SEGMENT_TOP_MM = 5.0
"""Common practice: the reading point a few mm into the segment (docs/sources.md)."""
DEFAULT_CORRECT_FRACTION = 1.0
"""Correct all of the reading-level imbalance; many correct two-thirds to all (common
practice, no single source)."""
DEFAULT_LAB_STEP = 0.5
"""Slab-off grinding increments, prism dioptres (from memory: often 0.5 steps)."""


@dataclass(frozen=True)
class ReadingZoneOptions:
    """Settings of the reading-zone analysis and its remedies (mm; prism dioptres)."""

    threshold: float = DEFAULT_THRESHOLD
    reading_point: str = "auto"
    reading_depth_mm: float | None = None
    below_segment_top_mm: float = DEFAULT_BELOW_SEGMENT_TOP_MM
    worn_as: str = "spectacles"
    correct_fraction: float = DEFAULT_CORRECT_FRACTION
    lab_step: float = DEFAULT_LAB_STEP
    lower_centres_mm: float | None = None
    map_depth_mm: float | None = None
    map_half_width_mm: float = 10.0
    map_step_mm: float = 2.0

    def __post_init__(self) -> None:
        in_range(self.threshold, "threshold", 0.1, 10, "prism dioptres")
        _one_of(self.reading_point, "reading_point", READING_POINT_RULES)
        if self.reading_depth_mm is not None:
            in_range(self.reading_depth_mm, "reading_depth_mm", 0, 35, "mm")
        in_range(self.below_segment_top_mm, "below_segment_top_mm", 0, 25, "mm")
        _one_of(self.worn_as, "worn_as", WORN_AS)
        in_range(self.correct_fraction, "correct_fraction", 0.25, 1, "of the imbalance")
        in_range(self.lab_step, "lab_step", 0.125, 1, "prism dioptres")
        if self.lower_centres_mm is not None:
            in_range(self.lower_centres_mm, "lower_centres_mm", -10, 15, "mm")
        if self.map_depth_mm is not None:
            in_range(self.map_depth_mm, "map_depth_mm", 5, 35, "mm")
        in_range(self.map_half_width_mm, "map_half_width_mm", 0, 15, "mm")
        in_range(self.map_step_mm, "map_step_mm", 0.5, 5, "mm")

    @property
    def is_default_gaze(self) -> bool:
        """Whether the section leaves the fitting's own points as the core finds them."""
        return (self.reading_point in ("auto", "distance_reference")
                and self.reading_depth_mm is None and self.worn_as == "spectacles")


_TEXT_KEYS = ("reading_point", "worn_as")


def read_reading_zone(value: Any, path: str) -> ReadingZoneOptions:
    obj = _object(value, path, "the reading-zone settings")
    fields = tuple(ReadingZoneOptions.__dataclass_fields__)
    _only_keys(obj, path, fields)
    values: dict[str, Any] = {}
    for key, item in obj.items():
        if key in _TEXT_KEYS:
            if not isinstance(item, str):
                raise CaseError(f"{path}.{key}", f"{path}.{key} must be text, one of "
                                                 f"{', '.join(_choices(key))}.", item)
            values[key] = item
        else:
            values[key] = finite_number(item, f"{path}.{key}")
    return _within(lambda: ReadingZoneOptions(**values), path)


def _choices(key: str) -> tuple[str, ...]:
    return READING_POINT_RULES if key == "reading_point" else WORN_AS


def _one_of(value: str, key: str, allowed: tuple[str, ...]) -> None:
    if value not in allowed:
        raise CaseError(key, f"{key} must be one of {', '.join(allowed)}.", value)


def options_of(case: Case) -> ReadingZoneOptions:
    """The case's reading-zone settings (defaults where it has no section)."""
    found = case.extras.get(SECTION)
    return found if isinstance(found, ReadingZoneOptions) else _DEFAULTS


_DEFAULTS = ReadingZoneOptions()
"""The settings of a case without the section (immutable, so made once)."""

