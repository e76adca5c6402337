"""Finished cases: a remedy applied to a copy of the case document through the case
keys, the figures such a document gives at distance and at the reading point, and
the record of one remedy (``Remedy``) that the remedy modules fill in.

Every remedy's ``applied_case`` is built here and read back through the same
strict reader as any other case (what the remedy left as it was is taken from the
case read already), so evaluating it gives the finished figures.

Prescribed prism is the wearer's correction and no remedy changes it: the
imbalance a remedy corrects is the induced part (total net minus the net of the
original case's prescribed prism), and a finished case's induced figures are
measured from the original's prescribed prism too.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from pycore.documents.cases import Case, read_case
from pycore.errors import CaseError
from pycore.optics.eyes import EYES, Eye
from pycore.optics.power import Prescription
from pycore.optics.prism import Prism
from pycore.reading.imbalance_map import NetSampler, own_nets
from pycore.reading.options import SECTION, ReadingZoneOptions
from pycore.reading.reading_point import ReadingGeometry, reading_geometry
from pycore.rounding import half_up
from pycore.spectacles.binocular import NetPrism

_PRESCRIPTION_KEYS = ("rx", "sphere", "cylinder", "axis")
_NEAR_DESIGN_KEYS = ("add", "segment", "progressive", "slab_off")


@dataclass(frozen=True)
class Figures:
    """Net prism (prism dioptres) at distance and at the reading point of one case: the
    totals, and the net of the prescribed prism their induced parts are measured from."""

    distance_vertical: float
    distance_horizontal: float
    near_vertical: float
    near_horizontal: float
    geometry: ReadingGeometry
    prescribed: NetPrism = field(default_factory=lambda: NetPrism(0.0, 0.0))

    @classmethod
    def of(cls, case: Case, prescribed: NetPrism | None = None) -> Figures:
        """The figures of ``case``; ``prescribed`` (default the case's own) is the net of
        the prescribed prism the induced parts are measured from."""
        geometry = reading_geometry(case)
        if prescribed is None:
            sampler, distance, near = own_nets(case, geometry)
            base = sampler.prescribed
        else:
            base = prescribed
            sampler = NetSampler(case, geometry, base)
            distance, near = sampler.at(0.0), sampler.at(geometry.reading_drop_mm)
        return cls(distance.vertical, distance.horizontal, near.vertical, near.horizontal,
                   geometry, base)

    @property
    def distance_induced(self) -> float:
        """Induced vertical imbalance at distance (total minus prescribed net)."""
        return self.distance_vertical - self.prescribed.vertical_base_up_right

    @property
    def near_induced(self) -> float:
        """Induced vertical imbalance at the reading point (total minus prescribed net)."""
        return self.near_vertical - self.prescribed.vertical_base_up_right


_PLAIN: list[tuple[Case, dict[str, Any]]] = []
"""The last case's document as plain data: copied once per case, not once per remedy."""


def copy_document(case: Case) -> dict[str, Any]:
    """A copy of the case's document to edit (plain JSON data; a -0.0 becomes 0.0).

    The top level and each eye's lens are new dicts: the remedies edit there, by putting
    a new value under a key (a new ``slab_off``, ``segment``, ``prism``, ``fitting`` or
    ``reading_zone``), never by changing a value in place. The values below those are
    shared with the other copies of the same case's document (and with the document
    itself when it is plain already: ``Case.plain_document``), not to be edited."""
    if case.plain_document:
        copied = dict(case.document)
    else:
        if not (_PLAIN and _PLAIN[0][0] is case):
            _PLAIN[:] = [(case, _plain_copy(case.document))]
        copied = dict(_PLAIN[0][1])
    for eye in EYES:
        if isinstance(copied.get(eye), dict):
            copied[eye] = dict(copied[eye])
    return copied


def _plain_copy(data: Any) -> Any:
    """JSON-ready ``data`` copied (dicts and lists anew, a float without negative zero);
    faster than copy.deepcopy or a JSON round trip for a case's few dozen values."""
    if isinstance(data, dict):
        return {key: _plain_copy(value) for key, value in data.items()}
    if isinstance(data, list):
        return [_plain_copy(value) for value in data]
    if data.__class__ is float:
        return data + 0.0
    return data


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
    """Change reading-zone settings of the document (keeping the others). A reading depth
    goes into the fitting, its documented place, where the document has one."""
    section = dict(document.get(SECTION) or {})
    fitting = document.get("fitting")
    if "reading_depth_mm" in settings and isinstance(fitting, dict):
        document["fitting"] = {**fitting, "reading_depth_mm": settings.pop("reading_depth_mm")}
        section.pop("reading_depth_mm", None)
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


def finished(document: dict[str, Any], original: Case) -> Case:
    """The document, a copy of ``original``'s edited by a remedy, read back as a case:
    what the remedy changed passes the same validation as any input; the parts it left
    as they were are ``original``'s, read already (pycore.documents.cases.read_case)."""
    return read_case(document, original)


def with_written_points(document: dict[str, Any], names: tuple[str, ...],
                        original: Case) -> Case:
    """Give the document (a copy of ``original``'s) its points (by name with a fitting,
    written out without one) and read it back."""
    if "fitting" in document:
        set_points(document, names)
        return finished(document, original)
    document["points"] = [{"name": "placeholder", "right": {}, "left": {}}]
    geometry = reading_geometry(finished(document, original))
    set_points(document, names, {name: geometry for name in names})
    return finished(document, original)


@dataclass
class Remedy:
    """One remedy's figures and words (built here; shown as a dict)."""

    id: str
    name: str
    summary: str = ""
    available: bool = True
    why_not: str | None = None
    changes: list[str] = field(default_factory=list)
    details: dict[str, Any] = field(default_factory=dict)
    warnings: list[str] = field(default_factory=list)
    order_lines: list[str] = field(default_factory=list)
    centring: str = "as ordered: optical centres at the distance visual points"
    applied: dict[str, Any] | None = None
    figures: Figures | None = None
    distance_from: str = "finished case"

    def as_dict(self, threshold: float) -> dict[str, Any]:
        result: dict[str, Any] = {
            "id": self.id, "name": self.name, "available": self.available,
            "why_not": self.why_not, "summary": self.summary, "changes": self.changes,
            "details": self.details, "warnings": self.warnings,
            "order_lines": self.order_lines if self.available else [],
            "centring": self.centring,
            "distance": None, "near": None, "within_threshold": None,
            "applied_case": self.applied if self.available else None,
        }
        if self.available and self.figures is not None:
            f = self.figures
            result["distance"] = {"vertical_base_up_right": f.distance_vertical,
                                  "induced_vertical_base_up_right": f.distance_induced,
                                  "horizontal_base_in": f.distance_horizontal,
                                  "from": self.distance_from}
            result["near"] = {"vertical_base_up_right": f.near_vertical,
                              "induced_vertical_base_up_right": f.near_induced,
                              "horizontal_base_in": f.near_horizontal,
                              "from": "finished case"}
            result["within_threshold"] = {"distance": abs(f.distance_induced) < threshold,
                                          "near": abs(f.near_induced) < threshold}
        return result

    def refuse(self, reason: str) -> Remedy:
        self.available, self.why_not = False, reason
        return self


@dataclass(frozen=True)
class Baseline:
    """The case as it is: its figures, settings and the imbalance to correct."""

    case: Case
    options: ReadingZoneOptions
    figures: Figures
    evaluate_finished: bool = True
    """False: take a remedy's figures from its closed form where it has one, without
    reading and evaluating its finished case (the live request's remedies)."""
    shared: dict[Any, Any] = field(default_factory=dict, compare=False, repr=False)
    """What more than one remedy starts from, worked out by the first that needs it (the
    near-only spectacles, read and evaluated: pycore.reading.remedies.near_wear)."""

    @property
    def near(self) -> float:
        """The induced vertical imbalance at the reading point: what a remedy corrects."""
        return self.figures.near_induced

    @property
    def distance(self) -> float:
        """The induced vertical imbalance at distance."""
        return self.figures.distance_induced


def round_to_step(value: float, step: float) -> float:
    """``value`` to the nearest multiple of ``step`` (halves away from zero, the
    laboratory's way; see pycore.rounding)."""
    return half_up(value, step)


def shifted(figures: Figures, distance_vertical: float = 0.0, near_vertical: float = 0.0,
            horizontal: float = 0.0) -> Figures:
    """``figures`` with these changes of the net prism (prism dioptres): the closed form
    of a remedy that adds prism where it is known to act (slab-off below its line,
    decentration prism everywhere)."""
    return Figures(figures.distance_vertical + distance_vertical,
                   figures.distance_horizontal + horizontal,
                   figures.near_vertical + near_vertical,
                   figures.near_horizontal + horizontal, figures.geometry, figures.prescribed)


def figures_of(baseline: Baseline, read: Case) -> Figures:
    """The figures of a finished case read already (induced parts measured from the
    baseline's prescribed prism), worked out once for the baseline: more than one remedy
    may start from the same finished case."""
    kept = baseline.shared.get(("figures", id(read)))
    if kept is None or kept[0] is not read:
        kept = (read, Figures.of(read, baseline.figures.prescribed))
        baseline.shared["figures", id(read)] = kept
    figures: Figures = kept[1]
    return figures


def with_figures(remedy: Remedy, document: dict[str, Any], baseline: Baseline,
                  distance_from_original: bool = False,
                  closed_form: Figures | None = None, read: Case | None = None) -> Remedy:
    """The remedy with its finished case and the figures it gives: read and evaluated,
    or, when the baseline allows it and the remedy gives one, its ``closed_form`` (the
    same figures, to rounding; tests/test_live_sections.py checks the two agree).
    ``read``: the document read already (by ``with_written_points``, unchanged since)."""
    if closed_form is not None and not baseline.evaluate_finished:
        remedy.applied, remedy.figures = document, closed_form
        return remedy
    try:
        if document == baseline.case.document:
            # Nothing changed: the finished case is the case itself, evaluated already.
            figures = baseline.figures
        else:
            figures = (figures_of(baseline, read) if read is not None else
                       Figures.of(finished(document, baseline.case), baseline.figures.prescribed))
    except CaseError as exc:
        return remedy.refuse(f"The finished case would not be valid: {exc.message}")
    if distance_from_original:
        base = baseline.figures
        figures = Figures(base.distance_vertical, base.distance_horizontal,
                          figures.near_vertical, figures.near_horizontal, figures.geometry,
                          base.prescribed)
        remedy.distance_from = "the distance spectacles, unchanged"
    remedy.applied, remedy.figures = document, figures
    return remedy
