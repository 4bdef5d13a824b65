"""How numbers are printed for reading: interval ends to the digits their width supports."""

from __future__ import annotations

import math

import pytest

from curvewright.core.rounding import RoundingRule
from curvewright.io.result_tables import interval_text

THREE = RoundingRule("significant", 3)


@pytest.mark.parametrize(
    "lower, upper, rule, text",
    [
        # half-width 0.38 → to the second significant figure of the half-width, 0.01 (GUM §7.2.6)
        (130.62, 131.38, THREE, "130.62 – 131.38"),
        # never coarser than the reported value's rounding: 0.00494 → 5 decimals
        (-0.0056634, 0.015504, THREE, "−0.00566 – 0.01550"),
        # a wide interval: half-width 120, to the tens (GUM §7.2.6); three significant figures of the ends
        # keep the tens too, so no units are added to them
        (1380.2, 1620.7, THREE, "1380 – 1620"),
        # large whole numbers: half-width 10424, to the thousands; three significant figures keep the thousands
        (684787.56, 705635.11, THREE, "685000 – 706000"),
        (55.61, 65.44, RoundingRule("decimals", 2), "55.61 – 65.44"),
        (123456.0, 234567.0, None, "123000 – 235000"),
    ],
)
def test_interval_ends_carry_the_digits_their_width_supports(lower, upper, rule, text) -> None:
    assert interval_text(lower, upper, rule) == text


def test_unbounded_and_missing_ends_are_said_so() -> None:
    assert interval_text(0.5, math.inf, THREE) == "0.5 – ∞"
    assert interval_text(None, 1.0, THREE) == "—"


def test_an_interval_never_collapses_to_one_number_at_the_reported_rounding() -> None:
    # reported as "131" at three significant figures, the ends still differ on the page
    low, high = interval_text(130.79, 131.34, THREE).split(" – ")
    assert low != high and float(low) <= 130.79 + 0.005 and float(high) >= 131.34 - 0.005


def test_decimals_as_entered() -> None:
    from curvewright.io.result_tables import entered_decimals

    assert entered_decimals("47.38") == 2 and entered_decimals("2173,732") == 3 and entered_decimals(" 90 ") == 0
    assert entered_decimals("47.380") == 3 and entered_decimals("-0.0042") == 4 and entered_decimals("１２.５") == 1
    # the text does not say: an exponent, thousands separators, not a number, more digits than a double holds
    for text in ("4.738E1", "1,234.5", "n.d.", "", None, "0.12345678901234567"):
        assert entered_decimals(text) is None, text
