"""A corpus of malformed inputs: each gives its own specific message, naming where and why."""

from __future__ import annotations

import json

import pytest

from curvewright.io import run_document as doc
from curvewright.io.errors import DocumentError, ImportProblem
from curvewright.io.importing import import_samples, import_standards
from curvewright.io.tables import table_from_csv, table_from_text, table_from_xlsx
from tests.io.helpers import small_run

HEADER = "Concentration\tResponse\n"

# (table text, importer options, expected rejected-cell text) — the row is imported as far as it can
# be and each bad cell is reported with its row and column.
REJECTED_CELLS = [
    ("Concentration\tResponse\n1\tabc\n2\t2.0\n", {}, "row 2, column 2 (Response): 'abc' — is not a number"),
    ("Concentration\tResponse\nx1\t1.0\n2\t2.0\n", {}, "row 2, column 1 (Concentration): 'x1' — is not a number"),
    ("Concentration\tResponse\n1\t1,5\n2\t2.5\n", {}, "1 value with '.', 1 with ','"),
    ("Concentration\tResponse\n1\t1,000\n2\t2\n", {}, "'1,000' — is ambiguous"),
    ("Concentration\tResponse\n1\t1,234.5\n2\t2.5\n", {}, "has thousands separators"),
    ("Concentration\tResponse\n1\t1.2.3\n2\t2.5\n", {}, "mixes decimal marks"),
    ("Concentration\tResponse\n1\t\n2\t2.5\n", {}, "empty: a value is needed here"),
    ("Concentration\tResponse\n\t1.0\n2\t2.5\n", {}, "empty: a number is needed here"),
    ("Concentration\tResponse\n1\t1.0\textra\n2\t2.5\n", {}, "more cells than the header"),
    ("Concentration\tResponse\n1\t<\n2\t2.5\n", {}, "a censored value needs a number"),
    ("Concentration\tResponse\n1\t1.5\n2\t2,5\n", {"decimal_mark": "."}, "uses ',' but the table's decimal mark is '.'"),
    ("Concentration\tResponse\tReplicate\n1\t1.5\t1.5\n2\t2.5\t1\n", {}, "must be a whole number"),
    ("Standard id\tConcentration\tResponse\nA\t1\t1.5\nA\t2\t2.5\n", {}, "duplicate standard id (first at row 2)"),
    ("Concentration\tResponse\n1\tinf\n2\t2.5\n", {}, "'inf' — is not a number"),
    ("Concentration\tResponse\n1\t1e400\n2\t2.5\n", {}, "is not a finite number"),
    ("Concentration\tResponse\n1\t--1\n2\t2.5\n", {}, "is not a number"),
]

SAMPLE_REJECTIONS = [
    ("Sample\tResponse\n\t1.0\n", "a sample needs an id"),
    ("Sample\tType\tResponse\nU1\tstandard?\t1.0\n", "not a sample kind"),
    ("Sample\tDilution\tResponse\nU1\t0\t1.0\n", "a dilution factor must be above zero"),
    ("Sample\tDilution\tResponse\nU1\t2\t1.0\nU1\t5\t1.1\n", "differs from row 2 of the same sample"),
    ("Sample\tReplicate\tResponse\nU1\t1\t1.0\nU1\t1\t1.1\n", "already has replicate 1"),
    ("Sample\tType\tResponse\nU1\tQC\t1.0\nU1\tblank\t1.1\n", "differs from row 2 of the same sample (QC sample)"),
]

# (inputs that cannot be imported at all, expected message)
REFUSED_TABLES = [
    ("", "the table is empty"),
    ("\n\n   \n", "the table is empty"),
    ("Concentration\tArea\n1\t2\n", None),  # recognised: Area is a response synonym (control case)
    ("Name\tValue\n1\t2\n", "no column for concentration, response"),
    ('Concentration,Response\n1,"2\n', "unmatched quote"),
    ("a b c\nd e f g\n", "cannot tell how the columns are separated"),
]


@pytest.mark.parametrize("text, options, message", REJECTED_CELLS)
def test_rejected_cells_name_row_column_text_and_reason(text, options, message) -> None:
    result = import_standards(table_from_text(text), **options)
    report = result.summary()
    assert message in report, report
    assert result.rejected and result.rejected_rows
    # nothing silently dropped: every data row is imported or listed as rejected
    data_rows = len([line for line in text.splitlines()[1:] if line.strip()])
    assert len(result.standards) + len(result.rejected_rows) == data_rows


@pytest.mark.parametrize("text, message", SAMPLE_REJECTIONS)
def test_sample_rows_rejected_with_reason(text, message) -> None:
    result = import_samples(table_from_text(text))
    assert message in result.summary(), result.summary()


@pytest.mark.parametrize("text, message", REFUSED_TABLES)
def test_tables_that_cannot_be_imported(text, message) -> None:
    if message is None:
        assert import_standards(table_from_text(text)).complete
        return
    with pytest.raises(ImportProblem, match=message):
        import_standards(table_from_text(text))


def test_mapping_to_a_missing_header_is_refused() -> None:
    with pytest.raises(ImportProblem, match="no header is 'Peak'"):
        import_standards(table_from_text(HEADER + "1\t2\n"), mapping={"response": "Peak"})
    with pytest.raises(ImportProblem, match="the table has 2 columns"):
        import_standards(table_from_text(HEADER + "1\t2\n"), mapping={"response": 7})
    with pytest.raises(ImportProblem, match="'colour' is not one of"):
        import_standards(table_from_text(HEADER + "1\t2\n"), mapping={"colour": 1})


def test_unreadable_files(tmp_path) -> None:
    latin = tmp_path / "latin1.csv"
    latin.write_bytes("Concentration;Response\n1;2\xb5\n".encode("latin-1"))
    with pytest.raises(ImportProblem, match="not UTF-8 text"):
        table_from_csv(latin)
    fake = tmp_path / "fake.xlsx"
    fake.write_text("not a workbook")
    with pytest.raises(ImportProblem, match="not a readable XLSX workbook"):
        table_from_xlsx(fake)
    with pytest.raises(ImportProblem, match="cannot read"):
        table_from_csv(tmp_path / "missing.csv")


# --- run documents -----------------------------------------------------------------------------
def good_document() -> dict:
    return json.loads(doc.dumps_run(small_run()))


def broken(path: str, value) -> dict:  # type: ignore[no-untyped-def]
    """The good document with the value at a dotted path (list indexes as numbers) replaced."""
    data = good_document()
    keys = path.split(".")
    target = data
    for key in keys[:-1]:
        target = target[int(key)] if isinstance(target, list) else target[key]
    last = keys[-1]
    if value is KeyError:
        del target[last]
    elif isinstance(target, list):
        target[int(last)] = value
    else:
        target[last] = value
    return data


DOCUMENT_PROBLEMS = [
    (broken("analytes.0.standards.3.concentration", "abc"), 'analytes[0].standards[3].concentration: expected a finite number, zero or from 1e-30 to 1e30 in size, found "abc"'),
    (broken("analytes.0.standards.0.replicate", 0), "analytes[0].standards[0].replicate: 0 must be 1 or more"),
    (broken("analytes.0.standards.11.exclusion_reason", ""), "analytes[0].standards[11].exclusion_reason: an excluded standard needs its reason"),
    (broken("analytes.0.standards.1.id", "S1a"), "analytes[0].standards[1]: duplicate standard id 'S1a'"),
    (broken("analytes.0.model", "cubic"), "analytes[0].model: 'cubic' is not one of"),
    (broken("analytes.0.weighting", "1/z"), "analytes[0].weighting: '1/z' is not one of"),
    (broken("analytes.0.name", ""), "analytes[0].name: an analyte needs a name"),
    (broken("analytes.0.standards.0.response", KeyError), "analytes[0].standards[0].response: missing reading"),
    (broken("analytes.0.standards.0.response", {"value": "12", "text": "12"}), 'analytes[0].standards[0].response.value: expected a finite number, zero or from 1e-30 to 1e30 in size, or null, found "12"'),
    (broken("samples.0.kind", "mystery"), "samples[0].kind: 'mystery' is not one of"),
    (broken("samples.0.dilution_factor", -2), "samples[0].dilution_factor: -2.0 must be above zero"),
    (broken("samples.1.id", good_document()["samples"][0]["id"]), "samples[1]: duplicate sample id"),
    (broken("samples.0.measurements.0.analyte", "nickel"), "samples[0].measurements[0].analyte: 'nickel' is not an analyte"),
    (broken("samples.1.nominal", {"nickel": 3}), "samples[1].nominal.nickel: names analyte 'nickel'"),
    (broken("settings.confidence_level", 95), "settings.confidence_level: 95.0 must lie between 0 and 1"),
    (broken("settings.acceptance_profile", "strict"), "settings.acceptance_profile: 'strict' is not one of"),
    (broken("settings.rounding", {"kind": "sig", "digits": 3, "tie": "half_up"}), "settings.rounding: rounding kind: 'sig'"),
    (broken("settings.interval", "wide"), "settings.interval: 'wide' is not 'band' or 'symmetric'"),
    (broken("name", 7), "name: expected text, found 7"),
    (broken("analytes", []), "analytes: the run needs at least one analyte"),
    (broken("audit.0", "entry"), "audit[0]: expected an audit entry object"),
]


@pytest.mark.parametrize("data, message", DOCUMENT_PROBLEMS, ids=[m[:40] for _, m in DOCUMENT_PROBLEMS])
def test_document_problems_name_their_path(data, message) -> None:
    with pytest.raises(DocumentError) as info:
        doc.loads_run(json.dumps(data, ensure_ascii=False))
    assert message in str(info.value), str(info.value)


def test_every_problem_is_reported_at_once() -> None:
    data = broken("analytes.0.model", "cubic")
    data["samples"][0]["kind"] = "mystery"
    with pytest.raises(DocumentError) as info:
        doc.loads_run(json.dumps(data))
    assert len(info.value.problems) == 2


@pytest.mark.parametrize(
    "text, message",
    [
        (doc.dumps_run(small_run())[:500], "not valid JSON at line"),
        ('{"format": "curvewright-run", "schema_version": 1, "x": NaN}', "NaN at line 1, column 57 is not a number"),
        ("[1, 2, 3]", "a run document is a JSON object"),
        ('{"format": "other-program"}', "not a Curvewright run document"),
        ('{"format": "curvewright-run", "schema_version": "1"}', "'schema_version' must be a whole number"),
        ('{"format": "curvewright-run", "schema_version": 99}', "written with schema version 99, newer"),
        (b"\xff\xfe{}", "not UTF-8 text"),
    ],
)
def test_unreadable_documents(text, message) -> None:
    with pytest.raises(DocumentError, match=message):
        doc.loads_run(text)


def test_huge_documents_are_refused_before_reading(tmp_path, monkeypatch) -> None:
    path = tmp_path / "huge.json"
    path.write_bytes(b" " * 2048)
    monkeypatch.setattr(doc, "MAX_DOCUMENT_BYTES", 1024)
    with pytest.raises(DocumentError, match="larger than a run document can be"):
        doc.open_run(path)


def test_a_missing_document(tmp_path) -> None:
    with pytest.raises(DocumentError, match="cannot open"):
        doc.open_run(tmp_path / "nothing.json")


def test_corpus_is_large_enough() -> None:
    count = len(REJECTED_CELLS) + len(SAMPLE_REJECTIONS) + len(REFUSED_TABLES) + len(DOCUMENT_PROBLEMS) + 7 + 3 + 3
    assert count >= 30
