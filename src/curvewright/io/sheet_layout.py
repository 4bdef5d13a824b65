"""How a table is laid out on a workbook sheet: column widths that fit what the cells show, the
header row's height when its headings wrap, and where the panes freeze.

Widths are in the spreadsheet's character units (the width of one digit of the default font).
A column is as wide as its widest shown value, or as its longest heading word (headings wrap),
plus a margin, within :data:`MIN_WIDTH` and :data:`MAX_WIDTH`; text longer than that (a reason,
an audit entry) runs on into the empty cells beside it or is read in the cell itself. Numbers are
measured as they are shown (the cell's number format), not at their stored full precision.
"""

from __future__ import annotations

import math
import textwrap
from itertools import chain, islice

from .result_tables import Column, Table, Value, format_value

MIN_WIDTH = 6.0
MAX_WIDTH = 60.0
MARGIN = 2.0
HEADER_LINE_HEIGHT = 15.0
"""Points per line of the header row (the default font's line height)."""
MEASURED_NUMBERS = 2000
"""Numbers are measured on the first rows and on each column's extremes: their shown width depends on
the magnitude and on the display rule, which the extremes bound."""
HEADER_ROW = 3
"""The caution is row 1, the title row 2, the column headings row 3, the data from row 4."""


def column_widths(table: Table) -> tuple[float, ...]:
    """The width of each column of ``table`` on its sheet."""
    widths = []
    for j, column in enumerate(table.columns):
        values = [row[j] for row in table.rows]
        shown = max((len(t) for t in _shown(values, column, table)), default=0)
        heading_word = max((len(w) for w in column.heading.split()), default=0)
        widths.append(min(max(float(max(shown, heading_word)) + MARGIN, MIN_WIDTH), MAX_WIDTH))
    return tuple(widths)


def header_lines(table: Table, widths: tuple[float, ...]) -> int:
    """How many lines the wrapped column headings take at ``widths``."""
    return max((len(textwrap.wrap(c.heading, max(int(w - MARGIN), 1), break_long_words=False)) or 1
                for c, w in zip(table.columns, widths)), default=1)


def header_height(table: Table, widths: tuple[float, ...]) -> float:
    """The header row's height in points."""
    return HEADER_LINE_HEIGHT * header_lines(table, widths)


def freeze_cell(table: Table) -> str:
    """The top-left cell of the scrolling pane: below the headings, and right of the first column (the
    sample or standard id) when the table is wide enough to scroll sideways."""
    return f"B{HEADER_ROW + 1}" if len(table.columns) > 4 else f"A{HEADER_ROW + 1}"


def _shown(values: list[Value], column: Column, table: Table):  # type: ignore[no-untyped-def]
    """The texts a reader sees in the column's cells (numbers measured on a sample and the extremes;
    a column shown by its row (:meth:`~.result_tables.Table.columns_for`) each number as its row shows it)."""
    texts = (v for v in values if isinstance(v, str))
    if column.display == "interval" or column.display.startswith("entered:"):
        j = table.columns.index(column)
        at = [i for i, v in enumerate(values) if isinstance(v, (int, float)) and not isinstance(v, bool)]
        finite = [i for i in at if math.isfinite(float(values[i]))]  # type: ignore[arg-type]
        unbounded = [i for i in at if not math.isfinite(float(values[i]))]  # type: ignore[arg-type]
        extremes = (min(finite, key=values.__getitem__), max(finite, key=values.__getitem__)) if finite else ()
        rows = chain(at[:MEASURED_NUMBERS], extremes, unbounded)
        return chain(texts, (format_value(values[i], table.columns_for(table.rows[i])[j], table.rounding) for i in rows))
    numbers = [v for v in values if isinstance(v, (int, float)) and not isinstance(v, bool)]
    finite = [float(v) for v in numbers if math.isfinite(float(v))]
    extremes = [min(finite), max(finite)] if finite else []
    measured = chain(islice(numbers, MEASURED_NUMBERS), extremes, (v for v in numbers if not math.isfinite(float(v))))
    return chain(texts, (format_value(v, column, table.rounding) for v in measured))
