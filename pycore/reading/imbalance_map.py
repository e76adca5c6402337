"""Net imbalance as the eyes move down and in together: the path, the map over the
lower half of the lenses, and the depth where the imbalance passes a threshold.

Gaze coordinates as in pycore.reading.reading_point: ``drop_mm`` below the primary
position and ``lateral_mm`` toward the wearer's right (both mm on the lens
plane, both eyes together, converging as they drop). Net values as in the case
format: ``vertical_base_up_right`` = base_up(right) - base_up(left) and
``horizontal_base_in`` = base_in(right) + base_in(left), prism dioptres.

Each total has an induced part beside it: the total minus the net of the
prescribed prism (``induced_...``). The threshold is judged on the induced part:
prescribed prism is the wearer's correction, not an imbalance (docs/sources.md).
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass
from typing import Any

from pycore.documents.cases import Case
from pycore.optics.eyes import EYES
from pycore.reading.reading_point import ReadingGeometry
from pycore.spectacles.binocular import NetPrism
from pycore.spectacles.sampler import LensSampler

_BISECTIONS = 12  # a 0.5 mm bracket halved 12 times: about a tenth of a micrometre


@dataclass(frozen=True)
class GazeNet:
    """Net prism for one gaze (prism dioptres), with each eye's zone: the totals and the
    net of the prescribed prism, whose difference is the induced part."""

    vertical: float
    horizontal: float
    zones: tuple[str, str]
    induced_vertical: float
    induced_horizontal: float


class NetSampler:
    """Net prism for many gazes of one case (see pycore.spectacles.sampler).

    ``prescribed``: the net of the prescribed prism the induced part is measured from;
    by default the case's own (a remedy's finished case passes the original's, since a
    remedy never changes the prescription)."""

    def __init__(self, case: Case, geometry: ReadingGeometry,
                 prescribed: NetPrism | None = None) -> None:
        self.geometry = geometry
        own = prescribed_net(case)
        self.prescribed = prescribed if prescribed is not None else own
        # What the lenses carry as prism beyond the prescribed prism (a finished case's
        # decentration prism, say) counts as induced; nothing, and exactly 0, otherwise.
        self._extra_vertical = own.vertical_base_up_right - self.prescribed.vertical_base_up_right
        self._extra_horizontal = own.horizontal_base_in - self.prescribed.horizontal_base_in
        self.right_lens, self.left_lens = case.right, case.left
        self.piecewise_linear = yoked_adds(case) or not any(
            lens.progressive is not None and lens.add for lens in (case.right, case.left))
        self._right = LensSampler(case.right, "right")
        self._left = LensSampler(case.left, "left")
        self._right_prism, self._left_prism = case.right.prism, case.left.prism

    def at(self, drop_mm: float, lateral_mm: float = 0.0) -> GazeNet:
        right = self._right.unprescribed_at(*self.geometry.coords("right", drop_mm, lateral_mm))
        left = self._left.unprescribed_at(*self.geometry.coords("left", drop_mm, lateral_mm))
        rp, lp = self._right_prism, self._left_prism
        vertical = (right[1] + rp.base_up) - (left[1] + lp.base_up)
        horizontal = (right[0] + rp.base_in) + (left[0] + lp.base_in)
        return GazeNet(vertical, horizontal, (right[2], left[2]),
                       right[1] - left[1] + self._extra_vertical,
                       right[0] + left[0] + self._extra_horizontal)

    def induced_vertical_at(self, drop_mm: float) -> float:
        """``at(drop_mm).induced_vertical`` alone (the same sum), for the searches down
        the reading path that ask for nothing else."""
        right = self._right.unprescribed_at(*self.geometry.coords("right", drop_mm))
        left = self._left.unprescribed_at(*self.geometry.coords("left", drop_mm))
        return right[1] - left[1] + self._extra_vertical

    def row(self, drop_mm: float, laterals: list[float]) -> tuple[list[Any], ...]:
        """``at`` for one drop and many lateral gazes, as columns: (vertical, induced
        vertical, horizontal) and each eye's zone. The same numbers as ``at`` (the
        same sums, in the same order), each eye's row at once (LensSampler's
        ``unprescribed_row``), without a point or a value made per gaze."""
        geometry = self.geometry
        rows = []
        for index, (eye, sampler) in enumerate(zip(EYES, (self._right, self._left),
                                                   strict=True)):
            if geometry.worn_as == "contact_lenses":
                rows.append(sampler.unprescribed_row([0.0] * len(laterals), 0.0))
                continue
            inset = geometry.inset_at(eye, drop_mm)
            sides = [-lateral for lateral in laterals] if eye == "right" else laterals
            if geometry.worn_as == "reading_spectacles":
                near, up = geometry.near_inset_mm[index], geometry.reading_drop_mm - drop_mm
                rows.append(sampler.unprescribed_row([inset + side - near for side in sides], up))
            else:
                up = geometry.primary_up_mm[index] - drop_mm
                rows.append(sampler.unprescribed_row([inset + side for side in sides], up))
        rp, lp = self._right_prism, self._left_prism
        extra_v = self._extra_vertical
        vertical: list[float] = []
        induced: list[float] = []
        horizontal: list[float] = []
        zones_r: list[str] = []
        zones_l: list[str] = []
        for right, left in zip(rows[0], rows[1], strict=True):
            vertical.append((right[1] + rp.base_up) - (left[1] + lp.base_up))
            induced.append(right[1] - left[1] + extra_v)
            horizontal.append((right[0] + rp.base_in) + (left[0] + lp.base_in))
            zones_r.append(right[2])
            zones_l.append(left[2])
        return vertical, induced, horizontal, zones_r, zones_l


_LAST: list[tuple[Case, ReadingGeometry, NetSampler, GazeNet, GazeNet]] = []
"""The last case's own sampler and nets: one evaluation asks for them from the reading
zone and from the remedies."""


def own_nets(case: Case, geometry: ReadingGeometry) -> tuple[NetSampler, GazeNet, GazeNet]:
    """The case's sampler (its own prescribed prism) and its nets at distance and at the
    reading point of ``geometry`` (a case is an immutable value: the last one's are kept)."""
    if _LAST and _LAST[0][0] is case and _LAST[0][1] is geometry:
        return _LAST[0][2:]
    sampler = NetSampler(case, geometry)
    found = (sampler, sampler.at(0.0), sampler.at(geometry.reading_drop_mm))
    _LAST[:] = [(case, geometry, *found)]
    return found


def yoked_adds(case: Case) -> bool:
    """Whether both lenses are progressives of one design with one add. Down the reading
    path both eyes' points are at one height on their lenses (the same fitting cross
    above the same prism reference point), so the add's vertical prism, a function of
    that height alone, is the same before both eyes and cancels in the net vertical:
    what is left is linear in the drop between breaks, as without a progressive."""
    right, left = case.right, case.left
    return (right.progressive is not None and bool(right.add)
            and right.progressive == left.progressive and right.add == left.add)


def prescribed_net(case: Case) -> NetPrism:
    """The net of the prism prescribed in the two lenses (prism dioptres)."""
    return NetPrism.between(case.right.prism, case.left.prism)


def _steps(start: float, stop: float, step: float) -> list[float]:
    """From ``start`` by ``step`` up to ``stop`` at most."""
    count = math.floor((stop - start) / step + 1e-9)
    return [start + i * step for i in range(count + 1)]


def last_row_mm(depth_mm: float, step_mm: float) -> float:
    """The drop of the map's last row (the same as ``_steps(0, depth_mm, step_mm)[-1]``)."""
    return math.floor(depth_mm / step_mm + 1e-9) * step_mm


def map_depth_mm(case: Case, requested: float | None, geometry: ReadingGeometry) -> float:
    """How far down the map reaches: as asked, else to the lowest fitting height (the
    lens's lower edge below the primary position), else 25 mm; at least past the
    reading point."""
    if requested is not None:
        depth = requested
    else:
        heights = [fit.height_mm for fit in (case.fitting.right, case.fitting.left)
                   if fit.height_mm is not None] if case.fitting is not None else []
        depth = float(min(heights)) if heights else 25.0
    depth = max(depth, geometry.reading_drop_mm + 2.0)
    return min(max(depth, 5.0), 35.0)


def imbalance_map(sampler: NetSampler, depth_mm: float, half_width_mm: float,
                  step_mm: float) -> dict[str, Any]:
    """A grid of net vertical and horizontal prism: rows by drop, columns by lateral gaze."""
    drops = _steps(0.0, depth_mm, step_mm)
    laterals = (_steps(-half_width_mm, half_width_mm, step_mm) if half_width_mm > 0
                else [0.0])
    vertical: list[list[Any]] = []
    induced: list[list[Any]] = []
    horizontal: list[list[Any]] = []
    zones_r: list[list[Any]] = []
    zones_l: list[list[Any]] = []
    for drop in drops:
        row = sampler.row(drop, laterals)
        for grid, column in zip((vertical, induced, horizontal, zones_r, zones_l), row,
                                strict=True):
            grid.append(column)
    flat_v = [abs(v) for row in vertical for v in row]
    flat_h = [abs(h) for row in horizontal for h in row]
    return {
        "drop_mm": drops,
        "lateral_mm": laterals,
        "vertical_base_up_right": vertical,
        "induced_vertical_base_up_right": induced,
        "horizontal_base_in": horizontal,
        "zones": {"right": zones_r, "left": zones_l},
        "scale": {"vertical_max_abs": max(flat_v), "horizontal_max_abs": max(flat_h),
                  "unit": "prism dioptres"},
        "axes": {
            "drop_mm": "how far both eyes have dropped below the primary position, mm on "
                       "the lens plane (they converge as they drop)",
            "lateral_mm": "how far both eyes have turned together, mm on the lens plane; "
                          "positive toward the wearer's right",
        },
    }


def reading_path(sampler: NetSampler, depth_mm: float, step_mm: float) -> list[dict[str, Any]]:
    """Net prism down the reading path (straight ahead, converging), with each eye's point."""
    path = []
    for drop in _steps(0.0, depth_mm, step_mm):
        net = sampler.at(drop)
        path.append({
            "drop_mm": drop,
            "vertical_base_up_right": net.vertical,
            "induced_vertical_base_up_right": net.induced_vertical,
            "horizontal_base_in": net.horizontal,
            "points": {eye: dict(zip(("in_mm", "up_mm"), sampler.geometry.coords(eye, drop),
                                     strict=True)) for eye in EYES},
        })
    return path


def threshold_drop_mm(sampler: NetSampler, threshold: float, depth_mm: float) -> float | None:
    """The smallest drop down the reading path at which the induced vertical imbalance
    reaches ``threshold``, or None if it stays below it to ``depth_mm``: in closed form
    where the imbalance is piecewise linear in the drop (no progressive lens, or two of
    one design and add: ``yoked_adds``), else by sampling and bisection."""
    if sampler.piecewise_linear:
        return closed_form_threshold_drop_mm(sampler, threshold, depth_mm)
    return sampled_threshold_drop_mm(sampler, threshold, depth_mm)


def sampled_threshold_drop_mm(sampler: NetSampler, threshold: float, depth_mm: float,
                              step_mm: float = 0.5) -> float | None:
    """``threshold_drop_mm`` by sampling every ``step_mm`` and bisecting the first step
    that passes it (to ``step_mm`` / 4096); it can miss a crossing narrower than a step."""

    def over(drop: float) -> bool:
        return abs(sampler.at(drop).induced_vertical) >= threshold

    if over(0.0):
        return 0.0
    previous = 0.0
    drops = _steps(step_mm, depth_mm, step_mm)
    if not drops or drops[-1] < depth_mm:
        drops.append(depth_mm)
    for drop in drops:
        if over(drop):
            low, high = previous, drop
            for _ in range(_BISECTIONS):
                middle = (low + high) / 2.0
                low, high = (low, middle) if over(middle) else (middle, high)
            return high
        previous = drop
    return None


def closed_form_threshold_drop_mm(sampler: NetSampler, threshold: float,
                                  depth_mm: float) -> float | None:
    """``threshold_drop_mm`` for lenses without a progressive (or two progressives of one
    design and add, whose add prism cancels in the net vertical: ``yoked_adds``), exactly.

    Along the reading path each eye's point on its lens moves linearly with the drop
    (down, and in until the reading point), and the prism before an eye is linear in
    the point within one zone (Prentice's rule for the distance power and for the add
    about the segment optical centre, a constant slab-off, a constant thinning prism).
    So the induced imbalance is linear in the drop between breaks: the reading point
    (the convergence stops), where a point crosses a segment top, a segment outline or
    a slab line. Each piece is found from two points inside it and solved for the
    threshold; at a break the value is the one the lens gives there (the top line
    counts as in the segment)."""
    breaks = sorted({drop for drop in _path_breaks(sampler, depth_mm) if 0.0 <= drop <= depth_mm})
    for start, end in itertools.pairwise(breaks):
        if abs(sampler.induced_vertical_at(start)) >= threshold:
            return start
        crossing = _linear_crossing(sampler, start, end, threshold)
        if crossing is not None:
            return crossing
    if abs(sampler.induced_vertical_at(breaks[-1])) >= threshold:
        return breaks[-1]
    return None


def _linear_crossing(sampler: NetSampler, start: float, end: float,
                     threshold: float) -> float | None:
    """Where the linear piece between ``start`` and ``end`` (the values inside it, and
    their limit at ``start``) first reaches +-``threshold``; None if not before ``end``."""
    x1, x2 = start + (end - start) / 3.0, start + 2.0 * (end - start) / 3.0
    if x2 - x1 < 1e-9:  # two breaks at the same place, to rounding: no piece between
        return None
    y1, y2 = sampler.induced_vertical_at(x1), sampler.induced_vertical_at(x2)
    slope = (y2 - y1) / (x2 - x1)
    if abs(y1 + slope * (start - x1)) >= threshold:
        return start  # over at once past the break (a jump at a top line or outline)
    if slope == 0.0:
        return None
    found = [x1 + (target - y1) / slope for target in (threshold, -threshold)]
    inside = [x for x in found if start < x < end]
    return min(inside) if inside else None


def _path_breaks(sampler: NetSampler, depth_mm: float) -> list[float]:
    """Drops where the reading path's imbalance may stop being one linear piece."""
    geometry = sampler.geometry
    ends = sorted({0.0, depth_mm, *((geometry.reading_drop_mm,)
                                    if 0.0 < geometry.reading_drop_mm < depth_mm else ())})
    breaks = list(ends)
    for low, high in itertools.pairwise(ends):
        for eye in EYES:
            lens = sampler.right_lens if eye == "right" else sampler.left_lens
            # The eye's point moves linearly inside the piece: in = a + b d, up = c + e d.
            x1, x2 = low + (high - low) / 3.0, low + 2.0 * (high - low) / 3.0
            (i1, u1), (i2, u2) = geometry.coords(eye, x1), geometry.coords(eye, x2)
            b, e = (i2 - i1) / (x2 - x1), (u2 - u1) / (x2 - x1)
            a, c = i1 - b * x1, u1 - e * x1
            heights = []
            if lens.add and lens.segment is not None:
                heights.append(lens.segment.top_mm)
            if lens.slab_off is not None:
                heights.append(lens.slab_off.line_mm)
            if e != 0.0:
                breaks.extend((height - c) / e for height in heights)
            segment = lens.segment
            if lens.add and segment is not None and segment.outline is not None \
                    and segment.outline.size_mm is not None:
                breaks.extend(_circle_crossings(
                    a - segment.optical_centre_in_mm, b, segment.top_mm - c, -e,
                    segment.outline.circle_centre_below_top_mm, segment.outline.size_mm / 2.0))
    return breaks


def _circle_crossings(across0: float, across_slope: float, below0: float, below_slope: float,
                      centre_below: float, radius: float) -> list[float]:
    """Drops d where (across0 + across_slope d, below0 + below_slope d) is on the circle
    of ``radius`` centred ``centre_below`` under the top line (mm)."""
    p, q = across0, below0 - centre_below
    qa = across_slope ** 2 + below_slope ** 2
    qb = 2.0 * (p * across_slope + q * below_slope)
    qc = p * p + q * q - radius * radius
    if qa == 0.0:
        return []
    disc = qb * qb - 4.0 * qa * qc
    if disc < 0.0:
        return []
    root = math.sqrt(disc)
    return [(-qb - root) / (2.0 * qa), (-qb + root) / (2.0 * qa)]
