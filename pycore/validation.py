"""Validation at the edge: numbers and ranges, each refusal naming its field."""

from __future__ import annotations

import math
from typing import Any

from pycore.errors import CaseError

_EXACT_INT = 2 ** 53
"""Integers up to this size are exact as floats."""


def finite_number(value: Any, field: str, unit: str = "") -> float:
    """``value`` as a float (a negative zero as 0.0), or a CaseError naming ``field``.

    Booleans and numeric strings are refused: a case is written with numbers.
    """
    kind = value.__class__
    if kind is float and value - value == 0.0:  # finite: the usual cases, at once
        same: float = value + 0.0
        return same
    if kind is int and -_EXACT_INT <= value <= _EXACT_INT:
        return float(value)
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        shown = repr(value) if not isinstance(value, (dict, list)) else type(value).__name__
        raise CaseError(field, f"{field} must be a number{_unit(unit)}, not {shown}.", value)
    number = float(value)
    if not math.isfinite(number):
        raise CaseError(field, f"{field} must be a finite number{_unit(unit)}.", value)
    return number + 0.0


def in_range(value: Any, field: str, low: float, high: float, unit: str = "") -> float:
    """A finite number within [low, high], or a CaseError saying the range."""
    if value.__class__ is float and value - value == 0.0 and low <= value <= high:
        inside: float = value + 0.0  # the usual case, at once
        return inside
    number = finite_number(value, field, unit)
    if not low <= number <= high:
        raise CaseError(
            field,
            f"{field} must be between {_fmt(low)} and {_fmt(high)}{_unit(unit)}; "
            f"got {_fmt(number)}.",
            value,
        )
    return number


def positive(value: Any, field: str, high: float, unit: str = "") -> float:
    """A finite number greater than zero and at most ``high``."""
    number = finite_number(value, field, unit)
    if not 0 < number <= high:
        raise CaseError(
            field,
            f"{field} must be more than 0 and at most {_fmt(high)}{_unit(unit)}; "
            f"got {_fmt(number)}.",
            value,
        )
    return number


def _unit(unit: str) -> str:
    return f" ({unit})" if unit else ""


def _fmt(number: float) -> str:
    return f"{number:g}"
