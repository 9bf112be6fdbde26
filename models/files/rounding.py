"""Values with uncertainties written the way journals print them, rounded by one stated rule.

The rule is the Particle Data Group's (Review of Particle Physics,
Introduction, section "Rounding"; e.g. Particle Data Group 2018, Phys. Rev.
D 98, 030001, sec. 5.3): take the three highest-order digits of the
uncertainty; from 100 to 354 keep two significant digits, from 355 to 949
keep one, from 950 to 999 round up to 1000 and keep two. The value is given
to the same decimal place as its uncertainty. With an asymmetric
uncertainty the smaller of the two sides sets that decimal place (and both
sides are rounded to it), so that neither side loses precision; sides that
are equal once rounded are written as one ``+-`` uncertainty. Rounding is
half away from zero, on the decimal form of each number.

:func:`round_uncertain` does the rounding once; :class:`Rounded` writes the
result as plain text (``1.234 +0.012 -0.011``, both sides always), as LaTeX
(``$1.234^{+0.012}_{-0.011}$``) or as HTML. Very large or very small numbers
are written with a common power of ten.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from decimal import ROUND_FLOOR, ROUND_HALF_UP, Decimal

#: a common power of ten is factored out when the value reaches 10^5 or its last digit lies below 10^-5
LARGEST_PLAIN_EXPONENT = 4
SMALLEST_PLAIN_PLACE = -5


def _decimal(x: float) -> Decimal:
    """The shortest decimal form of a float (what ``repr`` shows), exactly."""
    return Decimal(repr(float(x)))


def _leading_exponent(x: Decimal) -> int:
    """The decimal exponent of the first significant digit of ``x`` (> 0): 0.0357 -> -2."""
    return x.adjusted()


def uncertainty_place(uncertainty: float) -> int:
    """The decimal exponent of the last digit an uncertainty keeps under the rule.

    0.119 -> -2 (two digits: 0.12), 0.367 -> -1 (one digit: 0.4),
    0.0965 -> -2 (rounded up to 0.10, two digits).
    """
    err = _decimal(uncertainty)
    if not err > 0:
        raise ValueError(f"an uncertainty must be positive and finite, not {uncertainty!r}")
    lead = _leading_exponent(err)
    # the three highest-order digits as an integer 100..999 (0.3549 -> 354)
    three = int(err.scaleb(2 - lead).to_integral_value(rounding=ROUND_FLOOR))
    if three <= 354:
        return lead - 1
    # 355..949 keep one digit; 950..999 keep that same place, where rounding carries them up to 1000
    # with two significant digits (0.96 -> 1.0)
    return lead


def _round_to(x: float, place: int) -> Decimal:
    rounded = _decimal(x).quantize(Decimal(1).scaleb(place), rounding=ROUND_HALF_UP)
    return abs(rounded) if rounded == 0 else rounded   # no "-0.00"


@dataclass(frozen=True)
class Rounded:
    """A value and its uncertainty rounded together.

    ``value``, ``plus`` and ``minus`` are decimals at the same decimal place
    ``place``; ``plus`` and ``minus`` are None when there is no uncertainty.
    """

    value: Decimal
    plus: Decimal | None
    minus: Decimal | None
    place: int

    @property
    def symmetric(self) -> bool:
        return self.plus is not None and self.plus == self.minus

    def _exponent(self) -> int:
        """The power of ten factored out (0 for plain notation)."""
        size = self.value if self.value != 0 else (self.plus or Decimal(0))
        lead = size.adjusted() if size != 0 else self.place
        if lead <= LARGEST_PLAIN_EXPONENT and self.place >= SMALLEST_PLAIN_PLACE:
            return 0
        return lead

    def _digits(self, x: Decimal, exponent: int) -> str:
        scaled = x.scaleb(-exponent)
        decimals = max(exponent - self.place, 0)
        return f"{scaled:.{decimals}f}"

    def parts(self) -> tuple[str, str | None, str | None, int]:
        """(value, plus, minus, power of ten) as digit strings."""
        exponent = self._exponent()
        text = [self._digits(x, exponent) if x is not None else None for x in (self.value, self.plus, self.minus)]
        return text[0], text[1], text[2], exponent

    def text(self) -> str:
        """Plain text, both sides always written: ``1.234 +0.012 -0.011``, ``(4.5 +0.3 -0.3)e+06``."""
        value, plus, minus, exponent = self.parts()
        body = value if plus is None else f"{value} +{plus} -{minus}"
        if exponent:
            return f"({body})e{exponent:+03d}" if plus is not None else f"{body}e{exponent:+03d}"
        return body

    def latex(self) -> str:
        """LaTeX math: ``$1.234^{+0.012}_{-0.011}$``, ``$1.23 \\pm 0.05$``, ``$(4.5 \\pm 0.3) \\times 10^{6}$``."""
        value, plus, minus, exponent = self.parts()
        if plus is None:
            body = value
        elif self.symmetric:
            body = f"{value} \\pm {plus}"
        else:
            body = f"{value}^{{+{plus}}}_{{-{minus}}}"
        if exponent:
            body = (f"({body})" if plus is not None else body) + f" \\times 10^{{{exponent}}}"
        return f"${body}$"

    def html(self) -> str:
        """HTML: ``1.234<sup>+0.012</sup><sub>-0.011</sub>`` (no user text: digits only)."""
        value, plus, minus, exponent = self.parts()
        if plus is None:
            body = value
        elif self.symmetric:
            body = f"{value} &plusmn; {plus}"
        else:
            body = (f'{value}<span style="display:inline-block;vertical-align:middle;font-size:80%;'
                    f'line-height:1.05"><sup style="display:block">+{plus}</sup>'
                    f'<sub style="display:block">&minus;{minus}</sub></span>')
        if exponent:
            body = (f"({body})" if plus is not None else body) + f" &times; 10<sup>{exponent}</sup>"
        return body


def round_uncertain(value: float, plus: float | None = None, minus: float | None = None) -> Rounded:
    """``value`` with its uncertainty ``+plus -minus`` (``minus`` defaults to ``plus``), rounded by the rule.

    Raises ValueError for a value that is not finite. A missing, zero or
    non-finite uncertainty gives the value alone, to four significant digits.
    """
    if value is None or not math.isfinite(value):
        raise ValueError(f"cannot round {value!r}")
    minus = plus if minus is None else minus
    usable = [e for e in (plus, minus) if e is not None and math.isfinite(e) and e > 0]
    if len(usable) < 2:
        place = (_decimal(value).adjusted() - 3) if value != 0 else -3
        return Rounded(_round_to(value, place), None, None, place)
    place = min(uncertainty_place(e) for e in usable)
    return Rounded(_round_to(value, place), _round_to(plus, place), _round_to(minus, place), place)


def from_interval(value: float, low: float | None, high: float | None) -> Rounded:
    """``value`` with the interval [low, high] around it (16th and 84th percentiles, say) as ``+plus -minus``."""
    if low is None or high is None or not (math.isfinite(low) and math.isfinite(high)):
        return round_uncertain(value)
    return round_uncertain(value, high - value, value - low)
