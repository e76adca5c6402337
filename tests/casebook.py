"""Worked cases shared by several test files, each with its source."""

from __future__ import annotations

from typing import Any

FITTING = {"right": {"mono_pd_mm": 32}, "left": {"mono_pd_mm": 32}}

DURHAM_BIFOCAL: dict[str, Any] = {
    # Durham Technical Community College opticianry handout on bifocal prism: OD +5.00 add
    # +3.00, OS +2.00 add +1.00, R22 segments with tops 3 mm below the distance OCs,
    # reading 8 mm below the distance OCs (5 mm below the tops): net 1.2 BU before the right.
    "right": {"sphere": 5.0, "add": 3.0,
              "segment": {"top_mm": -3, "shape": "round", "diameter_mm": 22}},
    "left": {"sphere": 2.0, "add": 1.0,
             "segment": {"top_mm": -3, "shape": "round", "diameter_mm": 22}},
    "fitting": FITTING,
    "reading_zone": {"reading_point": "segment_top", "below_segment_top_mm": 5},
}


DROP = object()
"""Passed as the value to ``changed``: remove the field instead of setting it."""


def changed(base: dict[str, Any], path: str, value: Any) -> dict[str, Any]:
    """A deep copy of ``base`` with the dotted ``path`` set to ``value`` (or removed)."""
    import copy

    doc = copy.deepcopy(base)
    node: Any = doc
    parts = path.split(".")
    for part in parts[:-1]:
        node = node.setdefault(part, {})
    if value is DROP:
        node.pop(parts[-1], None)
    else:
        node[parts[-1]] = value
    return doc
