"""Lens tolerance rows: power, cylinder, axis, add and segment/fitting-cross positions.

Each row of a table's ``lens_rows`` (pycore/data/tolerance-*.json) limits one
criterion for some lens types and mountings. Its bands switch with a nominal
(ordered) power named by ``by``: ``highest_meridian`` (the principal
meridian of highest absolute power), ``cylinder``, ``add`` or ``none`` (one
band at every power). A band covers nominal powers up to and including
``up_to_d`` (None: all higher powers) and gives ``limit`` in the row's unit,
or ``percent`` of the nominal power. ``defined_from_d`` (axis rows): below
this nominal cylinder the standard defines no axis, so none is judged.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from pycore.documents.datafiles import DataFileError, need

LENS_CRITERIA: dict[str, str] = {
    "meridian_power": "power in the principal meridian of highest power",
    "cylinder": "cylinder power",
    "axis": "cylinder axis",
    "add": "addition",
    "segment_height": "segment height",
    "segment_height_difference": "difference between the segment heights",
    "segment_horizontal": "segment separation (horizontal position)",
    "segment_tilt": "segment tilt",
    "fitting_cross_height": "fitting-cross height",
}
"""Every lens criterion, with what it limits."""
PAIR_CRITERIA = frozenset({"segment_height_difference", "segment_horizontal"})
BY = ("highest_meridian", "cylinder", "add", "none")
UNITS = ("dioptres", "degrees", "mm")
EDGE_EPSILON = 1e-9
"""Band edges are compared as written; this only absorbs float noise."""


@dataclass(frozen=True)
class LensBand:
    """One band: up to ``up_to_d`` (inclusive; None = above), ``limit`` or ``percent``."""

    up_to_d: float | None
    limit: float | None
    percent: float | None

    def applies_to(self, nominal_d: float) -> bool:
        return self.up_to_d is None or abs(nominal_d) <= self.up_to_d + EDGE_EPSILON

    def limit_at(self, nominal_d: float) -> float:
        """The limit at a nominal power (a percent band scales with it)."""
        if self.percent is not None:
            return self.percent / 100.0 * abs(nominal_d)
        assert self.limit is not None
        return self.limit

    def as_dict(self) -> dict[str, Any]:
        return {"up_to_d": self.up_to_d, "limit": self.limit, "percent": self.percent}


@dataclass(frozen=True)
class LensRow:
    """One lens criterion of a table, with its bands (lowest band first)."""

    criterion: str
    lens_types: tuple[str, ...]
    mountings: tuple[str, ...]
    by: str
    unit: str
    certainty: str
    source: str
    clause: str
    bands: tuple[LensBand, ...]
    meridians: str = "highest"
    defined_from_d: float | None = None

    @property
    def unverified(self) -> bool:
        return self.certainty == "from memory"

    @property
    def per_pair(self) -> bool:
        return self.criterion in PAIR_CRITERIA

    def band_for(self, nominal_d: float) -> LensBand:
        for band in self.bands:
            if band.applies_to(nominal_d):
                return band
        return self.bands[-1]

    def defines(self, nominal_d: float) -> bool:
        """False where the standard defines no tolerance (an axis of a too weak cylinder)."""
        return (self.defined_from_d is None
                or abs(nominal_d) >= self.defined_from_d - EDGE_EPSILON)

    def band_words(self, band: LensBand) -> str:
        """``up to 6.5 D: 0.13 D`` for one band (the powers it covers and its limit)."""
        index = self.bands.index(band)
        if self.by == "none":
            reach = "at every power"
        elif band.up_to_d is None:
            previous = self.bands[index - 1].up_to_d if index else None
            reach = f"above {previous:g} D" if previous is not None else "at every power"
        elif index == 0 and self.defined_from_d is not None:
            reach = f"{self.defined_from_d:g} to {band.up_to_d:g} D"
        elif index == 0:
            reach = f"up to {band.up_to_d:g} D"
        else:
            reach = f"above {self.bands[index - 1].up_to_d:g} to {band.up_to_d:g} D"
        short = {"dioptres": "D", "degrees": "deg", "mm": "mm"}[self.unit]
        limit = (f"{band.percent:g}% of the power" if band.percent is not None
                 else f"{band.limit:g} {short}")
        return f"{reach}: ±{limit}"

    def as_dict(self) -> dict[str, Any]:
        return {"criterion": self.criterion, "what": LENS_CRITERIA[self.criterion],
                "lens_types": list(self.lens_types), "mountings": list(self.mountings),
                "by": self.by, "unit": self.unit, "certainty": self.certainty,
                "unverified": self.unverified, "source": self.source, "clause": self.clause,
                "meridians": self.meridians, "defined_from_d": self.defined_from_d,
                "bands": [band.as_dict() for band in self.bands],
                "band_words": [self.band_words(band) for band in self.bands]}


def read_lens_row(obj: Any, name: str, certainties: tuple[str, ...],
                  lens_types: tuple[str, ...], mountings: tuple[str, ...]) -> LensRow:
    """One ``lens_rows`` entry of a data table, checked."""
    criterion = need(obj, "criterion", str, name)
    by = need(obj, "by", str, name)
    unit = need(obj, "unit", str, name)
    certainty = need(obj, "certainty", str, name)
    types = tuple(need(obj, "lens_types", list, name))
    mounts = tuple(need(obj, "mountings", list, name))
    meridians = obj.get("meridians", "highest")
    if (criterion not in LENS_CRITERIA or by not in BY or unit not in UNITS
            or certainty not in certainties or not types
            or any(t not in lens_types for t in types) or not mounts
            or any(m not in mountings for m in mounts) or meridians not in ("highest", "each")):
        raise DataFileError(f"data table {name!r}: a lens row has an unknown criterion, "
                            "power, unit, certainty, lens type or mounting")
    bands = tuple(_read_band(band, name) for band in need(obj, "bands", list, name))
    edges = [band.up_to_d for band in bands[:-1]]
    if (not bands or bands[-1].up_to_d is not None or None in edges
            or edges != sorted(e for e in edges if e is not None)):
        raise DataFileError(f"data table {name!r}: a lens row's bands must rise and the "
                            "last must cover all higher powers (up_to_d null)")
    defined = obj.get("defined_from_d")
    if defined is not None:
        defined = float(need(obj, "defined_from_d", (int, float), name))
    return LensRow(criterion, types, mounts, by, unit, certainty,
                   need(obj, "source", str, name), need(obj, "clause", str, name), bands,
                   meridians, defined)


def _read_band(obj: Any, name: str) -> LensBand:
    if not isinstance(obj, dict):
        raise DataFileError(f"data table {name!r}: a lens band must be an object")
    up_to, limit, percent = obj.get("up_to_d"), obj.get("limit"), obj.get("percent")
    if (limit is None) == (percent is None):
        raise DataFileError(f"data table {name!r}: a lens band gives a limit or a percent")
    for value in (up_to, limit, percent):
        if value is not None and (isinstance(value, bool) or not isinstance(value, int | float)
                                  or value < 0):
            raise DataFileError(f"data table {name!r}: a lens band holds a bad number")
    return LensBand(None if up_to is None else float(up_to),
                    None if limit is None else float(limit),
                    None if percent is None else float(percent))
