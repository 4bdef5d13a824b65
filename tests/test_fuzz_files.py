"""Fuzzing the files Curvewright reads and writes, with a fixed seed (derandomized Hypothesis).

One property throughout: every input gives either the project's own error, naming the file and the
place, or a result. Never an internal error, never a run past a time bound, never a CSV cell a
spreadsheet would evaluate. A modest number of inputs runs in every test run; the ``slow`` run
tries 2,000 of each kind.
"""

from __future__ import annotations

import contextlib
import csv
import io
import json
import math
import re
import tempfile
import time
from pathlib import Path

import openpyxl
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from curvewright import CAUTION, cli
from curvewright.io import run_document as doc
from curvewright.io.csv_export import csv_text
from curvewright.io.errors import DocumentError, ImportProblem
from curvewright.io.result_tables import Column, Table
from curvewright.io.safe_text import FORMULA_STARTS, _visible_start
from curvewright.io.tables import table_from_xlsx, xlsx_sheet_names
from tests.io.helpers import DEMO_RUNS, small_run
from tests.io.workbook_files import GOOD_ROWS, parts, rezip, shared_string_workbook, strings_xml, workbook_bytes

CI = settings(derandomize=True, max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
SLOW = settings(derandomize=True, max_examples=2000, deadline=None, suppress_health_check=[HealthCheck.too_slow])
TIME_BOUND = 20.0  # seconds for any one input


# --- text tables (pasted, CSV, TSV) -------------------------------------------------------------
BASE_TEXT_TABLES = [
    "Standard id,Concentration (µg/L),Response\r\nS1,0.5,52.251\r\nS2,1,102.236\r\nS3,2,202.427\r\n",
    "\ufeffSample;Dilution;Response\nW1;1;640,225\nW1;1;652,118\n\"Well 3; rinse\";2;1503,871\n",
    "Sample\tType\tNominal\tResponse\nQC mid\tQC\t15\t15100\nBlank\tblank\t\tND\nU7\tunknown\t\t<0.5\n",
    "Concentration,Response,Sample,Dilution\n1,1.0,S1,1\n2,2.0,S2,2\n4,4.5,S3,1\n",
]
TEXT_SNIPPETS = ['"', '""', ",", ";", "\t", "\r", "\n", "\r\n", "\x00", "\u00a0", "\u202f", "\ufeff", "１,０００", "١٫٥",
                 "=1+1", "＝SUM(A1)", "\u200b@x", "1,000", "2.500", "1e999", "-1e-400", "nan", "inf", "<", "> 5", "ND",
                 "9" * 400, "\ud800", "µg/L", "Response", "Concentration", "Sample id", "\t\t\t", ",,,,"]


@st.composite
def damaged_text_tables(draw) -> str:  # type: ignore[no-untyped-def]
    """A valid standards or samples table with snippets inserted, slices removed or lines repeated."""
    text = draw(st.sampled_from(BASE_TEXT_TABLES))
    for _ in range(draw(st.integers(1, 6))):
        at = draw(st.integers(0, len(text)))
        action = draw(st.sampled_from(["insert", "delete", "repeat", "random"]))
        if action == "insert":
            text = text[:at] + draw(st.sampled_from(TEXT_SNIPPETS)) + text[at:]
        elif action == "delete":
            text = text[:at] + text[at + draw(st.integers(1, 12)):]
        elif action == "repeat":
            line = text[:at].rsplit("\n", 1)[-1]
            text = text[:at] + "\n" + line * draw(st.integers(1, 3)) + text[at:]
        else:
            text = text[:at] + draw(st.text(max_size=8)) + text[at:]
    return text


def text_table_property(text: str) -> None:
    """A damaged text table is refused naming the source, or imported with each unusable cell named by
    row and column; never an internal error, never past the time bound."""
    from curvewright.io.importing import import_samples, import_standards
    from curvewright.io.tables import table_from_text

    source = "fuzzed batch 7.csv"
    start = time.perf_counter()
    try:
        table = table_from_text(text, source=source)
    except ImportProblem as exc:
        assert str(exc).startswith(f"{source}: "), str(exc)
        return
    for importer in (import_standards, import_samples):
        try:
            result = importer(table, analyte="lead")
        except ImportProblem as exc:
            assert source in str(exc), str(exc)
            continue
        for cell in result.rejected:
            assert cell.row >= 1 and cell.column and cell.reason, cell
        for _, standard in result.standards:  # a number read is finite; text that is not one is kept as typed
            assert standard.response.value is None or math.isfinite(standard.response.value)
    assert time.perf_counter() - start < TIME_BOUND


@CI
@given(damaged_text_tables())
def test_damaged_text_tables_are_imported_or_refused_naming_the_source(text) -> None:
    text_table_property(text)


@pytest.mark.slow
@SLOW
@given(damaged_text_tables())
def test_damaged_text_tables_are_imported_or_refused_naming_the_source_2000(text) -> None:
    text_table_property(text)


# --- workbooks -----------------------------------------------------------------------------------
BASE_WORKBOOKS = [
    workbook_bytes(),
    workbook_bytes([["Sample", "Dilution", "Area"], ["Well 3", 2, 640.5], ["=1+1", 1, -3e-5], ["QC mid", 1.5, 1e300]]),
    shared_string_workbook(strings_xml(["Concentration", "Response"]), GOOD_ROWS),
]

SNIPPETS = [
    b"<!DOCTYPE x [<!ENTITY a 'b'>]>", b"&a;", b"&amp;", b"&#0;", b"&#xD800;", b'<c r="XFD3"><v>1</v></c>',
    b'<row r="2000000"><c r="A2000000"><v>1</v></c></row>', b'<row r="0"><c r="A0"><v>1</v></c></row>',
    b'<c t="s"><v>99</v></c>', b'<c t="s"><v>-1</v></c>', b'<c t="s"><v>x</v></c>', b"<c><v>abc</v></c>",
    b'<c t="d"><v>xx</v></c>', b'<c t="b"><v>2</v></c>', b'<c t="e"><v>#N/A</v></c>', b"<c><v>" + b"9" * 400 + b"</v></c>",
    b"<c><v>1e999</v></c>", b'<dimension ref="A1:XFD1048576"/>', b'<dimension ref="ZZ"/>', b"\x00", b"\xff\xfe", b"<",
    b">", b'"', b"</sheetData>", b"<sheetData>", b"<row>", b'<c r="ZZZZZ1"><v>1</v></c>', b'<c r="A1" s="999"><v>1</v></c>',
    b'<c t="inlineStr"><is><t>=1+1</t></is></c>', b"<f>SUM(A1)</f>", b"<si><t>extra</t></si>",
    b'<Override PartName="/xl/x.xml" ContentType="bad"/>', b'<sheet name="" sheetId="9" r:id="rId99"/>',
    b'<Relationship Id="rId9" Target="../../../etc/passwd" Type="x"/>', b'<xf numFmtId="999999"/>',
    b'<numFmt numFmtId="164" formatCode="yyyy-mm-dd"/>',
]


@st.composite
def damaged_workbooks(draw) -> bytes:  # type: ignore[no-untyped-def]
    data = draw(st.sampled_from(BASE_WORKBOOKS))
    for _ in range(draw(st.integers(1, 3))):
        names = sorted(parts(data)) if _is_zip(data) else []
        kind = draw(st.sampled_from(["xml"] * 4 + ["zip"] if names else ["zip"]))
        if kind == "zip":
            at = draw(st.integers(0, max(len(data) - 1, 0)))
            action = draw(st.sampled_from(["truncate", "flip", "cut"]))
            if action == "truncate":
                data = data[:at]
            elif action == "flip":
                data = data[:at] + bytes([draw(st.integers(0, 255))]) + data[at + 1:]
            else:
                data = data[:at] + data[at + draw(st.integers(1, 64)):]
            continue
        name = draw(st.sampled_from(names))
        action = draw(st.sampled_from(["delete", "insert", "replace", "remove", "truncate"]))
        if action == "remove":
            data = rezip(data, {name: None})
            continue
        content = parts(data)[name]
        at = draw(st.integers(0, len(content)))
        if action == "delete":
            content = content[:at] + content[at + 1:]
        elif action == "insert":
            content = content[:at] + draw(st.sampled_from(SNIPPETS)) + content[at:]
        elif action == "replace":
            content = content[:at] + draw(st.sampled_from(SNIPPETS)) + content[at + draw(st.integers(1, 40)):]
        else:
            content = content[:at]
        data = rezip(data, {name: content})
    return data


def _is_zip(data: bytes) -> bool:
    try:
        parts(data)
        return True
    except Exception:  # noqa: BLE001 - only deciding which damage to try next
        return False


def workbook_property(data: bytes) -> None:
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "Cal batch 7.xlsx"
        path.write_bytes(data)
        for read in (lambda: table_from_xlsx(path).rows, lambda: xlsx_sheet_names(path)):
            start = time.perf_counter()
            try:
                result = read()
            except ImportProblem as exc:
                assert str(exc).startswith(f"{path}: "), str(exc)
            else:
                for row in result if isinstance(result[0] if result else (), tuple) else ():
                    for cell in row:  # text or a finite number: never a silent infinity or NaN
                        assert isinstance(cell, str) or (isinstance(cell, float) and math.isfinite(cell)), cell
            assert time.perf_counter() - start < TIME_BOUND


@CI
@given(damaged_workbooks())
def test_damaged_workbooks_give_a_table_or_an_import_problem(data) -> None:
    workbook_property(data)


@pytest.mark.slow
@SLOW
@given(damaged_workbooks())
def test_damaged_workbooks_give_a_table_or_an_import_problem_2000(data) -> None:
    workbook_property(data)


# --- run documents -------------------------------------------------------------------------------
BASE_DOCUMENTS = [json.loads(doc.dumps_run(small_run()))] + [json.loads(p.read_text(encoding="utf-8")) for p in DEMO_RUNS]
DEEP = "@@deep@@"

nasty = st.one_of(
    st.none(), st.booleans(), st.integers(), st.integers(min_value=-(2**70), max_value=2**70),
    st.floats(allow_nan=False, allow_infinity=False), st.text(max_size=12),
    st.sampled_from([10**400, -(10**310), 2**53, 2**64, 0, -1, 1e308, -1e308, 5e-324, 1e26, "\ud800", "x\udfffy", "",
                     " ", "=1+1", "half_even", "decimals", "significant", "1/x^2", "quadratic", "proportional", "QC",
                     "blank", "band", "symmetric", "iso11843", DEEP, {}, [], {"value": None, "text": "ND"},
                     {"kind": "decimals", "digits": 15, "tie": "half_even"}, {"value": 1e308, "text": "big"}]),
    st.lists(st.integers(), max_size=3), st.dictionaries(st.text(max_size=4), st.integers(), max_size=3),
)


def _paths(value, path=()):  # type: ignore[no-untyped-def]
    yield path
    if isinstance(value, dict):
        for key, item in value.items():
            yield from _paths(item, path + (key,))
    elif isinstance(value, list):
        for i, item in enumerate(value):
            yield from _paths(item, path + (i,))


@st.composite
def damaged_documents(draw) -> str:  # type: ignore[no-untyped-def]
    data = json.loads(json.dumps(draw(st.sampled_from(BASE_DOCUMENTS))))
    for _ in range(draw(st.integers(1, 3))):
        paths = [p for p in _paths(data) if p]
        if not paths:
            break
        path = draw(st.sampled_from(paths))
        parent = data
        for key in path[:-1]:
            parent = parent[key]
        action = draw(st.sampled_from(["plausible"] * 4 + ["replace"] * 4 + ["delete", "duplicate"]))
        if action == "plausible":  # a value of the same kind, as an analyst might have typed it
            old = parent[path[-1]]
            if isinstance(old, bool) or not isinstance(old, (int, float, str)):
                continue
            parent[path[-1]] = draw(st.integers(0, 12) if isinstance(old, int) else
                                    st.floats(-1e6, 1e6) if isinstance(old, float) else st.text(max_size=12))
        elif action == "replace":
            parent[path[-1]] = draw(nasty)
        elif action == "delete":
            del parent[path[-1]]
        elif isinstance(parent, list):
            parent.insert(path[-1], json.loads(json.dumps(parent[path[-1]])))
    text = json.dumps(data, ensure_ascii=draw(st.booleans()))
    text = text.replace(json.dumps(DEEP), "[" * draw(st.integers(60, 5000)) + "]" * 5000, 1)  # unbalanced when short
    if draw(st.integers(0, 3)) == 0:
        at = draw(st.integers(0, len(text)))
        text = text[:at] + draw(st.sampled_from(["", "{", "]", '"', "\\", "\x00", "1e999", "NaN"])) + text[at + 1:]
    return text


PLACE = re.compile(r"line \d+, column \d+|^\s+- [^\n]+: |'format'|'schema_version'|schema version|a JSON object|UTF-8|nested", re.M)


def document_property(text: str) -> None:
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "batch 12.json"
        path.write_bytes(text.encode("utf-8", "surrogatepass"))
        start = time.perf_counter()
        try:
            doc.open_run(path)
        except DocumentError as exc:
            message = str(exc)
            assert message.startswith(f"{path}: ") and PLACE.search(message), message
            valid = False
        else:
            valid = True
        out, err = io.StringIO(), io.StringIO()
        with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
            checked = cli.main(["check", str(path)])
            quantified = cli.main(["quantify", str(path), "--export", str(Path(folder) / "samples.csv")])
        assert "internal error" not in err.getvalue(), err.getvalue()
        if valid:  # what check accepts, quantify completes, and its workbook reads back
            assert checked in (0, 1) and quantified in (0, 1), err.getvalue()
            workbook = Path(folder) / "results.xlsx"
            with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
                assert cli.main(["quantify", str(path), "--export", str(workbook)]) in (0, 1), err.getvalue()
            book = openpyxl.load_workbook(workbook, read_only=True)
            try:
                assert all(sheet["A1"].value == CAUTION for sheet in book.worksheets)
                for sheet in book.worksheets:
                    for _ in sheet.iter_rows(values_only=True):
                        pass
            finally:
                book.close()
        else:
            assert checked == 2 and quantified == 2 and str(path) in err.getvalue()
        assert time.perf_counter() - start < TIME_BOUND


@CI
@given(damaged_documents())
def test_damaged_documents_are_refused_with_their_place_or_quantified(text) -> None:
    document_property(text)


@pytest.mark.slow
@SLOW
@given(damaged_documents())
def test_damaged_documents_are_refused_with_their_place_or_quantified_2000(text) -> None:
    document_property(text)


# --- the CSV export ------------------------------------------------------------------------------
awkward_text = st.text(st.one_of(
    st.characters(blacklist_categories=("Cs",)),
    st.sampled_from(list("=+-@\t\r\n;,\"' \u00a0\u200b\u200d\u2060\ufeff\u202e＝＋－＠0123456789.eE")),
), max_size=16)
numbers = st.one_of(st.floats(allow_nan=False), st.sampled_from([-0.0, 5e-324, -1.7976931348623157e308]))
COLUMNS = (Column("Sample id"), Column("Mean response", kind="number"), Column("Run order", kind="int"),
           Column("Reported (rounded)", kind="reported"), Column("Flags"))


@st.composite
def tables(draw) -> Table:  # type: ignore[no-untyped-def]
    rows = draw(st.lists(st.tuples(awkward_text, st.one_of(st.none(), numbers), st.one_of(st.none(), st.integers()),
                                   st.sampled_from(["12.0", "-0.125", "0", "∞", "−∞", ""]), awkward_text), max_size=6))
    return Table("Samples", COLUMNS, tuple(rows))


def csv_property(table: Table, delimiter: str, decimal: str) -> None:
    text = csv_text(table, delimiter=delimiter, decimal_mark=decimal)
    head, body = text.split("\n", 2)[:2], text.split("\n", 2)[2]
    assert all(line.startswith("# ") for line in head)
    records = list(csv.reader(io.StringIO(body, newline=""), delimiter=delimiter))
    assert len(records) == len(table.rows) + 1  # one record per row, whatever the text holds
    for row, record in zip(table.rows, records[1:]):
        assert len(record) == len(COLUMNS)
        for value, cell, column in zip(row, record, COLUMNS):
            if value is None:
                assert cell == ""
            elif column.kind == "number":
                assert float(cell.replace(",", ".")) == value or (math.isinf(value) and cell.endswith("inf"))
            elif column.kind == "int":
                assert int(cell) == value
            elif column.kind == "reported":
                assert cell == (value.replace(".", ",") if decimal == "," else value)
            else:
                assert cell in (value, "'" + value)  # kept, only marked as text
            if column.kind not in ("number", "int") and not re.fullmatch(r"[-+]?[\d.,]+(?:[eE][-+]?\d+)?", cell):
                assert not cell.startswith(FORMULA_STARTS) and not _visible_start(cell).startswith(FORMULA_STARTS), cell


@CI
@given(tables(), st.sampled_from([(",", "."), (";", ","), ("\t", "."), ("\t", ",")]))
def test_csv_export_round_trip_keeps_every_record_and_no_formula(table, dialect) -> None:
    csv_property(table, *dialect)


@pytest.mark.slow
@SLOW
@given(tables(), st.sampled_from([(",", "."), (";", ","), ("\t", "."), ("\t", ",")]))
def test_csv_export_round_trip_keeps_every_record_and_no_formula_2000(table, dialect) -> None:
    csv_property(table, *dialect)
