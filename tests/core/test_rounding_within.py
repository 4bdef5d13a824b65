"""The quick test of a reported value against its interval (`core.rounding._plainly_within`) only ever
skips the full decimal test where the full test keeps the rule's text: both ways give the same text on
random values, intervals and rules, whole numbers and decimals alike (the project's own display rule, so
no outside source applies)."""

from __future__ import annotations

import numpy as np

from curvewright.core.rounding import RoundingRule


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
    # keeps the tens, so the value is shown as 14524
    rule = RoundingRule("significant", 3)
    assert rule.text_within(14524.0, 14399.0, 14649.0) == "14524"
    assert rule.text_within(14524.0, 4000.0, 25000.0) == "14500"  # a wide interval: the rule stands
