"""Prism at many points of one lens, quickly: the sum of pycore.spectacles.lens ``Lens.prism_at``
as plain numbers, for maps and searches that visit hundreds of points.

``Lens.prism_at`` stays the reference (tests check the two agree); this only
skips building a validated value for every part at every point.
"""

from __future__ import annotations

from pycore.optics.eyes import Eye, nasal_sign
from pycore.spectacles.lens import Lens


class LensSampler:
    """Total prism (base_in, base_up) and zone at (in_mm, up_mm) of ``lens`` before ``eye``."""

    def __init__(self, lens: Lens, eye: Eye) -> None:
        power = lens.power
        self._lens = lens
        self._xx, self._xy, self._yy = power.xx, power.xy, power.yy
        self._sign = nasal_sign(eye)
        thinning = lens.progressive.thinning_prism_base_down if (
            lens.progressive is not None and lens.add) else 0.0
        self.prescribed = lens.prism
        self._thinning = thinning
        self._centre_in, self._centre_up = lens.centre_mm

    def at(self, in_mm: float, up_mm: float) -> tuple[float, float, str]:
        """(base_in, base_up, zone) where the line of sight crosses the lens at the point."""
        base_in, base_up, zone = self.unprescribed_at(in_mm, up_mm)
        return base_in + self.prescribed.base_in, base_up + self.prescribed.base_up, zone

    def unprescribed_at(self, in_mm: float, up_mm: float) -> tuple[float, float, str]:
        """``at`` without the prescribed prism: everything else the eye meets there."""
        lens = self._lens
        x = self._sign * (in_mm - self._centre_in) / 10.0
        y = (up_mm - self._centre_up) / 10.0
        base_in = -self._sign * (self._xx * x + self._xy * y)
        base_up = -self._thinning - (self._xy * x + self._yy * y)
        zone = "distance"
        segment = lens.segment
        if (segment is not None and lens.add and up_mm <= segment.top_mm
                and (segment.outline is None or segment.outline.contains(
                    in_mm - segment.optical_centre_in_mm, segment.top_mm - up_mm))):
            zone = "segment"
            centre_in, centre_up = segment.optical_centre_mm
            base_in -= lens.add * (in_mm - centre_in) / 10.0
            base_up -= lens.add * (up_mm - centre_up) / 10.0
        elif lens.progressive is not None and lens.add:
            zone = lens.progressive.zone(up_mm)
            add_in, add_up = lens.progressive.add_prism_components(in_mm, up_mm, lens.add)
            base_in += add_in
            base_up += add_up
        if lens.slab_off is not None and up_mm <= lens.slab_off.line_mm:
            base_up += lens.slab_off.base_up
        return base_in, base_up, zone

    def unprescribed_row(self, ins_mm: list[float],
                         up_mm: float) -> list[tuple[float, float, str]]:
        """``unprescribed_at`` for many points at one height: the same numbers (the same
        sums in the same order), with what is the same all along the row (the vertical
        terms, the segment's or the add's prism at that height, the slab) worked out once:
        within one zone the prism is linear across the row (Prentice's rule)."""
        lens, sign, xx, xy, yy = self._lens, self._sign, self._xx, self._xy, self._yy
        centre = self._centre_in
        y = (up_mm - self._centre_up) / 10.0
        xy_y, yy_y = xy * y, yy * y
        thinning = self._thinning
        slab = lens.slab_off.base_up if (lens.slab_off is not None
                                         and up_mm <= lens.slab_off.line_mm) else None
        segment, add = lens.segment, lens.add
        progressive = lens.progressive if add else None
        found = []
        if segment is not None and add and up_mm <= segment.top_mm:
            outline, top, centre_in = segment.outline, segment.top_mm, segment.optical_centre_in_mm
            centre_up = segment.optical_centre_mm[1]
            segment_up = add * (up_mm - centre_up) / 10.0
            for in_mm in ins_mm:
                x = sign * (in_mm - centre) / 10.0
                base_in = -sign * (xx * x + xy_y)
                base_up = -thinning - (xy * x + yy_y)
                zone = "distance"
                if outline is None or outline.contains(in_mm - centre_in, top - up_mm):
                    zone = "segment"
                    base_in -= add * (in_mm - centre_in) / 10.0
                    base_up -= segment_up
                if slab is not None:
                    base_up += slab
                found.append((base_in, base_up, zone))
            return found
        if progressive is not None and (segment is None or not add):
            zone = progressive.zone(up_mm)
            below = up_mm < 0.0
            power, corridor_in, add_up = (progressive.add_prism_at_height(up_mm, add)
                                          if below else (0.0, 0.0, 0.0))
            for in_mm in ins_mm:
                x = sign * (in_mm - centre) / 10.0
                base_in = -sign * (xx * x + xy_y)
                base_up = -thinning - (xy * x + yy_y)
                base_in += -power * ((in_mm - corridor_in) / 10.0) if below else 0.0
                base_up += add_up
                if slab is not None:
                    base_up += slab
                found.append((base_in, base_up, zone))
            return found
        for in_mm in ins_mm:
            x = sign * (in_mm - centre) / 10.0
            base_in = -sign * (xx * x + xy_y)
            base_up = -thinning - (xy * x + yy_y)
            if slab is not None:
                base_up += slab
            found.append((base_in, base_up, "distance"))
        return found
