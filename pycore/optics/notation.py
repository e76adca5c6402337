"""Reading prescriptions and prisms typed the way practitioners write them.

Accepted prescriptions: ``+2.00 / -0.75 x 180``, ``-1.25 DS``,
``plano / -0.50 x 90``, ``+1.50 -0.50 x 45``, ``-2.00/-1.00x10``. Every
power other than zero carries its sign: an unsigned power is refused, as a
missing sign is a classic copying error.

Accepted prisms (one or more terms, which add as vectors): ``1.5 BU``,
``2 BI``, ``3 base out``, ``2.5 @ 37`` or ``2.5 at 37`` (360-degree
notation), separated by spaces, commas, ``and`` or ``+``.
"""

from __future__ import annotations

import re

from pycore.errors import CaseError
from pycore.optics.eyes import Eye
from pycore.optics.power import Prescription
from pycore.optics.prism import Prism, combine

MAX_TEXT = 200

_NUMBER = r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)"
_RX = re.compile(
    rf"""^\s*
    (?P<sph>plano|plan|pl|{_NUMBER})\s*(?:ds|dsph|sph|d)?\.?\s*
    (?:(?:/\s*|(?<=\s)|(?=[+-]))(?P<cyl>{_NUMBER})\s*(?:dc|dcyl|cyl|d)?\s*
       (?:x|ax|axis|@)\s*(?P<axis>\d+(?:\.\d+)?)\s*°?)?
    \s*$""",
    re.VERBOSE,
)

_PRISM_TERM = re.compile(
    rf"""\s*(?P<amount>{_NUMBER})\s*(?:Δ|δ|pd|\^|prism\s+dioptres?|prism)?\s*
    (?:(?P<word>bi|bo|bu|bd|base\s*in|base\s*out|base\s*up|base\s*down|in|out|up|down)
      |(?:@|at|base)\s*(?P<angle>\d+(?:\.\d+)?)\s*°?)
    \s*(?:,|;|\band\b|&|\+)?""",
    re.VERBOSE,
)

_BASE_WORDS = {"bi": "in", "bo": "out", "bu": "up", "bd": "down"}


def _normalise(text: object, field: str) -> str:
    if not isinstance(text, str):
        raise CaseError(field, f"{field} must be text, e.g. +2.00 / -0.75 x 180.", text)
    if len(text) > MAX_TEXT:
        raise CaseError(field, f"{field} is too long (at most {MAX_TEXT} characters).", text)
    cleaned = text.strip().lower()
    for dash in "\u2212\u2013\u2014":
        cleaned = cleaned.replace(dash, "-")
    cleaned = cleaned.replace("\u00d7", "x")
    cleaned = re.sub(r"(\d),(\d)", r"\1.\2", cleaned)
    return cleaned


def parse_prescription(text: object, field: str = "rx") -> Prescription:
    """A written sphero-cylinder as a ``Prescription``; refusals name ``field``."""
    cleaned = _normalise(text, field)
    match = _RX.match(cleaned)
    if not match:
        raise CaseError(
            field,
            f"{field} is not a prescription the tool can read ({text!r}); write it as "
            "sphere / cylinder x axis, e.g. +2.00 / -0.75 x 180, -1.25 DS or plano / -0.50 x 90.",
            text,
        )
    sphere = _signed(match["sph"], field, "sphere")
    cylinder = _signed(match["cyl"], field, "cylinder") if match["cyl"] else 0.0
    axis = float(match["axis"]) if match["axis"] else 0.0
    try:
        return Prescription(sphere, cylinder, axis)
    except CaseError as exc:
        raise CaseError(field, f"{field}: {exc.message}", text) from None


def _signed(token: str, field: str, part: str) -> float:
    if token.startswith("pl"):
        return 0.0
    value = float(token)
    if value != 0 and token[0] not in "+-":
        raise CaseError(
            field,
            f"{field}: the {part} {token} has no sign; write + or - before every power.",
            token,
        )
    return value


def parse_prism(text: object, eye: Eye, field: str = "prism") -> Prism:
    """A written prism for ``eye`` (``1.5 BU 2 BI``, ``2.5 @ 37``); empty text is no prism."""
    cleaned = _normalise(text, field)
    if cleaned in ("", "none", "no prism", "nil", "0", "-"):
        return Prism()
    terms = []
    position = 0
    while position < len(cleaned):
        match = _PRISM_TERM.match(cleaned, position)
        if not match or match.end() == position:
            rest = cleaned[position:].strip()
            raise CaseError(
                field,
                f"{field}: cannot read {rest!r}; write each prism as an amount and a base, "
                "e.g. 1.5 BU, 2 BI, 3 BO, 1 BD, or 2.5 @ 37 in 360-degree notation.",
                text,
            )
        terms.append(_prism_term(match, eye, field))
        position = match.end()
    return combine(terms)


def _prism_term(match: re.Match[str], eye: Eye, field: str) -> Prism:
    amount = float(match["amount"])
    if amount < 0:
        raise CaseError(
            field, f"{field}: a prism amount cannot be negative; name the base instead.", amount
        )
    try:
        if match["angle"] is not None:
            return Prism.from_direction(amount, float(match["angle"]), eye)
        word = re.sub(r"\s+", "", match["word"]).removeprefix("base")
        base = _BASE_WORDS.get(word, word)
        prism = {
            "in": Prism(amount, 0),
            "out": Prism(-amount, 0),
            "up": Prism(0, amount),
            "down": Prism(0, -amount),
        }[base]
        return Prism.prescribed(prism.base_in, prism.base_up)
    except CaseError as exc:
        raise CaseError(field, f"{field}: {exc.message}", match.group(0)) from None
