"""Uncertainties attached to measured inputs.

A measured input is stored as a plain nominal number on its param object
(so widgets and watchers see an ordinary float) and, beside it, an optional
:class:`Uncertainty` that says how far the truth may lie from it.
"""

from __future__ import annotations

import math
from dataclasses import dataclass


@dataclass(frozen=True)
class Uncertainty:
    """One-sigma spread of a measured value, possibly asymmetric.

    Parameters
    ----------
    plus, minus : float
        Upper and lower one-sigma distances from the nominal value, both
        >= 0, in the same unit as the value.
    symmetric : bool
        True when the source gave a single ``sigma``; kept so that a file
        is written back as it was read.
    """

    plus: float
    minus: float
    symmetric: bool = False

    def __post_init__(self):
        for label, number in (("plus", self.plus), ("minus", self.minus)):
            if not math.isfinite(number):
                raise ValueError(f"{label} must be a finite number, not {number!r}")
            if number < 0:
                raise ValueError(f"{label} must be >= 0, not {number!r}")
        if self.symmetric and self.plus != self.minus:
            raise ValueError("a symmetric uncertainty needs plus == minus")

    @classmethod
    def from_sigma(cls, sigma: float) -> "Uncertainty":
        """A symmetric (Gaussian) one-sigma uncertainty."""
        return cls(float(sigma), float(sigma), True)

    @property
    def sigma(self) -> float:
        """Mean of the two sides: the symmetric equivalent."""
        return 0.5 * (self.plus + self.minus)

    def scaled(self, factor: float) -> "Uncertainty":
        """The same uncertainty expressed in a unit ``factor`` times smaller."""
        return Uncertainty(self.plus * factor, self.minus * factor, self.symmetric)

    def to_file_fields(self) -> dict:
        """The keys this uncertainty takes in a system file's quantity table."""
        if self.symmetric:
            return {"sigma": self.plus}
        return {"plus": self.plus, "minus": self.minus}
