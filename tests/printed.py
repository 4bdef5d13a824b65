"""Reading a written calibration record back as a reader's PDF software gives its text, for the tests
that look for the record's words."""

from __future__ import annotations

import unicodedata
from pathlib import Path

import pypdfium2 as pdfium


def printed_pages(path: Path) -> list[str]:
    """Each page's text of the PDF at ``path``, compatibility characters folded (NFKC), no-break spaces
    read as spaces and every run of white space as one space."""
    document = pdfium.PdfDocument(str(path))
    try:
        pages = [document[i].get_textpage().get_text_range() for i in range(len(document))]
    finally:
        document.close()
    return [" ".join(unicodedata.normalize("NFKC", text).replace("\u00a0", " ").split()) for text in pages]


def printed_text(path: Path) -> str:
    """The text of every page of the PDF at ``path`` as one line, read as :func:`printed_pages` reads a page."""
    return " ".join(" ".join(printed_pages(path)).split())
