"""What the two eyes meet together: net horizontal and vertical prism.

- ``horizontal_base_in`` = base_in(right) + base_in(left); negative = net base out.
- ``vertical_base_up_right`` = base_up(right) - base_up(left); positive = net base
  up before the right eye, the same as base down before the left.
"""

from __future__ import annotations

from dataclasses import dataclass

from pycore.optics.prism import Prism

_EPS = 0.005


@dataclass(frozen=True)
class NetPrism:
    """Binocular prism (prism dioptres), signs as in the module docstring."""

    horizontal_base_in: float
    vertical_base_up_right: float

    @classmethod
    def between(cls, right: Prism, left: Prism) -> NetPrism:
        return cls(right.base_in + left.base_in, right.base_up - left.base_up)

    def horizontal_in_words(self) -> str:
        h = self.horizontal_base_in
        if abs(h) < _EPS:
            return "no net horizontal prism"
        base = "in" if h > 0 else "out"
        return f"{abs(h):.2f} prism dioptres net base {base} (both eyes together)"

    def vertical_in_words(self) -> str:
        v = self.vertical_base_up_right
        if abs(v) < _EPS:
            return "no vertical imbalance"
        if v > 0:
            return (f"{v:.2f} prism dioptres, base up before the right eye "
                    "(= base down before the left)")
        return (f"{-v:.2f} prism dioptres, base up before the left eye "
                "(= base down before the right)")

    def as_dict(self) -> dict[str, float | str]:
        return {
            "horizontal_base_in": self.horizontal_base_in,
            "vertical_base_up_right": self.vertical_base_up_right,
            "horizontal_in_words": self.horizontal_in_words(),
            "vertical_in_words": self.vertical_in_words(),
        }
