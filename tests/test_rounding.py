"""Rounding of values with uncertainties by the Particle Data Group's rule, and how it is written."""

from __future__ import annotations

from decimal import Decimal

import pytest
from hypothesis import given
from hypothesis import strategies as st

from orbitdeck.models.files.rounding import from_interval, round_uncertain, uncertainty_place


# The rule and its own worked examples: Particle Data Group, Review of Particle Physics,
# Introduction sec. 5.3 "Rounding" (e.g. Phys. Rev. D 98, 030001 (2018)); the two examples
# "0.827 +- 0.119 -> 0.83 +- 0.12" and "0.827 +- 0.367 -> 0.8 +- 0.4" are quoted there (from memory).
@pytest.mark.parametrize("value, error, expected", [
    (0.827, 0.119, ("0.83", "0.12")),        # three leading digits 119: two significant digits
    (0.827, 0.367, ("0.8", "0.4")),          # 367: one significant digit
    # the STAR collaboration's HepData guidance quotes the rule with 0.279008 +- 0.0123261 -> 0.279 +- 0.012
    (0.279008, 0.0123261, ("0.279", "0.012")),
    # a Ruby implementation's documented examples of the same rule: 12.2135 +- 0.03215 -> 12.214 +- 0.032,
    # 12.2135 +- 0.06515 -> 12.21 +- 0.07
    (12.2135, 0.03215, ("12.214", "0.032")),
    (12.2135, 0.06515, ("12.21", "0.07")),
])
def test_published_examples(value, error, expected):
    rounded = round_uncertain(value, error)
    assert (str(rounded.value), str(rounded.plus)) == expected
    assert rounded.symmetric


@pytest.mark.parametrize("error, kept", [
    (0.100, "0.10"), (0.354, "0.35"), (0.3549, "0.35"),   # 100..354: two digits (354 from 0.3549, not 355)
    (0.355, "0.4"), (0.949, "0.9"),                        # 355..949: one digit
    (0.950, "1.0"), (0.999, "1.0"), (0.0965, "0.10"),      # 950..999: up to 1000, two digits
    (3540.0, "3500"), (3550.0, "4000"), (9600.0, "10000"),
])
def test_the_three_ranges_of_the_rule(error, kept):
    # boundaries as the rule states them (PDG, Review of Particle Physics, Introduction 5.3)
    rounded = round_uncertain(1.0, error)
    assert format(rounded.plus, "f") == kept


def test_asymmetric_sides_are_rounded_to_the_place_the_smaller_side_sets():
    # common practice (the narrower side sets the decimal place: HepData guidance quoting PDG)
    rounded = round_uncertain(2.5, 0.12, 0.35)
    assert (str(rounded.value), str(rounded.plus), str(rounded.minus)) == ("2.50", "0.12", "0.35")
    assert rounded.latex() == "$2.50^{+0.12}_{-0.35}$"
    assert rounded.text() == "2.50 +0.12 -0.35"
    assert round_uncertain(2.5, 0.12, 0.12).latex() == "$2.50 \\pm 0.12$"


def test_powers_of_ten_are_factored_out_for_very_large_and_small_numbers():
    assert round_uncertain(1.23e-4, 1.2e-5).latex() == "$(1.23 \\pm 0.12) \\times 10^{-4}$"
    assert round_uncertain(1.2345e7, 1.2e5).text() == "(1.235 +0.012 -0.012)e+07"
    assert round_uncertain(12345.6, 1234.0).text() == "12300 +1200 -1200"


def test_no_negative_zero_and_no_uncertainty():
    assert round_uncertain(-0.0004, 0.012).text() == "0.000 +0.012 -0.012"
    bare = round_uncertain(123.456)
    assert bare.plus is None and bare.text() == "123.5" and bare.latex() == "$123.5$"
    assert from_interval(5.0, 5.0, 5.0).plus is None          # a zero-width interval: no uncertainty to show
    assert from_interval(5.0, None, 6.0).plus is None


def test_interval_becomes_plus_and_minus():
    rounded = from_interval(10.0, 9.7, 10.45)
    assert (str(rounded.plus), str(rounded.minus)) == ("0.45", "0.30")


def test_bad_values_are_refused():
    with pytest.raises(ValueError):
        round_uncertain(float("nan"), 0.1)
    with pytest.raises(ValueError):
        uncertainty_place(0.0)


@given(st.floats(min_value=-1e6, max_value=1e6, allow_nan=False),
       st.floats(min_value=1e-6, max_value=1e5, allow_nan=False))
def test_rounded_error_keeps_one_or_two_significant_digits_at_the_values_place(value, error):
    rounded = round_uncertain(value, error)
    kept = int(rounded.plus.scaleb(-rounded.place))
    assert 1 <= len(str(kept)) <= 2
    assert rounded.value.as_tuple().exponent == rounded.place == rounded.plus.as_tuple().exponent
    # rounding moves each number by at most half a unit of the last kept digit
    half = Decimal(1).scaleb(rounded.place) / 2
    assert abs(rounded.value - Decimal(repr(value))) <= half
    assert abs(rounded.plus - Decimal(repr(error))) <= half
