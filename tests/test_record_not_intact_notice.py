"""A record whose trail or signatures do not check says so where a reader cannot miss it. The run is
signed on the command line and the signature then deleted from the file in an editor; ``quantify
--report --export`` runs as a subprocess. The record's first page carries the notice right after the
verdict, in the verdict's size and weight; every page's footer says "Record NOT intact — see page 1";
the workbook's first sheet carries it beside its title (bold, red) and in a row after the verdict. An
intact run's record and workbook carry none of it."""

from __future__ import annotations

import ctypes
import json
import subprocess
import unicodedata
from pathlib import Path

import openpyxl
import pypdfium2 as pdfium
import pypdfium2.raw as pdfium_c

from tests.io.helpers import ROOT
from tests.cli_runs import run_cli

DEMO = ROOT / "sample_runs" / "nitrate_water_linear.json"
FOOTER = "Record NOT intact — see page 1"
NOTICE = "Record NOT intact: its audit trail or signatures do not check"


def written(tmp_path: Path, remove_signature: bool) -> tuple[Path, Path]:
    path = tmp_path / "nitrate.json"
    path.write_bytes(DEMO.read_bytes())
    signed = run_cli("sign", str(path), "--role", "reviewer", "--analyst", "Kim Quillfeather")  # an invented person
    assert signed.returncode == 0, signed.stderr
    if remove_signature:
        document = json.loads(path.read_text(encoding="utf-8"))
        document["signatures"] = []
        path.write_text(json.dumps(document, indent=1, ensure_ascii=False), encoding="utf-8")
    record, book = tmp_path / "record.pdf", tmp_path / "book.xlsx"
    done = run_cli("quantify", str(path), "--report", str(record), "--export", str(book))
    assert done.returncode == (1 if remove_signature else 0), done.stdout + done.stderr
    return record, book


def pages(record: Path) -> list[tuple[str, list[tuple[str, float, int]]]]:
    """Each page's text, and each line with the font size and weight of its first character."""
    document = pdfium.PdfDocument(str(record))
    out = []
    try:
        for i in range(len(document)):
            page = document[i]
            text = page.get_textpage()
            raw = text.get_text_range()
            lines, start = [], 0
            for line in raw.split("\r\n"):
                index = start + len(line) - len(line.lstrip())
                size = pdfium_c.FPDFText_GetFontSize(text.raw, index) if line.strip() else 0.0
                weight = pdfium_c.FPDFText_GetFontWeight(text.raw, index) if line.strip() else 0
                lines.append((unicodedata.normalize("NFKC", line).strip(), round(size, 1), weight))
                start += len(line) + 2
            out.append((" ".join(unicodedata.normalize("NFKC", raw).split()), lines))
    finally:
        document.close()
    return out


def test_a_record_not_intact_says_so_beside_the_verdict_and_in_every_footer(tmp_path: Path) -> None:
    record, book = written(tmp_path, remove_signature=True)
    printed = pages(record)
    first_lines = printed[0][1]
    verdict = next(i for i, (t, _, _) in enumerate(first_lines) if t.startswith("Run verdict: ACCEPTED"))
    notice = next(i for i, (t, _, _) in enumerate(first_lines) if t.startswith("Record NOT intact:"))
    verdict_lines = next(i for i in range(verdict, len(first_lines)) if first_lines[i][0].endswith("pass"))
    assert notice == verdict_lines + 1  # right after the verdict
    assert first_lines[notice][1:] == first_lines[verdict][1:]  # the verdict's size and weight
    small = next(line for line in first_lines if line[0].startswith("About the profile"))
    assert first_lines[notice][1] > small[1]  # not small print
    assert NOTICE in printed[0][0] and "that the document no longer holds" in printed[0][0]
    for number, (text, lines) in enumerate(printed, start=1):
        assert FOOTER in [t for t, _, _ in lines], f"page {number} has no footer notice"
        assert f"page {number} of {len(printed)}" in text

    sheets = openpyxl.load_workbook(book)  # not read-only: the cells' fonts are read too
    first = sheets.worksheets[0]
    assert first.title == "Run information"
    title_row = [c for c in first[2] if c.value]
    assert title_row[0].value == "Run information" and title_row[-1].value.startswith(NOTICE)
    assert title_row[-1].font.b and title_row[-1].font.color.rgb.endswith("A11B1B")
    items = [(r[0].value, r[1].value) for r in first.iter_rows(min_row=4) if r[0].value]
    at = [i for i, _ in items].index("Run verdict")
    assert items[at + 1] == ("Record", title_row[-1].value)
    sheets.close()


def test_an_intact_record_carries_no_notice(tmp_path: Path) -> None:
    record, book = written(tmp_path, remove_signature=False)
    printed = pages(record)
    assert all(FOOTER not in text and "NOT intact" not in text for text, _ in printed)
    sheets = openpyxl.load_workbook(book)
    first = sheets.worksheets[0]
    assert [c.value for c in first[2] if c.value] == ["Run information"]
    assert "Record" not in [r[0].value for r in first.iter_rows(min_row=4)]
    sheets.close()
