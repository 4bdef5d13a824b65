"""A number and its unit on one line of the printed record: a reader who finds "(0.4545" at the end of a
line and "µg/L)" at the start of the next can misread or miscopy the value. Every demo run's record is
written as the command line writes it and read back as a reader's PDF software gives its lines."""

from __future__ import annotations

import re
import unicodedata
from datetime import datetime, timezone

import pypdfium2 as pdfium
import pytest

from curvewright.app import report_pdf
from curvewright.core.run_analysis import analyse_run
from curvewright.io.report import build_report
from curvewright.io.run_document import open_run
from tests.io.helpers import DEMO_RUNS

GENERATED = datetime(2026, 12, 3, 7, 0, tzinfo=timezone.utc)
NUMBER_AT_END = re.compile(r"\d[)\]]?$")
UNIT_AT_START = re.compile(r"^(?:[µμnmpk]?(?:g|mol|L|M)/(?:[mµμ]?L|[mk]?g)|%|ppm|ppb|ppt)(?![\w/])")
"""A concentration unit or a percentage at the start of a line (not a heading such as "LOD/LOQ")."""


def lines_of(page) -> list[str]:  # type: ignore[no-untyped-def]
    text = unicodedata.normalize("NFKC", page.get_textpage().get_text_range()).replace("\u00a0", " ")
    return [line.strip() for line in text.replace("\r\n", "\n").split("\n") if line.strip()]


@pytest.mark.parametrize("path", DEMO_RUNS, ids=[p.stem for p in DEMO_RUNS])
def test_no_line_of_the_record_ends_a_number_whose_unit_starts_the_next(qapp, path) -> None:  # type: ignore[no-untyped-def]
    content = build_report(analyse_run(open_run(path).run), generated=GENERATED)
    pdf = pdfium.PdfDocument(report_pdf.pdf_bytes(content))
    split = []
    for number, page in enumerate(pdf, start=1):
        lines = lines_of(page)
        split += [f"page {number}: {a!r} / {b!r}" for a, b in zip(lines, lines[1:])
                  if NUMBER_AT_END.search(a) and UNIT_AT_START.search(b)]
    assert not split, "a number parted from its unit:\n" + "\n".join(split)
