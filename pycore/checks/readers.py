"""Ready-made readers: the prism each stock pair would put before this wearer, ranked.

A ready-made pair has the same spherical power F before both eyes and its
optical centres (OCs) a fixed distance apart, centred on the bridge. The
wearer's near visual points lie the near centration distance (near CD) apart;
each eye looks through its lens ``oc/2 - near mono`` mm nasal of the OC
(negative: temporal). Prentice's rule then gives the prism before each eye:
with plus readers, OCs set wider than the near CD give base out before both
eyes. Check (derived): +2.50, OCs 66 mm, near CD 60 mm: 3 mm, 0.75 base out
each, 1.5 base out together.

The near CD comes from the distance PD with the convergence inset
(pycore.spectacles.fitting.near_inset_mm, for the pair's own power), or is given.
Signs as everywhere in the core: base_in + (base out -), base_up + (base
down -), net vertical positive = base up before the right eye.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from pycore.cautions import CAUTIONS
from pycore.checks.reader_limits import (
    DEFAULT_LIMITS,
    LimitSet,
    Suitability,
    default_suitability,
    limit_set,
)
from pycore.checks.reader_stock import POWER_RANGE_D, StockPair, read_stock
from pycore.documents.fields import as_object, only_keys, optional_range, path_of, prescription
from pycore.errors import CaseError
from pycore.optics.eyes import EYES, Eye
from pycore.optics.power import PowerMatrix, Prescription
from pycore.optics.prentice import induced_prism
from pycore.optics.prism import Prism
from pycore.spectacles.binocular import NetPrism
from pycore.spectacles.fitting import (
    DEFAULT_CENTRE_OF_ROTATION_MM,
    DEFAULT_WORKING_DISTANCE_MM,
    near_inset_mm,
)
from pycore.spectacles.gaze import LensPoint
from pycore.validation import in_range

PASS_EPSILON = 1e-9
READERS_CAUTIONS = (
    "Ready-made readers suit only wearers whose eyes need about the same plus power, "
    "with little astigmatism; a full eye examination comes first.",
    "Check the pair on the wearer: the optical centres as labelled, the fit of the frame "
    "and comfortable reading at the working distance.",
)


@dataclass(frozen=True)
class Wearer:
    """The wearer at near: each eye's near powers, and where the near visual points are.

    ``near_pd_mm`` (the near CD) when measured directly; otherwise the distance
    monocular PDs (mm, bridge to pupil) with the working distance (mm from the
    lens plane) and the lens to centre-of-rotation distance (mm).
    ``right_eye_higher_mm``: how much higher the right pupil sits than the left.
    """

    right: Prescription
    left: Prescription
    distance_mono_pd_mm: tuple[float, float] | None
    near_pd_mm: float | None
    working_distance_mm: float = DEFAULT_WORKING_DISTANCE_MM
    centre_of_rotation_mm: float = DEFAULT_CENTRE_OF_ROTATION_MM
    right_eye_higher_mm: float = 0.0

    def near(self, eye: Eye) -> Prescription:
        return self.right if eye == "right" else self.left

    @property
    def spherical_equivalents(self) -> tuple[float, float]:
        return (self.right.mean_sphere, self.left.mean_sphere)

    @property
    def target_power_d(self) -> float:
        """The ready-made power to look for: the mean of the eyes' spherical equivalents."""
        return sum(self.spherical_equivalents) / 2.0

    @property
    def anisometropia_d(self) -> float:
        right, left = self.spherical_equivalents
        return abs(right - left)

    @property
    def largest_cylinder_d(self) -> float:
        return max(abs(self.right.cylinder), abs(self.left.cylinder))

    def near_monos_mm(self, power_d: float) -> tuple[float, float]:
        """Each near visual point's distance from the bridge centre (mm) through lenses
        of ``power_d``."""
        if self.near_pd_mm is not None:
            return (self.near_pd_mm / 2.0, self.near_pd_mm / 2.0)
        assert self.distance_mono_pd_mm is not None
        right, left = (
            mono - near_inset_mm(mono, self.working_distance_mm, self.centre_of_rotation_mm,
                                 power_d)
            for mono in self.distance_mono_pd_mm)
        return (right, left)


@dataclass(frozen=True)
class PairFit:
    """One stock pair on this wearer: where each eye looks through it, and the prism."""

    pair: StockPair
    near_monos_mm: tuple[float, float]
    prisms: tuple[Prism, Prism]

    @property
    def net(self) -> NetPrism:
        return NetPrism.between(*self.prisms)

    def quantity(self, name: str) -> float:
        """A limit-set quantity (prism dioptres), see pycore.checks.reader_limits."""
        net = self.net
        return {
            "horizontal_per_lens": max(abs(p.base_in) for p in self.prisms),
            "horizontal_total_base_out": max(0.0, -net.horizontal_base_in),
            "horizontal_total_base_in": max(0.0, net.horizontal_base_in),
            "vertical_imbalance": abs(net.vertical_base_up_right),
        }[name]


def fit_pair(wearer: Wearer, pair: StockPair) -> PairFit:
    """The prism ``pair`` puts before each of the wearer's eyes at their near points."""
    monos = wearer.near_monos_mm(pair.power)
    power = PowerMatrix.spherical(pair.power)
    prisms = []
    for eye, mono in zip(EYES, monos, strict=True):
        rise = wearer.right_eye_higher_mm / 2.0
        point = LensPoint(in_mm=pair.oc_distance_mm / 2.0 - mono,
                          up_mm=rise if eye == "right" else -rise)
        prisms.append(induced_prism(power, point, eye))
    return PairFit(pair, (monos[0], monos[1]), (prisms[0], prisms[1]))


def rank_readers(wearer: Wearer, stock: Sequence[StockPair], limits: LimitSet,
                 suitability: Suitability) -> dict[str, Any]:
    """Every stock pair's prism for this wearer, the suitable ones ranked, and whether
    custom spectacles are needed (see docs/case-format.md, "## Ready-made readers")."""
    target = wearer.target_power_d
    reasons = _wearer_reasons(wearer, suitability)
    entries = []
    for pair in stock:
        entries.append(_pair_entry(wearer, fit_pair(wearer, pair), limits, suitability, target))
    candidates = [e for e in entries if e["in_stock"] and e["power_matches"]]
    suitable = [e for e in candidates if e["fits_limits"]] if not reasons else []
    suitable.sort(key=lambda e: (round(abs(e["power_difference_d"]), 6), e["worst_share"],
                                 e["id"]))
    for rank, entry in enumerate(suitable, start=1):
        entry["rank"] = rank
        entry["suitable"] = True
    if not reasons:
        if not candidates:
            reasons.append({"code": "power_not_in_stock", "message": (
                f"No pair within {suitability.power_tolerance_d:g} D of the wearer's "
                f"{target:+.2f} D is on hand.")})
        elif not suitable:
            reasons.append({"code": "too_much_prism", "message": (
                "Every pair of a suitable power on hand puts more prism before the eyes "
                f"than {limits.standard} allows for this wearer.")})
    notes = []
    if limits.power_range_d is not None and not (
            limits.power_range_d[0] <= target <= limits.power_range_d[1]):
        notes.append(f"{limits.standard} covers readers from {limits.power_range_d[0]:+.2f} "
                     f"to {limits.power_range_d[1]:+.2f} D; the wearer needs {target:+.2f} D.")
    if wearer.near_pd_mm is None:
        notes.append(f"Near centration from the distance PD at {wearer.working_distance_mm:g} "
                     f"mm, centre of rotation {wearer.centre_of_rotation_mm:g} mm behind the "
                     "lenses.")
    return {
        "limits": limits.as_dict(),
        "suitability": suitability.as_dict(),
        "wearer": _wearer_dict(wearer),
        "ready_made_suits": bool(suitable),
        "custom_needed": not suitable,
        "reasons": reasons,
        "ranked": suitable,
        "pairs": entries,
        "notes": notes,
        "cautions": [*READERS_CAUTIONS, *CAUTIONS[1:]],
    }


def _wearer_reasons(wearer: Wearer, suitability: Suitability) -> list[dict[str, str]]:
    reasons = []
    if wearer.target_power_d < POWER_RANGE_D[0]:
        reasons.append({"code": "not_plus", "message": (
            f"The wearer's near powers average {wearer.target_power_d:+.2f} D; ready-made "
            "readers are plus lenses.")})
    if wearer.anisometropia_d > suitability.max_anisometropia_d + PASS_EPSILON:
        reasons.append({"code": "anisometropia", "message": (
            f"The eyes differ by {wearer.anisometropia_d:.2f} D (spherical equivalents), more "
            f"than {suitability.max_anisometropia_d:g} D: ready-made readers give both eyes "
            "the same power.")})
    if wearer.largest_cylinder_d > suitability.max_cylinder_d + PASS_EPSILON:
        reasons.append({"code": "astigmatism", "message": (
            f"A cylinder of {wearer.largest_cylinder_d:.2f} D is more than "
            f"{suitability.max_cylinder_d:g} D: ready-made readers correct no astigmatism.")})
    return reasons


def _pair_entry(wearer: Wearer, fit: PairFit, limits: LimitSet, suitability: Suitability,
                target: float) -> dict[str, Any]:
    pair = fit.pair
    checks: list[dict[str, Any]] = []
    for check in limits.checks:
        value = fit.quantity(check.quantity)
        checks.append({"quantity": check.quantity, "label": check.label, "value": value,
                       "limit": check.limit, "margin": check.limit - value,
                       "pass": value <= check.limit + PASS_EPSILON})
    difference = pair.power - target
    entry: dict[str, Any] = pair.as_dict()
    entry.update({
        "power_difference_d": difference,
        "near_cd_mm": sum(fit.near_monos_mm),
        "visual_point_in_from_oc_mm": {
            eye: pair.oc_distance_mm / 2.0 - mono
            for eye, mono in zip(EYES, fit.near_monos_mm, strict=True)},
        "prism": {eye: prism.as_dict(eye) for eye, prism in zip(EYES, fit.prisms, strict=True)},
        "net": fit.net.as_dict(),
        "checks": checks,
        "worst_share": max((c["value"] / c["limit"] for c in checks if c["limit"] > 0),
                           default=0.0),
        "fits_limits": all(c["pass"] for c in checks),
        "power_matches": abs(difference) <= suitability.power_tolerance_d + PASS_EPSILON,
        "in_stock": pair.count > 0,
        "suitable": False,
        "rank": None,
    })
    why = []
    if not entry["in_stock"]:
        why.append("none on hand")
    if not entry["power_matches"]:
        why.append(f"power {pair.power:+.2f} D is {abs(difference):.2f} D from the wearer's "
                   f"{target:+.2f} D")
    why.extend(f"{c['label']} {c['value']:.2f} is over the limit of {c['limit']:.2f}"
               for c in checks if not c["pass"])
    entry["why_not"] = why
    return entry


def _wearer_dict(wearer: Wearer) -> dict[str, Any]:
    right, left = wearer.spherical_equivalents
    target = wearer.target_power_d
    monos = wearer.near_monos_mm(max(target, 0.0))
    return {
        "spherical_equivalent_d": {"right": right, "left": left},
        "target_power_d": target,
        "anisometropia_d": wearer.anisometropia_d,
        "largest_cylinder_d": wearer.largest_cylinder_d,
        "near_cd_mm": sum(monos),
        "near_cd_from": "near PD as given" if wearer.near_pd_mm is not None
        else "distance PD with the convergence inset",
        "working_distance_mm": wearer.working_distance_mm,
        "centre_of_rotation_mm": wearer.centre_of_rotation_mm,
        "right_eye_higher_mm": wearer.right_eye_higher_mm,
    }


# --------------------------------------------------------------------------- reading

_WEARER_KEYS = ("right", "left", "distance_pd_mm", "near_pd_mm", "working_distance_mm",
                "centre_of_rotation_mm", "right_eye_higher_mm", "name")
_EYE_KEYS = ("sphere", "cylinder", "axis", "rx", "mono_pd_mm")
_DOC_KEYS = ("wearer", "stock", "limits", "suitability", "name", "notes")


def read_wearer(value: Any, path: str = "wearer") -> Wearer:
    """A validated Wearer; the near PD, the distance PD or both monocular PDs, one way."""
    obj = as_object(value, path, "the wearer")
    only_keys(obj, path, _WEARER_KEYS)
    rx: dict[Eye, Prescription] = {}
    monos: dict[Eye, float | None] = {}
    for eye in EYES:
        where = path_of(path, eye)
        if eye not in obj:
            raise CaseError(where, f"{where} is missing: give that eye's near powers "
                                   "(sphere, cylinder, axis, or rx as text).")
        eye_obj = as_object(obj[eye], where, "an eye's near powers")
        only_keys(eye_obj, where, _EYE_KEYS)
        rx[eye] = prescription(eye_obj, where)
        monos[eye] = optional_range(eye_obj, where, "mono_pd_mm", 20, 45, "mm")
    distance = optional_range(obj, path, "distance_pd_mm", 40, 90, "mm")
    near = optional_range(obj, path, "near_pd_mm", 40, 90, "mm")
    given = [name for name, value in (("near_pd_mm", near), ("distance_pd_mm", distance),
                                      ("mono_pd_mm", monos["right"] or monos["left"]))
             if value is not None]
    if not given:
        field = path_of(path, "distance_pd_mm")
        raise CaseError(field, f"{field} is missing: give distance_pd_mm, near_pd_mm, or "
                               "mono_pd_mm for both eyes.")
    if len(given) > 1:
        field = path_of(path, given[1]) if given[1] != "mono_pd_mm" else path_of(
            path_of(path, "right" if monos["right"] is not None else "left"), "mono_pd_mm")
        raise CaseError(field, f"{field}: give the PD one way only (near_pd_mm, "
                               "distance_pd_mm, or mono_pd_mm for both eyes).")
    distance_monos: tuple[float, float] | None = None
    if given[0] == "mono_pd_mm":
        right, left = monos["right"], monos["left"]
        if right is None or left is None:
            missing = "left" if right is not None else "right"
            field = path_of(path_of(path, missing), "mono_pd_mm")
            raise CaseError(field, f"{field} is missing: give mono_pd_mm for both eyes.")
        distance_monos = (right, left)
    elif distance is not None:
        distance_monos = (distance / 2.0, distance / 2.0)
    working = optional_range(obj, path, "working_distance_mm", 150, 2000, "mm")
    rotation = optional_range(obj, path, "centre_of_rotation_mm", 15, 40, "mm")
    higher = optional_range(obj, path, "right_eye_higher_mm", -10, 10, "mm")
    if "name" in obj and not isinstance(obj["name"], str):
        raise CaseError(path_of(path, "name"), f"{path_of(path, 'name')} must be text.")
    return Wearer(rx["right"], rx["left"], distance_monos, near,
                  DEFAULT_WORKING_DISTANCE_MM if working is None else working,
                  DEFAULT_CENTRE_OF_ROTATION_MM if rotation is None else rotation,
                  higher or 0.0)


def read_suitability(value: Any, path: str = "suitability") -> Suitability:
    """The shipped suitability thresholds, with any the document overrides."""
    base = default_suitability()
    if value is None:
        return base
    obj = as_object(value, path, "suitability thresholds")
    only_keys(obj, path, ("max_anisometropia_d", "max_cylinder_d", "power_tolerance_d"))
    numbers = {key: in_range(obj.get(key, getattr(base, key)), path_of(path, key), 0, 6,
                             "dioptres") for key in ("max_anisometropia_d", "max_cylinder_d",
                                                     "power_tolerance_d")}
    source = base.source if not obj else "set by the user: " + ", ".join(sorted(obj))
    certainty = base.certainty if not obj else "set by the user"
    return Suitability(**numbers, certainty=certainty, source=source)


def readers_request(document: Any, stock: Sequence[StockPair] | None = None) -> dict[str, Any]:
    """Rank a readers document (``wearer``, ``stock``, ``limits``, ``suitability``)."""
    obj = as_object(document, "", "a readers request")
    only_keys(obj, "", _DOC_KEYS)
    if "wearer" not in obj:
        raise CaseError("wearer", "wearer is missing: give the wearer's near powers and PD.")
    wearer = read_wearer(obj["wearer"])
    if stock is None:
        if "stock" not in obj:
            raise CaseError("stock", "stock is missing: give the clinic's stock pairs.")
        stock = read_stock(obj["stock"])
    limits = limit_set(obj.get("limits", DEFAULT_LIMITS))
    return rank_readers(wearer, stock, limits, read_suitability(obj.get("suitability")))


__all__ = ["PairFit", "Wearer", "fit_pair", "rank_readers", "read_wearer", "readers_request"]
