"""One spectacle lens: its power, prescribed prism, segment and slab-off, and
the prism the eye meets at any point of it.

Prism at a point = prescribed prism + what the distance power induces between
the reference point and the point (Prentice's rule) + the add's own prism where
the point is seen through the segment + the slab-off prism below its line.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from pycore.errors import CaseError
from pycore.optics.eyes import Eye
from pycore.optics.power import PowerMatrix, Prescription
from pycore.optics.prentice import induced_prism
from pycore.optics.prism import PRISM_LIMIT, Prism
from pycore.spectacles.gaze import LENS_REACH_MM, LensPoint
from pycore.spectacles.progressive import Progressive
from pycore.spectacles.segments import SegmentOutline
from pycore.spectacles.segments import image_jump as _image_jump
from pycore.validation import in_range, positive

_NO_PRISM = Prism()
ADD_LIMIT_D = 6.0
SLAB_OFF_LIMIT = 10.0
CENTRE_MOVE_IN_MM = (-10.0, 10.0)
CENTRE_MOVE_UP_MM = (-15.0, 10.0)
"""How far a distance optical centre may be moved from its reference point (mm): the
lowered-centres remedy lowers by up to 10 mm (raises by up to 10); a little room beyond."""


@dataclass(frozen=True)
class Segment:
    """A bifocal segment (mm from the distance reference point; nasal +, up +).

    ``top_mm``: height of the top line; ``optical_centre_below_top_mm``: how
    far below the top line the segment's own optical centre lies;
    ``optical_centre_in_mm``: the segment optical centre's horizontal place.
    ``outline`` (shape and size, see pycore.spectacles.segments) decides which points below
    the top line are within the segment, centred sideways on the optical centre;
    without one every point at or below the top line is.
    """

    top_mm: float
    optical_centre_below_top_mm: float = 0.0
    optical_centre_in_mm: float = 0.0
    outline: SegmentOutline | None = None

    def __post_init__(self) -> None:
        in_range(self.top_mm, "top_mm", -LENS_REACH_MM, LENS_REACH_MM, "mm")
        in_range(self.optical_centre_below_top_mm, "optical_centre_below_top_mm",
                 -LENS_REACH_MM, LENS_REACH_MM, "mm")
        in_range(self.optical_centre_in_mm, "optical_centre_in_mm",
                 -LENS_REACH_MM, LENS_REACH_MM, "mm")

    @property
    def optical_centre_mm(self) -> tuple[float, float]:
        """The segment optical centre as (in_mm, up_mm)."""
        return (self.optical_centre_in_mm, self.top_mm - self.optical_centre_below_top_mm)

    def covers(self, point: LensPoint) -> bool:
        """Whether ``point`` is seen through the segment (at or below its top line and
        within its outline where it has one)."""
        if point.up_mm > self.top_mm:
            return False
        if self.outline is None:
            return True
        return self.outline.contains(point.in_mm - self.optical_centre_in_mm,
                                     self.top_mm - point.up_mm)

    def image_jump(self, add: float) -> float:
        """Prism jump met crossing the top line: add x (top to segment OC) in cm."""
        return _image_jump(add, self.optical_centre_below_top_mm)


@dataclass(frozen=True)
class SlabOff:
    """Prism ground below a line: ``base_up`` prism dioptres (negative = reverse slab),
    ``line_mm`` the line's height from the distance reference point."""

    base_up: float
    line_mm: float

    def __post_init__(self) -> None:
        in_range(self.base_up, "base_up", -SLAB_OFF_LIMIT, SLAB_OFF_LIMIT, "prism dioptres")
        in_range(self.line_mm, "line_mm", -LENS_REACH_MM, LENS_REACH_MM, "mm")

    def covers(self, point: LensPoint) -> bool:
        return point.up_mm <= self.line_mm


@dataclass(frozen=True)
class PrismAtPoint:
    """The prism one eye meets at a point, with its parts."""

    total: Prism
    prescribed: Prism
    induced: Prism
    from_add: Prism
    from_slab_off: Prism
    zone: str  # "distance" or "segment"; for a progressive "corridor" or "near"
    from_thinning: Prism = field(default_factory=Prism)


@dataclass(frozen=True)
class Lens:
    """A spectacle lens before ``eye``: distance Rx, prescribed prism, optional add etc.

    The add is carried by a bifocal ``segment`` or by a ``progressive`` design
    (pycore.spectacles.progressive), never both. ``centre_mm`` = (in_mm, up_mm): where
    the distance optical centre sits when it is deliberately moved from the distance
    reference point (lowered centres), in mm, in toward the nose and up; the prism that
    gives is induced, not prescribed. Default: at the reference point.
    """

    prescription: Prescription
    prism: Prism = field(default_factory=Prism)
    add: float = 0.0
    segment: Segment | None = None
    slab_off: SlabOff | None = None
    progressive: Progressive | None = None
    centre_mm: tuple[float, float] = (0.0, 0.0)

    def __post_init__(self) -> None:
        in_range(self.prism.base_in, "prism.base_in", -PRISM_LIMIT, PRISM_LIMIT,
                 "prism dioptres")
        in_range(self.prism.base_up, "prism.base_up", -PRISM_LIMIT, PRISM_LIMIT,
                 "prism dioptres")
        if self.add:
            positive(self.add, "add", ADD_LIMIT_D, "dioptres")
        if self.segment is not None and self.progressive is not None:
            raise CaseError("progressive", "progressive cannot be given with a segment: a "
                                           "lens is either a bifocal or a progressive.")
        if self.centre_mm != (0.0, 0.0):
            in_range(self.centre_mm[0], "optical_centre_mm.in_mm", *CENTRE_MOVE_IN_MM, "mm")
            in_range(self.centre_mm[1], "optical_centre_mm.up_mm", *CENTRE_MOVE_UP_MM, "mm")
            if self.progressive is not None:
                raise CaseError("optical_centre_mm", "optical_centre_mm cannot be given with a "
                                                     "progressive: its distance centre is tied "
                                                     "to its prism reference point.")

    @property
    def power(self) -> PowerMatrix:
        return self.prescription.power_matrix

    def prism_at(self, point: LensPoint, eye: Eye) -> PrismAtPoint:
        """The prism before ``eye`` when it looks through ``point`` of this lens."""
        induced = induced_prism(self.power, point, eye, centre_mm=self.centre_mm)
        from_add = _NO_PRISM
        zone = "distance"
        if self.segment is not None and self.add and self.segment.covers(point):
            zone = "segment"
            from_add = induced_prism(PowerMatrix.spherical(self.add), point, eye,
                                     centre_mm=self.segment.optical_centre_mm)
        from_thinning = _NO_PRISM
        if self.progressive is not None and self.add:
            zone = self.progressive.zone(point.up_mm)
            from_add = self.progressive.add_prism(point, self.add)
            from_thinning = self.progressive.thinning
        from_slab = _NO_PRISM
        if self.slab_off is not None and self.slab_off.covers(point):
            from_slab = Prism.trusted(0.0, self.slab_off.base_up)
        prism = self.prism
        total = Prism.trusted(
            prism.base_in + induced.base_in + from_add.base_in + from_slab.base_in
            + from_thinning.base_in,
            prism.base_up + induced.base_up + from_add.base_up + from_slab.base_up
            + from_thinning.base_up)
        return PrismAtPoint(total, self.prism, induced, from_add, from_slab, zone,
                            from_thinning)

