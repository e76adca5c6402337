"""Judging a finished pair: unwanted prism at the prism reference points, and the verdicts.

For each lens, with the prism field of the lens P(q) = P(m) - F (q - m)
(Prentice's rule in matrix form, examiner's frame, cm):

- the prism at the specified prism reference point (PRP) s, from the prism
  measured at the point m where it was read: P(s) = P(m) + F (m - s);
- the unwanted prism there: P(s) - (ordered prism + any thinning prism);
- where the ordered prism is actually found (the PRP as made):
  q = m + F^-1 (P(m) - ordered), using the measured powers when given.

The prism rows of a table judge the unwanted prism at the specified points;
the millimetre rows (above a power) judge where the PRPs actually are. The
bands apply per lens: a lens whose power in a meridian is within the prism
band (below the row's switch power) cannot place its PRP to the millimetre
limit by prism, so along that meridian its unwanted prism is counted as at
the switch power, either way (judged by prism), never divided by a weak
power; a verdict therefore never jumps when a weak lens's power moves a
little. The power, axis, add and segment rows are judged by
pycore.checks.lens_check.
Signs as everywhere in the core: base_in + (base out -), base_up + (base
down -); net vertical positive = base up before the right eye.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from pycore.cautions import CAUTIONS
from pycore.checks.lens_check import lens_verdicts
from pycore.checks.tolerances import QUANTITIES, Band, Row
from pycore.checks.verification_input import Verification
from pycore.errors import CaseError
from pycore.optics.eyes import Eye, nasal_sign
from pycore.optics.power import PowerMatrix
from pycore.optics.prentice import induced_prism
from pycore.optics.prism import Prism
from pycore.spectacles.binocular import NetPrism
from pycore.spectacles.gaze import LensPoint

PASS_EPSILON = 1e-9
"""Limits are compared as written in the table; this only absorbs float noise."""
WEAK_POWER_D = 0.12
"""Below this (dioptres) a meridian cannot locate a PRP from prism (less than 1/8 D)."""

_MERIDIAN = {"vertical": "vertical", "horizontal": "horizontal"}
_TYPE_WORDS = {"single_vision": "single vision", "multifocal": "multifocal",
               "progressive": "progressive"}


@dataclass(frozen=True)
class Offset:
    """A displacement on a lens (mm): ``in_mm`` toward the nose +, ``up_mm`` upward +."""

    in_mm: float
    up_mm: float

    @property
    def total_mm(self) -> float:
        return math.hypot(self.in_mm, self.up_mm)

    def as_dict(self) -> dict[str, float]:
        return {"in_mm": self.in_mm, "up_mm": self.up_mm, "total_mm": self.total_mm}


@dataclass(frozen=True)
class EyeFindings:
    """One lens worked out: the prism wanted, found and unwanted, and where its PRP is."""

    eye: Eye
    target: Prism
    at_mark: Prism
    mark: Offset
    at_specified: Prism
    unwanted: Prism
    prp_offset: Offset
    power: PowerMatrix
    power_source: str

    def as_dict(self) -> dict[str, Any]:
        return {
            "target_prism": self.target.as_dict(self.eye),
            "prism_at_measured_point": self.at_mark.as_dict(self.eye),
            "measured_point_from_specified_mm": self.mark.as_dict(),
            "prism_at_specified_point": self.at_specified.as_dict(self.eye),
            "unwanted_prism": self.unwanted.as_dict(self.eye),
            "prp_from_specified_mm": self.prp_offset.as_dict(),
            "power_used": self.power_source,
        }


def verify(job: Verification) -> dict[str, Any]:
    """The verdicts for a finished pair or an unmounted lens (see docs/case-format.md)."""
    assumptions: list[str] = []
    findings = {eye: _findings(job, eye, assumptions) for eye in job.eyes}
    settings = job.settings
    table = settings.table
    verdicts: list[dict[str, Any]] = []
    for row in table.rows_for(settings.lens_type, settings.mounting):
        if row.criterion == "single_lens":
            verdicts.extend(_single_lens(job, row, findings[eye]) for eye in job.eyes)
        else:
            verdicts.append(_pair_criterion(job, row, findings))
    lens, not_checked = lens_verdicts(job)
    verdicts.extend(lens)
    counted = [v for v in verdicts if v["status"] != "not_defined"]
    if any(v["status"] == "fail" for v in counted):
        overall = "fail"
    elif any(v["status"] == "not_judged" for v in counted):
        overall = "incomplete"
    else:
        overall = "pass"
    unverified = any(v["unverified"] for v in counted)
    result: dict[str, Any] = {
        "name": job.name,
        "result": overall,
        "unverified": unverified,
        "standard": {key: value for key, value in table.as_dict().items() if key != "rows"},
        "lens_type": settings.lens_type,
        "mounting": settings.mounting,
        "horizontal_reading": settings.horizontal_reading,
        "verdicts": verdicts,
        "worst": worst_verdict(verdicts),
        "not_checked": not_checked,
        "eyes": {eye: f.as_dict() for eye, f in findings.items()},
        "assumptions": assumptions,
        "cautions": _cautions(job, unverified, verdicts),
    }
    if len(findings) == 2:
        net = NetPrism.between(findings["right"].unwanted, findings["left"].unwanted)
        result["net_unwanted"] = net.as_dict()
    return result


def worst_verdict(verdicts: list[dict[str, Any]]) -> int | None:
    """Index of the verdict that decides the answer: the failure furthest over its limit
    (margin as a share of the limit), else the judged verdict with least room, else the
    first not judged; None without verdicts."""
    def room(i: int) -> float:
        verdict = verdicts[i]
        return float(verdict["margin"]) / max(float(verdict["limit"]), PASS_EPSILON)

    judged = [i for i, v in enumerate(verdicts) if v["status"] in ("pass", "fail")]
    failed = [i for i in judged if verdicts[i]["status"] == "fail"]
    if failed:
        return min(failed, key=room)
    missing = [i for i, v in enumerate(verdicts) if v["status"] == "not_judged"]
    if missing:
        return missing[0]
    return min(judged, key=room) if judged else None


# --------------------------------------------------------------------------- one lens


def _findings(job: Verification, eye: Eye, notes: list[str]) -> EyeFindings:
    ordered = job.ordered[eye]
    measured = job.measured.get(eye)
    target = ordered.target
    if measured is not None and measured.prism is not None:
        at_mark = measured.prism
    else:
        at_mark = target
        notes.append(f"{eye.capitalize()} lens: no prism reading given; taken as showing the "
                     "ordered prism at the measured point (the point was centred on it).")
    if measured is not None and measured.prescription is not None:
        power, source = measured.prescription.power_matrix, "measured"
    else:
        power, source = ordered.prescription.power_matrix, "ordered"
    mark = _mark(job, eye, notes)
    at_specified = at_mark + induced_prism(power, LensPoint(0.0, 0.0), eye,
                                           centre_mm=(mark.in_mm, mark.up_mm))
    unwanted = at_specified - target
    dx, dy = _pseudo_inverse_times(power, *(at_mark - target).examiner_frame(eye))
    prp = Offset(mark.in_mm + nasal_sign(eye) * dx * 10.0, mark.up_mm + dy * 10.0)
    return EyeFindings(eye, target, at_mark, mark, at_specified, unwanted, prp, power, source)


def _mark(job: Verification, eye: Eye, notes: list[str]) -> Offset:
    """Where the prism was read, relative to the specified PRP (mm, nasal +, up +)."""
    measured = job.measured.get(eye)
    if job.settings.mounting == "unmounted":
        if measured is not None and measured.offset is not None:
            return Offset(measured.offset.in_mm, measured.offset.up_mm)
        return Offset(0.0, 0.0)
    return Offset(_mark_in(job, eye, notes), _mark_up(job, eye, notes))


def _mark_in(job: Verification, eye: Eye, notes: list[str]) -> float:
    measured_mono = job.measured[eye].mono_pd_mm if eye in job.measured else None
    if measured_mono is None and job.centre_distance_mm is None:
        if eye == "right":
            notes.append("No centre positions given across: the prism was taken as read at "
                         "the ordered PD.")
        return 0.0
    ordered_mono = job.ordered[eye].mono_pd_mm
    split = False
    if ordered_mono is None:
        if job.ordered_pd_mm is None:
            field = f"{job.order_path}.pd_mm" if job.order_path == "ordered" else job.order_path
            raise CaseError(field, f"{field}: the centre positions were measured but the "
                                   "ordered PD is not given; give the ordered PD.")
        ordered_mono, split = job.ordered_pd_mm / 2.0, True
    if measured_mono is None:
        assert job.centre_distance_mm is not None
        measured_mono, split = job.centre_distance_mm / 2.0, True
    if split and eye == "right":
        notes.append("PDs given for the pair only: any difference was shared equally between "
                     "the eyes (a frame centred on the bridge).")
    return ordered_mono - measured_mono


def _mark_up(job: Verification, eye: Eye, notes: list[str]) -> float:
    heights = {e: m.height_mm for e, m in job.measured.items() if m.height_mm is not None}
    if eye not in heights:
        if eye == "right":
            notes.append("No heights measured: the prism was taken as read at the ordered "
                         "heights.")
        return 0.0
    ordered_height = job.ordered[eye].height_mm
    if ordered_height is None:
        if eye == "right":
            notes.append("No ordered heights: the two heights were taken as ordered equal.")
        ordered_height = sum(heights.values()) / len(heights)
    return heights[eye] - ordered_height


@dataclass(frozen=True)
class Located:
    """Where a PRP is for judging a millimetre band (mm, nasal +, up +): ``exact`` along
    meridians strong enough to place it, ``slack_*`` the extent either way that the
    unwanted prism along weaker meridians stands for when counted at the floor power."""

    exact: Offset
    slack_in_mm: float
    slack_up_mm: float
    weak: bool


def locate(findings: EyeFindings, floor_d: float) -> Located:
    """The PRP as made for a millimetre band whose prism band reaches ``floor_d``.

    Along a principal meridian of power at least ``floor_d``, the prism places the
    PRP exactly (F^-1); along a weaker one the unwanted prism a is counted as
    a / floor_d either way (judged by prism), which is continuous in the power.
    """
    f = findings.power
    x, y = (findings.at_mark - findings.target).examiner_frame(findings.eye)
    half_sum, half_diff = (f.xx + f.yy) / 2.0, (f.xx - f.yy) / 2.0
    radius = math.hypot(half_diff, f.xy)
    angle = 0.5 * math.atan2(2.0 * f.xy, f.xx - f.yy)
    exact_x = exact_y = slack_x = slack_y = 0.0
    weak = False
    for value, (ux, uy) in ((half_sum + radius, (math.cos(angle), math.sin(angle))),
                            (half_sum - radius, (-math.sin(angle), math.cos(angle)))):
        along = ux * x + uy * y
        if abs(value) >= floor_d:
            exact_x += along / value * ux
            exact_y += along / value * uy
        else:
            weak = True
            slack_x += abs(along) / floor_d * abs(ux)
            slack_y += abs(along) / floor_d * abs(uy)
    mark = findings.mark
    exact = Offset(mark.in_mm + nasal_sign(findings.eye) * exact_x * 10.0,
                   mark.up_mm + exact_y * 10.0)
    return Located(exact, slack_x * 10.0, slack_y * 10.0, weak)


def floor_power(row: Row) -> float:
    """The power below which a lens places its PRP by prism no better than the prism band:
    the row's switch power, or (no switch) where its prism and mm limits meet."""
    switch = [band.up_to_power_d for band in row.bands if band.up_to_power_d is not None]
    if switch:
        return max(switch)
    prism = next(band.limit for band in row.bands if band.kind == "prism")
    millimetres = next(band.limit for band in row.bands if band.kind == "mm")
    return prism / (millimetres / 10.0)


def _pseudo_inverse_times(f: PowerMatrix, x: float, y: float) -> tuple[float, float]:
    """F^+ (x, y): F^-1 along the meridians with power, nothing along any without."""
    half_sum, half_diff = (f.xx + f.yy) / 2.0, (f.xx - f.yy) / 2.0
    radius = math.hypot(half_diff, f.xy)
    angle = 0.5 * math.atan2(2.0 * f.xy, f.xx - f.yy)
    result_x, result_y = 0.0, 0.0
    for value, (ux, uy) in ((half_sum + radius, (math.cos(angle), math.sin(angle))),
                            (half_sum - radius, (-math.sin(angle), math.cos(angle)))):
        if abs(value) >= WEAK_POWER_D:
            along = (ux * x + uy * y) / value
            result_x += along * ux
            result_y += along * uy
    return result_x, result_y


# --------------------------------------------------------------------------- criteria


def _pair_criterion(job: Verification, row: Row,
                    findings: dict[Eye, EyeFindings]) -> dict[str, Any]:
    vertical = row.criterion == "vertical"
    powers = {eye: (job.ordered[eye].prescription.power_matrix.yy if vertical
                    else job.ordered[eye].prescription.power_matrix.xx) for eye in findings}
    decider = max(powers, key=lambda eye: abs(powers[eye]))
    band = row.band_for(powers[decider])
    verdict = _frame(job, row, band)
    verdict["power_d"] = powers[decider]
    verdict["power_from"] = decider
    reach, limit = _band_parts(row, band)
    if len(row.bands) == 1:
        verdict["applied"] = f"One limit at every power: {limit}."
    else:
        verdict["applied"] = (
            f"The stronger lens in the {row.criterion} meridian is the {decider} "
            f"({powers[decider]:+.2f} D), so the limit for powers {reach} applies: {limit}.")
    right, left = findings["right"], findings["left"]
    if not _measured_for(job, row.criterion):
        return _not_judged(verdict, f"nothing was measured for the {row.criterion} "
                                    "criterion (prism at the reference points or positions)")
    if band.quantity == "vertical_imbalance":
        net = NetPrism.between(right.unwanted, left.unwanted)
        return _judged(verdict, band.limit, abs(net.vertical_base_up_right),
                       net.vertical_in_words())
    if band.quantity == "horizontal_total":
        return _horizontal(job, verdict, band, right, left)
    floor = floor_power(row)
    located = {eye: locate(f, floor) for eye, f in findings.items()}
    weak = [eye for eye in findings if abs(powers[eye]) < floor]
    if weak:
        verdict["judged_by_prism"] = weak
        verdict["applied"] += (
            f" The {' and '.join(weak)} lens is below ±{floor:g} D in this meridian, too weak "
            "to place its reference point by prism: its unwanted prism is counted as at "
            f"±{floor:g} D, either way (judged by prism).")
    r, lft = located["right"], located["left"]
    if band.quantity == "height_difference":
        diff = r.exact.up_mm - lft.exact.up_mm
        slack = r.slack_up_mm + lft.slack_up_mm
        higher = "right" if diff > 0 else "left"
        words = (f"the {higher} reference point sits {abs(diff):.1f} mm higher than ordered "
                 "relative to the other") if abs(diff) >= 0.05 else "heights as ordered"
        if slack >= 0.05:
            words += f"; the weak lens's prism counts for up to {slack:.1f} mm more"
        return _judged(verdict, band.limit, abs(diff) + slack, words)
    if band.quantity == "pd_difference":
        diff = -(r.exact.in_mm + lft.exact.in_mm)
        slack = r.slack_in_mm + lft.slack_in_mm
        words = (f"the reference points are {abs(diff):.1f} mm "
                 f"{'wider' if diff > 0 else 'narrower'} apart than the ordered PD"
                 if abs(diff) >= 0.05 else "reference points at the ordered PD")
        if slack >= 0.05:
            words += f"; the weak lens's prism counts for up to {slack:.1f} mm more"
        return _judged(verdict, band.limit, abs(diff) + slack, words)
    attribute = "up_mm" if band.quantity == "height_each" else "in_mm"
    each = {eye: abs(getattr(place.exact, attribute))
            + (place.slack_up_mm if attribute == "up_mm" else place.slack_in_mm)
            for eye, place in located.items()}
    verdict["per_eye"] = each
    worst = max(each, key=lambda eye: each[eye])
    what = "height" if attribute == "up_mm" else "monocular PD"
    return _judged(verdict, band.limit, each[worst],
                   f"the {worst} reference point's {what} is {each[worst]:.1f} mm from the "
                   "ordered one")


def _horizontal(job: Verification, verdict: dict[str, Any], band: Band,
                right: EyeFindings, left: EyeFindings) -> dict[str, Any]:
    net = NetPrism.between(right.unwanted, left.unwanted)
    total = abs(net.horizontal_base_in)
    each = {"right": abs(right.unwanted.base_in), "left": abs(left.unwanted.base_in)}
    worst = max(each.values())
    readings: dict[str, Any] = {"total": _reading(band.limit, total)}
    if band.per_eye_limit is not None:
        readings["per_eye"] = _reading(band.per_eye_limit, worst) | {"right": each["right"],
                                                                     "left": each["left"]}
    reading = job.settings.horizontal_reading
    verdict["reading"] = reading
    verdict["readings"] = readings
    words = net.horizontal_in_words()
    if reading == "per_eye":
        assert band.per_eye_limit is not None
        verdict["quantity"] = "horizontal_per_eye"
        verdict["what"] = "unwanted horizontal prism at each lens"
        return _judged(verdict, band.per_eye_limit, worst,
                       f"right {right.unwanted.in_words()}; left {left.unwanted.in_words()}")
    return _judged(verdict, band.limit, total, words)


def _single_lens(job: Verification, row: Row, lens: EyeFindings) -> dict[str, Any]:
    verdict = _frame(job, row, row.bands[0])
    verdict["eye"] = lens.eye
    verdict["label"] = f"{lens.eye.capitalize()} lens (unmounted)"
    measured = job.measured.get(lens.eye)
    if measured is None or (measured.prism is None and measured.offset is None):
        return _not_judged(verdict, "no prism read on this lens")
    place = locate(lens, floor_power(row))
    position_mm = place.exact.total_mm + math.hypot(place.slack_in_mm, place.slack_up_mm)
    options = []
    for band in row.bands:
        if band.quantity == "prism_at_prp":
            options.append({"quantity": band.quantity, "kind": band.kind, "unit": band.unit,
                            "what": QUANTITIES[band.quantity][1],
                            **_reading(band.limit, lens.unwanted.amount)})
        else:
            options.append({"quantity": band.quantity, "kind": band.kind, "unit": band.unit,
                            "what": QUANTITIES[band.quantity][1],
                            **_reading(band.limit, position_mm)})
    verdict["options"] = options
    chosen = next((o for o in options if o["pass"]), options[0])
    verdict.update({"quantity": chosen["quantity"], "kind": chosen["kind"],
                    "unit": chosen["unit"], "what": chosen["what"]})
    verdict["applied"] = ("Either limit suffices: " + " or ".join(
        f"{o['what']} at most {o['limit']:g} {o['unit']}" for o in options) + ".")
    words = (f"unwanted {lens.unwanted.in_words()}; the reference point is "
             f"{position_mm:.1f} mm from its specified position")
    if place.weak:
        words += (" (a meridian too weak to place it by prism counts its prism as at "
                  f"±{floor_power(row):.2f} D: judged by prism)")
    return _judged(verdict, chosen["limit"], chosen["value"], words)


def _measured_for(job: Verification, criterion: str) -> bool:
    if any(m.prism is not None for m in job.measured.values()):
        return True
    if criterion == "vertical":
        return any(m.height_mm is not None for m in job.measured.values())
    return (job.centre_distance_mm is not None
            or any(m.mono_pd_mm is not None for m in job.measured.values()))


# --------------------------------------------------------------------------- verdict shape


def _frame(job: Verification, row: Row, band: Band) -> dict[str, Any]:
    table = job.settings.table
    types = " and ".join(_TYPE_WORDS[t] for t in row.lens_types)
    return {
        "criterion": row.criterion,
        "label": row.criterion.replace("_", " ").capitalize(),
        "status": "not_judged",
        "pass": None,
        "value": None,
        "limit": band.limit,
        "margin": None,
        "unit": band.unit,
        "kind": band.kind,
        "quantity": band.quantity,
        "what": QUANTITIES[band.quantity][1],
        "in_words": "",
        "band": band.as_dict(),
        "rule": f"{table.short}, {types}, {row.mounting}: "
                f"{_row_words(row)}",
        "certainty": row.certainty,
        "unverified": row.unverified,
        "source": row.source,
    }


def _judged(verdict: dict[str, Any], limit: float, value: float,
            words: str) -> dict[str, Any]:
    verdict.update(_reading(limit, value))
    verdict["status"] = "pass" if verdict["pass"] else "fail"
    verdict["in_words"] = words
    return verdict


def _not_judged(verdict: dict[str, Any], why: str) -> dict[str, Any]:
    verdict["missing"] = why[0].upper() + why[1:] + "."
    return verdict


def _reading(limit: float, value: float) -> dict[str, Any]:
    value = round(value, 9) + 0.0
    return {"value": value, "limit": limit, "margin": round(limit - value, 9) + 0.0,
            "pass": value <= limit + PASS_EPSILON}


def _band_parts(row: Row, band: Band) -> tuple[str, str]:
    """(the powers a band covers, its limit) in words."""
    switch = [b.up_to_power_d for b in row.bands if b.up_to_power_d is not None]
    if not switch:
        reach = "at every power"
    elif band.up_to_power_d is None:
        reach = f"above ±{max(switch):g} D"
    else:
        reach = f"up to ±{band.up_to_power_d:g} D"
    meridian = _MERIDIAN.get(row.criterion)
    if switch and meridian:
        reach += f" in the {meridian} meridian"
    limit = f"{QUANTITIES[band.quantity][1]}: at most {band.limit:g} {band.unit}"
    if band.per_eye_limit is not None:
        limit += f" ({band.per_eye_limit:g} per lens when read eye by eye)"
    return reach, limit


def _band_words(row: Row, band: Band) -> str:
    reach, limit = _band_parts(row, band)
    return f"{reach}, {limit}"


def _row_words(row: Row) -> str:
    joiner = "; or " if row.any_of else "; "
    return joiner.join(_band_words(row, band) for band in row.bands) + "."


def _cautions(job: Verification, unverified: bool, verdicts: list[dict[str, Any]]) -> list[str]:
    notes = list(CAUTIONS)
    table = job.settings.table
    if unverified:
        notes.insert(0, f"The {table.standard} values used here are from memory and "
                        "unverified: check them against the standard before relying on this "
                        "verdict.")
    if any(v["certainty"] == "sourced, earlier edition" for v in verdicts):
        notes.insert(0, "The progressive row is reproduced from an earlier edition "
                        "(Z80.1-1999); check the current edition before relying on it.")
    if any(v["status"] == "not_defined" for v in verdicts):
        notes.append("An axis is not judged where the ordered cylinder is too weak for the "
                     "standard to define one.")
    if job.settings.lens_type == "progressive":
        notes.append("Progressive lenses are judged at the prism reference point (usually "
                     "2-4 mm below the fitting cross; the design's markings say where), with "
                     "the thinning prism taken out.")
    return notes
