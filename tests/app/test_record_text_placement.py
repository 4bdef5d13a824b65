"""Placing the record's text measures lines, not every start of a line: the lines and column widths must
be exactly those found by measuring word by word, in every style of the record, for prose, numbers,
intervals, signs kept with their numbers and paths broken where they must be."""

from __future__ import annotations

import random

import pytest

from curvewright.app.record_layout import CELL_PAD_X, CELL_PAD_Y, FIT_SLACK, LONGEST_UNBROKEN, MM, STYLES, RecordLayout
from tests.app.conftest import in_memory_record

WORDS = ("the", "standard", "calibration", "back-calculated", "concentration", "within", "limits", "±20", "%",
         "0.00352587", "<", "0.50", "4.99", "–", "5.02", "mg/L", "µg/L", "LLOQ", "(ULOQ)", "QC", "1/x²", "W", "i",
         "Mandel's", "y = 0.725615 + 0.078304·x_added", "C:/lab/runs/2026/batch_118/nitrate-N_water_linear.json",
         "9b0e30bdf0f211a5c8723e4f95d2a61b07c3e8f1d94b2a6c5e7f8091a2b3c4d5")


@pytest.fixture(scope="module")
def layout(qapp):  # type: ignore[no-untyped-def]
    with in_memory_record() as record:
        yield RecordLayout(record.writer, "header", "footer", "caution")


def word_by_word(layout: RecordLayout, style: str, text: str, width: float) -> list[str]:
    """Lines found by measuring each start of a line, one more word at a time (the plain greedy rule)."""
    lines: list[str] = []
    for paragraph in text.split("\n"):
        line = ""
        for token in layout.tokens(style, paragraph, width):
            candidate = token if not line else f"{line} {token}"
            if layout.m.measure(style, candidate) <= width or not line:
                line = candidate
            else:
                lines.append(line)
                line = token
        lines.append(line)
    return lines


def test_lines_are_those_found_word_by_word(layout) -> None:  # type: ignore[no-untyped-def]
    rng = random.Random(20261203)
    checked = 0
    for style in STYLES:
        for _ in range(40):
            text = " ".join(rng.choice(WORDS) for _ in range(rng.randint(1, 60)))
            if rng.random() < 0.2:
                text = text.replace(" the ", "\nthe ", 1)
            for width in (layout.width, 0.5 * layout.width, 0.2 * layout.width, 25 * MM):
                assert layout.wrap(style, text, width) == word_by_word(layout, style, text, width), (style, width, text)
                checked += 1
    assert checked == len(STYLES) * 40 * 4


def test_every_line_fits_and_the_next_word_would_not(layout) -> None:  # type: ignore[no-untyped-def]
    text = " ".join(WORDS[:24] * 3)
    width = 0.45 * layout.width
    lines = layout.wrap("body", text, width)
    tokens = [t for line in lines for t in line.split(" ")]
    assert " ".join(tokens) == " ".join(layout.tokens("body", text, width))  # nothing lost or repeated
    for line, following in zip(lines, lines[1:]):
        assert layout.m.measure("body", line) <= width
        assert layout.m.measure("body", f"{line} {following.split(' ')[0]}") > width


def test_a_columns_narrowest_width_is_its_widest_word(layout) -> None:  # type: ignore[no-untyped-def]
    rng = random.Random(7)
    for style in ("table", "table_header"):
        for _ in range(50):
            cells = [" ".join(rng.choice(WORDS) for _ in range(rng.randint(1, 4))) for _ in range(rng.randint(1, 12))]
            words = [w for c in cells for w in layout.bound_words(c, units=False)]  # a unit counts as its own word
            widest = max(layout.m.measure(style, w) for w in words)
            expected = min(widest, LONGEST_UNBROKEN * layout.width) + 2 * CELL_PAD_X + FIT_SLACK
            assert layout._min_width(cells, style) == pytest.approx(expected, rel=1e-12), cells


def test_a_table_that_fits_sets_every_cell_on_one_line(layout) -> None:  # type: ignore[no-untyped-def]
    """Columns sized to their widest cell must never wrap that cell: the width handed to the wrapper is
    the column's width less its padding, and rounding may not take it below the measured text."""
    rng = random.Random(20261204)
    checked = 0
    for _ in range(200):
        digits = rng.randint(3, 9)
        cells = [f"y = {rng.uniform(0.001, 9.9):.{digits}f}·x", f"{rng.uniform(0, 500):.{rng.randint(0, 6)}f}", "1/x²"]
        headings = ["Equation", "Value", "Weighting"]
        pages, before = len(layout.pages), len(layout.pages[-1].ops)
        layout.table("Fits", headings, [cells], [False, True, False])
        if len(layout.pages) != pages:  # the table began a new page
            before = 0
        ops = [op for op in layout.pages[-1].ops[before:] if getattr(op, "style", "") == "table"]
        assert [op.text for op in ops] == cells, cells
        checked += 1
    assert checked == 200


def test_a_rows_cells_are_set_as_wrapping_sets_them(layout) -> None:  # type: ignore[no-untyped-def]
    """A row sets a cell of one word that fits without wrapping it: every cell's lines and the row's
    height must be those that wrapping each cell gives, for words, numbers, signs kept with their
    numbers, no-break and other spaces, line breaks, empty cells and words wider than their column."""
    rng = random.Random(20261205)
    pieces = WORDS + ("", " ", "\u00a0", "a\u00a0b", "x\ty", "two  spaces", " lead", "trail ", "5.0\n6.0", "≤",
                      "<0.5", "4.99–5.02", "n/a")
    checked = 0
    for style in ("table", "table_header"):
        for _ in range(300):
            cells = ["".join(rng.choice(pieces) for _ in range(rng.randint(0, 2))) for _ in range(rng.randint(1, 6))]
            widths = [rng.choice((8 * MM, 15 * MM, 30 * MM, layout.width / 2)) for _ in cells]
            for cell in cells:  # some cells measured beforehand, as a table measures its columns first
                if rng.random() < 0.7:
                    layout.m.width(style, cell)
            height, lines = layout._row_height(cells, widths, style)
            expected = [layout.wrap(style, c, w - 2 * CELL_PAD_X) if c else [""] for c, w in zip(cells, widths)]
            assert lines == expected, (cells, widths)
            assert height == max(len(e) for e in expected) * layout.m.line_height(style) + 2 * CELL_PAD_Y
            checked += 1
    assert checked == 600
