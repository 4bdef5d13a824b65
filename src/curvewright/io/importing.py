"""Turning raw tables into standards and samples, reporting every cell that could not be used.

Columns are mapped by header with a guess the caller can override (``mapping={"response": "Area"}``
or a 1-based column number). Units in brackets are read from the header ("Concentration (ng/mL)").
Every rejected cell is reported with its row, column, the text found and the reason; a row that
cannot be imported is listed, never dropped silently. The result lists what was imported and what
was not.
"""

from __future__ import annotations

import re
import unicodedata
from dataclasses import dataclass, field
from typing import Mapping

from ..core.run import Analyte, Measurement, Reading, Sample, SampleKind, Standard
from .errors import ImportProblem
from .number_text import ambiguous_problem, detect_decimal_mark, parse_number, parse_reading
from .tables import Cell, RawTable

STANDARD_FIELDS = ("id", "analyte", "level", "concentration", "response", "replicate", "is_response")
SAMPLE_FIELDS = ("id", "analyte", "kind", "run_order", "dilution", "nominal", "response", "replicate", "is_response")

SYNONYMS = {
    "id": ("id", "sample id", "sample", "sample name", "name", "standard", "standard id", "std id"),
    "analyte": ("analyte", "compound", "element", "component", "parameter"),
    "level": ("level", "cal level", "calibration level", "std level"),
    "concentration": ("concentration", "conc", "conc.", "nominal concentration", "nominal", "amount", "x"),
    "response": ("response", "area", "peak area", "height", "signal", "absorbance", "abs", "intensity", "counts",
                 "emission", "fluorescence", "y"),
    "replicate": ("replicate", "rep", "replicate number", "injection", "inj"),
    "is_response": ("is response", "is area", "internal standard", "internal standard response", "istd", "istd area"),
    "kind": ("kind", "type", "sample type", "role"),
    "run_order": ("run order", "order", "injection order", "sequence", "seq"),
    "dilution": ("dilution", "dilution factor", "df", "dil"),
    "nominal": ("nominal", "nominal concentration", "expected", "spiked", "target", "qc nominal"),
}
KIND_WORDS = {
    "unknown": SampleKind.UNKNOWN, "sample": SampleKind.UNKNOWN, "unk": SampleKind.UNKNOWN, "": SampleKind.UNKNOWN,
    "qc": SampleKind.QC, "quality control": SampleKind.QC, "control": SampleKind.QC,
    "blank": SampleKind.BLANK, "blk": SampleKind.BLANK, "method blank": SampleKind.BLANK,
    "check": SampleKind.CHECK_STANDARD, "check standard": SampleKind.CHECK_STANDARD, "check_standard": SampleKind.CHECK_STANDARD,
    "icv": SampleKind.CHECK_STANDARD, "ccv": SampleKind.CHECK_STANDARD,
}


@dataclass(frozen=True)
class RejectedCell:
    row: int
    column: str
    text: str
    reason: str

    def __str__(self) -> str:
        return f"row {self.row}, column {self.column}: {self.text!r} — {self.reason}"


@dataclass(frozen=True)
class ImportResult:
    """What an import produced and what it could not use.

    ``standards`` is a tuple of (analyte name, Standard); ``samples`` a tuple of Sample.
    ``rejected`` lists each unusable cell; ``rejected_rows`` the rows not imported because of them;
    ``empty_rows`` the blank rows passed over.
    """

    source: str
    sha256: str | None
    delimiter: str
    decimal_mark: str | None
    decimal_note: str
    mapping: Mapping[str, int]
    units: Mapping[str, str]
    standards: tuple[tuple[str, Standard], ...] = ()
    samples: tuple[Sample, ...] = ()
    rejected: tuple[RejectedCell, ...] = ()
    rejected_rows: tuple[int, ...] = ()
    empty_rows: tuple[int, ...] = ()
    warnings: tuple[str, ...] = field(default=())

    @property
    def complete(self) -> bool:
        return not self.rejected

    def summary(self) -> str:
        what = f"{len(self.standards)} standards" if self.standards or not self.samples else f"{len(self.samples)} samples"
        lines = [
            f"{self.source}: imported {what}; columns separated by {self.delimiter}; {self.decimal_note}",
        ]
        if self.rejected_rows:
            lines.append(f"{len(self.rejected_rows)} row(s) not imported: {', '.join(map(str, self.rejected_rows))}")
        lines += [f"  {r}" for r in self.rejected]
        if self.empty_rows:
            lines.append(f"empty rows passed over: {', '.join(map(str, self.empty_rows))}")
        lines += self.warnings
        return "\n".join(lines)


def import_standards(
    table: RawTable,
    *,
    mapping: Mapping[str, str | int] | None = None,
    decimal_mark: str | None = None,
    thousands: str | None = None,
    analyte: str = "analyte",
) -> ImportResult:
    """Standards from a table with a header row: one row per standard injection."""
    ctx = _Context(table, STANDARD_FIELDS, mapping, decimal_mark, thousands, required=("concentration", "response"))
    standards: list[tuple[str, Standard]] = []
    first_seen: dict[tuple[str, str], int] = {}
    replicate_count: dict[tuple[str, float], int] = {}
    for row_number, cells in ctx.body():
        name = ctx.text(cells, "analyte", row_number) or analyte
        conc = ctx.number(cells, "concentration", row_number, required=True)
        response = ctx.reading(cells, "response", row_number, required=True)
        is_response = ctx.reading(cells, "is_response", row_number) if "is_response" in ctx.mapping else None
        replicate = ctx.whole(cells, "replicate", row_number)
        if ctx.row_failed(row_number):
            continue
        assert conc is not None and response is not None
        if replicate is None:
            key = (name, conc)
            replicate_count[key] = replicate_count.get(key, 0) + 1
            replicate = replicate_count[key]
        sid = ctx.text(cells, "id", row_number) or f"row {row_number}"
        if (name, sid) in first_seen:
            ctx.reject(row_number, "id", sid, f"duplicate standard id (first at row {first_seen[(name, sid)]})", row_fails=True)
            continue
        first_seen[(name, sid)] = row_number
        standards.append(
            (name, Standard(sid, conc, response, replicate, ctx.text(cells, "level", row_number), True, "", is_response))
        )
    return ctx.result(standards=tuple(standards))


def import_samples(
    table: RawTable,
    *,
    mapping: Mapping[str, str | int] | None = None,
    decimal_mark: str | None = None,
    thousands: str | None = None,
    analyte: str = "analyte",
) -> ImportResult:
    """Samples from a table with a header row: one row per replicate response of one analyte.

    Rows with the same sample id are replicates (or other analytes) of one sample; the sample's
    kind, run order, dilution factor and nominal value must agree across its rows.
    """
    ctx = _Context(table, SAMPLE_FIELDS, mapping, decimal_mark, thousands, required=("id", "response"))
    order: list[str] = []
    info: dict[str, dict] = {}
    seen: dict[tuple[str, str, int], int] = {}
    for row_number, cells in ctx.body():
        sid = ctx.text(cells, "id", row_number)
        if not sid:
            ctx.reject(row_number, "id", "", "a sample needs an id", row_fails=True)
            continue
        name = ctx.text(cells, "analyte", row_number) or analyte
        kind_text = ctx.text(cells, "kind", row_number).lower()
        kind = KIND_WORDS.get(kind_text)
        if kind is None:
            ctx.reject(row_number, "kind", kind_text, "not a sample kind (unknown, QC, blank, check standard)", row_fails=True)
        response = ctx.reading(cells, "response", row_number, required=True)
        is_response = ctx.reading(cells, "is_response", row_number) if "is_response" in ctx.mapping else None
        dilution = ctx.number(cells, "dilution", row_number)
        if dilution is not None and dilution <= 0:
            ctx.reject(row_number, "dilution", ctx.raw(cells, "dilution"), "a dilution factor must be above zero", row_fails=True)
        nominal = ctx.number(cells, "nominal", row_number)
        run_order = ctx.whole(cells, "run_order", row_number)
        replicate = ctx.whole(cells, "replicate", row_number)
        if ctx.row_failed(row_number):
            continue
        assert response is not None and kind is not None
        entry = info.setdefault(sid, {"kind": kind, "run_order": run_order, "dilution": dilution or 1.0,
                                      "nominal": {}, "measurements": [], "row": row_number})
        if sid not in order:
            order.append(sid)
        else:
            first = entry["row"]
            if entry["kind"] is not kind:
                ctx.reject(row_number, "kind", ctx.raw(cells, "kind"),
                           f"differs from row {first} of the same sample ({entry['kind'].words})", row_fails=True)
            if entry["dilution"] != (dilution or 1.0):
                ctx.reject(row_number, "dilution", ctx.raw(cells, "dilution"),
                           f"differs from row {first} of the same sample ({entry['dilution']:g})", row_fails=True)
            if ctx.row_failed(row_number):
                continue
        if replicate is None:
            replicate = 1 + sum(1 for m in entry["measurements"] if m.analyte == name)
        key3 = (sid, name, replicate)
        if key3 in seen:
            ctx.reject(row_number, "replicate", str(replicate),
                       f"sample {sid!r} already has replicate {replicate} of {name} (row {seen[key3]})", row_fails=True)
            continue
        seen[key3] = row_number
        if nominal is not None:
            entry["nominal"][name] = nominal
        entry["measurements"].append(Measurement(name, replicate, response, is_response))
    samples = tuple(
        Sample(sid, info[sid]["kind"], info[sid]["run_order"], info[sid]["dilution"],
               tuple(info[sid]["measurements"]), tuple(info[sid]["nominal"].items()))
        for sid in order
    )
    return ctx.result(samples=samples)


def _normalise(header: str) -> tuple[str, str]:
    """(header words in lower case without units, unit text) — "Conc. (ng/mL)" → ("conc.", "ng/mL")."""
    text = header.strip()
    unit = ""
    match = re.search(r"[\(\[]([^\)\]]*)[\)\]]\s*$", text)
    if match:
        unit = match.group(1).strip()  # kept exactly as typed (µ stays the micro sign)
        text = text[: match.start()]
    words = unicodedata.normalize("NFKC", text)
    return re.sub(r"[\s_]+", " ", words).strip().lower(), unit


class _Context:
    """Shared machinery of the two importers: header mapping, cell parsing, rejections."""

    def __init__(self, table, fields, mapping, decimal_mark, thousands, required) -> None:  # type: ignore[no-untyped-def]
        if decimal_mark not in (None, ".", ","):
            raise ImportProblem(f"decimal mark: {decimal_mark!r} is not '.' or ','.")
        if thousands not in (None, ".", ",", " ", "'"):
            raise ImportProblem(f"thousands separator: {thousands!r} is not '.', ',', a space or an apostrophe.")
        self.table = table
        self.thousands = thousands
        given_mark = decimal_mark
        self.rejected: list[RejectedCell] = []
        self.failed_rows: set[int] = set()
        self.empty_rows: list[int] = []
        self.warnings: list[str] = []
        rows = list(zip(table.row_numbers, table.rows))
        while rows and all(_blank(c) for c in rows[0][1]):
            self.empty_rows.append(rows.pop(0)[0])
        if not rows:
            raise ImportProblem(f"{table.source}: the table has no rows.")
        header_row, header = rows[0]
        self.header_row = header_row
        self.headers = [str(h).strip() if not isinstance(h, float) else repr(h) for h in header]
        self.mapping, self.units = self._map_columns(fields, mapping or {})
        missing = [f for f in required if f not in self.mapping]
        if missing:
            raise ImportProblem(
                f"{table.source}: no column for {', '.join(missing)} in the header row (row {header_row}: "
                f"{', '.join(repr(h) for h in self.headers)}); name the columns to use."
            )
        self.rows = rows[1:]
        if decimal_mark is None and table.delimiter is not None:
            tokens = [c for _, r in self.rows for c in r if isinstance(c, str)]
            if table.delimiter == ",":
                decimal_mark, self.decimal_note = ".", "decimal point (the columns are comma-separated)"
                if any(_has_decimal_comma(t) for t in tokens):
                    self.decimal_note += "; values with a decimal comma are refused"
            else:
                decimal_mark, self.decimal_note = detect_decimal_mark(tokens)
        else:
            self.decimal_note = f"decimal mark {decimal_mark!r} as given" if decimal_mark else "numbers read from workbook cells"
        self.decimal_mark = decimal_mark
        self.decimal_confirmed = given_mark is not None or table.delimiter is None
        self.decimal_conflict = decimal_mark is None and self.decimal_note.startswith("both decimal marks")

    def _map_columns(self, fields, override):  # type: ignore[no-untyped-def]
        mapping: dict[str, int] = {}
        units: dict[str, str] = {}
        normal = [_normalise(h) for h in self.headers]
        for f, where in override.items():
            if f not in fields:
                raise ImportProblem(f"column mapping: {f!r} is not one of {', '.join(fields)}.")
            if isinstance(where, int):
                if not (1 <= where <= len(self.headers)):
                    raise ImportProblem(f"column mapping: {f} → column {where}, but the table has {len(self.headers)} columns.")
                mapping[f] = where - 1
            else:
                try:
                    mapping[f] = self.headers.index(where)
                except ValueError:
                    raise ImportProblem(f"column mapping: {f} → {where!r}, but no header is {where!r}.") from None
        taken = set(mapping.values())
        for f in fields:
            if f in mapping:
                continue
            for i, (words, _) in enumerate(normal):
                if i not in taken and words in SYNONYMS[f]:
                    mapping[f] = i
                    taken.add(i)
                    break
        for f, i in mapping.items():
            if normal[i][1]:
                units[f] = normal[i][1]
        unused = [self.headers[i] for i in range(len(self.headers)) if i not in taken and self.headers[i]]
        if unused:
            self.warnings.append(f"columns not used: {', '.join(repr(u) for u in unused)}")
        return mapping, units

    def body(self):  # type: ignore[no-untyped-def]
        width = len(self.headers)
        for row_number, cells in self.rows:
            if all(_blank(c) for c in cells):
                self.empty_rows.append(row_number)
                continue
            if len(cells) > width and any(not _blank(c) for c in cells[width:]):
                extra = next(c for c in cells[width:] if not _blank(c))
                self.reject(row_number, f"{width + 1}", str(extra), f"the row has more cells than the header ({width})", row_fails=True)
                continue
            yield row_number, cells

    def column_name(self, f: str) -> str:
        i = self.mapping[f]
        return f"{i + 1} ({self.headers[i]})" if self.headers[i] else str(i + 1)

    def raw(self, cells: tuple[Cell, ...], f: str) -> str:
        if f not in self.mapping or self.mapping[f] >= len(cells):
            return ""
        value = cells[self.mapping[f]]
        return repr(value) if isinstance(value, float) else value

    def reject(self, row: int, f: str, text: str, reason: str, *, row_fails: bool) -> None:
        column = self.column_name(f) if f in self.mapping else f
        self.rejected.append(RejectedCell(row, column, text, reason))
        if row_fails:
            self.failed_rows.add(row)

    def row_failed(self, row: int) -> bool:
        return row in self.failed_rows

    def text(self, cells: tuple[Cell, ...], f: str, row: int) -> str:
        return self.raw(cells, f).strip() if f in self.mapping else ""

    def mark_problem(self, value: str) -> str | None:
        """Why a token cannot be read while the table's decimal mark is undecided."""
        if self.decimal_conflict and ("," in value or "." in value):
            return self.decimal_note
        if not self.decimal_confirmed and self.thousands is None:
            return ambiguous_problem(value)
        return None

    def reading(self, cells: tuple[Cell, ...], f: str, row: int, required: bool = False) -> Reading | None:
        if f not in self.mapping:
            return None
        i = self.mapping[f]
        value = cells[i] if i < len(cells) else ""
        if isinstance(value, float):
            return Reading(value, repr(value))
        if problem := self.mark_problem(value):
            self.reject(row, f, value, problem, row_fails=True)
            return None
        parsed = parse_reading(value, self.decimal_mark, self.thousands)
        if parsed.problem:
            self.reject(row, f, value, parsed.problem.split(": ", 1)[-1], row_fails=True)
            return None
        assert parsed.reading is not None
        if required and parsed.reading.is_missing:
            self.reject(row, f, value, "empty: a value is needed here", row_fails=True)
            return None
        return parsed.reading

    def number(self, cells: tuple[Cell, ...], f: str, row: int, required: bool = False) -> float | None:
        if f not in self.mapping:
            return None
        i = self.mapping[f]
        value = cells[i] if i < len(cells) else ""
        if isinstance(value, float):
            return value
        if not value.strip(" \u00a0\t"):
            if required:
                self.reject(row, f, value, "empty: a number is needed here", row_fails=True)
            return None
        if problem := self.mark_problem(value):
            self.reject(row, f, value, problem, row_fails=True)
            return None
        number, problem = parse_number(value.strip(" \u00a0\u202f\t").replace("\u2212", "-"), self.decimal_mark, self.thousands)
        if problem:
            self.reject(row, f, value, problem, row_fails=True)
            return None
        return number

    def whole(self, cells: tuple[Cell, ...], f: str, row: int) -> int | None:
        value = self.number(cells, f, row)
        if value is None:
            return None
        if value != int(value) or value < 0:
            self.reject(row, f, self.raw(cells, f), "must be a whole number", row_fails=True)
            return None
        return int(value)

    def result(self, **parts) -> ImportResult:  # type: ignore[no-untyped-def]
        if self.table.delimiter is not None:
            self.warnings.append(
                "values copied from a spreadsheet carry only the digits it displayed; paste from a "
                "full-precision column if the displayed values were rounded"
            )
        return ImportResult(
            source=self.table.source,
            sha256=self.table.sha256,
            delimiter=self.table.delimiter_name,
            decimal_mark=self.decimal_mark,
            decimal_note=self.decimal_note,
            mapping={f: i + 1 for f, i in self.mapping.items()},
            units=self.units,
            rejected=tuple(self.rejected),
            rejected_rows=tuple(sorted(self.failed_rows)),
            empty_rows=tuple(sorted(self.empty_rows)),
            warnings=tuple(self.warnings),
            **parts,
        )


def _blank(cell: Cell) -> bool:
    return isinstance(cell, str) and not cell.strip(" \u00a0\u202f\t")


def _has_decimal_comma(token: str) -> bool:
    return bool(re.fullmatch(r"\s*[+-]?\d+,\d+\s*", token))


def analytes_from_import(
    result: ImportResult, *, concentration_unit: str | None = None, response_unit: str | None = None
) -> tuple[Analyte, ...]:
    """Group imported standards into analytes (units from the arguments or the column headers)."""

    names: list[str] = []
    by_name: dict[str, list[Standard]] = {}
    for name, standard in result.standards:
        if name not in by_name:
            names.append(name)
        by_name.setdefault(name, []).append(standard)
    uses_is = "is_response" in result.mapping
    return tuple(
        Analyte(
            name=n,
            concentration_unit=concentration_unit if concentration_unit is not None else result.units.get("concentration", ""),
            response_unit=response_unit if response_unit is not None else result.units.get("response", ""),
            standards=tuple(by_name[n]),
            uses_internal_standard=uses_is,
        )
        for n in names
    )
