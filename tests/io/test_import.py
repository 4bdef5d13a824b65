"""Import: delimiters, decimal marks, censored values, header mapping, and property tests."""

from __future__ import annotations

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from curvewright.core.errors import CurvewrightError
from curvewright.io.importing import analytes_from_import, import_samples, import_standards
from curvewright.io.number_text import parse_reading
from curvewright.io.tables import table_from_csv, table_from_text


@pytest.mark.parametrize(
    "text, delimiter, decimal",
    [
        ("Conc\tArea\n1,5\t10,25\n2\t20\n", "tab", ","),
        ("Conc;Area\n1,5;10,25\n2;20\n", "semicolon", ","),
        ("Conc,Area\n1.5,10.25\n2,20\n", "comma", "."),
        ("Conc;Area\n1.5;10.25\n2;20\n", "semicolon", "."),
    ],
)
def test_delimiter_and_decimal_mark_are_detected(text, delimiter, decimal) -> None:
    result = import_standards(table_from_text(text))
    assert result.delimiter == delimiter and result.decimal_mark == decimal
    assert [(s.concentration, s.response.value) for _, s in result.standards] == [(1.5, 10.25), (2.0, 20.0)]


def test_non_breaking_spaces_are_stripped_and_text_kept() -> None:
    result = import_standards(table_from_text("Conc\tArea\n\u00a01.5\u00a0\t 10.25\u202f\n2\t20\n"))
    standard = result.standards[0][1]
    assert standard.concentration == 1.5 and standard.response.value == 10.25
    assert standard.response.text == " 10.25\u202f"


@pytest.mark.parametrize("token, qualifier, limit", [("<0.5", "<", 0.5), ("ND", "ND", None), ("BLQ", "BLQ", None),
                                                      ("> 200", ">", 200.0), ("n.d.", "ND", None), ("<LOQ", "<LOQ", None)])
def test_censored_tokens_stay_censored(token, qualifier, limit) -> None:
    reading = parse_reading(token, ".").reading
    assert reading is not None and reading.value is None
    assert (reading.qualifier, reading.limit, reading.text) == (qualifier, limit, token)


def test_censored_sample_replicate_is_reported_not_zeroed() -> None:
    result = import_samples(table_from_text("Sample\tResponse\nU1\t<0.5\nU2\t12.5\n"))
    assert result.complete
    first = result.samples[0].measurements[0].response
    assert first.value is None and first.qualifier == "<" and first.limit == 0.5


def test_thousands_separator_when_the_user_names_it() -> None:
    text = "Conc\tArea\n1\t1,000\n2\t12,500.5\n"
    refused = import_standards(table_from_text(text))
    assert not refused.complete
    accepted = import_standards(table_from_text(text), decimal_mark=".", thousands=",")
    assert [s.response.value for _, s in accepted.standards] == [1000.0, 12500.5]


def test_header_guess_can_be_overridden() -> None:
    text = "Nominal (pg/mL)\tHeight\tArea\n1\t5\t50\n2\t10\t100\n"
    guessed = import_standards(table_from_text(text))
    assert guessed.mapping["response"] == 2
    chosen = import_standards(table_from_text(text), mapping={"response": "Area"})
    assert [s.response.value for _, s in chosen.standards] == [50.0, 100.0]
    assert chosen.units == {"concentration": "pg/mL"}


def test_long_format_with_several_analytes_and_internal_standard() -> None:
    text = ("Analyte\tStandard id\tConc\tArea\tIS area\n"
            "Cd\tC1\t1\t100\t1000\nCd\tC2\t2\t200\t1010\nPb\tP1\t1\t50\t990\nPb\tP2\t2\t101\t1000\n")
    analytes = analytes_from_import(import_standards(table_from_text(text)), concentration_unit="µg/L")
    assert [a.name for a in analytes] == ["Cd", "Pb"]
    assert all(a.uses_internal_standard for a in analytes)
    assert analytes[1].standards[1].internal_standard_response.value == 1000.0


def test_replicates_numbered_when_no_column_says() -> None:
    result = import_samples(table_from_text("Sample\tResponse\nU1\t1\nU1\t2\nU2\t3\n"))
    assert [m.replicate for m in result.samples[0].measurements] == [1, 2]


def test_csv_file_records_its_checksum(tmp_path) -> None:
    path = tmp_path / "standards.csv"
    path.write_bytes("\ufeffConcentration;Response\n1;2,5\n".encode("utf-8"))
    table = table_from_csv(path)
    import hashlib

    assert table.sha256 == hashlib.sha256(path.read_bytes()).hexdigest()
    assert import_standards(table).standards[0][1].response.value == 2.5


CELL = st.one_of(
    st.text(alphabet="0123456789.,-+eE<>ND \u00a0\t;\"'=@abc", max_size=8),
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.sampled_from(["", "ND", "<0.5", "1,000", "1.000", "1,5", "-0", "1e308", "1e309"]),
)


@settings(max_examples=200, deadline=None)
@given(
    header=st.lists(st.sampled_from(["Concentration", "Response", "Replicate", "Sample", "Type", "Dilution", "IS area", "x"]),
                    min_size=1, max_size=5),
    rows=st.lists(st.lists(CELL, min_size=0, max_size=6), max_size=8),
    delimiter=st.sampled_from(["\t", ";", ","]),
)
def test_generated_tables_raise_only_project_errors(header, rows, delimiter) -> None:
    text = "\n".join(delimiter.join(r) for r in [header] + rows)
    for importer in (import_standards, import_samples):
        try:
            result = importer(table_from_text(text))
        except CurvewrightError:
            continue
        # everything is accounted for: imported, rejected, or listed as empty
        assert result.rejected_rows == tuple(sorted(set(result.rejected_rows)))


def _outside_quotes_by_character(text: str) -> str:
    """The definition of the text outside quoted fields, one character at a time: a quote opens a
    field only at the start of a line or after a tab, ';' or ','; a doubled quote inside a quoted
    field is a quote character; the closing quote leaves '""' in the field's place; an unmatched
    quote leaves the rest out."""
    out: list[str] = []
    quoted = False
    previous = "\n"
    i = 0
    while i < len(text):
        ch = text[i]
        if quoted:
            if ch == '"':
                if text.startswith('""', i):
                    i += 2
                    continue
                quoted = False
                out.append('""')
        elif ch == '"' and previous in "\r\n\t;,":
            quoted = True
        else:
            out.append(ch)
        previous = ch
        i += 1
    return "".join(out)


def test_text_outside_quotes_is_found_as_the_definition_finds_it() -> None:
    import random

    from curvewright.io.tables import _outside_quotes

    cases = ['', 'a,b\n1,2\n', '"Well 3, rinse",1.5\n', 'x"y,2\n', '"a""b",3\r\n"c\nd";4', '"open,1\n2,3',
             '""', '"', 'a\t"b\tc"\t"', ',"",""""\n', 'id,"x"y",z']
    rng = random.Random(15)
    cases += ["".join(rng.choice('ab"",;\t\n\r') for _ in range(rng.randrange(0, 40))) for _ in range(3000)]
    for text in cases:
        assert _outside_quotes(text) == _outside_quotes_by_character(text), repr(text)
