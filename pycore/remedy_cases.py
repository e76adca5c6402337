"""Finished cases: a remedy applied to a copy of the case document through the case
keys, and the figures such a document gives at distance and at the reading point.

Every remedy's ``applied_case`` is built here and read back through the same
strict reader as any other case, so evaluating it gives the finished figures.
"""

from __future__ import annotations

import copy
from dataclasses import dataclass
from typing import Any

from .cases import Case, read_case
from .eyes import EYES, Eye
from .imbalance_map import NetSampler
from .power import Prescription
from .prism import Prism
from .reading_options import SECTION
from .reading_point import ReadingGeometry, reading_geometry

_PRESCRIPTION_KEYS = ("rx", "sphere", "cylinder", "axis")
_NEAR_DESIGN_KEYS = ("add", "segment", "progressive", "slab_off")


@dataclass(frozen=True)
class Figures:
    """Net prism (prism dioptres) at distance and at the reading point of one case."""

    distance_vertical: float
    distance_horizontal: float
    near_vertical: float
    near_horizontal: float
    geometry: ReadingGeometry

    @classmethod
    def of(cls, case: Case) -> Figures:
        geometry = reading_geometry(case)
        sampler = NetSampler(case, geometry)
        distance, near = sampler.at(0.0), sampler.at(geometry.reading_drop_mm)
        return cls(distance.vertical, distance.horizontal, near.vertical, near.horizontal,
                   geometry)


def copy_document(case: Case) -> dict[str, Any]:
    return copy.deepcopy(dict(case.document))


def eye_document(document: dict[str, Any], eye: Eye) -> dict[str, Any]:
    found = document[eye]
    assert isinstance(found, dict)
    return found


def set_prescription(eye_doc: dict[str, Any], rx: Prescription) -> None:
    """Write the prescription as sphere, cylinder and axis (replacing a written ``rx``)."""
    for key in _PRESCRIPTION_KEYS:
        eye_doc.pop(key, None)
    eye_doc.update({"sphere": rx.sphere, "cylinder": rx.cylinder, "axis": rx.axis})


def set_prism(eye_doc: dict[str, Any], prism: Prism) -> None:
    """Write the prism as components (replacing any written or directional form)."""
    eye_doc["prism"] = {"base_in": prism.base_in, "base_up": prism.base_up}


def make_single_vision(eye_doc: dict[str, Any], rx: Prescription) -> None:
    """Turn the lens into a single-vision lens of ``rx``: no add, segment, progressive or
    slab-off."""
    for key in _NEAR_DESIGN_KEYS:
        eye_doc.pop(key, None)
    set_prescription(eye_doc, rx)


def near_prescription(case: Case, eye: Eye) -> Prescription:
    """The reading prescription: the distance prescription with the add on the sphere."""
    lens = case.lens(eye)
    rx = lens.prescription
    return Prescription(rx.sphere + lens.add, rx.cylinder, rx.axis)


def set_section(document: dict[str, Any], **settings: Any) -> None:
    """Change reading-zone settings of the document (keeping the others)."""
    section = dict(document.get(SECTION) or {})
    section.update(settings)
    document[SECTION] = section


def set_points(document: dict[str, Any], names: tuple[str, ...],
               explicit: dict[str, ReadingGeometry] | None = None) -> None:
    """Points from the fitting by name, or, without a fitting, the same points written out
    from ``explicit`` (name -> geometry of the finished case)."""
    if "fitting" in document:
        document["points"] = list(names)
        return
    assert explicit is not None
    points = []
    for name in names:
        geometry = explicit[name]
        gaze = geometry.distance_point() if name == "distance" else geometry.reading_point()
        point: dict[str, Any] = {"name": name}
        point.update({eye: gaze.on(eye).as_dict() for eye in EYES})
        points.append(point)
    document["points"] = points


def finished(document: dict[str, Any]) -> Case:
    """The document read back as a case (it must pass the same validation as any input)."""
    return read_case(document)


def with_written_points(document: dict[str, Any], names: tuple[str, ...]) -> Case:
    """Give the document its points (by name with a fitting, written out without one)
    and read it back."""
    if "fitting" in document:
        set_points(document, names)
        return finished(document)
    document["points"] = [{"name": "placeholder", "right": {}, "left": {}}]
    geometry = reading_geometry(finished(document))
    set_points(document, names, {name: geometry for name in names})
    return finished(document)
