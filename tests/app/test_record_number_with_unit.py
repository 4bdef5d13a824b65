"""A number and its unit on one line of the printed record's running text: a reader who finds "(0.4545" at
the end of a line and "µg/L)" at the start of the next can misread or miscopy the value. Every demo run's
record is laid out on the record's own writer, as the command line writes it, and its lines of running
text are read in the order they are printed. (A table's cell narrower than a number with its unit sets the
unit on the cell's next line, under the number, rather than splitting the table into column groups.)"""

from __future__ import annotations

import re
from datetime import datetime, timezone

import pypdfium2 as pdfium
import pytest

from curvewright.app import report_pdf
from curvewright.app.record_layout import TextOp
from curvewright.core.run_analysis import analyse_run
from curvewright.io.report import build_report
from curvewright.io.run_document import open_run
from tests.app.conftest import in_memory_record
from tests.io.helpers import DEMO_RUNS

GENERATED = datetime(2026, 12, 3, 7, 0, tzinfo=timezone.utc)
NUMBER_AT_END = re.compile(r"[\d⁰¹²³⁴⁵⁶⁷⁸⁹][)\]]?$")
UNIT_AT_START = re.compile(r"^(?:[µμnmpk]?(?:g|mol|L|M)/(?:[mµμ]?L|[mk]?g)|%|ppm|ppb|ppt)(?![\w/])")
"""A concentration unit or a percentage at the start of a line (not a heading such as "LOD/LOQ")."""


def running_lines(layout) -> list[tuple[int, list[str]]]:  # type: ignore[no-untyped-def]
    """Each page's lines of running text (not table cells), in the order they are printed."""
    return [(number, [op.text.replace("\u00a0", " ").strip() for op in page.ops
                      if isinstance(op, TextOp) and not op.style.startswith("table")])
            for number, page in enumerate(layout.pages, start=1)]


@pytest.mark.parametrize("path", DEMO_RUNS, ids=[p.stem for p in DEMO_RUNS])
def test_no_line_of_running_text_ends_a_number_whose_unit_starts_the_next(qapp, path) -> None:  # type: ignore[no-untyped-def]
    content = build_report(analyse_run(open_run(path).run), generated=GENERATED)
    with in_memory_record() as record:
        layout = report_pdf.lay_out(content, record.writer)
        pages = running_lines(layout)
    assert sum(len(lines) for _, lines in pages) > 20
    split = [f"page {number}: {a!r} / {b!r}" for number, lines in pages for a, b in zip(lines, lines[1:])
             if NUMBER_AT_END.search(a) and UNIT_AT_START.search(b)]
    assert not split, "a number parted from its unit:\n" + "\n".join(split)
    # and the record as written keeps them together where a reader's software reads it
    pdf = pdfium.PdfDocument(report_pdf.pdf_bytes(content))
    text = "\n".join(page.get_textpage().get_text_range() for page in pdf).replace("\u00a0", " ")
    for number, lines in pages:
        for line in lines:
            for pair in re.findall(r"\d[)\]]? (?:[µμ]?[A-Za-z]{1,3}/[A-Za-z]{1,3}|%)", line):
                assert pair in text, f"page {number}: {pair!r} is not on one line of the written record"
