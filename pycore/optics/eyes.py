"""The two eyes and how each one's nasal side maps to the examiner's frame."""

from __future__ import annotations

from typing import Literal

Eye = Literal["right", "left"]
EYES: tuple[Eye, Eye] = ("right", "left")


def nasal_sign(eye: Eye) -> float:
    """+1 where the eye's nasal side is the examiner's right (x), else -1.

    Seen by the examiner, the wearer's right eye has its nose to the
    examiner's right; the left eye has it to the examiner's left.
    """
    return 1.0 if eye == "right" else -1.0


def other(eye: Eye) -> Eye:
    return "left" if eye == "right" else "right"
