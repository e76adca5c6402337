"""Reading JSON documents strictly: one reader for the CLI, the worker and batch runs.

Rules (docs/case-format.md, "Reading files"): a UTF-8 byte-order mark is
accepted; a key given twice in one object, NaN or Infinity, a number too large
for a double (or with more digits than Python converts), a lone UTF-16
surrogate in text, and nesting deeper than ``MAX_NESTING`` levels are each
refused with one sentence naming the field. A bad value is echoed at most
``ECHO`` characters long. Keys that mean something in other languages
("constructor", "__proto__") are ordinary keys here.
"""

from __future__ import annotations

import json
import math
import re
from typing import Any

from pycore.errors import CaseError, shown

MAX_DOCUMENT_BYTES = 1_000_000
MAX_NESTING = 32
MAX_INT_DIGITS = 400
"""Integers with more digits are refused unread (every one is beyond a double anyway)."""

_SURROGATE = re.compile("[\ud800-\udfff]")
_SURROGATE_ESCAPE = re.compile(r"\\u[dD][89a-fA-F]")
_NESTED_PAIR = re.compile(r"\[\s*\]|\{\s*\}")
_STRING = re.compile(r'"(?:[^"\\]|\\.)*"', re.DOTALL)


class _Refused:
    """Stands in for a refused value during parsing; the walk afterwards names its field."""

    __slots__ = ("reason",)

    def __init__(self, reason: str) -> None:
        self.reason = reason


class _Duplicated(dict[str, Any]):
    """An object in which ``key`` appeared twice."""

    key: str = ""


def load_json(text: str | bytes, what: str = "the case", nesting: int = MAX_NESTING) -> Any:
    """Parse one JSON document strictly; ``what`` names it in refusals ("the case")."""
    label = what[:1].upper() + what[1:]
    if isinstance(text, bytes):
        raw = text
        if len(raw) > MAX_DOCUMENT_BYTES:
            raise too_large(label, len(raw))
        try:
            text = raw.decode("utf-8")
        except UnicodeDecodeError as exc:
            line = raw[:exc.start].count(b"\n") + 1
            raise CaseError("", f"{label} is not UTF-8 text (a bad byte on line {line}).") \
                from None
    if len(text) > MAX_DOCUMENT_BYTES:
        raise too_large(label, len(text))
    text = text.removeprefix("\ufeff")
    if not text.strip():
        raise CaseError("", f"{label} is empty; expected a JSON object.")
    if not _SURROGATE.search(text) and not _SURROGATE_ESCAPE.search(text):
        found = _plain_document(text, nesting)
        if found is not None:
            return found[0]
    return _read_carefully(text, label, nesting)


def _read_carefully(text: str, label: str, nesting: int) -> Any:
    """The document with a check of every value as it is parsed; refusals name the first
    bad value's field (``label`` for the document itself)."""
    hooks = _Hooks()
    try:
        document = json.loads(text, parse_constant=hooks.constant, parse_int=hooks.integer,
                              parse_float=hooks.real, object_pairs_hook=hooks.object)
    except RecursionError:
        raise _too_deep(label, nesting) from None
    except json.JSONDecodeError as exc:
        raise CaseError("", f"{label} is not valid JSON (line {exc.lineno}, column "
                            f"{exc.colno}: {exc.msg.lower()}).") from None
    if _nesting_over(text, nesting):
        raise _too_deep(label, nesting)
    if hooks.refused or _SURROGATE.search(text) or _SURROGATE_ESCAPE.search(text):
        _walk(document, label)
    return document


def _plain_document(text: str, nesting: int) -> tuple[Any] | None:
    """The document, when the text is one a person usually sends: valid JSON with no
    key twice in an object, finite numbers only, integers of at most ``MAX_INT_DIGITS``
    digits that a double can hold, nested at most ``nesting`` levels (a -0.0 read as
    0.0). None otherwise: the careful reader then finds and names what is wrong.

    The quick way to the same document as the careful reader: the parser's own
    numbers, one walk of the containers afterwards instead of a call per value."""
    duplicated = False

    def pairs(items: list[tuple[str, Any]]) -> dict[str, Any]:
        nonlocal duplicated
        result = dict(items)
        if len(result) != len(items):
            duplicated = True
        return result

    try:
        document = json.loads(text, object_pairs_hook=pairs)
    except (ValueError, RecursionError):
        return None
    if duplicated or not isinstance(document, (dict, list)):
        return None
    stack: list[tuple[Any, int]] = [(document, 1)]
    while stack:
        container, depth = stack.pop()
        if depth > nesting:
            return None
        entries = container.items() if container.__class__ is dict else enumerate(container)
        for key, value in entries:
            kind = value.__class__
            if kind is float:
                if value - value != 0.0:  # NaN or an infinity
                    return None
                if value == 0.0:
                    container[key] = 0.0  # (the same key: the dict keeps its size)
            elif kind is int:
                if not -_LARGEST_INT <= value <= _LARGEST_INT:  # (more than 400 digits too)
                    return None
            elif kind is dict or kind is list:
                stack.append((value, depth + 1))
    return (document,)


_LARGEST_INT = int(1.7976931348623157e308)
"""The largest integer a double holds (larger ones cannot be worked with)."""


def too_large(label: str, size: int, exact: bool = True) -> CaseError:
    """The refusal of a document over ``MAX_DOCUMENT_BYTES`` (its size in bytes and MB)."""
    amount = f"{size:,} bytes, {size / 1_000_000:.1f} MB" if exact \
        else f"more than {MAX_DOCUMENT_BYTES:,} bytes"
    return CaseError("", f"{label} is too large ({amount}; at most {MAX_DOCUMENT_BYTES:,} "
                         "bytes).")


def _too_deep(label: str, nesting: int) -> CaseError:
    return CaseError("", f"{label} is nested more than {nesting} levels deep.")


# --------------------------------------------------------------------------- parse hooks


class _Hooks:
    """The parser's hooks for one document; ``refused`` says whether any value was."""

    def __init__(self) -> None:
        self.refused = False

    def _refuse(self, reason: str) -> _Refused:
        self.refused = True
        return _Refused(reason)

    def constant(self, name: str) -> _Refused:
        return self._refuse(f"is {name}, which is not a number; give a finite number")

    def integer(self, digits: str) -> int | _Refused:
        count = len(digits.lstrip("-"))
        if count > MAX_INT_DIGITS:
            return self._refuse(f"is a number of {count} digits, too large to work with")
        value = int(digits)
        try:
            float(value)
        except OverflowError:
            return self._refuse(f"is {shown(digits, quote=False)}, a number too large to "
                                "work with")
        return value

    def real(self, written: str) -> float | _Refused:
        value = float(written)
        if not math.isfinite(value):
            return self._refuse(f"is {shown(written, quote=False)}, a number too large to "
                                "work with")
        return value + 0.0  # -0.0 read as 0.0: no negative zero reaches a result

    def object(self, pairs: list[tuple[str, Any]]) -> dict[str, Any]:
        result: dict[str, Any] = {}
        for key, value in pairs:
            if key in result and not isinstance(result, _Duplicated):
                result = _Duplicated(result)
                result.key = key
                self.refused = True
            result[key] = value
        return result


# --------------------------------------------------------------------------- checks


def _nesting_over(text: str, limit: int) -> bool:
    """Whether containers nest more than ``limit`` deep (the text is valid JSON)."""
    brackets = re.sub(r"[^\[\]{}]", "", _STRING.sub("", text))
    for _ in range(limit):
        if not brackets:
            return False
        brackets = _NESTED_PAIR.sub("", brackets)
    return bool(brackets)


def _walk(document: Any, label: str) -> None:
    """Refuse the first bad value in document order, naming its dotted path."""
    stack: list[tuple[Any, str]] = [(document, "")]
    while stack:
        value, path = stack.pop()
        if isinstance(value, _Refused):
            raise CaseError(path, f"{path or label} {value.reason}.")
        if isinstance(value, str):
            if _SURROGATE.search(value):
                raise CaseError(path, f"{path or label} holds a broken character (half of a "
                                      "UTF-16 pair); retype that text.")
        elif isinstance(value, dict):
            if isinstance(value, _Duplicated):
                where = _path(path, value.key)
                raise CaseError(where, f"{where} appears twice in the same object; give it "
                                       "once.")
            for key in value:
                if _SURROGATE.search(key):
                    where = _path(path, "(a key)")
                    raise CaseError(where, f"A key in {path or label} holds a broken "
                                           "character (half of a UTF-16 pair).")
            stack.extend((item, _path(path, key)) for key, item in reversed(value.items()))
        elif isinstance(value, list):
            stack.extend((item, _path(path, str(index)))
                         for index, item in reversed(list(enumerate(value))))


def _path(parent: str, key: str) -> str:
    key = shown(key, quote=False)
    return f"{parent}.{key}" if parent else key
