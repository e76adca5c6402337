"""Reading JSON objects field by field, every refusal naming the dotted path.

Small helpers shared by the verification, readers, deviation and batch
readers; they follow the same rules as the case reader (unknown keys are
refused, numbers must be numbers, text must be text).
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import Any, TypeVar

from pycore.errors import CaseError, shown
from pycore.optics.eyes import Eye
from pycore.optics.notation import parse_prescription, parse_prism, parse_sphere
from pycore.optics.power import Prescription
from pycore.optics.prism import Prism
from pycore.validation import finite_number, in_range

T = TypeVar("T")


def path_of(parent: str, key: str | int) -> str:
    """``parent.key``, or ``key`` at the top."""
    return f"{parent}.{key}" if parent else str(key)


def as_object(value: Any, path: str, what: str) -> dict[str, Any]:
    """``value`` when it is a JSON object, else a CaseError naming ``path``."""
    if not isinstance(value, dict):
        label = path or "The document"
        kind = {list: "a list", str: "text", bool: "true/false", type(None): "null"}.get(
            type(value), "a number")
        raise CaseError(path, f"{label} must be {what} (a JSON object), not {kind}.", value)
    return value


def only_keys(obj: Mapping[str, Any], path: str, allowed: tuple[str, ...]) -> None:
    """Refuse any key not in ``allowed`` (a mistyped key must never be ignored)."""
    for key in obj:
        if key not in allowed:
            where = path_of(path, shown(key, quote=False))
            raise CaseError(where, f"{where} is not a field the tool knows; allowed "
                                   f"{'in ' + path if path else 'at the top'}: "
                                   f"{', '.join(allowed)}.", key)


def require(obj: Mapping[str, Any], path: str, key: str, hint: str) -> Any:
    """``obj[key]``, or a CaseError saying it is missing and what to give."""
    if key not in obj:
        where = path_of(path, key)
        raise CaseError(where, f"{where} is missing: {hint}")
    return obj[key]


def choice(obj: Mapping[str, Any], path: str, key: str, allowed: tuple[str, ...],
           default: str) -> str:
    """A text field that must be one of ``allowed`` (``default`` when absent)."""
    value = obj.get(key, default)
    if not isinstance(value, str) or value not in allowed:
        where = path_of(path, key)
        raise CaseError(where, f"{where} must be one of {', '.join(allowed)}; got {value!r}.",
                        value)
    return value


def text(obj: Mapping[str, Any], path: str, key: str, limit: int) -> str:
    """An optional text field of at most ``limit`` characters ("" when absent)."""
    value = obj.get(key, "")
    where = path_of(path, key)
    if not isinstance(value, str):
        raise CaseError(where, f"{where} must be text.", value)
    if len(value) > limit:
        raise CaseError(where, f"{where} is too long (at most {limit} characters).", value)
    return value


def optional_range(obj: Mapping[str, Any], path: str, key: str, low: float, high: float,
                   unit: str) -> float | None:
    """An optional number within [low, high] (None when absent)."""
    if key not in obj or obj[key] is None:
        return None
    return in_range(obj[key], path_of(path, key), low, high, unit)


def within(make: Callable[[], T], path: str) -> T:
    """``make()``, with any refusal's field placed under ``path``."""
    try:
        return make()
    except CaseError as exc:
        raise exc.within(path) from None


RX_KEYS = ("sphere", "cylinder", "axis", "rx")


def has_prescription(obj: Mapping[str, Any]) -> bool:
    return any(key in obj for key in RX_KEYS)


def prescription(obj: Mapping[str, Any], path: str) -> Prescription:
    """A sphero-cylinder given as ``rx`` text or as ``sphere``/``cylinder``/``axis``."""
    if "rx" in obj:
        clash = [k for k in ("sphere", "cylinder", "axis") if k in obj]
        if clash:
            where = path_of(path, "rx")
            raise CaseError(where, f"{where} and {path_of(path, clash[0])} both given; "
                                   "write the prescription one way only.")
        return parse_prescription(obj["rx"], path_of(path, "rx"))
    given = require(obj, path, "sphere", "give the sphere in dioptres (0 for plano), "
                                         "or rx as text.")
    sphere = (parse_sphere(given, path_of(path, "sphere")) if isinstance(given, str)
              else finite_number(given, path_of(path, "sphere"), "dioptres"))
    cylinder = finite_number(obj.get("cylinder", 0), path_of(path, "cylinder"), "dioptres")
    axis = finite_number(obj.get("axis", 0), path_of(path, "axis"), "degrees")
    return within(lambda: Prescription(sphere, cylinder, axis), path)


def read_prism(value: Any, path: str, eye: Eye) -> Prism:
    """A prism given as components, as amount and 360-degree direction, or written."""
    if isinstance(value, str):
        return parse_prism(value, eye, path)
    obj = as_object(value, path, "a prism")
    if "amount" in obj or "base_360" in obj:
        only_keys(obj, path, ("amount", "base_360"))
        for key in ("amount", "base_360"):
            if key not in obj:
                raise CaseError(f"{path}.{key}", f"{path}.{key} is missing: a prism by "
                                                 "direction needs amount and base_360.")
        amount = finite_number(obj["amount"], f"{path}.amount", "prism dioptres")
        angle = finite_number(obj["base_360"], f"{path}.base_360", "degrees")
        return within(lambda: Prism.from_direction(amount, angle, eye), path)
    only_keys(obj, path, ("base_in", "base_up"))
    base_in = finite_number(obj.get("base_in", 0), f"{path}.base_in", "prism dioptres")
    base_up = finite_number(obj.get("base_up", 0), f"{path}.base_up", "prism dioptres")
    return within(lambda: Prism.prescribed(base_in, base_up), path)
