"""Tolerance tables for verifying finished spectacles, one per standard and edition.

The limits live in pycore/data/tolerance-*.json, never in the logic. Each
table and each row carries its source and how sure it is:

- ``sourced``: taken from a published text (named in ``source``);
- ``sourced, earlier edition``: published, but for an older edition than the
  table's title (the ANSI progressive row, reproduced from Z80.1-1999);
- ``from memory``: recalled, not checked against the standard; every verdict
  that uses such a row is marked unverified.

A row is one criterion (vertical, horizontal, or a single unmounted lens) for
some lens types and a mounting. Its bands switch with the power in the
criterion's meridian: a prism limit (prism dioptres) up to a power, then a
millimetre limit on where the prism reference points are. The power, axis,
add and segment rows (``lens_rows``) are read by pycore.checks.lens_tolerances.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cache
from typing import Any, Literal

from pycore.checks.lens_tolerances import LensRow, read_lens_row
from pycore.documents.datafiles import DataFileError, choose, need, tables_by_id

LensType = Literal["single_vision", "multifocal", "progressive"]
Mounting = Literal["mounted", "unmounted"]
LENS_TYPES: tuple[LensType, ...] = ("single_vision", "multifocal", "progressive")
MOUNTINGS: tuple[Mounting, ...] = ("mounted", "unmounted")
CRITERIA = ("vertical", "horizontal", "single_lens")
CERTAINTIES = ("sourced", "sourced, earlier edition", "from memory")
DEFAULT_TABLE = "ansi-z80.1-2015"

QUANTITIES: dict[str, tuple[str, str]] = {
    "vertical_imbalance": ("prism", "unwanted vertical prism between the eyes"),
    "horizontal_total": ("prism", "unwanted horizontal prism of the pair"),
    "prism_at_prp": ("prism", "unwanted prism at the prism reference point"),
    "height_difference": ("mm", "difference between the two prism reference point heights, "
                                "compared with the ordered difference"),
    "height_each": ("mm", "each prism reference point's height, compared with the "
                          "ordered height"),
    "pd_difference": ("mm", "distance between the prism reference points, compared with "
                            "the ordered PD"),
    "pd_each": ("mm", "each prism reference point's monocular PD, compared with the "
                      "ordered one"),
    "prp_position": ("mm", "prism reference point's distance from its specified position"),
}
"""Every quantity a band may limit: (unit kind, what it is)."""

_PREFIX = "tolerance-"


@dataclass(frozen=True)
class Band:
    """One limit of a row, for powers up to ``up_to_power_d`` (None: all higher powers).

    ``kind`` ``prism``: ``limit`` in prism dioptres; ``mm``: in millimetres.
    ``per_eye_limit`` (horizontal prism only): the limit per lens when the
    horizontal reading is taken eye by eye.
    """

    up_to_power_d: float | None
    kind: str
    quantity: str
    limit: float
    per_eye_limit: float | None = None

    @property
    def unit(self) -> str:
        return "prism dioptres" if self.kind == "prism" else "mm"

    def applies_to(self, power_d: float) -> bool:
        return self.up_to_power_d is None or abs(power_d) <= self.up_to_power_d

    def as_dict(self) -> dict[str, Any]:
        return {"up_to_power_d": self.up_to_power_d, "kind": self.kind,
                "quantity": self.quantity, "limit": self.limit,
                "per_eye_limit": self.per_eye_limit, "unit": self.unit,
                "what": QUANTITIES[self.quantity][1]}


@dataclass(frozen=True)
class Row:
    """One criterion of a table, with its bands by power (lowest band first).

    ``any_of``: the criterion is met when any band's limit is met (the
    unmounted single lens: prism at the PRP, or the PRP's position).
    """

    criterion: str
    mounting: str
    lens_types: tuple[str, ...]
    certainty: str
    source: str
    bands: tuple[Band, ...]
    any_of: bool = False

    @property
    def unverified(self) -> bool:
        return self.certainty == "from memory"

    def band_for(self, power_d: float) -> Band:
        """The band that applies at ``power_d`` (dioptres in the criterion's meridian)."""
        for band in self.bands:
            if band.applies_to(power_d):
                return band
        return self.bands[-1]

    def as_dict(self) -> dict[str, Any]:
        return {"criterion": self.criterion, "mounting": self.mounting,
                "lens_types": list(self.lens_types), "certainty": self.certainty,
                "unverified": self.unverified, "source": self.source, "any_of": self.any_of,
                "bands": [band.as_dict() for band in self.bands]}


@dataclass(frozen=True)
class ToleranceTable:
    """A standard's prism tolerances for finished spectacles (one edition)."""

    id: str
    short: str
    title: str
    standard: str
    edition: str
    certainty: str
    source: str
    note: str
    rows: tuple[Row, ...]
    lens_rows: tuple[LensRow, ...] = ()

    @property
    def unverified(self) -> bool:
        return (self.certainty == "from memory" or any(row.unverified for row in self.rows)
                or any(row.unverified for row in self.lens_rows))

    def lens_rows_for(self, lens_type: str, mounting: str) -> tuple[LensRow, ...]:
        """The power, axis, add and position rows for a lens type and mounting."""
        return tuple(row for row in self.lens_rows
                     if lens_type in row.lens_types and mounting in row.mountings)

    def rows_for(self, lens_type: str, mounting: str) -> tuple[Row, ...]:
        return tuple(row for row in self.rows
                     if row.mounting == mounting and lens_type in row.lens_types)

    def as_dict(self) -> dict[str, Any]:
        return {"id": self.id, "short": self.short, "title": self.title, "standard": self.standard,
                "edition": self.edition, "certainty": self.certainty,
                "unverified": self.unverified, "source": self.source, "note": self.note,
                "rows": [row.as_dict() for row in self.rows],
                "lens_rows": [row.as_dict() for row in self.lens_rows]}


@cache
def tolerance_tables() -> dict[str, ToleranceTable]:
    """Every shipped tolerance table, by id."""
    return tables_by_id(_PREFIX, _read_table)


def tolerance_table(table_id: Any, field: str = "standard") -> ToleranceTable:
    """The table with id ``table_id``, or a CaseError naming ``field`` and the choices."""
    return choose(tolerance_tables(), table_id, field)


def _read_table(obj: Any, name: str) -> ToleranceTable:
    texts = {key: need(obj, key, str, name)
             for key in ("id", "short", "title", "standard", "edition", "certainty", "source",
                         "note")}
    _certainty(texts["certainty"], name)
    rows = tuple(_read_row(row, name) for row in need(obj, "rows", list, name))
    lens_rows = tuple(read_lens_row(row, name, CERTAINTIES, LENS_TYPES, MOUNTINGS)
                      for row in obj.get("lens_rows", []))
    return ToleranceTable(rows=rows, lens_rows=lens_rows, **texts)


def _read_row(obj: Any, name: str) -> Row:
    criterion = need(obj, "criterion", str, name)
    mounting = need(obj, "mounting", str, name)
    lens_types = tuple(need(obj, "lens_types", list, name))
    certainty = _certainty(need(obj, "certainty", str, name), name)
    if (criterion not in CRITERIA or mounting not in MOUNTINGS
            or not lens_types or any(t not in LENS_TYPES for t in lens_types)):
        raise DataFileError(f"data table {name!r}: a row has an unknown criterion, "
                            "mounting or lens type")
    bands = tuple(_read_band(band, name) for band in need(obj, "bands", list, name))
    if not bands or bands[-1].up_to_power_d is not None:
        raise DataFileError(f"data table {name!r}: a row's last band must cover all "
                            "higher powers (up_to_power_d null)")
    any_of = obj.get("any_of", False)
    return Row(criterion, mounting, lens_types, certainty, need(obj, "source", str, name),
               bands, bool(any_of))


def _read_band(obj: Any, name: str) -> Band:
    up_to = obj.get("up_to_power_d") if isinstance(obj, dict) else None
    quantity = need(obj, "quantity", str, name)
    kind = need(obj, "kind", str, name)
    if quantity not in QUANTITIES or QUANTITIES[quantity][0] != kind:
        raise DataFileError(f"data table {name!r}: band quantity {quantity!r} does not "
                            f"fit kind {kind!r}")
    limit = float(need(obj, "limit", (int, float), name))
    per_eye = obj.get("per_eye_limit")
    if up_to is not None:
        up_to = float(need(obj, "up_to_power_d", (int, float), name))
    if per_eye is not None:
        per_eye = float(need(obj, "per_eye_limit", (int, float), name))
    return Band(up_to, kind, quantity, limit, per_eye)


def _certainty(value: str, name: str) -> str:
    if value not in CERTAINTIES:
        raise DataFileError(f"data table {name!r}: certainty {value!r} is not one of "
                            f"{', '.join(CERTAINTIES)}")
    return value
