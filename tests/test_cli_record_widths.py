"""The printed record's samples table with long sample ids, written by the command line and read back
from the PDF: the table stays in one piece across the page, and the ids wrap while the numbers beside
them keep their width. The run is invented (the Marlbrook pond survey's nickel, ICP-MS counts); the
tables are written as a spreadsheet saves CSV (quoted where a field holds a comma)."""

from __future__ import annotations

import unicodedata

import pytest
from pypdf import PdfReader

from tests.cli_runs import run_cli

STANDARDS = """Standard id,Level,Concentration (µg/L),Response (counts)
Ni-A1-1,A1,0.5,34.71
Ni-A1-2,A1,0.5,33.958
Ni-A2-1,A2,1,66.402
Ni-A2-2,A2,1,65.117
Ni-A3-1,A3,2,131.06
Ni-A3-2,A3,2,127.843
Ni-A4-1,A4,5,322.519
Ni-A4-2,A4,5,325.287
Ni-A5-1,A5,10,641.93
Ni-A5-2,A5,10,650.446
Ni-A6-1,A6,25,1609.118
Ni-A6-2,A6,25,1592.7
Ni-A7-1,A7,50,3236.404
Ni-A7-2,A7,50,3177.815
"""
LONG_ID = "MB-114-POND-EDGE-GRAB-DUPLICATE-AFTER-FILTER-CHANGE-RERUN3"
SAMPLES = f"""Sample,Type,Dilution,Nominal,Response (counts)
Field blank 3,blank,1,,2.406
QC low,QC,1,1.5,97.662
QC high,QC,1,40,2581.02
{LONG_ID},unknown,1,,218.475
{LONG_ID},unknown,1,,224.019
"Composite from the east inflow culvert, 12 h time-proportional, acidified on site",unknown,5,,1431.77
"Composite from the east inflow culvert, 12 h time-proportional, acidified on site",unknown,5,,1420.306
MB-117,unknown,10,,12790.5
"""
TEXT_LEFT, TEXT_WIDTH = 16 / 25.4 * 300, 180 / 25.4 * 300
"""The record's text area in the PDF's units as the record writes them (300 per inch): 16 mm from the
left edge, 210 − 16 − 14 mm wide."""


@pytest.fixture(scope="module")
def record(tmp_path_factory) -> PdfReader:
    folder = tmp_path_factory.mktemp("record")
    (folder / "standards.csv").write_text(STANDARDS, encoding="utf-8")
    (folder / "samples.csv").write_text(SAMPLES, encoding="utf-8")
    out = run_cli("quantify", "--standards", str(folder / "standards.csv"), "--samples", str(folder / "samples.csv"),
                  "--analyte", "nickel", "--model", "linear", "--weighting", "1/x^2", "--report",
                  str(folder / "record.pdf"))
    assert out.returncode == 0, out.stderr
    return PdfReader(folder / "record.pdf")


def words_at(page) -> list[tuple[str, float, float]]:  # type: ignore[no-untyped-def]
    """Each piece of text on the page with its left edge and baseline (the record's units)."""
    found: list[tuple[str, float, float]] = []

    def visit(text, cm, tm, font, size):  # type: ignore[no-untyped-def]
        if text.strip():
            found.append((" ".join(unicodedata.normalize("NFKC", text).split()), tm[4], tm[5]))

    page.extract_text(visitor_text=visit)
    return found


def test_the_samples_table_is_not_split_into_column_groups(record) -> None:
    text = " ".join(" ".join(unicodedata.normalize("NFKC", page.extract_text()).split()) for page in record.pages)
    assert "Samples – nickel" in text
    assert "Samples – nickel (continued:" not in text  # a second part with the columns that did not fit


def test_long_ids_wrap_and_the_numbers_keep_their_width(record) -> None:
    page = next(p for p in record.pages if "MB-114-" in p.extract_text() and "Replicates" in p.extract_text())
    found = words_at(page)
    # the long id is broken after its hyphens, on lines of its own inside a narrow column
    pieces = [(t, x, y) for t, x, y in found if t.startswith("MB-114-")]
    assert pieces and pieces[0][0] != LONG_ID
    _, id_x, id_y = pieces[0]
    kind_x = next(x for t, x, y in found if t == "unknown" and abs(y - id_y) < 1)
    assert abs(id_x - TEXT_LEFT) < 0.05 * TEXT_WIDTH
    assert kind_x - id_x < 0.2 * TEXT_WIDTH, kind_x - id_x  # the id column takes a fifth of the width at most
    # the sample's interval stands whole on the id's first line, and the QC recoveries whole in the
    # samples table (which may run over two pages as the record's earlier pages grow)
    row = [t for t, x, y in found if abs(y - id_y) < 1]
    assert "3.359 – 3.484" in row and row.count("3.42") == 2, row
    table = [w for p in record.pages
             if "Samples – nickel" in " ".join(unicodedata.normalize("NFKC", p.extract_text()).split())
             for w in words_at(p)]
    assert {"99.4", "100.7"} <= {t for t, _, _ in table}
