"""The one exception family of the core: bad input, with the field it concerns."""

from __future__ import annotations

from typing import Any


class CaseError(ValueError):
    """Input the core refuses.

    ``field`` is the dotted path of the offending value in the case document
    (``"right.axis"``, ``"points.2.left.up_mm"``; empty for the document
    itself), ``value`` what was found there, and the message one plain
    sentence that names the field and says what is allowed.
    """

    def __init__(self, field: str, message: str, value: Any = None) -> None:
        self.field = field
        self.value = value
        self.message = _clip_echo(message, value)
        super().__init__(self.message)

    def within(self, prefix: str) -> CaseError:
        """The same refusal, its field placed under ``prefix``."""
        if not prefix:
            return self
        field = f"{prefix}.{self.field}" if self.field else prefix
        message = self.message
        if self.field and message.startswith(self.field):
            message = field + message[len(self.field):]
        elif not self.field:
            message = f"{prefix}: {message}"
        return CaseError(field, message, self.value)

    def as_dict(self) -> dict[str, Any]:
        return {"field": self.field, "message": self.message}


ECHO = 60
"""At most this many characters of a bad value are echoed in a refusal."""


def shown(value: Any, quote: bool = True, limit: int = ECHO) -> str:
    """``value`` as echoed in a refusal: its repr (or the text itself), cut to ``limit``."""
    text = repr(value) if quote or not isinstance(value, str) else value
    if len(text) <= limit:
        return text
    return text[:limit - 3] + "..."


def _clip_echo(message: str, value: Any) -> str:
    """``message`` with a long echo of ``value`` (its repr or its text) cut to ``ECHO``."""
    if isinstance(value, (str, int, float)) and not isinstance(value, bool):
        try:
            echoes = (repr(value), str(value))
        except ValueError:   # an integer beyond Python's digit limit
            return message
        for echo in echoes:
            if len(echo) > ECHO and echo in message:
                return message.replace(echo, shown(echo, quote=False))
    return message
