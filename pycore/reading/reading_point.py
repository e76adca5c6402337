"""Where the eyes look through the lenses as they drop from distance to reading.

Gaze is described by two numbers, both mm on the lens plane: ``drop_mm``, how far
both lines of sight have moved down from the primary position (they move
together), and ``lateral_mm``, how far both have turned toward the wearer's
right (negative: left). As the eyes drop to the reading point they converge:
the convergence inset grows in proportion to the drop, from nothing in the
primary position to the full near inset at the reading point, and stays full
below it (this project's model of reading down a page held at the working
distance).

The primary position is each eye's distance reference point, or the fitting
cross of a progressive lens (above its prism reference point). The reading
point is found by the ``reading_zone.reading_point`` rule: a depth below the
distance reference point (the fitting's ``reading_depth_mm``, default 10 mm,
common practice), a distance below the segment tops, or a progressive's near
reference point; the inset is the convergence inset of pycore.spectacles.fitting for the
horizontal power the eye looks through there.

How a gaze maps to points on the lenses depends on how they are worn:
spectacles fitted for distance (as above); reading spectacles centred on the
near visual points (the reading point is each lens's reference point); contact
lenses, which move with the eye (every gaze is at the lens centre).
"""

from __future__ import annotations

from dataclasses import dataclass

from pycore.documents.cases import Case
from pycore.errors import CaseError
from pycore.optics.eyes import EYES, Eye
from pycore.reading.options import ReadingZoneOptions, options_of
from pycore.spectacles.fitting import EyeFitting, Fitting
from pycore.spectacles.gaze import LENS_REACH_MM, GazePoint, LensPoint
from pycore.spectacles.lens import Lens

ASSUMED_MONO_PD_MM = 32.0
"""Used, and said so, when a case has no fitting: a typical adult monocular PD."""
_MAX_DROP_MM = LENS_REACH_MM - 5.0


@dataclass(frozen=True)
class ReadingGeometry:
    """Primary position, reading point and convergence for one case (mm)."""

    fitting: Fitting
    fitting_assumed: bool
    worn_as: str
    rule: str
    reading_drop_mm: float
    primary_up_mm: tuple[float, float]
    near_inset_mm: tuple[float, float]

    def inset_at(self, eye: Eye, drop_mm: float) -> float:
        """The convergence inset (mm) of ``eye`` after a drop of ``drop_mm``."""
        full = self.near_inset_mm[0 if eye == "right" else 1]
        if drop_mm <= 0:
            return 0.0
        if self.reading_drop_mm <= 0 or drop_mm >= self.reading_drop_mm:
            return full
        return full * drop_mm / self.reading_drop_mm

    def coords(self, eye: Eye, drop_mm: float, lateral_mm: float = 0.0) -> tuple[float, float]:
        """(in_mm, up_mm) where ``eye``'s line of sight crosses its lens for this gaze."""
        if self.worn_as == "contact_lenses":
            return (0.0, 0.0)
        index = 0 if eye == "right" else 1
        # Toward the wearer's right is temporal for the right eye, nasal for the left.
        sideways = -lateral_mm if eye == "right" else lateral_mm
        in_mm = self.inset_at(eye, drop_mm) + sideways
        if self.worn_as == "reading_spectacles":
            return (in_mm - self.near_inset_mm[index], self.reading_drop_mm - drop_mm)
        return (in_mm, self.primary_up_mm[index] - drop_mm)

    def lens_point(self, eye: Eye, drop_mm: float, lateral_mm: float = 0.0) -> LensPoint:
        """``coords`` as a point on the lens."""
        return LensPoint(*self.coords(eye, drop_mm, lateral_mm))

    def gaze(self, name: str, drop_mm: float, lateral_mm: float = 0.0) -> GazePoint:
        return GazePoint(name, self.lens_point("right", drop_mm, lateral_mm),
                         self.lens_point("left", drop_mm, lateral_mm))

    def distance_point(self) -> GazePoint:
        """Primary position: the eyes looking straight ahead into the distance."""
        return self.gaze("distance", 0.0)

    def reading_point(self) -> GazePoint:
        return self.gaze("near", self.reading_drop_mm)

    def as_dict(self) -> dict[str, object]:
        reading, distance = self.reading_point(), self.distance_point()
        return {
            "rule": self.rule,
            "worn_as": self.worn_as,
            "reading_drop_mm": self.reading_drop_mm,
            "near_inset_mm": {"right": self.near_inset_mm[0], "left": self.near_inset_mm[1]},
            "primary_up_mm": {"right": self.primary_up_mm[0], "left": self.primary_up_mm[1]},
            "reading_point": {eye: reading.on(eye).as_dict() for eye in EYES},
            "distance_point": {eye: distance.on(eye).as_dict() for eye in EYES},
            "fitting_assumed": self.fitting_assumed,
            "mono_pd_mm": {"right": self.fitting.right.mono_pd_mm,
                           "left": self.fitting.left.mono_pd_mm},
            "working_distance_mm": self.fitting.working_distance_mm,
        }


def primary_up_mm(lens: Lens) -> float:
    """Height of the primary position on a lens: the fitting cross of a progressive,
    else the distance reference point itself (mm)."""
    return lens.progressive.fitting_cross_up_mm if lens.progressive is not None else 0.0


def resolved_rule(case: Case, options: ReadingZoneOptions) -> str:
    if options.reading_point != "auto":
        return options.reading_point
    if any(case.lens(eye).progressive is not None for eye in EYES):
        return "near_zone"
    return "distance_reference"


_LAST: list[tuple[Case, ReadingGeometry]] = []
"""The last case's geometry: one evaluation asks for it from several sections."""


def reading_geometry(case: Case) -> ReadingGeometry:
    """The gaze geometry of a case; refusals name the reading-zone setting at fault.
    (A case is an immutable value: the last one's geometry is kept and reused.)"""
    if _LAST and _LAST[0][0] is case:
        return _LAST[0][1]
    geometry = _reading_geometry(case)
    _LAST[:] = [(case, geometry)]
    return geometry


def _reading_geometry(case: Case) -> ReadingGeometry:
    options = options_of(case)
    fitting, assumed = case.fitting, False
    if fitting is None:
        fitting = Fitting(EyeFitting(ASSUMED_MONO_PD_MM), EyeFitting(ASSUMED_MONO_PD_MM))
        assumed = True
    primary = (primary_up_mm(case.right), primary_up_mm(case.left))
    rule = resolved_rule(case, options)
    drop = _reading_drop(case, options, fitting, rule, primary)
    if not 0 <= drop <= _MAX_DROP_MM:
        raise CaseError("reading_zone.reading_point",
                        f"reading_zone.reading_point: the reading point would lie {drop:.0f} mm "
                        f"below the primary position; it must be within 0 to "
                        f"{_MAX_DROP_MM:g} mm, so check the segment tops or depths.", drop)
    geometry = ReadingGeometry(fitting, assumed, options.worn_as, rule, drop, primary,
                               (0.0, 0.0))
    # The inset depends on the power the eye looks through, which depends on where it
    # looks: find it with the distance power, then again with what is found there.
    for _ in range(2):
        powers = [_horizontal_power_at(case.lens(eye), geometry.lens_point(eye, drop))
                  for eye in EYES]
        try:
            insets = fitting.near_insets_mm(powers[0], powers[1])
        except ValueError:
            raise CaseError("fitting.working_distance_mm",
                            "fitting.working_distance_mm: the near visual points cannot be "
                            "found for these powers at this distance; check the powers and "
                            "the working distance.") from None
        geometry = ReadingGeometry(fitting, assumed, options.worn_as, rule, drop, primary,
                                   insets)
    return geometry


def _reading_drop(case: Case, options: ReadingZoneOptions, fitting: Fitting, rule: str,
                  primary: tuple[float, float]) -> float:
    if rule == "segment_top":
        tops = [primary[i] - lens.segment.top_mm for i, lens in enumerate((case.right, case.left))
                if lens.segment is not None]
        if not tops:
            raise CaseError("reading_zone.reading_point",
                            "reading_zone.reading_point is segment_top, but neither lens has "
                            "a segment; use distance_reference or give a segment.", rule)
        return sum(tops) / len(tops) + options.below_segment_top_mm
    if rule == "near_zone":
        depths = [lens.progressive.near_depth_mm for lens in (case.right, case.left)
                  if lens.progressive is not None]
        if not depths:
            raise CaseError("reading_zone.reading_point",
                            "reading_zone.reading_point is near_zone, but neither lens is a "
                            "progressive; use distance_reference or give a progressive.", rule)
        return sum(depths) / len(depths)
    depth = (options.reading_depth_mm if options.reading_depth_mm is not None
             else fitting.reading_depth_mm)
    return sum(primary) / 2.0 + depth


def _horizontal_power_at(lens: Lens, point: LensPoint) -> float:
    """Horizontal power the eye looks through at ``point``: the distance power in the
    horizontal meridian plus the part of the add found there."""
    power = lens.power.xx
    if lens.add and lens.segment is not None and lens.segment.covers(point):
        power += lens.add
    elif lens.add and lens.progressive is not None:
        power += lens.add * lens.progressive.add_fraction(point.up_mm)
    return power


def _is_plain(case: Case) -> bool:
    """Cases whose fitting points the core's own rule already finds exactly."""
    if not options_of(case).is_default_gaze:
        return False
    for eye in EYES:
        lens = case.lens(eye)
        if lens.progressive is not None or (lens.segment is not None
                                            and lens.segment.outline is not None):
            return False
    return True


def find_fitting_point(case: Case, name: str) -> GazePoint | None:
    """The fitting's ``distance`` and ``near`` points by the reading-zone rules (None
    where the core's own rule gives the same)."""
    if _is_plain(case) or case.fitting is None:
        return None
    geometry = reading_geometry(case)
    return geometry.distance_point() if name == "distance" else geometry.reading_point()

