"""The one notation for numbers written for a person (core/notation.py)."""

import pytest

from curvewright.core import notation
from curvewright.core.notation import excel_format, is_plain, machine
from curvewright.core.rounding import RoundingRule


def _spaced(function):  # type: ignore[no-untyped-def]
    """The function's text with its no-break spaces as plain ones, as the expectations here are typed."""
    return lambda *args, **kwargs: function(*args, **kwargs).replace("\u00a0", " ")


computed, computed_within, entered, entered_span, figures, span, written = (
    _spaced(getattr(notation, name))
    for name in ("computed", "computed_within", "entered", "entered_span", "figures", "span", "written"))

THREE = RoundingRule("significant", 3, "half_up")


@pytest.mark.parametrize("value, text", [
    (9.95e-6, "9.95 × 10⁻⁶"),
    (1.5e-5, "1.50 × 10⁻⁵"),      # the rule's third figure is a digit, kept in the mantissa
    (0.00025, "0.000250"),        # 1e-4 and above: plain
    (150000.0, "150000"),
    (3e6, "3000000"),
    (9999999.7, "1.00 × 10⁷"),    # judged on the rounded value
    (12000000.0, "1.20 × 10⁷"),   # a whole number's zeros that are the rule's figures are kept
    (-4.2e-9, "−4.20 × 10⁻⁹"),  # a person's minus sign, U+2212
    (0.0, "0.00"),
])
def test_computed_values_use_the_rule_digits_and_one_notation(value, text):
    assert computed(value, THREE) == text


@pytest.mark.parametrize("value, text", [
    (1e-6, "1 × 10⁻⁶"), (3.2e-5, "3.2 × 10⁻⁵"), (0.0001, "0.0001"), (2.5e-9, "2.5 × 10⁻⁹"),
    (150000.0, "150000"), (3e6, "3000000"), (1e6, "1000000"), (2e7, "2 × 10⁷"), (12.5, "12.5"),
])
def test_entered_values_keep_every_digit(value, text):
    assert entered(value) == text
    assert "e" not in entered(value)


def test_both_ends_of_a_range_share_one_notation():
    assert entered_span(1e-6, 3.2e-5) == "1 × 10⁻⁶–3.2 × 10⁻⁵"
    assert entered_span(0.0005, 2e7) == "5 × 10⁻⁴–2 × 10⁷"
    assert entered_span(150000.0, 3e6) == "150000–3000000"   # NIST StRD Pontius: loads 150000 to 3000000
    assert span(THREE.text(0.0005), THREE.text(2e7), " to ", significant=3) == "5.00 × 10⁻⁴ to 2.00 × 10⁷"


def test_machine_form_reads_back_as_the_same_number():
    for value in (9.95e-6, 1.2e8, -4.2e-9):
        text = written(THREE.text(value), significant=3, machine=True)
        assert float(text) == pytest.approx(value, rel=5e-3)
        assert "×" not in text and "+" not in text


def test_decimal_comma_is_kept():
    assert written("0,0000320", significant=3) == "3,20 × 10⁻⁵"
    assert written("12,5") == "12,5"


def test_statistics_without_a_rule_drop_python_exponents():
    assert figures(2.5641e-7, 4) == "2.564 × 10⁻⁷"
    assert figures(3e6, 6) == "3000000"
    assert figures(0.012345, 3) == "0.0123"
    assert figures(float("nan"), 3) == "—" and figures(float("inf"), 3) == "∞"


def test_interval_places_are_not_counted_as_figures():
    # 1705105.57 in 1704513 – 1705698 (half-width 592.5: its second figure in the tens, GUM JCGM 100:2008
    # §7.2.6) is shown to the tens: plain digits, its zero a padding the interval's print makes plain
    assert computed_within(1705105.57, 1704513.0, 1705698.0, THREE) == "1705110"
    # the same numbers a million times smaller: the interval's places, written with an exponent
    assert computed_within(1.705105e-6, 1.704513e-6, 1.705698e-6, THREE) == "1.70511 × 10⁻⁶"


def test_workbook_format_shows_the_same_digits():
    assert excel_format(THREE.text(3.2e-5), 3) == "0.00E+00"
    assert excel_format(THREE.text(0.00025), 3) == "0.000000"
    assert excel_format(THREE.text(1234.5), 3) == "0"
    assert excel_format(THREE.text(12000000.0), 3) == "0.00E+00"


def test_quick_plain_test_agrees_with_the_decimal_one():
    for text in ("0", "0.00", "-0.0001", "0.0001", "0.00009999", "9999999", "9999999.99", "10000000", "1",
                 "0.000", "123.456", "-12", "0,00012", "0.00001"):
        d = float(text.replace(",", "."))
        assert is_plain(text) == (d == 0 or 1e-4 <= abs(d) < 1e7), text


def test_machine_text_of_written_words():
    words = f"< {computed(3.2e-5, THREE)} mg/L (LLOQ × dilution 10)"
    assert machine(words) == "< 3.20e-5 mg/L (LLOQ × dilution 10)"
    assert float(machine(computed(-1.2e8, THREE))) == -1.2e8


def test_exponent_texts_keep_their_digits():
    assert written("1.20e7") == "1.20 × 10⁷"
    assert excel_format("1.20e7") == "0.00E+00"
    assert excel_format("9.95e-6") == "0.00E+00"


def test_a_number_is_never_broken_across_lines():
    assert notation.computed(3.2e-5, THREE) == "3.20\u00a0×\u00a010⁻⁵"


def test_a_p_value_is_never_shown_as_certain() -> None:
    from curvewright.core.notation import p_equals

    assert p_equals(0.99966, 3) == "p > 0.999"  # would read "1" at three figures
    assert p_equals(0.996, 2) == "p > 0.99"
    assert p_equals(1.0, 3) == "p = 1"  # exactly 1: a statistic of zero
    assert p_equals(0.994, 3) == "p = 0.994"
    assert p_equals(2.6e-7, 2) == "p = 2.6\u00a0×\u00a010⁻⁷"
