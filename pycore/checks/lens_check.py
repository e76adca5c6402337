"""Judging each lens's powers, axis, add and segment/fitting-cross positions.

Powers are compared like with like: each lens's two principal meridian
powers (S and S + C, whatever the cylinder sign it was written or read in)
are paired in order, so a plus-cylinder reading meets a minus-cylinder order
without transposing by hand; the axes are compared in the order's cylinder
sign, the shorter way round the 180-degree circle (178 against 2 is 4
degrees). Bands are chosen by the ordered (nominal) power as the standard
says: the meridian of highest absolute power, the cylinder, or the add.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from pycore.checks.lens_tolerances import LENS_CRITERIA, LensRow
from pycore.checks.verification_input import MeasuredLens, OrderedLens, Verification
from pycore.checks.wearer_effects import axis_error_effect
from pycore.optics.eyes import Eye
from pycore.optics.power import Prescription

PASS_EPSILON = 1e-9
"""Limits are compared as written in the table; this only absorbs float noise."""
NO_CYLINDER_D = 0.005
"""A reading below this shows no cylinder, hence no axis (dioptres; float noise)."""


def principal_powers(rx: Prescription) -> tuple[float, float]:
    """The two principal meridian powers (dioptres), lower first."""
    a, b = rx.sphere, rx.sphere + rx.cylinder
    return (a, b) if a <= b else (b, a)


def axis_difference(a: float, b: float) -> float:
    """Degrees between two cylinder axes, the shorter way round (0 to 90)."""
    diff = abs(a - b) % 180.0
    return min(diff, 180.0 - diff)


def in_sign_of(measured: Prescription, ordered: Prescription) -> Prescription:
    """The measured lens written with the ordered lens's cylinder sign (transposed)."""
    if ordered.cylinder < 0:
        return measured.in_minus_cylinder()
    if ordered.cylinder > 0:
        return measured.in_plus_cylinder()
    return measured


def lens_verdicts(job: Verification) -> tuple[list[dict[str, Any]], list[str]]:
    """Verdicts for every lens row of the table that has a reading; and what was not read."""
    table = job.settings.table
    verdicts: list[dict[str, Any]] = []
    unread: list[str] = []
    for row in table.lens_rows_for(job.settings.lens_type, job.settings.mounting):
        if row.per_pair:
            if len(job.eyes) == 2:
                result = _PAIR[row.criterion](job, row)
                _collect(result, row, None, verdicts, unread)
            continue
        for eye in job.eyes:
            result = _EACH[row.criterion](job, row, eye)
            _collect(result, row, eye, verdicts, unread)
    return verdicts, unread


def _collect(result: dict[str, Any] | str, row: LensRow, eye: Eye | None,
             verdicts: list[dict[str, Any]], unread: list[str]) -> None:
    if isinstance(result, str):
        who = f"{eye} lens" if eye else "pair"
        note = f"{LENS_CRITERIA[row.criterion].capitalize()} ({who}): {result}."
        if note not in unread:
            unread.append(note)
    else:
        verdicts.append(result)


# --------------------------------------------------------------------------- criteria


def _readings(job: Verification, eye: Eye) -> tuple[OrderedLens, MeasuredLens | None]:
    return job.ordered[eye], job.measured.get(eye)


def _meridian_power(job: Verification, row: LensRow, eye: Eye) -> dict[str, Any] | str:
    ordered, measured = _readings(job, eye)
    if measured is None or measured.prescription is None:
        return "no power reading given"
    want = principal_powers(ordered.prescription)
    got = principal_powers(measured.prescription)
    highest = max(abs(p) for p in want)
    judged = [i for i in (0, 1) if row.meridians == "each"
              or abs(abs(want[i]) - highest) <= PASS_EPSILON]
    errors = {i: got[i] - want[i] for i in judged}
    worst = max(judged, key=lambda i: abs(errors[i]))
    verdict = _frame(job, row, eye, highest)
    verdict["meridians"] = [{"ordered_d": want[i], "measured_d": got[i],
                             "error_d": errors[i]} for i in judged]
    verdict["ordered"] = want[worst]
    verdict["measured"] = got[worst]
    which = ("the meridian of highest power" if row.meridians == "highest"
             else "the principal meridian furthest out")
    words = (f"{got[worst]:+.2f} D read against {want[worst]:+.2f} D ordered in {which} "
             f"({_signed_d(errors[worst])})")
    return _judged(verdict, abs(errors[worst]), words)


def _cylinder(job: Verification, row: LensRow, eye: Eye) -> dict[str, Any] | str:
    ordered, measured = _readings(job, eye)
    if measured is None or measured.prescription is None:
        return "no power reading given"
    want, got = principal_powers(ordered.prescription), principal_powers(measured.prescription)
    want_c, got_c = want[1] - want[0], got[1] - got[0]
    verdict = _frame(job, row, eye, want_c)
    sign = -1.0 if ordered.prescription.cylinder <= 0 else 1.0
    verdict["ordered"], verdict["measured"] = sign * want_c + 0.0, sign * got_c + 0.0
    words = (f"cylinder {_signed_d(sign * got_c)} read against {_signed_d(sign * want_c)} ordered "
             f"(in the order's cylinder sign; {_signed_d(sign * (got_c - want_c))})")
    return _judged(verdict, abs(got_c - want_c), words)


def _axis(job: Verification, row: LensRow, eye: Eye) -> dict[str, Any] | str:
    ordered, measured = _readings(job, eye)
    if measured is None or measured.prescription is None:
        return "no power reading given"
    cylinder = ordered.prescription.cylinder
    verdict = _frame(job, row, eye, cylinder)
    if not row.defines(cylinder):
        verdict["status"] = "not_defined"
        verdict["in_words"] = (f"the ordered cylinder ({cylinder:+.2f} D) is below "
                               f"{row.defined_from_d:g} D: the standard defines no axis, so "
                               "none is judged")
        return verdict
    read = in_sign_of(measured.prescription, ordered.prescription)
    if abs(read.cylinder) < NO_CYLINDER_D:
        return "the lens reads no cylinder, so it shows no axis (the cylinder verdict covers it)"
    error = axis_difference(read.axis, ordered.prescription.axis)
    verdict["ordered"], verdict["measured"] = ordered.prescription.axis, read.axis
    verdict["wearer"] = axis_error_effect(error, ordered.prescription, measured.prescription,
                                          _cylinder_limit(job, cylinder))
    words = (f"axis {read.axis:g} read against {ordered.prescription.axis:g} ordered: "
             f"{error:.0f} degrees apart")
    return _judged(verdict, error, words)


def _add(job: Verification, row: LensRow, eye: Eye) -> dict[str, Any] | str:
    ordered, measured = _readings(job, eye)
    if measured is None or measured.add is None:
        return "no add reading given"
    if ordered.add is None:
        return "an add was read but none is ordered; give the ordered add"
    verdict = _frame(job, row, eye, ordered.add)
    verdict["ordered"], verdict["measured"] = ordered.add, measured.add
    error = measured.add - ordered.add
    return _judged(verdict, abs(error), f"add {measured.add:+.2f} D read against "
                                        f"{ordered.add:+.2f} D ordered ({_signed_d(error)})")


def _place(attribute: str, what: str) -> Callable[[Verification, LensRow, Eye],
                                                  dict[str, Any] | str]:
    """A per-lens position criterion: measured against ordered, in mm."""

    def judge(job: Verification, row: LensRow, eye: Eye) -> dict[str, Any] | str:
        ordered, measured = _readings(job, eye)
        got = _position(measured, attribute)
        want = _position(ordered, attribute)
        if got is None:
            return f"no {what} measured"
        if want is None:
            return f"no {what} ordered"
        verdict = _frame(job, row, eye, 0.0)
        verdict["ordered"], verdict["measured"] = want, got
        error = got - want
        place = "higher" if error > 0 else "lower"
        words = (f"{what} {got:.1f} mm against {want:.1f} mm ordered"
                 + (f" ({abs(error):.1f} mm {place})" if abs(error) >= 0.05 else ""))
        return _judged(verdict, abs(error), words)

    return judge


def _tilt(job: Verification, row: LensRow, eye: Eye) -> dict[str, Any] | str:
    measured = job.measured.get(eye)
    tilt = measured.segment.tilt_deg if measured and measured.segment else None
    if tilt is None:
        return "no segment tilt measured"
    verdict = _frame(job, row, eye, 0.0)
    verdict["ordered"], verdict["measured"] = 0.0, tilt
    return _judged(verdict, abs(tilt), f"segment line {abs(tilt):g} degrees off level")


def _segment_difference(job: Verification, row: LensRow) -> dict[str, Any] | str:
    got = {eye: _position(job.measured.get(eye), "segment.height_mm") for eye in job.eyes}
    want = {eye: _position(job.ordered[eye], "segment.height_mm") for eye in job.eyes}
    if None in got.values():
        return "segment heights not measured on both lenses"
    if None in want.values():
        return "segment heights not ordered for both lenses"
    verdict = _frame(job, row, None, 0.0)
    read = _minus(got["right"], got["left"])
    asked = _minus(want["right"], want["left"])
    verdict["ordered"], verdict["measured"] = asked, read
    error = read - asked
    words = (f"right minus left {read:+.1f} mm against {asked:+.1f} mm ordered"
             + (f": the right segment sits {abs(error):.1f} mm "
                f"{'higher' if error > 0 else 'lower'} relative to the left"
                if abs(error) >= 0.05 else ""))
    return _judged(verdict, abs(error), words)


def _segment_horizontal(job: Verification, row: LensRow) -> dict[str, Any] | str:
    got = {eye: _position(job.measured.get(eye), "segment.mono_pd_mm") for eye in job.eyes}
    want = {eye: _position(job.ordered[eye], "segment.mono_pd_mm") for eye in job.eyes}
    if None in got.values():
        return "segment positions across not measured on both lenses"
    if None in want.values():
        return "segment positions across not ordered for both lenses"
    verdict = _frame(job, row, None, 0.0)
    read = _sum(got.values())
    asked = _sum(want.values())
    verdict["ordered"], verdict["measured"] = asked, read
    error = read - asked
    words = (f"segment centres {read:.1f} mm apart against {asked:.1f} mm ordered"
             + (f" ({abs(error):.1f} mm {'wider' if error > 0 else 'narrower'})"
                if abs(error) >= 0.05 else ""))
    return _judged(verdict, abs(error), words)


_EACH: dict[str, Callable[[Verification, LensRow, Eye], dict[str, Any] | str]] = {
    "meridian_power": _meridian_power,
    "cylinder": _cylinder,
    "axis": _axis,
    "add": _add,
    "segment_height": _place("segment.height_mm", "segment height"),
    "segment_tilt": _tilt,
    "fitting_cross_height": _place("fitting_cross_height_mm", "fitting-cross height"),
}
_PAIR: dict[str, Callable[[Verification, LensRow], dict[str, Any] | str]] = {
    "segment_height_difference": _segment_difference,
    "segment_horizontal": _segment_horizontal,
}


# --------------------------------------------------------------------------- helpers


def _position(lens: OrderedLens | MeasuredLens | None, attribute: str) -> float | None:
    if lens is None:
        return None
    if attribute.startswith("segment."):
        segment = lens.segment
        return None if segment is None else getattr(segment, attribute.split(".")[1])
    value = getattr(lens, attribute)
    return None if value is None else float(value)


def _minus(a: float | None, b: float | None) -> float:
    assert a is not None and b is not None
    return a - b


def _sum(values: Any) -> float:
    return float(sum(values))


def _cylinder_limit(job: Verification, cylinder: float) -> float | None:
    """The table's cylinder tolerance at this nominal cylinder (None without a row)."""
    rows = [row for row in job.settings.table.lens_rows_for(job.settings.lens_type,
                                                            job.settings.mounting)
            if row.criterion == "cylinder"]
    if not rows:
        return None
    return rows[0].band_for(cylinder).limit_at(cylinder)


def _signed_d(value: float) -> str:
    text = f"{value:+.2f} D"
    return "0.00 D" if text in ("+0.00 D", "-0.00 D") else text



def _frame(job: Verification, row: LensRow, eye: Eye | None, nominal: float) -> dict[str, Any]:
    table = job.settings.table
    band = row.band_for(nominal)
    limit = band.limit_at(nominal)
    what = LENS_CRITERIA[row.criterion]
    who = f"{eye.capitalize()} lens: " if eye else "Pair: "
    band_text = row.band_words(band)
    by = {"highest_meridian": "ordered power in the meridian of highest power",
          "cylinder": "ordered cylinder", "add": "ordered add"}.get(row.by)
    verdict: dict[str, Any] = {
        "criterion": row.criterion,
        "label": who + what,
        "status": "not_judged",
        "pass": None,
        "value": None,
        "limit": limit,
        "margin": None,
        "unit": row.unit,
        "kind": row.unit,
        "quantity": row.criterion,
        "what": what,
        "in_words": "",
        "band": {**band.as_dict(), "words": band_text},
        "rule": f"{table.short}, {row.clause}: " + "; ".join(row.band_words(b)
                                                            for b in row.bands) + ".",
        "applied": (f"The {by} is {abs(nominal):.2f} D, so the band {band_text} applies."
                    if by else f"One limit: {band_text}."),
        "certainty": row.certainty,
        "unverified": row.unverified,
        "source": row.source,
    }
    if eye is not None:
        verdict["eye"] = eye
    if by:
        verdict["power_d"] = nominal
    return verdict


def _judged(verdict: dict[str, Any], value: float, words: str) -> dict[str, Any]:
    limit = verdict["limit"]
    value = round(value, 9) + 0.0
    verdict.update({"value": value, "margin": round(limit - value, 9) + 0.0,
                    "pass": value <= limit + PASS_EPSILON})
    verdict["status"] = "pass" if verdict["pass"] else "fail"
    verdict["in_words"] = words
    return verdict
