"""The samples CSV read back as a spreadsheet reads it: one record per sample whatever the ids
hold, and no text that a spreadsheet would evaluate (OWASP "CSV Injection" guidance)."""

from __future__ import annotations

import csv
import io
from dataclasses import replace

import pytest

from curvewright.core.run import Measurement, Reading, Sample
from curvewright.io.csv_export import csv_text
from curvewright.io.result_tables import Column, Table
from curvewright.io.run_document import save_run
from curvewright.io.safe_text import looks_like_formula
from tests.cli_runs import run_cli
from tests.io.helpers import small_run

# (sample id as typed, what the CSV cell must hold)
IDS = [
    ("U1\r=2+5", "U1\r=2+5"),            # a bare carriage return: quoted, so the record is not split
    ("U2\n@SUM(1+1)", "U2\n@SUM(1+1)"),
    ("U3;=1+1", "U3;=1+1"),              # the delimiter inside an id
    ('U4 "quoted"', 'U4 "quoted"'),
    (" =1+1", "' =1+1"),                 # after a space
    ("\u00a0=1+1", "'\u00a0=1+1"),       # after a no-break space
    ("\u200b+cmd|' /C calc'!A0", "'\u200b+cmd|' /C calc'!A0"),  # after a zero-width space
    ("\ufeff-2+3", "'\ufeff-2+3"),       # after a byte-order mark
    ("＝HYPERLINK(1)", "'＝HYPERLINK(1)"),  # full-width equals sign
    ("＋1+1", "'＋1+1"), ("－1+1", "'－1+1"), ("＠SUM(1)", "'＠SUM(1)"),
    ("\t=1", "'\t=1"), ("\r=1", "'\r=1"),
    ("-5", "-5"),                        # a negative number is a number, not a formula
    ("Well 7", "Well 7"),
]


def run_with_ids(ids: list[str]):  # type: ignore[no-untyped-def]
    run = small_run()
    measurement = Measurement("cobalt", 1, Reading(9000.75, "9000.75"))
    samples = tuple(Sample(id=i, run_order=n, measurements=(measurement,)) for n, i in enumerate(ids, start=1))
    return replace(run, samples=samples)


def read_back(text: str, delimiter: str) -> list[list[str]]:
    lines = text.split("\n", 2)
    assert lines[0].startswith("# ") and lines[1].startswith("# ")
    return list(csv.reader(io.StringIO(lines[2], newline=""), delimiter=delimiter))


@pytest.mark.parametrize("delimiter, decimal", [(",", "."), (";", ",")])
def test_exported_ids_never_split_a_record_or_start_a_formula(tmp_path, delimiter, decimal) -> None:
    document = tmp_path / "run.json"
    save_run(run_with_ids([typed for typed, _ in IDS]), document)
    out = tmp_path / "samples.csv"
    result = run_cli("quantify", str(document), "--export", str(out), "--csv-delimiter", delimiter, "--csv-decimal",
                     decimal)
    assert result.returncode in (0, 1), result.stderr
    rows = read_back(out.read_bytes().decode("utf-8"), delimiter)
    header, records = rows[0], rows[1:]
    assert len(records) == len(IDS)  # one record per sample
    assert [r[0] for r in records] == [cell for _, cell in IDS]
    assert all(len(r) == len(header) for r in records)
    estimate = header.index("Estimated concentration")
    for r in records:
        float(r[estimate].replace(",", "."))  # numbers stay numbers


def test_numbers_are_never_prefixed_and_formula_text_always_is() -> None:
    table = Table("Samples", (Column("Text"), Column("Number", kind="number"), Column("Whole", kind="int"),
                              Column("Reported", kind="reported")),
                  (("-12.5", -12.5, -3, "-12.5"), ("=1", -0.0, 0, "0.00"), ("-1+1", float("-inf"), 7, "−∞")))
    rows = read_back(csv_text(table, delimiter=";", decimal_mark=","), ";")
    assert rows[1:] == [["-12.5", "-12,5", "-3", "-12,5"], ["'=1", "-0,0", "0", "0,00"], ["'-1+1", "-inf", "7", "−∞"]]


@pytest.mark.parametrize("text", ["=1", "+A1", "-1+1", "@x", "\t1", "\r1", "\n1", " \u2003=1", "\u2060@x", "\u202e=1",
                                  "＝1", "＋1", "－x", "＠x"])
def test_formula_triggers(text) -> None:
    assert looks_like_formula(text)


@pytest.mark.parametrize("text", ["", "abc", "-5", "+5", "1,5", "-1.5e-3", "U1\r=2+5", "a=b", "−5"])
def test_not_formula_triggers(text) -> None:
    assert not looks_like_formula(text)
