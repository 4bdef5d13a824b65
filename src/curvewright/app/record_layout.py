"""Laying out the calibration record on A4 pages, for a reviewer who signs it.

The content (:mod:`curvewright.io.report`) is placed block by block into the text area of each
page, measured with the fonts it is printed in, in two passes: the first places everything and so
knows the number of pages, the second paints, with a running header (run, analyte, method) and a
footer (page N of M, the software version, the content hash and the caution) on every page.

Tables
    Each column is at least as wide as the longest word or number in it (header included), so that
    no word or number is broken inside a cell; when the columns cannot all fit the page, the table
    is printed in column groups, each repeating the first column. A row is never split across pages,
    and the header row is repeated on every page the table runs onto. Only a token longer than
    nearly half the page (a file path, a hash) is broken, at "/", "_" or "-" where it has them.
Figures
    Scaled to the text width (never past the margins) and moved to the next page rather than cut.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

from PySide6.QtCore import QRectF, Qt
from PySide6.QtGui import QColor, QFont, QFontMetricsF, QImage, QPainter, QPen

MM = 300 / 25.4
"""Device units per millimetre at the 300 dpi the record is written at."""
PAGE_WIDTH, PAGE_HEIGHT = 210 * MM, 297 * MM
MARGIN_LEFT, MARGIN_RIGHT, MARGIN_TOP, MARGIN_BOTTOM = 16 * MM, 14 * MM, 20 * MM, 22 * MM
"""The text area; the running header sits above it and the footer below it, both inside the page's
printable area (at least 8 mm from each edge)."""
PRINTABLE_MARGIN = 8 * MM
CELL_PAD_X, CELL_PAD_Y = 1.2 * MM, 0.6 * MM
FIT_SLACK = 1.0
"""Device units added to a column's width so that rounding never breaks its longest word."""
LONGEST_UNBROKEN = 0.45
"""Fraction of the text width beyond which a single token may be broken (paths, hashes)."""
BREAKABLE_WIDTH = 0.1
"""Fraction of the text width beyond which an id in a column of ids may be broken (at "-", "_" or "/"
where it has them), so that the numbers beside it keep their width."""
BREAKABLE_SHARE = 0.25
"""The most of the text width a column of ids claims when the columns share the room of a table that
does not fit on one line per cell."""

STYLES = {
    # name: (point size, bold, colour)
    "title": (15.0, True, "#111111"),
    "heading": (12.5, True, "#1d4f91"),
    "subheading": (10.0, True, "#222222"),
    "body": (8.8, False, "#111111"),
    "small": (7.6, False, "#333333"),
    "caution": (8.8, True, "#7a2400"),
    "table": (7.2, False, "#111111"),
    "table_header": (7.2, True, "#111111"),
    "running": (7.2, False, "#444444"),
    "alarm": (10.0, True, "#a11b1b"),  # a record that is not intact: the verdict's size and weight, in red
    "running_alarm": (7.2, True, "#a11b1b"),
}
SPACE_BEFORE = {"heading": 2.5, "subheading": 1.8}
SPACE_AFTER = {"title": 2.5, "heading": 2.0, "subheading": 1.4, "body": 1.4, "small": 1.0, "caution": 2.0,
               "alarm": 1.4}
ALARM_FOOTER = "Record NOT intact — see page {page}"
"""Every page's footer when the record carries a notice that it is not intact (an "alarm" paragraph)."""


def font(style: str) -> QFont:
    """The font of ``style``, made once (every line of the record is set in one of a few fonts)."""
    found = _FONTS.get(style)
    if found is None:
        size, bold, _ = STYLES[style]
        found = QFont("DejaVu Sans")
        found.setPointSizeF(size)
        found.setBold(bold)
        _FONTS[style] = found
    return QFont(found)


def plain_font(style: str) -> QFont:
    """The font of ``style`` set without OpenType shaping (``QFont.PreferNoShaping``), for a text that
    :data:`SET_PLAIN` takes: its glyphs straight from the font's character map, with no kerning pairs and
    no ligatures ("fi" as two letters), a few device units wider in some pairs of letters. Shaping each
    line when it is measured and again when it is drawn took about a tenth of the record's processor
    time; the same face is embedded once for both fonts."""
    found = QFont(font(style))
    found.setStyleStrategy(QFont.StyleStrategy.PreferNoShaping)
    return found


SET_PLAIN = re.compile("[\u0020-\u007e\u00a0-\u00ac\u00ae-\u02ff\u0370-\u03ff\u0400-\u0482\u048a-\u04ff"
                       "\u2010-\u2027\u2030-\u205e\u2070-\u209f\u20a0-\u20bf\u2100-\u22ff\u25a0-\u25ff]*")
"""A text set with :func:`plain_font`: Latin, Greek and Cyrillic letters, digits, punctuation, sub- and
superscripts, letterlike signs and mathematical operators, without combining marks, bidirectional
controls or any script whose letters change shape or order when set (Arabic, Hebrew, the Indic
scripts): Qt leaves those unshaped under ``PreferNoShaping``, so a text with any of them (a name, a
comment) is set with the shaping :func:`font` as before."""

_FONTS: dict[str, QFont] = {}
_SET_PLAIN = SET_PLAIN.fullmatch
_GLUE = re.compile("[<>≤≥–]")
_NUMBER_THEN_UNIT = re.compile(r"[\d⁰¹²³⁴⁵⁶⁷⁸⁹][)\]]?\s+(?:[µμ]?[A-Za-z]{1,3}/[A-Za-z]{1,3}|%|ppm|ppb|ppt)(?![\w/])")
"""A number followed by its unit ("0.4545 µg/L", "(12 ng/mL)", "3.5 %"): a unit is a quotient of two short
symbols or a part-per word. :meth:`RecordLayout.bound_words` keeps the two on one line."""
_UNIT = re.compile(r"(?:[µμ]?[A-Za-z]{1,3}/[A-Za-z]{1,3}|%|ppm|ppb|ppt)[)\],;:.]*")
_NUMBER_END = re.compile(r".*[\d⁰¹²³⁴⁵⁶⁷⁸⁹][)\]]?")
_BREAKING_SPACES = re.compile("[^\\S\u00a0]+")
"""White space a line may break at: any but the no-break space."""
_ONE_WORD = re.compile(r"[^\s<>≤≥–]+")
"""A text that :meth:`RecordLayout.wrap` sets as it is on one line wherever it fits: one word, without the
signs that :meth:`RecordLayout.bound_words` joins to their neighbours."""
"""The characters of a word that :meth:`RecordLayout.bound_words` joins to its neighbours."""
_FLAGS = {align: int(align | Qt.AlignmentFlag.AlignVCenter)
          for align in (Qt.AlignmentFlag.AlignLeft, Qt.AlignmentFlag.AlignRight)}
"""The drawing flags of a line of text aligned left or right, centred in its box's height."""
_LEFT, _RIGHT = Qt.AlignmentFlag.AlignLeft, Qt.AlignmentFlag.AlignRight


@dataclass(slots=True)
class TextOp:
    rect: QRectF
    style: str
    text: str
    align: Qt.AlignmentFlag = Qt.AlignmentFlag.AlignLeft


@dataclass(slots=True)
class LineOp:
    x1: float
    y1: float
    x2: float
    y2: float
    colour: str = "#999999"
    width: float = 0.6


@dataclass(slots=True)
class FillOp:
    rect: QRectF
    colour: str


@dataclass
class ImageOp:
    rect: QRectF
    image: QImage


@dataclass
class FigureOp:
    """A figure that paints itself into a rectangle (:class:`curvewright.app.record_figures.PlottedFigure`: vectors)."""

    rect: QRectF
    figure: object


@dataclass
class Page:
    ops: list = field(default_factory=list)
    section: str = ""


class Metrics:
    """Font metrics at the writer's resolution, one per style."""

    def __init__(self, device) -> None:  # type: ignore[no-untyped-def]
        self.metrics = {name: QFontMetricsF(font(name), device) for name in STYLES}
        # each style's widths measured so far, and its measuring method (a record measures the same words
        # many times over: wrapping, column widths, row heights)
        self._widths: dict[str, dict[str, float]] = {name: {} for name in STYLES}
        self._measure = {name: m.horizontalAdvance for name, m in self.metrics.items()}
        self._plain = {name: QFontMetricsF(plain_font(name), device).horizontalAdvance for name in STYLES}
        self._line_heights = {name: m.lineSpacing() for name, m in self.metrics.items()}

    def width(self, style: str, text: str) -> float:
        """The advance of ``text`` in ``style``, in device units, measured once (:meth:`measure`)."""
        known = self._widths[style]
        found = known.get(text)
        if found is None:
            found = known[text] = (self._plain if _SET_PLAIN(text) else self._measure)[style](text)
        return found

    def measure(self, style: str, text: str) -> float:
        """The advance of ``text`` in ``style`` in the font it is drawn in (:func:`plain_font` where
        :data:`SET_PLAIN` takes it, else :func:`font`), measured afresh."""
        return (self._plain if _SET_PLAIN(text) else self._measure)[style](text)

    def line_height(self, style: str) -> float:
        return self._line_heights[style]

    def surely_within(self, style: str, text: str, width: float) -> bool:
        """True when ``text`` is certainly no wider than ``width`` without measuring it: even at twice the
        widest character of the font for each of its characters (a character drawn from another font
        is never twice as wide as the widest of this one)."""
        return 2 * len(text) * self.widest[style] <= width

    @property
    def average(self) -> dict[str, float]:
        """Each style's mean width of a character (the font's own figure), for estimates only."""
        found = self.__dict__.get("_average")
        if found is None:
            found = self.__dict__["_average"] = {name: m.averageCharWidth() for name, m in self.metrics.items()}
        return found

    @property
    def widest(self) -> dict[str, float]:
        found = self.__dict__.get("_widest")
        if found is None:
            found = self.__dict__["_widest"] = {name: m.maxWidth() for name, m in self.metrics.items()}
        return found


class RecordLayout:
    """Places blocks on pages; :meth:`paint` then draws them with the running header and footer."""

    def __init__(self, device, header_left: str, footer_left: str, caution: str) -> None:  # type: ignore[no-untyped-def]
        self.m = Metrics(device)
        self.header_left, self.footer_left, self.caution = header_left, footer_left, caution
        self.left, self.right = MARGIN_LEFT, PAGE_WIDTH - MARGIN_RIGHT
        self.top, self.bottom = MARGIN_TOP, PAGE_HEIGHT - MARGIN_BOTTOM
        self.width = self.right - self.left
        self.alarm_page: int | None = None
        """The page (1-based) of the first notice that the record is not intact; every footer points there."""
        self.pages: list[Page] = []
        self.section = ""
        self._font_style: tuple[str, bool] | str = ""  # the style and kind of font the painter holds ("" none)
        self._pen = None  # what the painter's pen is: a text style's colour, or a rule's (colour, width)
        self._fonts: dict[str, QFont] = {}
        self._colours: dict[str, QColor] = {}
        self.new_page()

    # --- pages -------------------------------------------------------------------------------------
    def new_page(self) -> None:
        self.pages.append(Page(section=self.section))
        self.y = self.top

    def set_section(self, text: str) -> None:
        """What the running header names from here on (the analyte and method)."""
        self.section = text
        if self.y == self.top:
            self.pages[-1].section = text

    def room(self) -> float:
        return self.bottom - self.y

    def ensure(self, height: float) -> None:
        if height > self.room() and self.y > self.top:
            self.new_page()

    def add(self, op) -> None:  # type: ignore[no-untyped-def]
        self.pages[-1].ops.append(op)

    # --- text ----------------------------------------------------------------------------------------
    def wrap(self, style: str, text: str, width: float) -> list[str]:
        """Lines of ``text`` within ``width``, broken between words only (see :meth:`tokens`)."""
        lines: list[str] = []
        known = self.m._widths[style]
        for paragraph in str(text).split("\n"):
            whole = " ".join(self.bound_words(paragraph))
            measured = known.get(whole)
            if measured is None and len(whole) * self.m.average[style] > 2 * width:
                # about two lines or more at the font's mean width of a character: set line by line from
                # that estimate without measuring the paragraph whole (the lines are found by measuring
                # them, so a paragraph that fits after all is still set on its one line)
                lines += self._greedy(style, self.tokens(style, paragraph, width), width, self.m.average[style])
                continue
            if measured is None:
                measured = self.m.width(style, whole)
            if measured <= width:
                # it fits on one line (most cells and captions): so does every word and every start of
                # it, and the line found word by word would be this one
                lines.append(whole)
                continue
            lines += self._greedy(style, self.tokens(style, paragraph, width), width, measured / max(len(whole), 1))
        return lines

    def _greedy(self, style: str, tokens: list[str], width: float, per_character: float) -> list[str]:
        """``tokens`` set line by line, each line as many tokens as fit in ``width`` (at least one).

        The line that fits is first estimated at ``per_character`` (the paragraph's mean width of a
        character, space included, or the font's for a paragraph of several lines), then checked by
        measuring it whole, and the line with one more token, moving the end until the one fits and the
        other does not: lines are the same as found by measuring every start of the line token by token
        (a longer start never measures narrower), with a few measurements a line instead of one a word."""
        widths = [len(t) * per_character for t in tokens]
        space = per_character
        lines: list[str] = []
        start = 0
        while start < len(tokens):
            # the estimate: tokens start..end-1 joined by spaces, summed
            end, used = start + 1, widths[start]
            while end < len(tokens) and used + space + widths[end] <= width:
                used += space + widths[end]
                end += 1
            # checked against the measured lines: move the end back while the line is too wide, then on
            # while the line with one more token still fits
            while end - start > 1 and self.m.width(style, " ".join(tokens[start:end])) > width:
                end -= 1
            while end < len(tokens) and self.m.width(style, " ".join(tokens[start:end + 1])) <= width:
                end += 1
            lines.append(" ".join(tokens[start:end]))
            start = end
        return lines

    def tokens(self, style: str, text: str, width: float) -> list[str]:
        """The words of ``text``, a sign kept with the number after it ("< 0.50") and an interval kept
        whole ("4.99 – 5.02"); a word wider than ``width`` is split at "/", "_" or "-" where it has
        them, else between characters (only ever a path or a hash, never a word of prose or a number)."""
        words = self.bound_words(text)
        if not words or self.m.surely_within(style, max(words, key=len), width):
            return words  # every word is certainly within the width (the longest by characters is)
        out = []
        for word in words:
            if self.m.surely_within(style, word, width) or self.m.width(style, word) <= width:
                out.append(word)
                continue
            head, _, unit = word.rpartition("\u00a0")
            if head and _UNIT.fullmatch(unit) and self.m.width(style, head) <= width:
                out += [head, unit]  # a number and its unit wider than a table's cell: the unit on the next line
                continue
            piece = ""
            for ch in word:
                if piece and self.m.width(style, piece + ch) > width:
                    cut = max(piece.rfind(c) for c in "/_-")
                    if cut > 0:
                        out.append(piece[: cut + 1])
                        piece = piece[cut + 1:]
                    else:
                        out.append(piece)
                        piece = ""
                piece += ch
            if piece:
                out.append(piece)
        return out

    @staticmethod
    def bound_words(text: str, units: bool = True) -> list[str]:
        """Words (split at spaces, not at no-break spaces: "3.20 × 10⁻⁵" is one), with a lone
        comparison sign joined to the word after it, a lone dash to the words on both sides (to the word
        before it only where that is a number with an exponent) and a unit to the number before it
        ("0.4545 µg/L"), joined by no-break spaces: a reader must never find a number on one line and its
        unit on the next. Without ``units`` a unit stays a word of its own: a table column's narrowest width
        is found so (:meth:`_min_width`), and a cell too narrow for a number with its unit sets the unit
        on the cell's next line (:meth:`tokens`) rather than the table being split into column groups."""
        if _GLUE.search(text) is None and (not units or _NUMBER_THEN_UNIT.search(text) is None):
            # no sign, no dash and no unit after a number: the words as they are (most cells)
            return text.split() if "\u00a0" not in text else _BREAKING_SPACES.split(text.strip())
        words: list[str] = []
        glue_next = False
        for word in (text.split() if "\u00a0" not in text else _BREAKING_SPACES.split(text.strip())):
            if units and words and _UNIT.fullmatch(word) and _NUMBER_END.fullmatch(words[-1]):
                words[-1] += "\u00a0" + word
            elif glue_next and words:
                words[-1] += "\u00a0" + word
            elif word == "–" and words:
                # an interval whose ends are written with an exponent may break after its dash
                glue_next = "\u00a0" not in words[-1]
                words[-1] += "\u00a0" + word
                continue
            else:
                words.append(word)
            glue_next = word in ("<", ">", "≤", "≥")
        return words

    def paragraph(self, text: str, style: str = "body", *, keep_with: float = 0.0) -> None:
        lines = self.wrap(style, text, self.width - (4 * MM if style == "caution" else 0))
        height = self.m.line_height(style)
        box = style == "caution"
        if style in SPACE_BEFORE and self.y > self.top:
            self.y += SPACE_BEFORE[style] * MM
        self.ensure(min(len(lines), 2) * height + keep_with)
        if box:
            total = len(lines) * height + 2 * MM
            self.ensure(total)
            self.add(FillOp(QRectF(self.left, self.y, self.width, total), "#fff4e5"))
            self.y += 1 * MM
        for line in lines:
            self.ensure(height)
            if style == "alarm" and self.alarm_page is None:
                self.alarm_page = len(self.pages)
            self.add(TextOp(QRectF(self.left + (2 * MM if box else 0), self.y, self.width, height), style, line))
            self.y += height
        self.y += SPACE_AFTER.get(style, 1.0) * MM + (1 * MM if box else 0)

    # --- tables --------------------------------------------------------------------------------------
    def table(self, title: str, headings: list[str], rows: list[list[str]], numeric: list[bool],
              note: str = "", breakable: list[bool] | None = None) -> None:
        """A table in column groups that fit the page, rows never split, the header repeated.
        ``breakable`` marks columns of ids whose long words may be broken at "-", "_" or "/": they give
        way to the other columns (see :meth:`_widths`)."""
        breaks = breakable or [False] * len(headings)
        # each column's narrowest and natural widths, measured once for the groups and their parts
        columns = [self._column_widths(h, [r[c] for r in rows], breaks[c]) for c, h in enumerate(headings)]
        for group, group_title in self._column_groups(title, headings, [m for m, _ in columns]):
            self._table_part(group_title, [headings[c] for c in group], [[r[c] for c in group] for r in rows],
                             [numeric[c] for c in group], [columns[c] for c in group], [breaks[c] for c in group])
        if note:
            self.paragraph(note, "small")

    def _min_width(self, texts: list[str], style: str) -> float:
        """The narrowest a column can be without breaking a word."""
        limit = LONGEST_UNBROKEN * self.width
        longest = 0.0
        for text in texts:
            text = str(text)
            whole = self.m.width(style, text)
            if whole <= longest:  # no word of it is wider than the text itself
                continue
            words = self.bound_words(text, units=False)
            if len(words) == 1 and words[0] == text:
                longest = whole
            else:
                longest = max(longest, max((self.m.width(style, w) for w in words), default=0.0))
        return min(longest, limit) + 2 * CELL_PAD_X + FIT_SLACK

    def _full_width(self, texts: list[str], style: str) -> float:
        """The width that sets each text on one line (up to 0.6 of the text width), with the slack that
        keeps rounding from wrapping the widest of them."""
        longest = max((self.m.width(style, str(t)) for t in texts), default=0.0)
        return min(longest, 0.6 * self.width) + 2 * CELL_PAD_X + FIT_SLACK

    def _column_widths(self, heading: str, cells: list[str], breakable: bool = False) -> tuple[float, float]:
        """A column's narrowest width (no word broken; in a ``breakable`` column no word of the heading,
        and an id's words broken beyond :data:`BREAKABLE_WIDTH` of the text width) and its natural
        width (each cell on one line, the heading on at most about two)."""
        cells_narrowest = self._min_width(cells, "table")
        if breakable:
            cells_narrowest = min(cells_narrowest, BREAKABLE_WIDTH * self.width + 2 * CELL_PAD_X + FIT_SLACK)
        narrowest = max(self._min_width([heading], "table_header"), cells_narrowest)
        natural = max(narrowest, self._full_width(cells, "table"),
                      min(self._full_width([heading], "table_header"), 2.2 * narrowest))
        return narrowest, natural

    def _column_groups(self, title: str, headings: list[str], mins: list[float]):  # type: ignore[no-untyped-def]
        if sum(mins) <= self.width or len(headings) <= 2:
            return [(list(range(len(headings))), title)]
        groups, current, used = [], [0], mins[0]
        for c in range(1, len(headings)):
            if used + mins[c] > self.width and len(current) > 1:
                groups.append(current)
                current, used = [0], mins[0]
            current.append(c)
            used += mins[c]
        groups.append(current)
        return [(g, title if i == 0 else f"{title} (continued: {', '.join(headings[c] for c in g[1:])})")
                for i, g in enumerate(groups)]

    def _widths(self, columns: list[tuple[float, float]], breakable: list[bool] | None = None) -> list[float]:
        """The columns' widths: natural where they all fit; else, where the other columns fit at their
        natural widths beside the ``breakable`` ones at their narrowest, those others natural and the
        breakable ones sharing the room left; else each narrowest width with a share of the room that
        is left."""
        mins, fulls = [m for m, _ in columns], [f for _, f in columns]
        if sum(fulls) <= self.width:
            return fulls
        if breakable and any(breakable):
            fixed = sum(f for f, b in zip(fulls, breakable) if not b)
            give_way = [(m, f) for (m, f), b in zip(columns, breakable) if b]
            spare = self.width - fixed - sum(m for m, _ in give_way)
            if spare >= 0:
                extra = sum(f - m for m, f in give_way) or 1.0
                return [m + (f - m) * spare / extra if b else f for (m, f), b in zip(columns, breakable)]
            # a breakable column claims a share of the room as if its ids needed no more than a quarter
            # of the width on one line: long ids wrap, the numbers keep their room
            fulls = [min(f, max(m, BREAKABLE_SHARE * self.width)) if b else f
                     for (m, f), b in zip(columns, breakable)]
        spare = self.width - sum(mins)
        extra = sum(f - m for f, m in zip(fulls, mins)) or 1.0
        return [m + (f - m) * max(spare, 0.0) / extra for m, f in zip(mins, fulls)]

    def _row_height(self, cells: list[str], widths: list[float], style: str) -> tuple[float, list[list[str]]]:
        known = self.m._widths[style]
        wrapped = []
        lines = 1
        for t, w in zip(cells, widths):
            if not t:
                wrapped.append([""])
                continue
            # most cells are one word or number, measured already for the column's width: a text with no
            # space, line break or sign to keep with its neighbour is its own one line where it fits
            found = known.get(t) if t.__class__ is str else None
            if found is not None and found <= w - 2 * CELL_PAD_X and _ONE_WORD.fullmatch(t):
                wrapped.append([t])
                continue
            cell = self.wrap(style, t, w - 2 * CELL_PAD_X)
            wrapped.append(cell)
            if len(cell) > lines:
                lines = len(cell)
        return lines * self.m.line_height(style) + 2 * CELL_PAD_Y, wrapped

    def _table_part(self, title: str, headings: list[str], rows: list[list[str]], numeric: list[bool],
                    columns: list[tuple[float, float]], breakable: list[bool] | None = None) -> None:
        widths = self._widths(columns, breakable)
        line_h = self.m.line_height("table")
        aligns = [_RIGHT if right else _LEFT for right in numeric]
        header_h, header_lines = self._row_height(headings, widths, "table_header")
        first = self._row_height(rows[0], widths, "table") if rows else None
        first_h = first[0] if first is not None else 0.0
        title_h = self.m.line_height("subheading") + 1.4 * MM
        self.ensure(title_h + header_h + first_h)
        self.paragraph(title, "subheading")
        self._header_row(widths, header_h, header_lines)
        for k, row in enumerate(rows):
            h, lines = first if k == 0 and first is not None else self._row_height(row, widths, "table")
            if h > self.room():
                self.new_page()
                self.paragraph(f"{title} (continued)", "small")
                self._header_row(widths, header_h, header_lines)
            x, top, append = self.left, self.y + CELL_PAD_Y, self.pages[-1].ops.append
            for w, cell_lines, align in zip(widths, lines, aligns):
                if len(cell_lines) == 1:  # most cells
                    append(TextOp(QRectF(x + CELL_PAD_X, top, w - 2 * CELL_PAD_X, line_h), "table", cell_lines[0], align))
                else:
                    for k, line in enumerate(cell_lines):
                        append(TextOp(QRectF(x + CELL_PAD_X, top + k * line_h, w - 2 * CELL_PAD_X, line_h), "table",
                                      line, align))
                x += w
            self.y += h
            self.add(LineOp(self.left, self.y, self.left + sum(widths), self.y, "#cccccc", 0.5))
        self.y += 2.5 * MM

    def _header_row(self, widths: list[float], height: float, lines: list[list[str]]) -> None:
        self.add(FillOp(QRectF(self.left, self.y, sum(widths), height), "#e8edf5"))
        x = self.left
        for w, cell_lines in zip(widths, lines):
            for k, line in enumerate(cell_lines):
                self.add(TextOp(QRectF(x + CELL_PAD_X, self.y + CELL_PAD_Y + k * self.m.line_height("table_header"),
                                       w - 2 * CELL_PAD_X, self.m.line_height("table_header")), "table_header", line))
            x += w
        self.y += height
        self.add(LineOp(self.left, self.y, self.left + sum(widths), self.y, "#777777", 0.8))

    # --- figures and signatures ------------------------------------------------------------------------
    def figure(self, image, caption: str) -> None:  # type: ignore[no-untyped-def]
        """A figure scaled to the text width, then its caption: ``image`` is a QImage, or an object with
        ``width`` and ``height`` (its proportions) that paints itself with ``paint(painter, rect)``."""
        if isinstance(image, QImage):
            image_width, image_height = image.width(), image.height()
        else:
            image_width, image_height = image.width, image.height
        scale = self.width / image_width
        height = image_height * scale
        caption_lines = self.wrap("small", caption, self.width)
        needed = height + len(caption_lines) * self.m.line_height("small") + 2 * MM
        if needed > self.room():
            self.new_page()
        if needed > self.room():  # taller than a page: shrink to fit
            height = self.room() - len(caption_lines) * self.m.line_height("small") - 2 * MM
        width = image_width * height / image_height
        rect = QRectF(self.left, self.y, min(width, self.width), height)
        self.add(ImageOp(rect, image) if isinstance(image, QImage) else FigureOp(rect, image))
        self.y += height + 1 * MM
        self.paragraph(caption, "small")

    def signatures(self, lines: list[tuple[str, str]]) -> None:
        """Signature lines: (role, what signing means), each with room for the name, signature and date."""
        height = 3 * self.m.line_height("body") + 4 * MM
        self.ensure(len(lines) * height)
        for role, meaning in lines:
            self.paragraph(f"{role} — {meaning}", "body")
            y = self.y + 5 * MM
            for x0, x1, label in ((self.left, self.left + 80 * MM, "name and signature"),
                                  (self.left + 95 * MM, self.right, "date")):
                self.add(LineOp(x0, y, x1, y, "#333333", 0.8))
                self.add(TextOp(QRectF(x0, y + 0.5 * MM, x1 - x0, self.m.line_height("small")), "small", label))
            self.y = y + self.m.line_height("small") + 3 * MM

    # --- painting --------------------------------------------------------------------------------------
    def paint(self, writer) -> None:  # type: ignore[no-untyped-def]
        """Draw every page on ``writer`` (a QPdfWriter at 300 dpi on A4 with zero page margins)."""
        painter = QPainter(writer)
        painter.setRenderHint(QPainter.RenderHint.Antialiasing)
        painter.setRenderHint(QPainter.RenderHint.SmoothPixmapTransform)
        self._font_style, self._pen = "", None
        # the few fonts and text colours of the record, made once for its thousand or so lines
        self._fonts = {name: font(name) for name in STYLES}
        self._plain_fonts = {name: plain_font(name) for name in STYLES}
        self._colours = {name: QColor(colour) for name, (_, _, colour) in STYLES.items()}
        total = len(self.pages)
        for number, page in enumerate(self.pages, start=1):
            if number > 1:
                writer.newPage()
            for op in page.ops:
                self._draw(painter, op)
            self._running(painter, page, number, total)
        painter.end()

    def _draw(self, painter: QPainter, op) -> None:  # type: ignore[no-untyped-def]
        if op.__class__ is TextOp or isinstance(op, TextOp):
            # a page sets many lines in one style in a row, and a table's rows alternate text and rules:
            # the font and pen are set only when they change
            # each text in the font it was measured in (Metrics.width)
            style, text = op.style, op.text
            plain = _SET_PLAIN(text) is not None
            key = (style, plain)
            if key != self._font_style:
                painter.setFont((self._plain_fonts if plain else self._fonts)[style])
                self._font_style = key
            colour = STYLES[style][2]
            if colour != self._pen:
                painter.setPen(self._colours[style])
                self._pen = colour
            painter.drawText(op.rect, _FLAGS[op.align], text)
        elif isinstance(op, LineOp):
            key = (op.colour, op.width)
            if key != self._pen:
                painter.setPen(QPen(QColor(op.colour), op.width * MM / 3))
                self._pen = key
            painter.drawLine(int(op.x1), int(op.y1), int(op.x2), int(op.y2))
        elif isinstance(op, FillOp):
            painter.fillRect(op.rect, QColor(op.colour))
        elif isinstance(op, ImageOp):
            painter.drawImage(op.rect, op.image)
        elif isinstance(op, FigureOp):
            op.figure.paint(painter, op.rect)  # it leaves the painter's pen and font as it found them

    def _running(self, painter: QPainter, page: Page, number: int, total: int) -> None:
        line_h = self.m.line_height("running")
        head_y = MARGIN_TOP - 4 * MM - line_h
        self._draw(painter, TextOp(QRectF(self.left, head_y, self.width * 0.62, line_h), "running",
                                   self._fit("running", self.header_left, self.width * 0.62)))
        self._draw(painter, TextOp(QRectF(self.left + self.width * 0.62, head_y, self.width * 0.38, line_h), "running",
                                   self._fit("running", page.section, self.width * 0.38), Qt.AlignmentFlag.AlignRight))
        self._draw(painter, LineOp(self.left, MARGIN_TOP - 3 * MM, self.right, MARGIN_TOP - 3 * MM, "#999999", 0.6))
        foot_y = PAGE_HEIGHT - MARGIN_BOTTOM + 3 * MM
        self._draw(painter, LineOp(self.left, foot_y, self.right, foot_y, "#999999", 0.6))
        self._draw(painter, TextOp(QRectF(self.left, foot_y + 1 * MM, self.width * 0.8, line_h), "running",
                                   self.footer_left))
        self._draw(painter, TextOp(QRectF(self.left + self.width * 0.8, foot_y + 1 * MM, self.width * 0.2, line_h),
                                   "running", f"page {number} of {total}", Qt.AlignmentFlag.AlignRight))
        below = 1
        if self.alarm_page is not None:  # under the footer's rule, before the caution: no page leaves it out
            self._draw(painter, TextOp(QRectF(self.left, foot_y + 1 * MM + line_h, self.width, line_h), "running_alarm",
                                       ALARM_FOOTER.format(page=self.alarm_page)))
            below = 2
        for k, line in enumerate(self.wrap("running", self.caution, self.width)[:2]):
            self._draw(painter, TextOp(QRectF(self.left, foot_y + 1 * MM + (k + below) * line_h, self.width, line_h),
                                       "running", line))

    def _fit(self, style: str, text: str, width: float) -> str:
        """``text`` shortened with "…" to ``width`` (only the running header, which repeats the title)."""
        if self.m.width(style, text) <= width:
            return text
        while text and self.m.width(style, text + "…") > width:
            text = text[:-1]
        return text + "…"
