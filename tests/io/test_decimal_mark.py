"""The decimal mark and the delimiter decided from the table as a whole, as an analyst would read it."""

from __future__ import annotations

import pytest

from curvewright.io.importing import import_samples, import_standards
from curvewright.io.number_text import decimal_evidence, parse_reading
from curvewright.io.tables import detect_delimiter, table_from_text


def values(result) -> list[tuple[float, float]]:
    return [(s.concentration, s.response.value) for _, s in result.standards]


def test_three_decimals_in_a_comma_file_with_other_evidence() -> None:
    # "1.0" and "2.5" show the decimal point, so "101.082" is a hundred and one point zero eight two
    text = "Concentration,Response\n1.0,101.082\n2.5,250.512\n5.0,498.730\n"
    result = import_standards(table_from_text(text))
    assert result.complete, result.summary()
    assert result.decimal_mark == "."
    assert values(result) == [(1.0, 101.082), (2.5, 250.512), (5.0, 498.73)]


def test_three_decimals_in_a_comma_file_without_other_evidence() -> None:
    # an unquoted cell cannot hold the comma that separates the columns: '.' is the only decimal mark left
    text = "Concentration,Response\r\n1,101.082\r\n2,199.517\r\n5,498.730\r\n"
    result = import_standards(table_from_text(text))
    assert result.complete, result.summary()
    assert result.decimal_mark == "."
    assert "comma" in result.decimal_note
    assert values(result) == [(1.0, 101.082), (2.0, 199.517), (5.0, 498.73)]


def test_quoted_decimal_commas_in_a_comma_file() -> None:
    text = 'Concentration,Response\n"0,5","50,25"\n"1","101,082"\n'
    result = import_standards(table_from_text(text))
    assert result.complete, result.summary()
    assert result.decimal_mark == ","
    assert values(result) == [(0.5, 50.25), (1.0, 101.082)]


@pytest.mark.parametrize(
    "text, mark, expected",
    [
        # a value with other than three digits after the mark decides it for the whole table
        ("Conc;Area\n0,5;101,082\n1;202,164\n", ",", [(0.5, 101.082), (1.0, 202.164)]),
        ("Conc\tArea\n0.5\t101.082\n1\t202.164\n", ".", [(0.5, 101.082), (1.0, 202.164)]),
        # four digits before the mark cannot be a group of thousands
        ("Conc;Area\n1;1010,820\n2;2021,640\n", ",", [(1.0, 1010.82), (2.0, 2021.64)]),
        # a leading zero cannot start a group of thousands
        ("Conc;Area\n1;0,101\n2;2,500\n", ",", [(1.0, 0.101), (2.0, 2.5)]),
    ],
)
def test_one_decisive_value_settles_the_table(text, mark, expected) -> None:
    result = import_standards(table_from_text(text))
    assert result.complete, result.summary()
    assert result.decimal_mark == mark and values(result) == expected


def test_two_marks_in_one_value_decide_the_mark_but_the_separator_is_still_refused() -> None:
    result = import_standards(table_from_text("Conc;Area\n1;1.234,5\n2;2,500\n"))
    assert result.decimal_mark == ","
    assert [s.response.value for _, s in result.standards] == [2.5]
    assert "has thousands separators" in result.summary()
    assert [c.remedy.option for c in result.rejected] == ["thousands"]
    assert result.rejected[0].remedy.value == "."


def test_only_values_that_read_two_ways_are_still_refused() -> None:
    result = import_standards(table_from_text("Conc;Area\n1;1,000\n2;2,500\n"))
    assert result.decimal_mark is None
    assert len(result.rejected) == 2 and not result.standards
    assert all(c.remedy is not None and c.remedy.option == "decimal_mark" for c in result.rejected)
    assert "is ambiguous" in result.summary()
    # the analyst's answer settles it
    answered = import_standards(table_from_text("Conc;Area\n1;1,000\n2;2,500\n"), decimal_mark=",")
    assert values(answered) == [(1.0, 1.0), (2.0, 2.5)]


def test_both_marks_in_one_table_are_refused_and_grouped() -> None:
    result = import_standards(table_from_text("Conc\tArea\n1\t1,5\n2\t2.5\n"))
    assert result.decimal_mark is None and not result.standards
    summary = result.summary()
    # said once for the table, then the cells it concerns
    assert summary.count('under "Decimal mark"') == 1, summary
    assert "both decimal marks appear (1 value with '.', 1 with ',')" in summary
    assert "row 2, column 2 (Area): '1,5'" in summary and "row 3, column 2 (Area): '2.5'" in summary


def test_a_named_thousands_separator_implies_the_decimal_mark() -> None:
    result = import_standards(table_from_text("Conc\tArea\n1\t1,000\n2\t12,500\n"), thousands=",")
    assert result.decimal_mark == "."
    assert [s.response.value for _, s in result.standards] == [1000.0, 12500.0]


def test_text_columns_are_not_evidence() -> None:
    # a sample id "2.25" says nothing about how the responses are written
    result = import_samples(table_from_text("Sample;Response\n2.25;1,000\n"))
    assert result.decimal_mark is None and result.rejected


def test_evidence_counts() -> None:
    evidence = decimal_evidence(["1.5", "2.500", "<0.25", "ND", "1,234.5"])
    assert (evidence.mark, evidence.point, evidence.comma, evidence.undecided) == (".", 3, 0, 1)
    assert decimal_evidence(["101.082"], delimiter=",").mark == "."
    assert decimal_evidence(["101.082"], delimiter=";").mark is None
    assert decimal_evidence(["101.082", "1,000"], delimiter=",").mark is None


@pytest.mark.parametrize(
    "text, delimiter",
    [
        ('Sample,Response\n"\t=1",101.082\nU2,99.5\n', ","),  # a tab inside a quoted id
        ('Sample,Response\n"Well 3, rinse",101.082\nU2,99.5\n', ","),  # the delimiter inside a quoted id
        ('Sample;Response\n"a;b";1,5\nU2;2\n', ";"),
        ("Sample\tResponse\nU1\t1,5\n", "\t"),
        ('Sample,Response\n"two\nlines",1.5\nU2,2\n', ","),  # a line break inside a quoted field
    ],
)
def test_delimiter_detection_respects_quotes(text, delimiter) -> None:
    assert detect_delimiter(text) == delimiter


def test_a_quoted_tab_in_a_sample_id_keeps_the_comma_table() -> None:
    text = 'Sample,Response\r\n"\t=1",101.082\r\n"Well 3, rinse",99.517\r\n"Vial\t7",100.250\r\n'
    result = import_samples(table_from_text(text))
    assert result.complete, result.summary()
    assert result.delimiter == "comma"
    # spaces and tabs around an id are trimmed as everywhere; inside it they stay
    assert [(s.id, s.measurements[0].response.value) for s in result.samples] == [
        ("=1", 101.082), ("Well 3, rinse", 99.517), ("Vial\t7", 100.25)]


def test_numbers_stored_as_text_in_a_workbook_follow_the_same_rule(tmp_path) -> None:
    import openpyxl

    from curvewright.io.tables import table_from_xlsx

    path = tmp_path / "standards.xlsx"
    book = openpyxl.Workbook()
    sheet = book.active
    for row in (["Concentration", "Response"], [0.5, "50,25"], [1, "101,082"], [2, 202.164]):
        sheet.append(row)
    book.save(path)
    result = import_standards(table_from_xlsx(path))
    assert result.complete, result.summary()
    assert result.decimal_mark == "," and "numbers stored as text: decimal comma" in result.decimal_note
    assert values(result) == [(0.5, 50.25), (1.0, 101.082), (2.0, 202.164)]


@pytest.mark.parametrize("text", ["１,０００", "١,٠٠٠", "۱,۰۰۰", "१,०००"])
def test_a_thousand_in_any_script_is_as_ambiguous_as_in_ascii_digits(text: str) -> None:
    # full-width, Arabic-Indic, Eastern Arabic-Indic and Devanagari digits are read as their ASCII digits first
    problem = parse_reading(text, None).problem
    assert problem is not None and "is ambiguous" in problem and repr(text) in problem
    assert parse_reading(text, ".", thousands=",").reading.value == 1000.0
    assert parse_reading(text, ",").reading.value == 1.0
    assert parse_reading(text, ",").reading.text == text  # kept as typed


def test_a_number_written_in_full_reads_back_as_the_same_value() -> None:
    """Every float written by full_number/number_for_editing reads back bit for bit (Python's float
    repr is the shortest text that round-trips, IEEE 754 binary64), in either decimal mark and when
    the mark is not known, and ordinary values carry no exponent."""
    import random

    from curvewright.io.number_text import full_number, number_for_editing, parse_number

    assert full_number(1234567.0) == "1234567"
    assert full_number(4.123456789) == "4.123456789"
    assert full_number(0.00001) == "0.00001"
    assert full_number(2.5e-9) == "2.5e-09"
    assert full_number(2.5, ",") == "2,5"
    assert number_for_editing(1.125) == "1.1250"  # "1.125" alone would read as 1125 or 1.125
    draw = random.Random(20261203)
    for _ in range(20000):
        value = draw.choice((1, -1)) * 10 ** draw.uniform(-12, 18)
        for mark in (None, ".", ","):
            assert parse_number(number_for_editing(value, mark), mark) == (value, None)
