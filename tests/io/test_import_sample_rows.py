"""Rows of one sample grouped into one sample, as a spreadsheet writes the table (BOM, CRLF).

The table is invented (the Quillbrook dairy laboratory's zinc run): replicates with and without
replicate numbers, two analytes of one sample, a nominal value given on a later row only, dilutions,
a blank and QC samples; then rows that contradict their sample's first row or repeat a replicate,
each refused naming its row, field and reason.
"""

from __future__ import annotations

from curvewright.core.run import Measurement, Reading, Sample, SampleKind
from curvewright.io.importing import import_samples
from curvewright.io.tables import table_from_csv


def write(path, lines):  # type: ignore[no-untyped-def]
    path.write_bytes("\ufeff".encode() + ("\r\n".join(lines) + "\r\n").encode("utf-8"))
    return path


HEADER = "Sample,Analyte,Type,Dilution,Nominal,Replicate,Response (counts),Run order"


def test_rows_of_a_sample_become_one_sample_with_its_replicates(tmp_path) -> None:
    path = write(tmp_path / "zinc_samples.csv", [
        HEADER,
        "QB-01,zinc,unknown,1,,,120.5,1",
        "QB-01,zinc,unknown,1,,,121.25,1",      # replicate 2, numbered by the import
        "QB-01,copper,unknown,1,,,40.75,1",     # another analyte of the same sample
        "QB-02,zinc,unknown,5,,2,300.5,2",      # replicate numbers given
        "QB-02,zinc,unknown,5,,1,298.0,2",
        "BLK,zinc,blank,1,,,2.5,3",
        "QC-M,zinc,QC,1,,,150.0,4",
        "QC-M,zinc,QC,1,2.5,,151.5,4",          # the nominal value on the second row only
        "QB-03,zinc,,2,,,88.125,5",             # an empty kind: an unknown
    ])
    result = import_samples(table_from_csv(path), analyte="zinc")
    assert not result.rejected

    def m(name: str, replicate: int, text: str) -> Measurement:
        return Measurement(name, replicate, Reading(float(text), text))

    assert result.samples == (
        Sample("QB-01", SampleKind.UNKNOWN, 1, 1.0, (m("zinc", 1, "120.5"), m("zinc", 2, "121.25"),
                                                      m("copper", 1, "40.75"))),
        Sample("QB-02", SampleKind.UNKNOWN, 2, 5.0, (m("zinc", 2, "300.5"), m("zinc", 1, "298.0"))),
        Sample("BLK", SampleKind.BLANK, 3, 1.0, (m("zinc", 1, "2.5"),)),
        Sample("QC-M", SampleKind.QC, 4, 1.0, (m("zinc", 1, "150.0"), m("zinc", 2, "151.5")), (("zinc", 2.5),)),
        Sample("QB-03", SampleKind.UNKNOWN, 5, 2.0, (m("zinc", 1, "88.125"),)),
    )


def test_rows_that_contradict_their_sample_are_named_by_row_field_and_reason(tmp_path) -> None:
    path = write(tmp_path / "zinc_samples.csv", [
        HEADER,
        "QB-01,zinc,unknown,1,,,120.5,1",
        "QB-01,zinc,QC,1,,,121.0,1",            # row 3: another kind
        "QB-01,zinc,unknown,10,,,122.0,1",      # row 4: another dilution
        "QB-02,zinc,unknown,1,,1,300.5,2",
        "QB-02,zinc,unknown,1,,1,301.0,2",      # row 6: replicate 1 again
        "QB-01,zinc,unknown,1,,,123.0,1",       # row 7: QB-01's second zinc replicate
        "QB-01,zinc,unknown,1,,2,124.0,1",      # row 8: replicate 2 again
        ",zinc,unknown,1,,,5.0,9",              # row 9: no id
    ])
    result = import_samples(table_from_csv(path), analyte="zinc")
    found = [(c.row, c.column, c.reason) for c in result.rejected]
    assert found == [
        (3, "3 (Type)", "differs from row 2 of the same sample (unknown)"),
        (4, "4 (Dilution)", "differs from row 2 of the same sample (1)"),
        (6, "6 (Replicate)", "sample 'QB-02' already has replicate 1 of zinc (row 5)"),
        (8, "6 (Replicate)", "sample 'QB-01' already has replicate 2 of zinc (row 7)"),
        (9, "1 (Sample)", "a sample needs an id"),
    ], found
    assert [(s.id, [(x.replicate, x.response.text) for x in s.measurements]) for s in result.samples] == [
        ("QB-01", [(1, "120.5"), (2, "123.0")]), ("QB-02", [(1, "300.5")])]
