"""The quick test of a reported value against its interval (`core.rounding._plainly_within`) only ever
skips the full decimal test where the full test keeps the rule's text: both ways give the same text on
random values, intervals and rules, whole numbers and decimals alike (the project's own display rule, so
no outside source applies)."""

from __future__ import annotations

import math
from decimal import Decimal

import numpy as np

from curvewright.core.rounding import RoundingRule, interval_places


def _full(rule: RoundingRule, value: float, lower: float, upper: float) -> str:
    text = rule.text(value)
    places = rule.places_within(value, lower, upper, text)
    return text if places is None else rule.at_places(value, places)


RULES = [RoundingRule(kind, digits, tie) for kind, digits in (("significant", 2), ("significant", 3),
                                                             ("significant", 4), ("decimals", 0),
                                                             ("decimals", 1), ("decimals", 2))
         for tie in ("half_up", "half_even")]


def test_the_quick_test_gives_the_full_tests_text() -> None:
    rng = np.random.default_rng(20261203)
    checked = quick = 0
    for _ in range(30_000):
        rule = RULES[int(rng.integers(len(RULES)))]
        value = float(10.0 ** rng.uniform(-3, 7)) * (1 if rng.random() < 0.95 else -1)
        if rng.random() < 0.3:
            value = float(round(value))  # whole numbers, where the rule's text may end in zeros
        half = abs(value) * float(10.0 ** rng.uniform(-6, 0.5))
        offset = half * float(rng.uniform(-1.2, 1.2))  # now and then the value lies outside its interval
        lower, upper = value - half + offset, value + half + offset
        shown = rule.text_within(value, lower, upper)
        assert shown == _full(rule, value, lower, upper), (rule, value, lower, upper)
        assert rule.texts_within([value], [lower], [upper]) == [shown]
        checked += 1
        quick += rule.places_within(value, lower, upper) is None
    assert checked == 30_000 and quick > 3_000  # the rule's text stands in many of them


def test_a_whole_number_ending_in_zeros_is_not_taken_by_the_quick_test() -> None:
    # 14524 ± 125 under three significant figures: "14500" would read as exact; the interval's print
    # keeps the tens (the second significant figure of 125, GUM JCGM 100:2008 §7.2.6), so the value is
    # shown to the tens as 14520
    rule = RoundingRule("significant", 3)
    assert rule.text_within(14524.0, 14399.0, 14649.0) == "14520"
    assert rule.text_within(14524.0, 4000.0, 25000.0) == "14500"  # a wide interval: the rule stands


def test_the_ends_of_a_wide_interval_of_large_numbers_are_printed_to_the_place_of_its_half_width() -> None:
    # GUM JCGM 100:2008 §7.2.6: the half-width to two significant figures, the ends to its last place.
    # 684788 – 705635 has a half-width of 10424: the thousands; three significant figures of the ends keep
    # the thousands too, so neither asks for the units a count of the decimals of "685000" (none) gave
    rule = RoundingRule("significant", 3)
    assert interval_places(684787.56, 705635.11, rule) == -3
    assert interval_places(194606676.1, 209710483.2, rule) == -5  # half-width 7.6e6: hundred thousands
    assert interval_places(1704513.37, 1705697.76, rule) == -1  # half-width 592: tens
    # the rule keeps finer places than the half-width's: they stand (README: never coarser than the rule)
    assert interval_places(684787.56, 705635.11, RoundingRule("significant", 6)) == 0
    assert interval_places(684787.56, 705635.11, RoundingRule("decimals", 1)) == 1
    assert interval_places(6.82e-6, 6.958e-6, rule) == 9  # half-width 6.9e-8: the ninth decimal
    # places of the last figure a rule keeps, whole numbers included ("1000" for 999.6 keeps the tens)
    assert [rule.places(v) for v in (684788.0, 999.6, 100.0, 1.2345, 9.996, 0.0)] == [-3, -1, 0, 2, 1, 2]


def test_a_value_is_never_shown_outside_its_printed_interval() -> None:
    # the program's own display rule (README, "How reported values are rounded"); no outside source applies
    rng = np.random.default_rng(20261204)
    for _ in range(5_000):
        rule = RULES[int(rng.integers(len(RULES)))]
        value = float(10.0 ** rng.uniform(-7, 9))
        if rng.random() < 0.3 and value >= 1:
            value = float(round(value))  # whole numbers, where the rule's text may end in zeros
        half = value * float(10.0 ** rng.uniform(-6, -0.5))
        offset = half * float(rng.uniform(-0.95, 0.95))
        lower, upper = value - half + offset, value + half + offset
        places = interval_places(lower, upper, rule)
        assert places >= 1 - math.floor(math.log10((upper - lower) / 2.0))  # never coarser than GUM §7.2.6
        shown_lower, shown_upper = (Decimal(rule.at_places(v, places)) for v in (lower, upper))
        assert shown_lower <= Decimal(rule.text_within(value, lower, upper)) <= shown_upper, (rule, value, lower, upper)
