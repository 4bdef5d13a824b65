"""A block pasted from a spreadsheet into the standards or samples table, read as a file is read.

* The block is split like a text table (tab, semicolon or comma; quoted cells kept whole).
* Its first row is a header when one of its cells names a column (the header names a file import
  accepts, a unit in brackets read from it, e.g. "Concentration (ng/mL)") and none of its cells is a
  number. The columns then go where their headers say, wherever the block is pasted.
* A first row of text in words the import does not know ("Konzentration (mg/L)", "Fläche") is a
  header too when it stands above rows of numbers: none of its cells reads as a value (a number or a
  censored reading, under either decimal mark) while every column that holds a number below it holds
  text in it. Its columns then fill the table from the selected column, as a block without a header
  does, and a unit in brackets is read from it as from a known header. The preview offers the row
  back as data (:meth:`PastedBlock.with_header`): nothing typed is lost.
* Without a header the columns fill the table's columns from the one selected, in the table's
  order (:data:`STANDARD_COLUMNS`, :data:`SAMPLE_COLUMNS`). With no cell selected, standards start
  at the nominal concentration (concentration, then response, as instruments list them) and a
  two-column block of samples is read as sample id and response.
* The decimal mark is decided from the block's numeric cells as a whole, as for a file
  (:func:`.number_text.decimal_evidence`); the analyst's usual mark is taken only when the block
  shows none, and a mark chosen in the preview overrides both.
* A thousands separator is taken where the block shows it one way only (:func:`.number_text.thousands_evidence`): values
  written with both marks ("12.480,9", "1,234.5"), or with a space or an apostrophe between groups of
  three digits ("12 480"), all naming one separator that is not the decimal mark. A separator chosen
  in the preview overrides it, "" refuses every grouped value, as a file import without one does.
* Nothing is read here into values: the front end keeps every cell's text, and a value that cannot
  be read stays as typed, marked, with the reason.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Mapping

from .errors import ImportProblem
from .importing import SYNONYMS, TEXT_FIELDS, header_words
from .number_text import decimal_evidence, parse_number, parse_reading, thousands_evidence
from .tables import table_from_text

STANDARD_COLUMNS = ("id", "level", "replicate", "concentration", "response", "is_response")
"""The fields of the standards table, in its column order."""
SAMPLE_COLUMNS = ("id", "kind", "run_order", "dilution", "nominal", "response", "is_response")
"""The fields of the samples table, in its column order."""
FIELD_WORDS = {
    "id": "id", "level": "level", "replicate": "replicate", "concentration": "nominal concentration",
    "response": "response", "is_response": "internal-standard response", "kind": "kind", "run_order": "run order",
    "dilution": "dilution factor", "nominal": "nominal value", "analyte": "analyte",
}


@dataclass(frozen=True)
class PastedColumn:
    """One column of the block: its header text (empty without a header), the field it fills (None when
    it has no place in the table) and the unit its header names."""

    header: str
    field: str | None
    unit: str = ""


@dataclass(frozen=True)
class PastedBlock:
    """A pasted block as read: its columns, its body rows (cell texts) and how numbers read."""

    target: str
    columns: tuple[PastedColumn, ...]
    has_header: bool
    rows: tuple[tuple[str, ...], ...]
    decimal_mark: str | None
    decimal_note: str
    delimiter: str
    """How the columns were separated, in words ("tab", "semicolon", "comma")."""
    separator: str | None = None
    """The character itself."""
    thousands: str | None = None
    """The thousands separator the values are read with ("." "," " " "'"), None for none."""
    thousands_note: str = ""
    """How the separator was decided, in words for the analyst ("" when the block shows none)."""
    first_row: tuple[str, ...] = ()
    """The row read as the header (its cells as pasted), () when the first row is data."""
    header_named: bool = False
    """True when the header names the table's columns, False for a row of text above numbers."""
    start_field: str | None = None
    """The field of the column selected when the block was pasted (None when no cell was selected)."""

    @property
    def fields(self) -> tuple[str | None, ...]:
        return tuple(c.field for c in self.columns)

    def cells(self, row: int) -> dict[str, str]:
        """The texts of body row ``row`` (0-based) by field; columns without a field are left out."""
        cells = self.rows[row]
        return {c.field: cells[i] if i < len(cells) else "" for i, c in enumerate(self.columns) if c.field}

    def records(self) -> tuple[tuple[dict[str, str], tuple[int, ...]], ...]:
        """The rows to enter, each as texts by field with the 0-based body rows it came from.

        For samples, rows with the same sample id are one sample, as in a file import: their responses
        become that sample's replicates (joined with "; "), and so do their internal-standard responses,
        each beside its replicate's response (an empty one kept in its place, none for that replicate);
        the other cells come from its first row.
        """
        records: list[tuple[dict[str, str], list[int]]] = []
        by_id: dict[str, int] = {}
        for i in range(len(self.rows)):
            cells = self.cells(i)
            sid = cells.get("id", "").strip()
            if self.target == "samples" and sid and sid in by_id:
                merged, sources = records[by_id[sid]]
                if cells.get("response", "").strip():
                    earlier = merged.get("response", "").strip()
                    merged["response"] = f"{earlier}; {cells['response'].strip()}" if earlier else cells["response"]
                    if "is_response" in cells:  # in step with the responses: the n-th belongs to the n-th replicate
                        beside = merged.get("is_response", "").strip()
                        merged["is_response"] = (f"{beside}; {cells['is_response'].strip()}" if earlier
                                                 else cells["is_response"])
                sources.append(i)
                continue
            if self.target == "samples" and sid:
                by_id[sid] = len(records)
            records.append((dict(cells), [i]))
        return tuple((cells, tuple(sources)) for cells, sources in records)

    def unused(self) -> tuple[str, ...]:
        """Headers (or column numbers) of the columns that fill no field of the table."""
        return tuple(c.header or f"column {i + 1}" for i, c in enumerate(self.columns) if c.field is None)

    def with_fields(self, fields: Mapping[int, str | None], decimal_mark: str | None = None,
                    thousands: str | None = None) -> "PastedBlock":
        """The same block with the columns at the given 0-based positions moved to other fields (the
        analyst's correction in the preview), the decimal mark and thousands separator decided again
        unless given (``thousands`` "" for none)."""
        columns = tuple(PastedColumn(c.header, fields.get(i, c.field), c.unit) for i, c in enumerate(self.columns))
        return _read(self.target, columns, self.has_header, self.rows, self.delimiter, self.separator,
                     decimal_mark, thousands, None, self.first_row, self.header_named, self.start_field)

    def can_have_header(self) -> bool:
        """Whether the first row may be read as a header: it is one, or none of its cells reads as a value."""
        return self.has_header or (bool(self.rows) and not any(_is_reading(c) for c in self.rows[0]))

    def with_header(self, as_header: bool, decimal_mark: str | None = None,
                    thousands: str | None = None) -> "PastedBlock":
        """The same block with its first row read as a header (``as_header``) or entered as data (the
        analyst's answer in the preview); the columns are placed again as :func:`read_block` places them."""
        if as_header == self.has_header:
            return self
        order = table_fields(self.target)
        width = len(self.columns)
        named = None
        if as_header:
            if not self.can_have_header():
                raise ValueError("the first pasted row holds values; it cannot be read as a header")
            first, body = self.rows[0], self.rows[1:]
            named = _header_columns(first, order)
            columns = named if named is not None else _text_header_columns(
                first, _positional_columns(width, order, self.start_field, self.target))
        else:
            first, body = (), (self.first_row,) + self.rows
            columns = _positional_columns(width, order, self.start_field, self.target)
        columns = columns + tuple(PastedColumn("", None) for _ in range(width - len(columns)))
        body = tuple(r + ("",) * (width - len(r)) for r in body)
        return _read(self.target, columns, as_header, body, self.delimiter, self.separator, decimal_mark,
                     thousands, None, tuple(first), as_header and named is not None, self.start_field)


def table_fields(target: str) -> tuple[str, ...]:
    if target == "standards":
        return STANDARD_COLUMNS
    if target == "samples":
        return SAMPLE_COLUMNS
    raise ValueError(f"paste target {target!r} is not 'standards' or 'samples'")


def read_block(text: str, target: str, *, start_field: str | None = None, decimal_mark: str | None = None,
               usual_mark: str | None = None, thousands: str | None = None) -> PastedBlock:
    """Read a pasted block for the ``target`` table ("standards" or "samples").

    ``start_field`` is the field of the selected column (None when no cell is selected);
    ``decimal_mark`` a mark to use whatever the block shows ("." or ","), None to decide it from the
    block; ``usual_mark`` the analyst's usual mark, taken only when the block shows none (never when
    it shows both); ``thousands`` a separator to use (``""`` for none), None to take the one the block
    shows (:func:`.number_text.thousands_evidence`). Raises :class:`~curvewright.io.errors.ImportProblem` when the text holds no cells.
    """
    order = table_fields(target)
    if start_field is not None and start_field not in order:
        raise ValueError(f"field {start_field!r} is not a column of the {target} table")
    table = table_from_text(text, source="the pasted block")
    rows = [tuple(str(c) for c in r) for r in table.rows]
    while rows and not any(c.strip() for c in rows[-1]):
        rows.pop()
    if not rows:
        raise ImportProblem("the clipboard holds no cells to paste.")
    width = max(len(r) for r in rows)
    header = _header_columns(rows[0], order)
    positional = _positional_columns(width, order, start_field, target)
    named = header is not None
    if header is None and _text_above_numbers(rows, positional):
        header = _text_header_columns(rows[0], positional)
    if header is not None:
        columns, body, first = header, rows[1:], rows[0]
    else:
        columns, body, first = positional, rows, ()
    columns = columns + tuple(PastedColumn("", None) for _ in range(width - len(columns)))
    body = tuple(r + ("",) * (width - len(r)) for r in body)
    return _read(target, columns, header is not None, body, table.delimiter_name, table.delimiter,
                 decimal_mark, thousands, usual_mark, tuple(first), named, start_field)


def _read(target, columns, has_header, rows, delimiter, separator, decimal_mark, thousands,  # type: ignore[no-untyped-def]
          usual_mark, first_row=(), header_named=False, start_field=None) -> PastedBlock:
    """The block with its decimal mark and thousands separator decided (given, or as the values show)."""
    fields = tuple(c.field for c in columns)
    mark, note = _decimal_mark(rows, fields, decimal_mark, separator, usual_mark)
    if thousands == "":
        grouped, grouped_note = None, "no thousands separator (values written with one are refused)"
    elif thousands is not None:
        grouped, grouped_note = thousands, f"thousands separator {thousands!r} as chosen"
    else:
        grouped, grouped_note = thousands_evidence(_numeric_tokens(rows, fields), mark)
    if thousands in (".", ",") and decimal_mark is None:  # as a file import reads a named separator
        mark = "," if grouped == "." else "."
        note = f"decimal mark {mark!r} (the thousands separator is {grouped!r})"
    return PastedBlock(target, columns, has_header, rows, mark, note, delimiter, separator, grouped, grouped_note,
                       tuple(first_row), bool(header_named), start_field)


def _numeric_tokens(rows, fields) -> list[str]:  # type: ignore[no-untyped-def]
    return [cells[i] for cells in rows for i, f in enumerate(fields)
            if f is not None and f not in TEXT_FIELDS and i < len(cells)]


def _header_columns(first: tuple[str, ...], order: tuple[str, ...]) -> tuple[PastedColumn, ...] | None:
    """The columns named by a header row, or None when the first row is data."""
    if any(_is_number(c) for c in first):
        return None
    taken: set[str] = set()
    columns = []
    for cell in first:
        words, unit = header_words(cell)
        field = next((f for f in order if f not in taken and words in SYNONYMS.get(f, ())), None)
        if field is not None:
            taken.add(field)
        columns.append(PastedColumn(cell.strip(), field, unit))
    return tuple(columns) if taken else None


def _text_above_numbers(rows, positional) -> bool:  # type: ignore[no-untyped-def]
    """True when the first row is text above rows of numbers: none of its cells reads as a value, and
    every column placed in a numeric field that holds a number in a row below holds text in the first."""
    first, body = rows[0], rows[1:]
    if not body or any(_is_reading(c) for c in first):
        return False
    numeric = [i for i, c in enumerate(positional) if c.field is not None and c.field not in TEXT_FIELDS]
    with_numbers = [i for i in numeric if any(i < len(r) and _is_number(r[i]) for r in body)]
    return bool(with_numbers) and all(i < len(first) and first[i].strip() for i in with_numbers)


def _text_header_columns(first, positional) -> tuple[PastedColumn, ...]:  # type: ignore[no-untyped-def]
    """The positional columns headed by the first row's texts, each with the unit its brackets name."""
    return tuple(PastedColumn(first[i].strip() if i < len(first) else "", c.field,
                              header_words(first[i])[1] if i < len(first) else "")
                 for i, c in enumerate(positional))


def _positional_columns(width: int, order: tuple[str, ...], start: str | None, target: str) -> tuple[PastedColumn, ...]:
    if start is None and target == "samples" and width == 2:
        fields: tuple[str, ...] = ("id", "response")
    else:
        begin = order.index(start) if start is not None else order.index("concentration" if target == "standards" else "id")
        fields = order[begin:]
    return tuple(PastedColumn("", fields[i] if i < len(fields) else None) for i in range(width))


def _decimal_mark(rows, fields, given: str | None, separator: str | None,  # type: ignore[no-untyped-def]
                  usual: str | None = None) -> tuple[str | None, str]:
    if given is not None:
        return given, f"decimal mark {given!r} as chosen"
    evidence = decimal_evidence(_numeric_tokens(rows, fields), separator)
    if evidence.mark is None and usual is not None and not evidence.conflict:
        return usual, f"decimal mark {usual!r} as set in the settings ({evidence.note})"
    return evidence.mark, evidence.note


def _is_reading(text: str) -> bool:
    """True when the cell reads as a value under either decimal mark: a number or a censored reading."""
    if not text.strip():
        return False
    for mark in (".", ","):
        reading = parse_reading(text, mark).reading
        if reading is not None and (reading.is_number or reading.is_censored):
            return True
    return False


def _is_number(text: str) -> bool:
    t = text.strip()
    if not t:
        return False
    return any(parse_number(t, mark)[0] is not None for mark in (".", ","))
