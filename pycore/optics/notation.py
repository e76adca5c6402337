"""Reading prescriptions and prisms typed the way practitioners write them.

A prescription line (common practice; the project's own list of forms):

- sphere: ``+2.00``, ``2.00`` (no sign: plus), ``-1.25 DS``, ``-1.25 D``,
  ``+0.50 sph``; plano as ``pl``, ``plano``, ``0`` or ``0.00``;
- cylinder and axis after it: ``-0.75 x 180``, with the axis after ``x``,
  ``X``, the multiplication sign, ``*``, ``ax``/``axis`` or ``@``; the cylinder always carries
  its sign (it decides the lens);
- spaces or ``/`` between the parts: ``+2.00 / -0.75 x 180``,
  ``-2.00/-1.00x10``, ``+1.50 -0.50 x 45``;
- an add on the same line: ``add +2.50``, ``ADD 2.50``, ``Add: 2.50``;
- prism on the same line, as in the prism field: ``1.5 BU``, ``2 BI 1 BU``,
  ``3 base out``, ``2.5 @ 37`` or ``2.5 at 37`` (360-degree notation, ISO
  8429: depends on the eye).

Decimal commas (``-3,25``), typographic minus signs and ``°`` are read too.
Anything else is refused in one sentence that quotes the part that could not
be read. This module reads; ``pycore.optics.power`` writes (it imports nothing
from here).
"""

from __future__ import annotations

import re
from collections.abc import Callable
from dataclasses import dataclass
from functools import lru_cache

from pycore.errors import CaseError
from pycore.optics.eyes import Eye
from pycore.optics.power import Prescription, written_dioptres
from pycore.optics.prism import Prism, combine
from pycore.validation import in_range

MAX_TEXT = 200
ADD_RANGE_D = (0.25, 6.0)

_NUMBER = re.compile(r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)")
_PLANO = ("pl", "plano", "plan")
_SPHERE_UNITS = ("ds", "d", "sph", "dsph", "dpt", "dioptre", "dioptres", "diopter", "diopters")
_CYLINDER_UNITS = ("dc", "d", "cyl", "dcyl", "dpt")
_AXIS_MARKS = ("x", "ax", "axis", "@")
_ADD_UNITS = ("d", "ds", "dpt")
_PRISM_UNITS = ("δ", "^", "pd", "prism", "prisms", "dioptre", "dioptres", "diopter",
                "diopters")
_BASE_WORDS = {"bi": "in", "bo": "out", "bu": "up", "bd": "down",
               "in": "in", "out": "out", "up": "up", "down": "down"}
_ANGLE_MARKS = ("@", "at")
_SEPARATORS = ("/", ",", "and", "&", "+", "with", "prism")
_NO_PRISM = ("", "none", "no prism", "nil", "0", "-")

RX_EXAMPLE = "+2.00 / -0.75 x 180 add +2.50 1.5 BU"
PRISM_EXAMPLE = "1.5 BU, 2 BI, 3 BO, 1 BD or 2.5 @ 37"


@dataclass(frozen=True)
class PrismTerm:
    """One written prism term: an amount with a base word or a 360-degree direction."""

    amount: float
    base: str | None = None
    angle: float | None = None
    written: str = ""

    def for_eye(self, eye: Eye) -> Prism:
        if self.angle is not None:
            return Prism.from_direction(self.amount, self.angle, eye)
        base_in, base_up = {"in": (self.amount, 0.0), "out": (-self.amount, 0.0),
                            "up": (0.0, self.amount), "down": (0.0, -self.amount)}[
                                self.base or "in"]
        return Prism.prescribed(base_in, base_up)


@dataclass(frozen=True)
class WrittenPrescription:
    """A prescription line: the sphero-cylinder, and the add and prism written on it
    (None where the line has none). Dioptres, degrees, prism dioptres."""

    prescription: Prescription
    add: float | None = None
    prism: Prism | None = None

    def written(self) -> str:
        """The whole line the trade's way: ``+1.00 / -0.50 x 90, add +2.50, 1.50 BU``."""
        parts = [self.prescription.written()]
        if self.add is not None:
            parts.append(f"add {written_dioptres(self.add)}")
        if self.prism is not None and self.prism.amount >= 0.005:
            parts.append(written_prism(self.prism))
        return ", ".join(parts)


def written_prism(prism: Prism) -> str:
    """A prism in the trade's short words: ``2.00 BI 1.50 BU`` (``no prism`` when none)."""
    parts = []
    if abs(prism.base_in) >= 0.005:
        parts.append(f"{_two(abs(prism.base_in))} {'BI' if prism.base_in > 0 else 'BO'}")
    if abs(prism.base_up) >= 0.005:
        parts.append(f"{_two(abs(prism.base_up))} {'BU' if prism.base_up > 0 else 'BD'}")
    return " ".join(parts) if parts else "no prism"


def _two(value: float) -> str:
    return written_dioptres(value)[1:]


# --------------------------------------------------------------------------- tokens


def _normalise(text: object, field: str, example: str) -> str:
    """The text with its parts spaced apart for reading (case kept, so quotes match)."""
    if not isinstance(text, str):
        raise CaseError(field, f"{field} must be text, e.g. {example}.", text)
    if len(text) > MAX_TEXT:
        raise CaseError(field, f"{field} is too long (at most {MAX_TEXT} characters).", text)
    cleaned = text.strip()
    for dash in "\u2212\u2013\u2014\u2010\u2011":
        cleaned = cleaned.replace(dash, "-")
    for mark, spaced in (("\u00d7", " x "), ("\u2715", " x "), ("*", " x "), ("\u00b0", " "),
                         ("\u2206", " Δ "), ("\u25b3", " Δ "), ("Δ", " Δ "), ("δ", " Δ "),
                         ("^", " ^ "), ("@", " @ "), ("/", " / "), (";", " , "),
                         (":", " "), ("&", " & ")):
        cleaned = cleaned.replace(mark, spaced)
    cleaned = re.sub(r"(\d),(\d)", r"\1.\2", cleaned)  # decimal comma
    cleaned = cleaned.replace(",", " , ")
    cleaned = re.sub(r"([A-Za-z])-(?=[A-Za-z])", r"\1 ", cleaned)  # base-in
    cleaned = re.sub(r"(\d)(?=[A-Za-z])", r"\1 ", cleaned)  # 1.5BU, -1.00x90
    cleaned = re.sub(r"([A-Za-z])(?=[+-]|\.?\d)", r"\1 ", cleaned)  # x90, add+2.50
    cleaned = re.sub(r"(\d)(?=[+-])", r"\1 ", cleaned)  # -2.00-1.00
    return cleaned


def _tokens(cleaned: str) -> list[str]:
    raw = cleaned.split()
    tokens: list[str] = []
    index = 0
    while index < len(raw):
        token = raw[index]
        following = raw[index + 1] if index + 1 < len(raw) else ""
        if token in ("+", "-") and _NUMBER.fullmatch(following) and following[0] not in "+-":
            tokens.append(token + following)  # "- 2.00" written with a space
            index += 2
            continue
        tokens.append(token)
        index += 1
    return tokens


def _word(token: str | None) -> str:
    """A token compared as a word: lower case, dots dropped (``D.S.`` is ``ds``)."""
    if token is None:
        return ""
    return token.lower().replace(".", "") if not _NUMBER.fullmatch(token) else token


def _is_number(token: str | None) -> bool:
    return token is not None and _NUMBER.fullmatch(token) is not None


def _quoted(tokens: list[str], start: int, end: int | None = None) -> str:
    shown = " ".join(tokens[start:end])
    if len(shown) > 40:
        shown = shown[:39] + "…"
    return f'"{shown}"'


class _Line:
    """A cursor over the tokens of one written line; refusals name ``field``."""

    def __init__(self, tokens: list[str], field: str, hint: str) -> None:
        self.tokens = tokens
        self.field = field
        self.hint = hint
        self.at = 0

    def peek(self, ahead: int = 0) -> str | None:
        index = self.at + ahead
        return self.tokens[index] if index < len(self.tokens) else None

    def word(self, ahead: int = 0) -> str:
        return _word(self.peek(ahead))

    def take(self) -> str:
        token = self.tokens[self.at]
        self.at += 1
        return token

    def skip(self, words: tuple[str, ...]) -> bool:
        if self.peek() is not None and self.word() in words:
            self.at += 1
            return True
        return False

    def skip_separators(self) -> None:
        while self.peek() is not None and self.word() in _SEPARATORS:
            self.at += 1

    @property
    def done(self) -> bool:
        return self.at >= len(self.tokens)

    def refuse(self, why: str, start: int | None = None, end: int | None = None,
               hint: bool = False) -> CaseError:
        """One sentence: ``why`` with ``{part}`` replaced by the quoted tokens from
        ``start`` (the cursor) to ``end``, and the general hint when ``hint``."""
        where = self.at if start is None else start
        part = _quoted(self.tokens, where, end)
        tail = f"; {self.hint}" if hint else ""
        return CaseError(self.field, f"{self.field}: {why.format(part=part)}{tail}.",
                         " ".join(self.tokens))

    def unreadable(self) -> CaseError:
        return self.refuse("could not read {part}", hint=True)


# --------------------------------------------------------------------------- parts


def _read_sphere(line: _Line) -> float:
    line.skip(("sph", "sphere"))
    token = line.peek()
    if token is None:
        raise CaseError(line.field, f"{line.field} is empty; write the prescription, "
                                    f"e.g. {RX_EXAMPLE}.", "")
    if line.word() in _PLANO:
        line.take()
        line.skip(_SPHERE_UNITS)
        return 0.0
    if not _is_number(token):
        if line.word() in _AXIS_MARKS or line.word() in _BASE_WORDS:
            raise line.refuse("the line starts with {part}, not a sphere; write the sphere "
                              "first (plano if there is none)")
        raise line.refuse("could not read {part} as a sphere", hint=True)
    if line.word(1) in _BASE_WORDS or line.word(1) in _PRISM_UNITS:
        raise line.refuse("{part} is a prism, not a sphere; write the sphere first "
                          "(plano if there is none)", end=line.at + 2)
    line.take()
    line.skip(_SPHERE_UNITS)
    return float(token) + 0.0


def _cylinder_ahead(line: _Line, at_means_axis: bool = True) -> int | None:
    """Tokens from the cursor to the axis mark when a cylinder starts here, else None.
    ``@`` after a signed number marks an axis only where a cylinder may still come
    (prism amounts carry no sign)."""
    if not _is_number(line.peek()):
        return None
    ahead = 2 if line.word(1) in _CYLINDER_UNITS else 1
    mark = line.word(ahead)
    signed = (line.peek() or " ")[0] in "+-"
    if mark in ("x", "ax", "axis") or (mark == "@" and signed and at_means_axis):
        return ahead
    return None


def _read_cylinder(line: _Line) -> tuple[float, float]:
    """(cylinder, axis) written at the cursor, or (0, 0) when none is."""
    line.skip(("cyl", "cylinder"))
    if line.word() in ("x", "ax", "axis"):
        axis_end = line.at + 2 if _is_number(line.peek(1)) else line.at + 1
        raise line.refuse("{part} gives an axis but no cylinder; write the cylinder before "
                          "it (e.g. -0.50 x 90) or leave the axis out", end=axis_end)
    ahead = _cylinder_ahead(line)
    if ahead is None:
        token = line.peek()
        after = line.word(1)
        if token is not None and _is_number(token) and token[0] in "+-" \
                and after not in _BASE_WORDS and after not in _PRISM_UNITS \
                and after not in _ANGLE_MARKS and after not in ("base", "b"):
            if line.peek(1) is None or after in ("add", *_SEPARATORS) or _is_number(after):
                raise line.refuse("the cylinder {part} has no axis; write it with its axis, "
                                  "e.g. " + token + " x 180", end=line.at + 1)
            raise line.refuse("could not read {part} after the cylinder \"" + token + "\"; "
                              "write the axis after x, e.g. " + token + " x 180",
                              start=line.at + 1)
        return 0.0, 0.0
    start = line.at
    token = line.take()
    if token[0] not in "+-":
        raise line.refuse("the cylinder {part} has no sign; write + or - before it",
                          start=start, end=start + 1)
    line.at = start + ahead + 1
    axis = line.peek()
    if axis is None or not _is_number(axis) or axis[0] in "+-":
        raise line.refuse("the axis after {part} is missing or not a number of degrees "
                          "(0 to 180)", start=start, end=line.at)
    line.take()
    line.skip(("deg", "degrees", "degree"))
    return float(token) + 0.0, float(axis)


def _read_add(line: _Line, add: float | None) -> float:
    start = line.at
    line.take()
    token = line.peek()
    if token is None or not _is_number(token):
        raise line.refuse("{part} needs the add in dioptres after it, e.g. add +2.50",
                          start=start, end=start + 2)
    if add is not None:
        raise line.refuse("the add is written twice ({part} is the second)",
                          start=start, end=start + 2)
    line.take()
    line.skip(_ADD_UNITS)
    value = float(token) + 0.0
    if value != 0:
        try:
            in_range(value, "add", *ADD_RANGE_D, "dioptres")
        except CaseError as exc:
            raise line.refuse(f"the add {{part}} is outside {ADD_RANGE_D[0]:g} to "
                              f"{ADD_RANGE_D[1]:g} dioptres", start=start,
                              end=start + 2) from exc
    return value


def _read_prism_term(line: _Line) -> PrismTerm:
    start = line.at
    token = line.take()
    amount = float(token) + 0.0
    while line.skip(_PRISM_UNITS):
        pass
    base: str | None = None
    angle: float | None = None
    if line.word() in _BASE_WORDS:
        base = _BASE_WORDS[line.word()]
        line.take()
    elif line.word() in ("base", "b"):
        line.take()
        if line.word() in _BASE_WORDS:
            base = _BASE_WORDS[line.word()]
            line.take()
        elif _is_number(line.peek()):
            angle = float(line.take())
    elif line.word() in _ANGLE_MARKS and _is_number(line.peek(1)):
        line.take()
        angle = float(line.take())
    if base is None and angle is None:
        if line.done or line.word() in _SEPARATORS or _is_number(line.peek()) \
                or line.word() == "add":
            raise line.refuse("the prism {part} has no base; write it as " + PRISM_EXAMPLE,
                              start=start, end=line.at)
        raise line.refuse("could not read {part} after the prism amount \"" + token + "\"; "
                          "write the base as BI, BO, BU or BD, or the direction as @ 37")
    line.skip(("deg", "degrees", "degree"))
    written = " ".join(line.tokens[start:line.at])
    if amount < 0:
        raise line.refuse("a prism amount cannot be negative ({part}); name the base "
                          "instead", start=start, end=line.at)
    return PrismTerm(amount, base, angle, written)


def _prism_of(terms: list[PrismTerm], eye: Eye | None, field: str) -> Prism | None:
    if not terms:
        return None
    if eye is None:
        angled = [t for t in terms if t.angle is not None]
        if angled:
            raise CaseError(field, f'{field}: the prism "{angled[0].written}" is in '
                                   "360-degree notation, whose angle depends on the eye; "
                                   "say which eye, or write the base (BI, BO, BU, BD).")
        eye = "right"
    chosen: Eye = eye
    prisms = []
    for term in terms:
        try:
            prisms.append(term.for_eye(chosen))
        except CaseError as exc:
            raise CaseError(field, f'{field}: the prism "{term.written}": {exc.message}',
                            term.written) from None
    return combine(prisms)


def _read_clauses(line: _Line, allow_add: bool,
                  on_cylinder: Callable[[_Line], CaseError]) -> tuple[float | None,
                                                                      list[PrismTerm]]:
    add: float | None = None
    terms: list[PrismTerm] = []
    while True:
        line.skip_separators()
        if line.done:
            return add, terms
        if allow_add and line.word() == "add":
            add = _read_add(line, add)
        elif _cylinder_ahead(line, at_means_axis=False) is not None:
            raise on_cylinder(line)
        elif _is_number(line.peek()):
            terms.append(_read_prism_term(line))
        else:
            raise line.unreadable()


# --------------------------------------------------------------------------- readers


def parse_written(text: object, field: str = "rx", eye: Eye | None = None) -> WrittenPrescription:
    """A prescription line with any add and prism written on it; refusals name ``field``.

    ``eye`` is needed only for prism in 360-degree notation (``2.5 @ 37``). A line read
    lately is not read again (the other eye's line, while a person edits one).
    """
    if isinstance(text, str):
        return _parse_written_line(text, field, eye)
    return _parse_written(text, field, eye)


@lru_cache(maxsize=16)
def _parse_written_line(text: str, field: str, eye: Eye | None) -> WrittenPrescription:
    """``parse_written`` of a text, kept (its value is immutable; a refusal is not kept)."""
    return _parse_written(text, field, eye)


def _parse_written(text: object, field: str, eye: Eye | None) -> WrittenPrescription:
    hint = f"write it as sphere / cylinder x axis, then any add and prism, e.g. {RX_EXAMPLE}"
    line = _Line(_tokens(_normalise(text, field, RX_EXAMPLE)), field, hint)
    sphere = _read_sphere(line)
    line.skip_separators()
    cylinder, axis = _read_cylinder(line)

    def second_cylinder(at: _Line) -> CaseError:
        return at.refuse("{part} is a second cylinder; write one cylinder only",
                         end=at.at + 3)

    add, terms = _read_clauses(line, True, second_cylinder)
    try:
        rx = Prescription(sphere, cylinder, axis)
    except CaseError as exc:
        raise CaseError(field, f"{field}: {exc.message}", text) from None
    return WrittenPrescription(rx, add, _prism_of(terms, eye, field))


def parse_prescription(text: object, field: str = "rx") -> Prescription:
    """A written sphero-cylinder alone; an add or prism on the line is refused here."""
    written = parse_written(text, field)
    if written.add is not None or written.prism is not None:
        raise CaseError(field, f"{field} carries an add or prism; write only the sphere, "
                               "cylinder and axis here.", text)
    return written.prescription


def parse_sphere(value: object, field: str = "sphere") -> float:
    """A sphere field: a number, or text such as ``+2.00``, ``2.00 DS``, ``-1.25 D``,
    ``pl``, ``plano`` (dioptres)."""
    if isinstance(value, bool) or not isinstance(value, (str, int, float)):
        raise CaseError(field, f"{field} must be a number of dioptres or text such as "
                               "+2.00 DS or plano.", value)
    if not isinstance(value, str):
        return in_range(value, field, -30.0, 30.0, "dioptres")
    hint = "write the sphere alone, e.g. +2.00, -1.25 DS or plano"
    line = _Line(_tokens(_normalise(value, field, "+2.00 DS")), field, hint)
    if line.done:
        raise CaseError(field, f"{field} is empty; {hint}.", value)
    sphere = _read_sphere(line)
    if not line.done:
        raise line.refuse("{part} does not belong in the sphere field (the cylinder, axis, "
                          "add and prism have their own fields, or go in the prescription "
                          "line)")
    return in_range(sphere, field, -30.0, 30.0, "dioptres")


def parse_prism(text: object, eye: Eye, field: str = "prism") -> Prism:
    """A written prism for ``eye`` (``1.5 BU 2 BI``, ``2.5 @ 37``); empty text is no prism.
    A prism read lately is not read again."""
    if isinstance(text, str):
        return _parse_prism_line(text, eye, field)
    return _parse_prism(text, eye, field)


@lru_cache(maxsize=16)
def _parse_prism_line(text: str, eye: Eye, field: str) -> Prism:
    """``parse_prism`` of a text, kept (a Prism is immutable; a refusal is not kept)."""
    return _parse_prism(text, eye, field)


def _parse_prism(text: object, eye: Eye, field: str) -> Prism:
    hint = f"write each prism as an amount and a base, e.g. {PRISM_EXAMPLE}"
    cleaned = _normalise(text, field, "1.5 BU")
    if cleaned.lower() in _NO_PRISM:
        return Prism()
    line = _Line(_tokens(cleaned), field, hint)

    def not_a_prism(at: _Line) -> CaseError:
        return at.refuse("{part} is a cylinder, not a prism", end=at.at + 3)

    _add, terms = _read_clauses(line, False, not_a_prism)
    return _prism_of(terms, eye, field) or Prism()
