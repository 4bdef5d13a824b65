"""Import rules a lab user relies on: what refuses a row, what is kept per sample, how columns are named."""

from __future__ import annotations

import pytest

from curvewright.io.errors import ImportProblem
from curvewright.io.importing import (
    SYNONYMS,
    MissingColumns,
    RejectedCell,
    Remedy,
    grouped_cells,
    import_samples,
    import_standards,
)
from curvewright.io.tables import table_from_text


def test_a_negative_nominal_concentration_is_refused_with_row_column_and_text() -> None:
    result = import_standards(table_from_text("Concentration (mg/L)\tResponse\n-0.5\t0.012\n1\t0.251\n2\t0.502\n"))
    assert [s.concentration for _, s in result.standards] == [1.0, 2.0]
    assert result.rejected_rows == (2,)
    assert str(result.rejected[0]) == (
        "row 2, column 1 (Concentration (mg/L)): '-0.5' — a nominal concentration cannot be below zero; "
        "correct it in the table"
    )


def test_zero_and_minus_zero_concentrations_are_blanks_not_errors() -> None:
    result = import_standards(table_from_text("Concentration\tResponse\n0\t0.002\n-0\t0.001\n1\t0.251\n"))
    assert result.complete and len(result.standards) == 3


def test_an_empty_sample_response_keeps_the_sample() -> None:
    result = import_samples(table_from_text("Sample\tResponse\nU1\t1.5\nU2\t\nU3\t3.25\n"))
    assert result.complete and [s.id for s in result.samples] == ["U1", "U2", "U3"]
    kept = result.samples[1].measurements[0].response
    assert kept.is_missing
    assert [str(c) for c in result.unusable_readings] == [
        "row 3, column 2 (Response): '' — empty: no response recorded; sample 'U2' is reported without it"]
    assert "1 reading(s) kept as typed" in result.summary()


def test_text_in_a_sample_response_is_kept_as_typed() -> None:
    result = import_samples(table_from_text("Sample\tResponse\nU1\t1.5\nU2\t1.2.5\nU3\tabc\n"))
    assert result.complete and [s.id for s in result.samples] == ["U1", "U2", "U3"]
    assert [s.measurements[0].response.text for s in result.samples[1:]] == ["1.2.5", "abc"]
    assert all(s.measurements[0].response.is_unreadable for s in result.samples[1:])
    assert [(c.row, c.text) for c in result.unusable_readings] == [(3, "1.2.5"), (4, "abc")]
    assert "is not a number; sample 'U3' is reported without this response" in str(result.unusable_readings[1])


def test_a_sample_value_that_needs_the_decimal_mark_still_refuses_its_row() -> None:
    result = import_samples(table_from_text("Sample;Response\nU1;1,000\nU2;2,500\n"))
    assert not result.samples and result.rejected_rows == (2, 3)
    assert all(c.remedy is not None for c in result.rejected)


def test_an_unreadable_internal_standard_cell_is_kept_too() -> None:
    result = import_samples(table_from_text("Sample\tArea\tIS area\nU1\t100\tlost\n"))
    assert result.complete
    assert result.samples[0].measurements[0].internal_standard_response.text == "lost"
    assert "internal-standard response" in result.unusable_readings[0].reason


def test_a_problem_elsewhere_in_the_row_refuses_it_once() -> None:
    result = import_samples(table_from_text("Sample\tDilution\tResponse\nU1\t0\t\n"))
    assert result.rejected_rows == (2,) and not result.unusable_readings


def test_missing_columns_list_the_accepted_headers() -> None:
    with pytest.raises(MissingColumns) as info:
        import_standards(table_from_text("Level\tPeak height\n1\t2\n"))
    message = str(info.value)
    assert info.value.missing == ("concentration", "response")
    assert "(row 1: 'Level', 'Peak height')" in message
    for name in SYNONYMS["concentration"] + SYNONYMS["response"]:
        assert repr(name) in message
    assert "'Concentration (µg/L)'" in message and "Rename the column in the table, or map it to the field." in message
    assert isinstance(info.value, ImportProblem)


@pytest.mark.parametrize("where", ["Peak height", "peak height", "PEAK HEIGHT (mV)", 3])
def test_a_column_is_mapped_by_its_header_in_any_case_or_by_number(where) -> None:
    text = "Conc (ng/mL)\tArea\tPeak height (mV)\n1\t50\t5.5\n2\t100\t10.25\n"
    result = import_standards(table_from_text(text), mapping={"response": where})
    assert [s.response.value for _, s in result.standards] == [5.5, 10.25]
    assert result.units == {"concentration": "ng/mL", "response": "mV"}


def test_a_mapping_that_fits_two_columns_is_refused() -> None:
    with pytest.raises(ImportProblem, match="fits columns 2, 3; give the column number"):
        import_standards(table_from_text("Conc\tArea (a)\tArea (b)\n1\t2\t3\n"), mapping={"response": "area"})


def test_a_mapping_to_no_header_lists_the_headers() -> None:
    with pytest.raises(ImportProblem, match=r"no header is 'Peak' \(headers: 'Conc', 'Area'\)"):
        import_standards(table_from_text("Conc\tArea\n1\t2\n"), mapping={"response": "Peak"})


def test_the_wrong_decimal_mark_given_points_to_the_right_one() -> None:
    text = "Concentration;Response\n0,5;10,25\n1;20,5\n2;41\n"
    result = import_standards(table_from_text(text), decimal_mark=".")
    assert len(result.rejected) == 3
    remedies = {c.remedy for c in result.rejected}
    assert len(remedies) == 1
    remedy = remedies.pop()
    assert (remedy.option, remedy.value) == ("decimal_mark", ",")
    assert remedy.finding == "the decimal mark '.' was given, but the table's values show decimal comma (shown by 3 values)"


def test_thousands_in_a_decimal_point_table_point_to_the_separator() -> None:
    result = import_standards(table_from_text("Conc\tArea\n1.5\t1,500\n2\t12,250\n"))
    assert {(c.remedy.option, c.remedy.value) for c in result.rejected} == {("thousands", ",")}


def test_grouped_cells_say_the_finding_once_and_cap_the_list() -> None:
    remedy = Remedy("decimal_mark", ",", "the table shows a decimal comma")
    cells = [RejectedCell(r, "2 (Area)", "1,5", "uses ','", remedy) for r in range(2, 16)]
    cells.append(RejectedCell(20, "2 (Area)", "abc", "is not a number"))
    lines = grouped_cells(cells, lambda r: f"give --decimal-mark {r.value}", limit=10)
    assert lines[0] == "  the table shows a decimal comma → give --decimal-mark ,"
    assert lines[1] == "    row 2, column 2 (Area): '1,5' — uses ','"
    assert lines[11] == "    … and 4 more"
    assert lines[12] == "  row 20, column 2 (Area): 'abc' — is not a number"
    assert len(lines) == 13


def test_the_readme_table_layout_lists_every_accepted_header() -> None:
    import re

    from curvewright.io.importing import SAMPLE_FIELDS, SAMPLE_REQUIRED, STANDARD_FIELDS, STANDARD_REQUIRED
    from tests.io.helpers import ROOT

    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    section = readme[readme.index("## Table layout"):]
    standards_part, samples_part = section.split("Samples, one row per replicate", 1)
    for part, fields, required in ((standards_part, STANDARD_FIELDS, STANDARD_REQUIRED),
                                   (samples_part, SAMPLE_FIELDS, SAMPLE_REQUIRED)):
        rows = {m.group(1): m.group(2) for m in re.finditer(r"^\| (\w+) \| ([^|]+) \|([^|]*)\|$", part, flags=re.M)}
        for f in fields:
            assert rows[f].strip() == ", ".join(SYNONYMS[f]), f
        for f in required:
            assert re.search(rf"^\| {f} \|[^|]+\| required", part, flags=re.M), f
