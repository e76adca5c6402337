"""The core's data tables (pycore/data/*.json), read as package resources.

``importlib.resources`` finds them the same way from a source checkout, an
installed wheel and the wheel Pyodide loads in the browser. Tables are read
once and kept; a table that does not parse is a fault of the build, not of
the user's input, so it raises ``DataFileError``.
"""

from __future__ import annotations

import json
from collections.abc import Callable
from functools import cache
from importlib import resources
from typing import Any, Protocol, TypeVar

from pycore.errors import CaseError


class _HasId(Protocol):
    @property
    def id(self) -> str: ...


T = TypeVar("T", bound=_HasId)


class DataFileError(RuntimeError):
    """A shipped data table is missing or malformed (a build fault)."""


@cache
def data_names() -> tuple[str, ...]:
    """Names of the shipped tables (file names without ``.json``), sorted."""
    folder = resources.files("pycore").joinpath("data")
    return tuple(sorted(entry.name.removesuffix(".json") for entry in folder.iterdir()
                        if entry.name.endswith(".json")))


@cache
def load_table(name: str) -> Any:
    """The parsed JSON of ``pycore/data/<name>.json``."""
    resource = resources.files("pycore").joinpath("data").joinpath(f"{name}.json")
    try:
        text = resource.read_text(encoding="utf-8")
    except (FileNotFoundError, OSError) as exc:
        raise DataFileError(f"data table {name!r} is missing from the package") from exc
    try:
        return json.loads(text)
    except json.JSONDecodeError as exc:
        raise DataFileError(f"data table {name!r} is not valid JSON: {exc}") from exc


def need(obj: Any, key: str, kind: type | tuple[type, ...], table: str) -> Any:
    """``obj[key]`` checked to be of ``kind``, or a DataFileError naming the table."""
    if not isinstance(obj, dict) or key not in obj:
        raise DataFileError(f"data table {table!r}: {key} is missing")
    value = obj[key]
    if not isinstance(value, kind) or (isinstance(value, bool) and bool not in _as_tuple(kind)):
        raise DataFileError(f"data table {table!r}: {key} has the wrong type")
    return value


def _as_tuple(kind: type | tuple[type, ...]) -> tuple[type, ...]:
    return kind if isinstance(kind, tuple) else (kind,)


def tables_by_id(prefix: str, read: Callable[[Any, str], T],
                 leave_out: tuple[str, ...] = ()) -> dict[str, T]:
    """Every shipped table whose name starts with ``prefix``, read by ``read(obj, name)``
    and keyed by the value's ``id``."""
    found: dict[str, T] = {}
    for name in data_names():
        if name.startswith(prefix) and name not in leave_out:
            value = read(load_table(name), name)
            found[value.id] = value
    return found


def choose(tables: dict[str, T], wanted: Any, field: str) -> T:
    """``tables[wanted]``, or a CaseError naming ``field`` and the choices."""
    if not isinstance(wanted, str) or wanted not in tables:
        raise CaseError(field, f"{field} must be one of {', '.join(sorted(tables))}; "
                               f"got {wanted!r}.", wanted)
    return tables[wanted]
