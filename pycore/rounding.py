"""Rounding as the laboratory does it: halves away from zero ("half up" in size), never to
even, and never a negative zero in what is shown or written out.

Python's ``round`` and ``format`` round a half to even (2.25 -> "2.2"); an order
reads 2.25 mm as 2.3. Values a hair under a half because of binary fractions
(0.15 * 3 = 0.44999...) count as the half they stand for.
"""

from __future__ import annotations

import math
from typing import Any

_HALF_SLACK = 1e-9
"""Relative slack for binary fractions just under a half (far below any lab step)."""


def half_up_steps(value: float, step: float) -> int:
    """How many whole ``step``s ``abs(value)`` rounds to, halves up (``half_up`` of it is
    that many steps: the two order values alike)."""
    return math.floor(abs(value) / step + 0.5 + _HALF_SLACK)


def half_up(value: float, step: float) -> float:
    """``value`` to the nearest multiple of ``step``, halves away from zero; never -0.0."""
    steps = half_up_steps(value, step)
    rounded = math.copysign(steps * step, value)
    return rounded + 0.0 if rounded else 0.0


def fixed(value: float, digits: int = 2, sign: bool = False) -> str:
    """``value`` with ``digits`` decimals, rounded half up; "+" before positive values
    when ``sign``; a value that rounds to zero is written without a minus."""
    rounded = half_up(value, 10.0 ** -digits)
    text = f"{rounded:+.{digits}f}" if sign else f"{rounded:.{digits}f}"
    if text.startswith("-") and float(text) == 0:
        text = ("+" if sign else "") + text[1:]
    return text


def without_negative_zero(data: Any) -> Any:
    """``data`` (JSON-ready) with every -0.0 turned into 0.0, in place where mutable.

    Walks the containers with a stack rather than a call per value: results hold
    thousands of numbers (the imbalance map)."""
    if isinstance(data, float):
        return 0.0 if data == 0 else data
    stack = [data]
    while stack:
        item = stack.pop()
        if isinstance(item, dict):
            for key, value in item.items():
                if isinstance(value, float):
                    if value == 0:
                        item[key] = 0.0
                elif isinstance(value, (dict, list)):
                    stack.append(value)
        elif isinstance(item, list):
            for index, value in enumerate(item):
                if isinstance(value, float):
                    if value == 0:
                        item[index] = 0.0
                elif isinstance(value, (dict, list)):
                    stack.append(value)
    return data
