"""Limit sets for ready-made readers, and when a ready-made pair can suit at all.

Read from pycore/data/readers-*.json, each carrying its source and how sure it
is. A limit set names checks on the prism a stock pair induces for a wearer
(prism dioptres):

- ``horizontal_per_lens``: horizontal prism before either eye;
- ``horizontal_total_base_out`` / ``horizontal_total_base_in``: the pair's net
  horizontal prism, base out or base in;
- ``vertical_imbalance``: vertical prism between the eyes.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cache
from typing import Any

from pycore.documents.datafiles import DataFileError, choose, load_table, need, tables_by_id

READER_QUANTITIES = ("horizontal_per_lens", "horizontal_total_base_out",
                     "horizontal_total_base_in", "vertical_imbalance")
DEFAULT_LIMITS = "iso-16034-2002"
_PREFIX = "readers-"
_SUITABILITY = "readers-suitability"


@dataclass(frozen=True)
class ReaderCheck:
    """One limit: ``quantity`` at most ``limit`` prism dioptres."""

    quantity: str
    limit: float
    label: str


@dataclass(frozen=True)
class LimitSet:
    """A named set of prism limits for ready-made readers, with its source."""

    id: str
    title: str
    standard: str
    edition: str
    certainty: str
    source: str
    power_range_d: tuple[float, float] | None
    checks: tuple[ReaderCheck, ...]

    def as_dict(self) -> dict[str, Any]:
        return {"id": self.id, "title": self.title, "standard": self.standard,
                "edition": self.edition, "certainty": self.certainty,
                "unverified": self.certainty == "from memory", "source": self.source,
                "power_range_d": list(self.power_range_d) if self.power_range_d else None,
                "checks": [{"quantity": c.quantity, "limit": c.limit, "label": c.label}
                           for c in self.checks]}


@dataclass(frozen=True)
class Suitability:
    """When ready-made readers can suit (dioptres): the largest difference between the
    eyes' spherical equivalents, the largest cylinder, and how far a stock power may be
    from the wearer's mean spherical equivalent."""

    max_anisometropia_d: float
    max_cylinder_d: float
    power_tolerance_d: float
    certainty: str
    source: str

    def as_dict(self) -> dict[str, Any]:
        return {"max_anisometropia_d": self.max_anisometropia_d,
                "max_cylinder_d": self.max_cylinder_d,
                "power_tolerance_d": self.power_tolerance_d,
                "certainty": self.certainty, "source": self.source}


@cache
def limit_sets() -> dict[str, LimitSet]:
    """Every shipped limit set for readers, by id."""
    return tables_by_id(_PREFIX, _read_set, leave_out=(_SUITABILITY,))


def limit_set(set_id: Any, field: str = "limits") -> LimitSet:
    """The limit set ``set_id``, or a CaseError naming ``field`` and the choices."""
    return choose(limit_sets(), set_id, field)


@cache
def default_suitability() -> Suitability:
    obj = load_table(_SUITABILITY)
    numbers = {key: float(need(obj, key, (int, float), _SUITABILITY))
               for key in ("max_anisometropia_d", "max_cylinder_d", "power_tolerance_d")}
    return Suitability(**numbers, certainty=need(obj, "certainty", str, _SUITABILITY),
                       source=need(obj, "source", str, _SUITABILITY))


def _read_set(obj: Any, name: str) -> LimitSet:
    texts = {key: need(obj, key, str, name)
             for key in ("id", "title", "standard", "edition", "certainty", "source")}
    span = obj.get("power_range_d")
    power_range = None
    if span is not None:
        if not (isinstance(span, list) and len(span) == 2):
            raise DataFileError(f"data table {name!r}: power_range_d must be two numbers")
        power_range = (float(span[0]), float(span[1]))
    checks = []
    for item in need(obj, "checks", list, name):
        quantity = need(item, "quantity", str, name)
        if quantity not in READER_QUANTITIES:
            raise DataFileError(f"data table {name!r}: unknown quantity {quantity!r}")
        checks.append(ReaderCheck(quantity, float(need(item, "limit", (int, float), name)),
                                  need(item, "label", str, name)))
    return LimitSet(power_range_d=power_range, checks=tuple(checks), **texts)
