"""The record sets Latin, Greek and Cyrillic text glyph for character, without shaping, and shapes the
scripts that cannot be read without it: a line is drawn in the font it was measured in."""

from __future__ import annotations

import re
import zlib

import pytest
from PySide6.QtGui import QFontMetricsF

from curvewright.app.record_layout import RecordLayout, TextOp, font, plain_font
from tests.app.conftest import in_memory_record

LATIN = "Results need review by qualified staff in the office"  # "fi" and "ffi", which shaping joins
ARABIC = "مختبر المياه"  # a laboratory's name as typed: its letters join only when shaped


def drawn_lines(pdf: bytes) -> list[list[tuple[float, float]]]:
    """Each text object of the page as the places of its glyphs (device units), in drawing order."""
    page = next(zlib.decompress(m.group(1)) for m in re.finditer(rb"stream\n(.*?)\nendstream", pdf, re.S)
                if m.group(1)[:2] == b"x\x9c" and b"BT" in zlib.decompress(m.group(1)))
    lines = []
    for block in re.findall(rb"BT\n(.*?)ET", page, re.S):
        x = y = 0.0
        places = []
        for dx, dy in re.findall(rb"(-?[\d.]+) (-?[\d.]+) Td", block):
            x, y = x + float(dx), y + float(dy)
            places.append((x, y))
        lines.append(places)
    return lines


def test_latin_text_is_drawn_glyph_for_character_and_arabic_shaped(qapp) -> None:  # type: ignore[no-untyped-def]
    with in_memory_record() as record:
        layout = RecordLayout(record.writer, "header", "footer", "caution")
        layout.paragraph(LATIN, "body")
        layout.paragraph(ARABIC, "body")
        device = record.writer
        shaped = QFontMetricsF(font("body"), device).horizontalAdvance(ARABIC)
        unshaped = QFontMetricsF(plain_font("body"), device).horizontalAdvance(ARABIC)
        assert shaped < 0.8 * unshaped  # joined, the name is much narrower than its letters set apart
        assert layout.m.width("body", ARABIC) == pytest.approx(shaped)  # measured as it is drawn
        assert layout.m.width("body", LATIN) == pytest.approx(
            QFontMetricsF(plain_font("body"), device).horizontalAdvance(LATIN))
        texts = [op.text for op in layout.pages[0].ops if isinstance(op, TextOp)]
        assert texts == [LATIN, ARABIC]
        layout.paint(record.writer)
        lines = drawn_lines(record.pdf())
    latin, arabic = lines[0], lines[1]
    assert len(latin) == len(LATIN.replace(" ", "")) + LATIN.count(" ")  # one glyph per character, no ligature
    span = max(x for x, _ in arabic) - min(x for x, _ in arabic)
    assert span < shaped  # the joined letters, drawn where shaping put them
