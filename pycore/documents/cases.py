"""Case documents (JSON) to values, and every refusal naming its field.

The format is described in docs/case-format.md. Parsing is strict: an
unknown key is refused (a mistyped ``cyl`` must never silently become a
lens with no cylinder).
"""

from __future__ import annotations

import json
from collections import OrderedDict
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from functools import partial
from typing import Any, TypeVar

from pycore.documents.fields import as_object as _object
from pycore.documents.fields import only_keys as _only_keys
from pycore.documents.fields import read_prism as read_prism
from pycore.documents.fields import within as _within
from pycore.documents.json_input import MAX_DOCUMENT_BYTES, MAX_NESTING, load_json
from pycore.errors import CaseError
from pycore.optics.eyes import EYES, Eye
from pycore.optics.notation import (
    WrittenPrescription,
    parse_sphere,
    parse_written,
)
from pycore.optics.power import Prescription
from pycore.optics.prism import PRISM_LIMIT, Prism
from pycore.reading.options import read_reading_zone
from pycore.spectacles.fitting import (
    DEFAULT_CENTRE_OF_ROTATION_MM,
    DEFAULT_READING_DEPTH_MM,
    DEFAULT_WORKING_DISTANCE_MM,
    EyeFitting,
    Fitting,
)
from pycore.spectacles.gaze import GazePoint, LensPoint
from pycore.spectacles.lens import Lens, Segment, SlabOff
from pycore.spectacles.progressive import Progressive
from pycore.spectacles.segments import SEGMENT_SHAPES, SegmentOutline
from pycore.validation import finite_number, in_range

T = TypeVar("T")

MAX_POINTS = 200
MAX_NAME = 80
FITTING_POINTS = ("distance", "near")


@dataclass(frozen=True)
class Frame:
    """Frame sizes (mm): box width A, bridge DBL, effective diameter ED, box depth B."""

    a_mm: float
    dbl_mm: float
    ed_mm: float | None = None
    b_mm: float | None = None


@dataclass(frozen=True)
class Case:
    """One wearer's spectacles and the points of gaze to check."""

    right: Lens
    left: Lens
    points: tuple[GazePoint | str, ...]
    fitting: Fitting | None = None
    frame: Frame | None = None
    name: str = ""
    extras: Mapping[str, Any] = field(default_factory=dict)
    document: Mapping[str, Any] = field(default_factory=dict, compare=False, repr=False)
    """The parsed document the case was read from (remedies edit a copy of it)."""
    plain_document: bool = field(default=False, compare=False, repr=False)
    """True: ``document`` is the case's own, parsed by the one JSON reader (so it holds
    no -0.0): a remedy's copy may share its values rather than copy them."""

    def lens(self, eye: Eye) -> Lens:
        return self.right if eye == "right" else self.left


# --------------------------------------------------------------------------- sections

def read_verification_section(value: Any, path: str) -> Any:
    """A finished pair's measurements (``pycore.checks.verification_input``). Imported
    here, on the first case that carries them, so that reading an ordinary case never
    loads the tolerance tables: in the browser that keeps them out of the first result."""
    from pycore.checks.verification_input import read_section

    return read_section(value, path)


SECTIONS: dict[str, Callable[[Any, str], Any]] = {
    "reading_zone": read_reading_zone,
    "verification": read_verification_section,
}
"""The further top-level sections a case may carry, and the reader of each; what
they hold is kept in ``Case.extras`` under the same key."""

_TOP_KEYS = ("right", "left", "points", "fitting", "frame", "name", "notes", "schema")


def read_case(document: Any, known: Case | None = None, plain: bool = False) -> Case:
    """A validated Case from a parsed JSON document (``plain``: parsed by
    ``load_json`` for this case alone; see ``Case.plain_document``).

    ``known``: a case already read whose document the core copied and edited to make
    ``document`` (a remedy's finished case). A part equal to the same part of
    ``known``'s document (the fitting, a lens with the same fitting height, the frame,
    the points, a further section) is taken from ``known`` as read then: the strict
    reader reads only what the edit changed, with the same refusals."""
    obj = _object(document, "", "the case")
    _only_keys(obj, "", (*_TOP_KEYS, *SECTIONS))
    obj = fold_reading_depth(obj)
    before: Mapping[str, Any] = known.document if known is not None else {}

    def same(key: str) -> bool:
        return key in obj and key in before and obj[key] == before[key]

    fitting = None
    if known is not None and same("fitting"):
        fitting = known.fitting
    elif "fitting" in obj:
        fitting = _read_kept(read_fitting, obj["fitting"], "fitting")
    lenses = {}
    for eye in EYES:
        if eye not in obj:
            raise CaseError(eye, f"{eye} is missing: a case needs both eyes' lenses "
                                 "(use sphere 0 for a plano lens).")
        height = None
        if fitting is not None:
            height = (fitting.right if eye == "right" else fitting.left).height_mm
        if known is not None and same(eye) and height == _height(known, eye):
            lenses[eye] = known.lens(eye)
        else:
            lenses[eye] = _read_lens_kept(obj[eye], eye, height)
    frame = None
    if known is not None and same("frame"):
        frame = known.frame
    elif "frame" in obj:
        frame = read_frame(obj["frame"], "frame")
    if "points" in obj:
        points = (known.points if known is not None and same("points")
                  and fitting is known.fitting else read_points(obj["points"], "points", fitting))
    elif fitting is not None:
        points = FITTING_POINTS
    else:
        raise CaseError("points", "points is missing: give points of gaze, or a fitting "
                                  "with monocular PDs from which to find them.")
    name = _text(obj.get("name", ""), "name", MAX_NAME)
    _text(obj.get("notes", ""), "notes", 2000)
    if "schema" in obj:
        in_range(obj["schema"], "schema", 1, 1)
    extras = {key: (known.extras[key] if known is not None and same(key)
                    and key in known.extras else
                    _read_kept(reader, obj[key], key) if key == "reading_zone"
                    else reader(obj[key], key))
              for key, reader in SECTIONS.items() if key in obj}
    return Case(lenses["right"], lenses["left"], points, fitting, frame, name, extras, obj,
                plain)


def _height(case: Case, eye: Eye) -> float | None:
    """The fitting height ``case``'s lens before ``eye`` was read with (mm), if any."""
    if case.fitting is None:
        return None
    return (case.fitting.right if eye == "right" else case.fitting.left).height_mm


def read_case_text(text: str | bytes) -> Case:
    return read_case(load_json(text), plain=True)


_LENS_KEYS = ("sphere", "cylinder", "axis", "rx", "prism", "add", "segment", "slab_off",
              "progressive", "optical_centre_mm")


_KEPT_PARTS: OrderedDict[tuple[str, str, tuple[Any, ...]], Any] = OrderedDict()
_KEPT = 16
"""How many parts of cases read lately are kept (both lenses and the fitting of a few)."""
_KEY_TEXT = json.JSONEncoder(sort_keys=True, allow_nan=False)
"""A kept part's key: its JSON text, keys sorted (json.dumps with these settings, without
making an encoder for every part)."""


def _read_kept(read: Callable[..., T], value: Any, *args: Any) -> T:
    """``read(value, *args)``, not done again for a part read lately (the other eye's
    lens while a person edits one, the lens and fitting a remedy leaves alone): what
    the readers make is immutable. Refusals are not kept: they are said each time."""
    try:
        key = (read.__name__, _KEY_TEXT.encode(value), args)
    except (TypeError, ValueError):
        return read(value, *args)
    if key in _KEPT_PARTS:
        _KEPT_PARTS.move_to_end(key)
        found: T = _KEPT_PARTS[key]
        return found
    made = read(value, *args)
    _KEPT_PARTS[key] = made
    if len(_KEPT_PARTS) > _KEPT:
        _KEPT_PARTS.popitem(last=False)
    return made


def _read_lens_kept(value: Any, path: str, fitting_height_mm: float | None) -> Lens:
    return _read_kept(read_lens, value, path, fitting_height_mm)


def read_lens(value: Any, path: str, fitting_height_mm: float | None = None) -> Lens:
    """One eye's lens; ``fitting_height_mm`` (that eye's fitting height above the lowest
    point of the lens shape) places a segment given by its ``height_mm``."""
    obj = _object(value, path, "an eye's lens")
    _only_keys(obj, path, _LENS_KEYS)
    eye: Eye = "right" if path.endswith("right") else "left"
    written = _prescription(obj, path, eye)
    rx = written.prescription
    prism = read_prism(obj["prism"], f"{path}.prism", eye) if "prism" in obj else Prism()
    if written.prism is not None:
        prism = _agreeing_prism(written.prism, prism, "prism" in obj, path)
    add = 0.0
    if "add" in obj:
        add = finite_number(obj["add"], f"{path}.add", "dioptres")
        if add != 0:
            add = _within(lambda: in_range(add, "add", 0.25, 6.0, "dioptres"), path)
    if written.add is not None:
        add = _agreeing_add(written.add, add, "add" in obj, path)
    segment = (_read_segment(obj["segment"], f"{path}.segment", fitting_height_mm)
               if "segment" in obj else None)
    if segment is not None and add == 0:
        raise CaseError(f"{path}.add", f"{path}.add is needed with a segment: give the "
                                       "reading addition in dioptres (0.25 to 6).")
    slab = _read_slab_off(obj["slab_off"], f"{path}.slab_off") if "slab_off" in obj else None
    progressive = (_read_progressive(obj["progressive"], f"{path}.progressive")
                   if "progressive" in obj else None)
    if progressive is not None and add == 0:
        raise CaseError(f"{path}.add", f"{path}.add is needed with a progressive: give the "
                                       "reading addition in dioptres (0.25 to 6).")
    centre = (0.0, 0.0)
    if "optical_centre_mm" in obj:
        moved = read_lens_point(obj["optical_centre_mm"], f"{path}.optical_centre_mm")
        centre = (moved.in_mm, moved.up_mm)
    return _within(lambda: Lens(rx, prism, add, segment, slab, progressive, centre), path)


def _prescription(obj: Mapping[str, Any], path: str, eye: Eye) -> WrittenPrescription:
    """The lens's prescription: the ``rx`` line (which may carry an add and prism) or
    ``sphere`` (a number, or text such as "+2.00 DS" or "plano"), ``cylinder``, ``axis``."""
    if "rx" in obj:
        clash = [k for k in ("sphere", "cylinder", "axis") if k in obj]
        if clash:
            raise CaseError(f"{path}.rx", f"{path}.rx and {path}.{clash[0]} both given; "
                                          "write the prescription one way only.")
        return parse_written(obj["rx"], f"{path}.rx", eye)
    if "sphere" not in obj:
        raise CaseError(f"{path}.sphere", f"{path}.sphere is missing: give the sphere in "
                                          "dioptres (0 for plano).")
    if isinstance(obj["sphere"], str):
        sphere = parse_sphere(obj["sphere"], f"{path}.sphere")
    else:
        sphere = finite_number(obj["sphere"], f"{path}.sphere", "dioptres")
    cylinder = finite_number(obj.get("cylinder", 0), f"{path}.cylinder", "dioptres")
    axis = finite_number(obj.get("axis", 0), f"{path}.axis", "degrees")
    return WrittenPrescription(_within(lambda: Prescription(sphere, cylinder, axis), path))


_SAME = 0.005
"""Two figures closer than this (dioptres, prism dioptres) are the same as written."""


def _agreeing_add(written: float, given: float, has_given: bool, path: str) -> float:
    """The add written on the rx line, refused when the ``add`` field says otherwise."""
    if has_given and abs(written - given) >= _SAME:
        raise CaseError(f"{path}.add", f"{path}.add ({given:.2f}) and the add written in "
                                       f"{path}.rx ({written:.2f}) disagree; give the add "
                                       "once.", given)
    return written


def _agreeing_prism(written: Prism, given: Prism, has_given: bool, path: str) -> Prism:
    """The prism written on the rx line, refused when the ``prism`` field says otherwise."""
    if has_given and (abs(written.base_in - given.base_in) >= _SAME
                      or abs(written.base_up - given.base_up) >= _SAME):
        raise CaseError(f"{path}.prism", f"{path}.prism ({given.in_words()}) and the prism "
                                         f"written in {path}.rx ({written.in_words()}) "
                                         "disagree; give the prism once.")
    return written


_SEGMENT_PLACE_KEYS = ("top_mm", "optical_centre_below_top_mm", "optical_centre_in_mm")
SEGMENT_HEIGHT_RANGE_MM = (0.0, 45.0)


def _read_segment(value: Any, path: str, fitting_height_mm: float | None = None) -> Segment:
    obj = _object(value, path, "a segment")
    _only_keys(obj, path, (*_SEGMENT_PLACE_KEYS, "height_mm", *_SEGMENT_DESIGN_KEYS))
    numbers = {k: finite_number(obj[k], f"{path}.{k}", "mm")
               for k in _SEGMENT_PLACE_KEYS if k in obj}
    if "height_mm" in obj:
        numbers["top_mm"] = segment_top_from_height(obj, path, fitting_height_mm)
    elif "top_mm" not in obj:
        raise CaseError(f"{path}.top_mm", f"{path}.top_mm is missing: give the segment "
                                          "height above the lowest point of the lens shape "
                                          "(height_mm), or the segment top's height from the "
                                          "distance reference point (top_mm).")
    outline = _read_segment_outline(obj, path)
    if outline is not None and "optical_centre_below_top_mm" not in numbers:
        numbers["optical_centre_below_top_mm"] = outline.usual_optical_centre_below_top_mm
    return _within(lambda: Segment(**numbers, outline=outline), path)


def segment_top_from_height(obj: Mapping[str, Any], path: str,
                            fitting_height_mm: float | None) -> float:
    """``top_mm`` from a segment height as an order form gives it: the segment top above
    the lowest point of the lens shape minus the fitting height (mm, negative: below
    the distance reference point)."""
    if "top_mm" in obj:
        raise CaseError(f"{path}.height_mm", f"{path}.height_mm (segment height above the "
                                             "lowest point of the lens shape) and "
                                             f"{path}.top_mm (segment top from the distance "
                                             "reference point) both given; give one.")
    height = in_range(obj["height_mm"], f"{path}.height_mm", *SEGMENT_HEIGHT_RANGE_MM, "mm")
    if fitting_height_mm is None:
        eye = path.split(".")[0]
        raise CaseError(f"{path}.height_mm", f"{path}.height_mm (segment height above the "
                                             "lowest point of the lens shape) needs that "
                                             f"eye's fitting height (fitting.{eye}.height_mm); "
                                             "give it, or give the segment top from the "
                                             "distance reference point (top_mm).", height)
    return height - fitting_height_mm


# --------------------------------------------------------------------------- lens designs
# Segment shapes and progressive designs (pycore/segments.py, pycore/progressive.py);
# docs/case-format.md, "Lens designs and the reading zone".

_SEGMENT_DESIGN_KEYS = ("shape", "diameter_mm", "width_mm")
_SIZE_KEYS = {"round": "diameter_mm", "flat_top": "width_mm"}


def _read_segment_outline(obj: Mapping[str, Any], path: str) -> SegmentOutline | None:
    """The segment's shape and size; a size alone implies the shape (diameter: round,
    width: flat-top). None when the case gives neither."""
    sizes = [key for key in ("diameter_mm", "width_mm") if key in obj]
    if len(sizes) == 2:
        raise CaseError(f"{path}.width_mm", f"{path}.width_mm and {path}.diameter_mm both "
                                            "given; a round segment has a diameter, a "
                                            "flat-top a width.")
    shape = obj.get("shape")
    if shape is None:
        if not sizes:
            return None
        shape = "round" if sizes[0] == "diameter_mm" else "flat_top"
    if shape not in SEGMENT_SHAPES:
        raise CaseError(f"{path}.shape", f"{path}.shape must be one of "
                                         f"{', '.join(SEGMENT_SHAPES)}.", shape)
    wanted = _SIZE_KEYS.get(shape)
    if sizes and sizes[0] != wanted:
        instead = f"give {wanted} instead" if wanted else "it spans the lens, so leave it out"
        raise CaseError(f"{path}.{sizes[0]}", f"{path}.{sizes[0]} does not fit a {shape} "
                                              f"segment; {instead}.")
    size = finite_number(obj[sizes[0]], f"{path}.{sizes[0]}", "mm") if sizes else None
    return _within(lambda: SegmentOutline(shape, size), path)


_PROGRESSIVE_KEYS = {"prism_reference_below_cross_mm": "mm", "near_depth_mm": "mm",
                     "near_inset_mm": "mm", "thinning_prism_base_down": "prism dioptres"}


def _read_progressive(value: Any, path: str) -> Progressive:
    obj = _object(value, path, "a progressive design")
    _only_keys(obj, path, tuple(_PROGRESSIVE_KEYS))
    numbers = {k: finite_number(v, f"{path}.{k}", _PROGRESSIVE_KEYS[k]) for k, v in obj.items()}
    return _within(lambda: Progressive(**numbers), path)


def _read_slab_off(value: Any, path: str) -> SlabOff:
    obj = _object(value, path, "a slab-off")
    _only_keys(obj, path, ("base_up", "line_mm"))
    _require(obj, path, ("base_up", "line_mm"),
             "a slab-off needs base_up (prism dioptres) and line_mm (mm)")
    base_up = finite_number(obj["base_up"], f"{path}.base_up", "prism dioptres")
    line = finite_number(obj["line_mm"], f"{path}.line_mm", "mm")
    return _within(lambda: SlabOff(base_up, line), path)


_FITTING_KEYS = ("right", "left", "working_distance_mm", "centre_of_rotation_mm",
                 "reading_depth_mm")


def read_fitting(value: Any, path: str) -> Fitting:
    obj = _object(value, path, "a fitting")
    _only_keys(obj, path, _FITTING_KEYS)
    eyes = {}
    for eye in EYES:
        if eye not in obj:
            raise CaseError(f"{path}.{eye}", f"{path}.{eye} is missing: give that eye's "
                                             "monocular PD (mono_pd_mm).")
        eye_obj = _object(obj[eye], f"{path}.{eye}", "an eye's fitting")
        _only_keys(eye_obj, f"{path}.{eye}", ("mono_pd_mm", "height_mm"))
        if "mono_pd_mm" not in eye_obj:
            raise CaseError(f"{path}.{eye}.mono_pd_mm", f"{path}.{eye}.mono_pd_mm is missing: "
                                                        "give the monocular PD in mm.")
        pd = finite_number(eye_obj["mono_pd_mm"], f"{path}.{eye}.mono_pd_mm", "mm")
        height = eye_obj.get("height_mm")
        if height is not None:
            height = finite_number(height, f"{path}.{eye}.height_mm", "mm")
        eyes[eye] = _within(partial(EyeFitting, pd, height), f"{path}.{eye}")
    numbers = {
        key: finite_number(obj.get(key, default), f"{path}.{key}", "mm")
        for key, default in (("working_distance_mm", DEFAULT_WORKING_DISTANCE_MM),
                             ("centre_of_rotation_mm", DEFAULT_CENTRE_OF_ROTATION_MM),
                             ("reading_depth_mm", DEFAULT_READING_DEPTH_MM))
    }
    return _within(lambda: Fitting(eyes["right"], eyes["left"], **numbers), path)


READING_DEPTH_ALIAS = ("reading_zone", "reading_depth_mm")
"""The older place of the reading depth; ``fitting.reading_depth_mm`` is the one
documented input (docs/case-format.md, "Fitting")."""


def fold_reading_depth(obj: dict[str, Any]) -> dict[str, Any]:
    """The document with an older ``reading_zone.reading_depth_mm`` moved into the
    fitting (when there is one), refused when the fitting gives a different depth.

    Without a fitting the reading-zone settings keep it (the fitting is assumed)."""
    section_key, key = READING_DEPTH_ALIAS
    section, fitting = obj.get(section_key), obj.get("fitting")
    if not isinstance(section, dict) or key not in section or not isinstance(fitting, dict):
        return obj
    alias = in_range(section[key], f"{section_key}.{key}", 0, 35, "mm")
    if key in fitting:
        given = finite_number(fitting[key], f"fitting.{key}", "mm")
        if abs(given - alias) >= 1e-9:
            raise CaseError(f"{section_key}.{key}",
                            f"The reading depth is given twice and the two differ: "
                            f"fitting.{key} {given:g} mm, {section_key}.{key} {alias:g} mm; "
                            f"give it once, as fitting.{key}.", alias)
    folded = dict(obj)
    folded["fitting"] = {**fitting, key: alias}
    folded[section_key] = {k: v for k, v in section.items() if k != key}
    return folded


def read_frame(value: Any, path: str) -> Frame:
    obj = _object(value, path, "a frame")
    _only_keys(obj, path, ("a_mm", "dbl_mm", "ed_mm", "b_mm"))
    _require(obj, path, ("a_mm", "dbl_mm"), "a frame needs its box width a_mm and bridge dbl_mm")
    a = in_range(obj["a_mm"], f"{path}.a_mm", 25, 80, "mm")
    dbl = in_range(obj["dbl_mm"], f"{path}.dbl_mm", 8, 30, "mm")
    ed = in_range(obj["ed_mm"], f"{path}.ed_mm", 25, 90, "mm") if "ed_mm" in obj else None
    b = in_range(obj["b_mm"], f"{path}.b_mm", 15, 70, "mm") if "b_mm" in obj else None
    if ed is not None and ed < a:
        raise CaseError(f"{path}.ed_mm", f"{path}.ed_mm ({ed:g}) cannot be smaller than the "
                                         f"box width a_mm ({a:g}).")
    return Frame(a, dbl, ed, b)


def read_points(value: Any, path: str, fitting: Fitting | None) -> tuple[GazePoint | str, ...]:
    if not isinstance(value, list):
        raise CaseError(path, f"{path} must be a list of points of gaze.", value)
    if not value:
        raise CaseError(path, f"{path} is empty: give at least one point of gaze.")
    if len(value) > MAX_POINTS:
        raise CaseError(path, f"{path} has {len(value)} entries; at most {MAX_POINTS}.")
    points: list[GazePoint | str] = []
    for index, item in enumerate(value):
        where = f"{path}.{index}"
        if isinstance(item, str):
            if item not in FITTING_POINTS:
                raise CaseError(where, f"{where} must be a point object, or one of "
                                       f"{', '.join(FITTING_POINTS)} (from the fitting).", item)
            if fitting is None:
                raise CaseError(where, f"{where} ({item}) needs a fitting with monocular PDs.",
                                item)
            points.append(item)
            continue
        obj = _object(item, where, "a point of gaze")
        _only_keys(obj, where, ("name", "right", "left"))
        name = _text(obj.get("name", f"point {index + 1}"), f"{where}.name", MAX_NAME)
        lens_points = {}
        for eye in EYES:
            if eye not in obj:
                raise CaseError(f"{where}.{eye}", f"{where}.{eye} is missing: give in_mm and "
                                                  "up_mm for each eye.")
            lens_points[eye] = read_lens_point(obj[eye], f"{where}.{eye}")
        points.append(GazePoint(name, lens_points["right"], lens_points["left"]))
    return tuple(points)


def read_lens_point(value: Any, path: str) -> LensPoint:
    obj = _object(value, path, "a point on the lens")
    _only_keys(obj, path, ("in_mm", "up_mm"))
    in_mm = finite_number(obj.get("in_mm", 0), f"{path}.in_mm", "mm")
    up_mm = finite_number(obj.get("up_mm", 0), f"{path}.up_mm", "mm")
    return _within(lambda: LensPoint(in_mm, up_mm), path)


# --------------------------------------------------------------------------- helpers


def _require(obj: Mapping[str, Any], path: str, keys: tuple[str, ...], why: str) -> None:
    """Refuse the first of ``keys`` missing from ``obj``, saying ``why`` it is needed."""
    for key in keys:
        if key not in obj:
            raise CaseError(f"{path}.{key}", f"{path}.{key} is missing: {why}.")


def _text(value: Any, path: str, limit: int) -> str:
    if not isinstance(value, str):
        raise CaseError(path, f"{path} must be text.", value)
    if len(value) > limit:
        raise CaseError(path, f"{path} is too long (at most {limit} characters).", value)
    return value


__all__ = ["MAX_DOCUMENT_BYTES", "MAX_NESTING", "PRISM_LIMIT", "Case", "Frame", "load_json",
           "read_case", "read_case_text", "read_prism"]
