"""Quick paths of the printed digits give what the full decimal work gives: an interval's printed
decimal places (`core.rounding.interval_places`), decided without rounding its ends where the rule
cannot add places, and a number written in full (`core.number_words.full_number`) without the decimal
module where Python's repr has no exponent. Both are the project's own display rules, checked against
the full work on random and edge values (no outside source applies)."""

from __future__ import annotations

import math

import numpy as np

from curvewright.core.number_words import full_number
from curvewright.core.rounding import RoundingRule, interval_places


def _places_in_full(lower: float, upper: float, rule: RoundingRule) -> int:
    """The places of the half-width's second figure, or the last place the rule keeps of either end
    (worked out by rounding both ends), whichever is finer."""
    half = (upper - lower) / 2.0
    places = 1 - math.floor(math.log10(half)) if half > 0 else 0
    return max(places, rule.places(lower), rule.places(upper))


RULES = [RoundingRule(kind, digits, tie) for kind, digits in (
    ("significant", 1), ("significant", 2), ("significant", 3), ("significant", 4), ("significant", 6),
    ("significant", 15), ("decimals", 0), ("decimals", 1), ("decimals", 3), ("decimals", 15))
    for tie in ("half_up", "half_even")]


def _ends_near_powers_of_ten(rng: np.random.Generator) -> tuple[float, float]:
    """An interval with an end a few units in the last place from a power of ten, where the rule's
    rounding carries (9.996 → 10.0) and log10 may round up to the power itself."""
    power = 10.0 ** int(rng.integers(-8, 26))  # 10^k is a double up to k = 22
    end = float(np.nextafter(power, 0.0) if rng.random() < 0.5 else power)
    for _ in range(int(rng.integers(0, 4))):
        end = float(np.nextafter(end, 0.0 if rng.random() < 0.6 else math.inf))
    half = abs(end) * float(10.0 ** rng.uniform(-16, 0.3))
    return (end - 2 * half, end) if rng.random() < 0.5 else (end, end + 2 * half)


def test_an_intervals_places_are_those_of_its_ends_rounded_in_full() -> None:
    rng = np.random.default_rng(20261203)
    quick = 0
    for k in range(30_000):
        rule = RULES[int(rng.integers(len(RULES)))]
        if k % 3 == 0:
            lower, upper = _ends_near_powers_of_ten(rng)
        else:
            value = float(10.0 ** rng.uniform(-9, 25)) * (1 if rng.random() < 0.8 else -1)
            if rng.random() < 0.2:
                value = float(round(value))
            half = abs(value) * float(10.0 ** rng.uniform(-15, 0.5))
            lower, upper = value - half, value + half
            if rng.random() < 0.02:
                lower = 0.0 if rng.random() < 0.5 else -0.0
        assert interval_places(lower, upper, rule) == _places_in_full(lower, upper, rule), (rule, lower, upper)
        quick += _places_in_full(lower, upper, rule) == (1 - math.floor(math.log10((upper - lower) / 2.0))
                                                           if upper > lower else 0)
    assert quick > 5_000  # the cases the quick path serves are common among them


def test_the_quick_path_rounds_no_end_where_the_rule_cannot_add_places(monkeypatch) -> None:
    """Three significant figures on 123.4 ± 0.5 print two places (the half-width's second figure),
    on 862.7 ± 67.7 none: the ends need not be rounded; ± 50 prints none of its own, so the ends are rounded, and the rule
    prints 73.4 with one place."""
    rule = RoundingRule("significant", 3)
    rounded: list[float] = []
    original = RoundingRule.places
    monkeypatch.setattr(RoundingRule, "places", lambda self, v: rounded.append(v) or original(self, v))
    assert interval_places(122.9, 123.9, rule) == 2
    assert interval_places(794.99, 930.46, rule) == 0  # 795 and 930, whole numbers under the rule too
    assert rounded == []
    assert interval_places(73.4, 173.4, rule) == 1
    assert rounded == [73.4, 173.4]


def test_a_number_written_in_full_is_what_the_decimal_module_writes() -> None:
    from decimal import Decimal

    def in_full(value: float) -> str:
        text = repr(float(value))
        if value == 0 or 1e-6 <= abs(value) < 1e15:
            text = format(Decimal(text), "f")
            if "." in text:
                text = text.rstrip("0").rstrip(".")
            text = "0" if text in ("-0", "") else text
        return text

    rng = np.random.default_rng(20261203)
    values = [0.0, -0.0, 1.0, -1.0, 1e-4, 9.999999999999999e-05, 1e-6, 1e15, 999999999999999.9, 1e16, 123.0,
              0.1, 2.5, 1e-7, float(np.nextafter(1e-4, 0.0)), float(np.nextafter(1e-6, 1.0))]
    values += [float(v) for v in rng.choice((-1, 1), 20_000) * 10.0 ** rng.uniform(-9, 18, 20_000)]
    values += [float(round(v)) for v in 10.0 ** rng.uniform(0, 16, 5_000)]
    for value in values:
        assert full_number(value) == in_full(value), value
        assert full_number(value, ",") == in_full(value).replace(".", ","), value


def test_a_number_without_an_exponent_is_written_without_the_decimal_module(monkeypatch) -> None:
    """A dilution factor of 1.0 or a response of 1523.7 (each results row writes its dilution in full
    after every edit) is written from its repr; 2.5e-05 still goes through the decimal module."""
    import decimal

    made: list[str] = []
    original = decimal.Decimal
    monkeypatch.setattr(decimal, "Decimal", lambda text: made.append(text) or original(text))
    assert [full_number(v) for v in (1.0, 1523.7, -0.0, 100.0)] == ["1", "1523.7", "0", "100"]
    assert made == []
    assert full_number(2.5e-05) == "0.000025"
    assert made == ["2.5e-05"]
