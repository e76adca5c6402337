"""Reading a verification: what was ordered and what was measured on the finished pair.

Two shapes (docs/case-format.md, "## Verification"):

- a verification document: ``standard``, ``lens_type``, ``mounting``,
  ``horizontal_reading``, ``thinning_base_down``, ``ordered`` and ``measured``;
- a case section ``verification`` with the same keys less ``ordered``: the
  order is then the case's own lenses (prescription and prescribed prism) and
  fitting (monocular PDs and heights).

Positions are millimetres. A monocular PD is measured from the bridge centre
to the prism reference point (PRP) or marked centre; a height from the lowest
point of the frame's lens shape (the box's lower line). ``offset`` (unmounted
lenses only) is where the measured point lies relative to the specified PRP:
``in_mm`` toward the nose positive, ``up_mm`` upward positive.

Besides the prism, a lens (ordered or measured) may carry its powers (``rx``
or ``sphere``/``cylinder``/``axis``, as a case's lens), ``add``, a
``segment`` (``height_mm`` of its top above the lowest point of the lens
shape, ``mono_pd_mm`` of its centre from the bridge centre; measured also
``tilt_deg``) and a progressive's ``fitting_cross_height_mm``.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from pycore.checks.tolerances import (
    DEFAULT_TABLE,
    LENS_TYPES,
    MOUNTINGS,
    ToleranceTable,
    tolerance_table,
)
from pycore.documents.fields import (
    as_object,
    choice,
    has_prescription,
    only_keys,
    optional_range,
    path_of,
    prescription,
    read_prism,
    text,
)
from pycore.errors import CaseError
from pycore.optics.eyes import EYES, Eye
from pycore.optics.power import Prescription
from pycore.optics.prism import Prism
from pycore.spectacles.gaze import LensPoint
from pycore.spectacles.heights import reference_point_height_mm
from pycore.spectacles.lens import ADD_LIMIT_D
from pycore.validation import in_range

if TYPE_CHECKING:
    from pycore.documents.cases import Case

READINGS = ("total", "per_eye")
THINNING_LIMIT = 6.0
OFFSET_LIMIT_MM = 20.0
PD_RANGE_MM = (40.0, 90.0)
MONO_RANGE_MM = (20.0, 45.0)
HEIGHT_RANGE_MM = (5.0, 45.0)
SEGMENT_HEIGHT_RANGE_MM = (0.0, 45.0)
ADD_RANGE_D = (0.0, ADD_LIMIT_D)
TILT_RANGE_DEG = (-45.0, 45.0)


@dataclass(frozen=True)
class SegmentPlace:
    """Where a segment sits (mm): top ``height_mm`` above the lowest point of the lens
    shape, centre ``mono_pd_mm`` from the bridge centre, ``tilt_deg`` from level
    (either way; measured only)."""

    height_mm: float | None = None
    mono_pd_mm: float | None = None
    tilt_deg: float | None = None


@dataclass(frozen=True)
class OrderedLens:
    """One lens as ordered: prescription, prescribed prism and where its PRP goes (mm).

    ``thinning_base_down``: the progressive's yoked thinning prism (prism
    dioptres, base down), which the verification takes out.
    """

    prescription: Prescription
    prism: Prism
    mono_pd_mm: float | None = None
    height_mm: float | None = None
    thinning_base_down: float = 0.0
    add: float | None = None
    segment: SegmentPlace | None = None
    fitting_cross_height_mm: float | None = None

    @property
    def target(self) -> Prism:
        """The prism the PRP should show: the prescribed prism plus the thinning prism."""
        return self.prism + Prism(0.0, -self.thinning_base_down)


@dataclass(frozen=True)
class MeasuredLens:
    """One lens as measured: prism at the measured point, and where that point is.

    Any of these may be absent; the verification says what it assumed.
    """

    prism: Prism | None = None
    prescription: Prescription | None = None
    mono_pd_mm: float | None = None
    height_mm: float | None = None
    offset: LensPoint | None = None
    add: float | None = None
    segment: SegmentPlace | None = None
    fitting_cross_height_mm: float | None = None

    @property
    def is_empty(self) -> bool:
        return (self.prism is None and self.mono_pd_mm is None and self.height_mm is None
                and self.offset is None and self.prescription is None and self.add is None
                and self.segment is None and self.fitting_cross_height_mm is None)


@dataclass(frozen=True)
class Settings:
    """How to judge: which table, lens type, mounting and horizontal reading."""

    table: ToleranceTable
    lens_type: str
    mounting: str
    horizontal_reading: str


@dataclass(frozen=True)
class Verification:
    """A finished pair (or single unmounted lens) to judge: order, measurements, settings."""

    settings: Settings
    ordered: Mapping[Eye, OrderedLens]
    measured: Mapping[Eye, MeasuredLens]
    ordered_pd_mm: float | None = None
    centre_distance_mm: float | None = None
    name: str = ""
    order_path: str = "ordered"
    """Where the order came from, for refusals: ``ordered`` or the case's ``fitting``."""

    @property
    def eyes(self) -> tuple[Eye, ...]:
        return tuple(eye for eye in EYES if eye in self.ordered)


@dataclass(frozen=True)
class Section:
    """A case's ``verification`` section: settings and measurements, the order from the case.

    ``given`` holds the section's own settings; the lens type and thinning prism,
    when left out, come from the case's lenses (a progressive design, a segment).
    """

    given: Mapping[str, Any]
    measured: Mapping[Eye, MeasuredLens]
    centre_distance_mm: float | None


_SETTING_KEYS = ("standard", "lens_type", "mounting", "horizontal_reading",
                 "thinning_base_down")
_DOC_KEYS = (*_SETTING_KEYS, "ordered", "measured", "name", "notes", "schema")
_SECTION_KEYS = (*_SETTING_KEYS, "measured")
_ORDERED_LENS_KEYS = ("sphere", "cylinder", "axis", "rx", "prism", "mono_pd_mm", "height_mm",
                      "add", "segment", "fitting_cross_height_mm")
_MEASURED_MOUNTED_KEYS = ("sphere", "cylinder", "axis", "rx", "prism", "mono_pd_mm",
                          "height_mm", "add", "segment", "fitting_cross_height_mm")
_MEASURED_UNMOUNTED_KEYS = ("sphere", "cylinder", "axis", "rx", "prism", "offset", "add")


def read_verification(document: Any) -> Verification:
    """A validated Verification from a parsed verification document."""
    obj = as_object(document, "", "a verification")
    only_keys(obj, "", _DOC_KEYS)
    settings = _settings(obj, "")
    thinning = _thinning(obj, "", settings)
    ordered_obj = as_object(obj.get("ordered"), "ordered", "the order (right and left lenses)")
    only_keys(ordered_obj, "ordered", ("right", "left", "pd_mm"))
    eyes = [eye for eye in EYES if eye in ordered_obj]
    if settings.mounting == "mounted" and len(eyes) < 2:
        missing = "right" if "right" not in ordered_obj else "left"
        raise CaseError(f"ordered.{missing}", f"ordered.{missing} is missing: a mounted pair "
                                              "needs both lenses as ordered.")
    if not eyes:
        raise CaseError("ordered.right", "ordered.right is missing: give at least one lens as "
                                         "ordered.")
    ordered = {eye: _ordered_lens(ordered_obj[eye], f"ordered.{eye}", thinning[eye])
               for eye in eyes}
    ordered_pd = _pd(ordered_obj, "ordered", "pd_mm", ordered)
    measured, centre_distance = _measured(obj.get("measured"), "measured", settings,
                                          tuple(eyes))
    _pair_consistency(settings, ordered, "ordered")
    name = text(obj, "", "name", 80)
    text(obj, "", "notes", 2000)
    if "schema" in obj:
        in_range(obj["schema"], "schema", 1, 1)
    return Verification(settings, ordered, measured, ordered_pd, centre_distance, name)


def read_section(value: Any, path: str) -> Section:
    """The ``verification`` section of a case (the order comes from the case)."""
    obj = as_object(value, path, "a verification section")
    only_keys(obj, path, _SECTION_KEYS)
    settings = _settings({**obj, "lens_type": obj.get("lens_type", "progressive")}, path)
    measured, centre_distance = _measured(obj.get("measured"), path_of(path, "measured"),
                                          settings, EYES)
    given = {key: obj[key] for key in _SETTING_KEYS if key in obj}
    return Section(given, measured, centre_distance)


def from_case(case: Case, section: Section, path: str = "verification") -> Verification:
    """The Verification a case's section describes: the order is the case's lenses and fitting.

    Left out of the section, the lens type is progressive where a lens has a
    progressive design, multifocal where one has a segment, else single vision;
    the thinning prism is the progressive design's own.
    """
    designs = [getattr(case.lens(eye), "progressive", None) for eye in EYES]
    given = dict(section.given)
    if "lens_type" not in given:
        given["lens_type"] = ("progressive" if any(designs) else "multifocal"
                              if any(case.lens(eye).segment for eye in EYES) else "single_vision")
    if "thinning_base_down" not in given and given["lens_type"] == "progressive":
        given["thinning_base_down"] = {
            eye: float(getattr(design, "thinning_prism_base_down", 0.0) or 0.0)
            for eye, design in zip(EYES, designs, strict=True)}
    settings = _settings(given, path)
    thinning = _thinning(given, path, settings)
    ordered = {}
    for eye in EYES:
        lens = case.lens(eye)
        fit = None
        if case.fitting is not None:
            fit = case.fitting.right if eye == "right" else case.fitting.left
        height = fit.height_mm if fit else None
        segment = None
        if lens.segment is not None and height is not None:
            segment = SegmentPlace(height + lens.segment.top_mm)
        # The standard's prism height is the PRP's: below the fitting cross on a progressive.
        ordered[eye] = OrderedLens(lens.prescription, lens.prism,
                                   fit.mono_pd_mm if fit else None,
                                   reference_point_height_mm(lens, height), thinning[eye],
                                   lens.add or None, segment,
                                   height if given["lens_type"] == "progressive" else None)
    pd = case.fitting.distance_pd_mm if case.fitting is not None else None
    _pair_consistency(settings, ordered, "fitting")
    return Verification(settings, ordered, section.measured, pd,
                        section.centre_distance_mm, case.name, "fitting")


# --------------------------------------------------------------------------- parts


def _settings(obj: Mapping[str, Any], path: str) -> Settings:
    table = tolerance_table(obj.get("standard", DEFAULT_TABLE), path_of(path, "standard"))
    lens_type = choice(obj, path, "lens_type", LENS_TYPES, "single_vision")
    mounting = choice(obj, path, "mounting", MOUNTINGS, "mounted")
    reading = choice(obj, path, "horizontal_reading", READINGS, "total")
    if not table.rows_for(lens_type, mounting):
        where = path_of(path, "mounting" if not table.rows_for(lens_type, "mounted")
                        or mounting == "unmounted" else "lens_type")
        raise CaseError(where, f"{where}: {table.title} gives no prism tolerance for "
                               f"{mounting} {lens_type.replace('_', ' ')} lenses; choose "
                               "another standard or mounting.", mounting)
    if reading == "per_eye" and not any(
            band.per_eye_limit is not None for row in table.rows for band in row.bands):
        where = path_of(path, "horizontal_reading")
        raise CaseError(where, f"{where} per_eye: {table.title} gives no per-eye horizontal "
                               "limit; use total.", reading)
    return Settings(table, lens_type, mounting, reading)


def _thinning(obj: Mapping[str, Any], path: str, settings: Settings) -> dict[Eye, float]:
    where = path_of(path, "thinning_base_down")
    value = obj.get("thinning_base_down", 0)
    if value not in (0, {}) and settings.lens_type != "progressive":
        raise CaseError(where, f"{where} applies to progressive lenses only; set lens_type "
                               "to progressive or leave it out.", value)
    if isinstance(value, dict):
        only_keys(value, where, ("right", "left"))
        return {eye: in_range(value.get(eye, 0), path_of(where, eye), 0, THINNING_LIMIT,
                              "prism dioptres") for eye in EYES}
    amount = in_range(value, where, 0, THINNING_LIMIT, "prism dioptres")
    return {eye: amount for eye in EYES}


def _ordered_lens(value: Any, path: str, thinning: float) -> OrderedLens:
    obj = as_object(value, path, "a lens as ordered")
    only_keys(obj, path, _ORDERED_LENS_KEYS)
    eye: Eye = "right" if path.endswith("right") else "left"
    rx = prescription(obj, path)
    prism = read_prism(obj["prism"], f"{path}.prism", eye) if "prism" in obj else Prism()
    return OrderedLens(rx, prism, optional_range(obj, path, "mono_pd_mm", *MONO_RANGE_MM, "mm"),
                       optional_range(obj, path, "height_mm", *HEIGHT_RANGE_MM, "mm"),
                       thinning, optional_range(obj, path, "add", *ADD_RANGE_D, "dioptres"),
                       _segment(obj, path, measured=False),
                       optional_range(obj, path, "fitting_cross_height_mm", *HEIGHT_RANGE_MM,
                                      "mm"))


def _segment(obj: Mapping[str, Any], path: str, measured: bool) -> SegmentPlace | None:
    if "segment" not in obj:
        return None
    where = path_of(path, "segment")
    seg = as_object(obj["segment"], where, "a segment position (height_mm, mono_pd_mm)")
    only_keys(seg, where, ("height_mm", "mono_pd_mm", "tilt_deg") if measured
              else ("height_mm", "mono_pd_mm"))
    return SegmentPlace(optional_range(seg, where, "height_mm", *SEGMENT_HEIGHT_RANGE_MM, "mm"),
                        optional_range(seg, where, "mono_pd_mm", *MONO_RANGE_MM, "mm"),
                        optional_range(seg, where, "tilt_deg", *TILT_RANGE_DEG, "degrees"))


def _measured(value: Any, path: str, settings: Settings,
              eyes: tuple[Eye, ...]) -> tuple[dict[Eye, MeasuredLens], float | None]:
    if value is None:
        raise CaseError(path, f"{path} is missing: give what was measured on the finished "
                              "lenses (right, left, centre_distance_mm).")
    obj = as_object(value, path, "the measurements (right and left)")
    unmounted = settings.mounting == "unmounted"
    only_keys(obj, path, ("right", "left") if unmounted else
              ("right", "left", "centre_distance_mm"))
    for eye in EYES:
        if eye in obj and eye not in eyes:
            where = path_of(path, eye)
            raise CaseError(where, f"{where} is given but ordered.{eye} is not; give the "
                                   "order for every lens measured.")
    measured = {eye: _measured_lens(obj[eye], path_of(path, eye), unmounted)
                for eye in eyes if eye in obj}
    centre = optional_range(obj, path, "centre_distance_mm", *PD_RANGE_MM, "mm")
    if centre is not None and any(m.mono_pd_mm is not None for m in measured.values()):
        where = path_of(path, "centre_distance_mm")
        raise CaseError(where, f"{where} and measured monocular PDs both given; give the "
                               "distance between the centres one way only.")
    if centre is None and all(m.is_empty for m in measured.values()):
        raise CaseError(path, f"{path} holds no measurement: give what the lensmeter reads "
                              "at each lens's reference point (powers, prism), or where the "
                              "centres are.")
    for eye in eyes:
        if unmounted and (eye not in measured or measured[eye].is_empty):
            where = path_of(path, eye)
            raise CaseError(where, f"{where} is missing: give the prism found at the lens's "
                                   "specified prism reference point, or the offset.")
    _pair_consistency(settings, measured, path)
    return measured, centre


def _measured_lens(value: Any, path: str, unmounted: bool) -> MeasuredLens:
    obj = as_object(value, path, "a lens as measured")
    only_keys(obj, path, _MEASURED_UNMOUNTED_KEYS if unmounted else _MEASURED_MOUNTED_KEYS)
    eye: Eye = "right" if path.endswith("right") else "left"
    rx = prescription(obj, path) if has_prescription(obj) else None
    prism = read_prism(obj["prism"], f"{path}.prism", eye) if "prism" in obj else None
    offset = None
    if "offset" in obj:
        where = path_of(path, "offset")
        off = as_object(obj["offset"], where, "an offset (in_mm, up_mm)")
        only_keys(off, where, ("in_mm", "up_mm"))
        offset = LensPoint(
            in_range(off.get("in_mm", 0), path_of(where, "in_mm"), -OFFSET_LIMIT_MM,
                     OFFSET_LIMIT_MM, "mm"),
            in_range(off.get("up_mm", 0), path_of(where, "up_mm"), -OFFSET_LIMIT_MM,
                     OFFSET_LIMIT_MM, "mm"))
    return MeasuredLens(prism, rx, optional_range(obj, path, "mono_pd_mm", *MONO_RANGE_MM, "mm"),
                        optional_range(obj, path, "height_mm", *HEIGHT_RANGE_MM, "mm"), offset,
                        optional_range(obj, path, "add", *ADD_RANGE_D, "dioptres"),
                        _segment(obj, path, measured=True),
                        optional_range(obj, path, "fitting_cross_height_mm", *HEIGHT_RANGE_MM,
                                       "mm"))


def _pd(obj: Mapping[str, Any], path: str, key: str,
        lenses: Mapping[Eye, OrderedLens]) -> float | None:
    pd = optional_range(obj, path, key, *PD_RANGE_MM, "mm")
    monos = [lens.mono_pd_mm for lens in lenses.values()]
    if pd is not None and any(m is not None for m in monos):
        where = path_of(path, key)
        raise CaseError(where, f"{where} and monocular PDs both given; give the ordered PD "
                               "one way only.")
    if pd is None and len(monos) == 2 and all(m is not None for m in monos):
        return sum(m for m in monos if m is not None)
    return pd


def _pair_consistency(settings: Settings, lenses: Mapping[Eye, Any], path: str) -> None:
    """Monocular PDs and heights of a mounted pair go by pairs: both eyes or neither."""
    if settings.mounting != "mounted":
        return
    for key in ("mono_pd_mm", "height_mm"):
        given = [eye for eye in EYES if eye in lenses and getattr(lenses[eye], key) is not None]
        if len(given) == 1:
            field = path_of(path_of(path, "left" if given[0] == "right" else "right"), key)
            raise CaseError(field, f"{field} is missing: give {key} for both eyes or "
                                   "for neither.")
