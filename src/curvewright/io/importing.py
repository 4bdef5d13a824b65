"""Turning raw tables into standards and samples, reporting every cell that could not be used.

Columns are mapped by header with a guess the caller can override (``mapping={"response": "Area"}``
or a 1-based column number). Units in brackets are read from the header ("Concentration (ng/mL)").
Every rejected cell is reported with its row, column, the text found and the reason; a row that
cannot be imported is listed, never dropped silently. The result lists what was imported and what
was not.

The decimal mark is decided from the table's numeric columns as a whole
(:func:`.number_text.decimal_evidence`). A cell refused because the table's decimal mark or
thousands separator is not known carries a :class:`Remedy` naming the import option that answers
it, so that a front end can say once what the table shows and which of its controls to set
(:func:`grouped_cells`). A standard's nominal concentration below zero is refused. In the samples
table an empty response, or text that is neither a number nor a censored value, does not stop the
import: the reading is kept as typed, the sample is reported without it, and the cell is listed in
``ImportResult.unusable_readings``.

A workbook cell holding a formula never calculated (``RawTable.uncalculated``) is refused with its
formula wherever it is read, never taken as empty: no default (a dilution of 1, an unknown kind, a
counted replicate) stands in for it. In the samples table's responses it is a reading kept as
typed, as text that is not a number is.
"""

from __future__ import annotations

import re
import unicodedata
from dataclasses import dataclass, field
from typing import Callable, Iterable, Mapping

from ..core.run import Analyte, Measurement, Reading, Sample, SampleKind, Standard
from .errors import ImportProblem
from .number_text import (
    DecimalEvidence,
    ambiguous_problem,
    clean,
    decimal_evidence,
    parse_number,
    parse_reading,
    thousands_separator_in,
)
from .tables import Cell, RawTable, hidden_rows_note
from ..core.notation import entered

STANDARD_FIELDS = ("id", "analyte", "level", "concentration", "response", "replicate", "is_response")
SAMPLE_FIELDS = ("id", "analyte", "kind", "run_order", "dilution", "nominal", "response", "replicate", "is_response")
STANDARD_REQUIRED = ("concentration", "response")
SAMPLE_REQUIRED = ("id", "response")
TEXT_FIELDS = ("id", "analyte", "kind", "level")
"""Columns of words, not numbers: they are no evidence of the table's decimal mark."""
UNCALCULATED = ("a formula with no calculated value; open and save the workbook in a spreadsheet program "
                "(which calculates it), or type the value")
"""Why a workbook cell holding a formula never calculated is refused (no default stands in for it)."""
GROUP_LIMIT = 10
"""Cells listed under one grouped finding before "… and N more"."""

SYNONYMS = {
    "id": ("id", "sample id", "sample", "sample name", "name", "standard", "standard id", "std id", "std", "std.",
           "std. id", "std no", "std no.", "std. no", "std. no.", "std number", "standard no", "standard no.",
           "standard number", "standard name", "std name"),
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
    "icv": SampleKind.ICV, "initial calibration verification": SampleKind.ICV,
    "ccv": SampleKind.CCV, "continuing calibration verification": SampleKind.CCV,
    "ccb": SampleKind.CALIBRATION_BLANK, "icb": SampleKind.CALIBRATION_BLANK, "calibration blank": SampleKind.CALIBRATION_BLANK,
    "calibration_blank": SampleKind.CALIBRATION_BLANK,
    "low-level check": SampleKind.LOW_LEVEL_CHECK, "low level check": SampleKind.LOW_LEVEL_CHECK,
    "reporting-limit check": SampleKind.LOW_LEVEL_CHECK, "reporting limit check": SampleKind.LOW_LEVEL_CHECK,
    "llcv": SampleKind.LOW_LEVEL_CHECK, "low_level_check": SampleKind.LOW_LEVEL_CHECK,
}
KIND_CHOICES = "unknown, QC, blank, check standard, ICV, CCV, calibration blank (CCB), reporting-limit check"
"""The sample kinds in words, for messages."""


@dataclass(frozen=True)
class Remedy:
    """The import option that answers a cell's problem, and what the table shows.

    ``option`` is "decimal_mark" or "thousands"; ``value`` the setting the table points to ("." or
    ","; for thousands also " " or "'"), None when only the analyst can say; ``finding`` what the
    table as a whole shows, the same words for every cell the option would answer.
    """

    option: str
    value: str | None
    finding: str


@dataclass(frozen=True)
class RejectedCell:
    row: int
    column: str
    text: str
    reason: str
    remedy: Remedy | None = None

    def __str__(self) -> str:
        return f"row {self.row}, column {self.column}: {self.text!r} — {self.reason}"


class ColumnMappingProblem(ImportProblem):
    """A column named by the caller (header text or number) is not in the table, or fits more than one."""


def table_place(table: RawTable) -> str:
    """Where a table was read from, as messages name it: the file, and the sheet of a workbook."""
    return table.source if table.sheet is None else f"{table.source}, sheet {table.sheet!r}"


HEADER_SEARCH_ROWS = 20
"""How many rows below a title a header row is looked for, to name the rows above it."""
REPLICATE_FIELDS = ("response",)
"""Sample fields that may be taken from several columns, each a further replicate of the row's sample."""
SKIP = "skip"
"""The pseudo-field of a column left out on purpose (no further reading is looked for in it)."""
_NUMBERED = re.compile(r"^(.*?)[\s_#.-]*(\d+)$")


class MissingColumns(ImportProblem):
    """No column of the header row could be taken for a required field.

    ``missing`` lists the fields, ``headers`` the header row as found and ``accepted`` the header
    names recognised for each missing field.
    """

    def __init__(self, source: str, header_row: int, headers: list[str], missing: list[str]) -> None:
        self.source, self.header_row = source, header_row
        self.headers, self.missing = tuple(headers), tuple(missing)
        self.accepted = {f: SYNONYMS[f] for f in missing}
        accepted = "; ".join(f"{f}: {', '.join(repr(h) for h in SYNONYMS[f])}" for f in missing)
        found = ", ".join(repr(h) for h in headers) or "no header text"
        super().__init__(
            f"{source}: no column for {', '.join(missing)} in the header row (row {header_row}: {found}). "
            f"Headers accepted (upper or lower case; a unit may follow in brackets, e.g. 'Concentration (µg/L)') — "
            f"{accepted}. Rename the column in the table, or map it to the field."
        )


def grouped_cells(
    cells: Iterable[RejectedCell], answer: Callable[[Remedy], str], *, limit: int = GROUP_LIMIT, indent: str = "  "
) -> list[str]:
    """Lines reporting ``cells``: for each remedy, once what the table shows and ``answer(remedy)``
    (the control of the front end that sets the option), then its cells; then the other cells.
    Each list stops after ``limit`` cells with "… and N more"."""
    groups: dict[Remedy | None, list[RejectedCell]] = {}
    for cell in cells:
        groups.setdefault(cell.remedy, []).append(cell)
    lines: list[str] = []
    for remedy in sorted(groups, key=lambda r: r is None):
        members = groups[remedy]
        if remedy is not None:
            lines.append(f"{indent}{remedy.finding} → {answer(remedy)}")
            pad = indent * 2
        else:
            pad = indent
        lines += [f"{pad}{c}" for c in members[:limit]]
        if len(members) > limit:
            lines.append(f"{pad}… and {len(members) - limit} more")
    return lines


def dialog_answer(remedy: Remedy) -> str:
    """How the import dialog answers a remedy (its "Decimal mark" and "Thousands separator" choices)."""
    if remedy.option == "decimal_mark":
        return (f'choose {remedy.value!r} under "Decimal mark"' if remedy.value
                else 'choose the table\'s mark under "Decimal mark"')
    shown = "space" if remedy.value == " " else repr(remedy.value) if remedy.value else "the separator"
    return f'remove the separators, or choose {shown} under "Thousands separator"'


@dataclass(frozen=True)
class ImportResult:
    """What an import produced and what it could not use.

    ``standards`` is a tuple of (analyte name, Standard); ``samples`` a tuple of Sample.
    ``rejected`` lists each unusable cell; ``rejected_rows`` the rows not imported because of them;
    ``empty_rows`` the blank rows passed over. ``unusable_readings`` lists the sample readings kept
    as typed (empty, or text that is not a number) whose samples are reported without them;
    ``unused_columns`` the headers of the columns no field was taken from.
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
    unusable_readings: tuple[RejectedCell, ...] = ()
    unused_columns: tuple[str, ...] = ()
    sheet: str | None = None
    """The workbook sheet the table was read from (None for text)."""
    hidden_sheet: bool = False
    """That sheet is hidden in the workbook (read because it was named)."""
    hidden_rows: str = ""
    """What was done with the sheet's hidden rows, as chosen (:func:`.tables.hidden_rows_note`)."""
    replicate_columns: str = ""
    """Which columns the responses were read from when several, each a replicate, and the empty
    cells among them passed over, in words ("" for one response column)."""
    dilution_taken_as_one: tuple[int, ...] = ()
    """Rows of samples imported whose dilution cell is empty, in a table with a dilution column:
    the factor was taken as 1 (no dilution), as documented, and the front end says so."""

    @property
    def complete(self) -> bool:
        return not self.rejected

    @property
    def headline(self) -> str:
        """What was imported and how the text was read, in one line."""
        what = f"{len(self.standards)} standards" if self.standards or not self.samples else f"{len(self.samples)} samples"
        where = self.source if self.sheet is None else (
            f"{self.source}, sheet {self.sheet!r}" + (" (hidden in the workbook; read because it was named)"
                                                      if self.hidden_sheet else ""))
        hidden = "".join(f"; {said}" for said in (self.replicate_columns, self.hidden_rows) if said)
        return f"{where}: imported {what}; columns separated by {self.delimiter}; {self.decimal_note}{hidden}"

    def summary(self, answer: Callable[[Remedy], str] = dialog_answer) -> str:
        """The headline, then every cell not used, grouped by the option that answers it."""
        lines = [self.headline]
        if self.rejected_rows:
            lines.append(f"{len(self.rejected_rows)} row(s) not imported: {', '.join(map(str, self.rejected_rows))}")
        lines += grouped_cells(self.rejected, answer)
        if self.unusable_readings:
            lines.append(f"{len(self.unusable_readings)} reading(s) kept as typed; their samples are reported without them:")
            lines += grouped_cells(self.unusable_readings, answer)
        if self.empty_rows:
            lines.append(f"empty rows passed over: {', '.join(map(str, self.empty_rows))}")
        if self.dilution_taken_as_one:
            lines.append(f"dilution cell empty, taken as 1 (no dilution): row(s) "
                         f"{', '.join(map(str, self.dilution_taken_as_one))}")
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
    """Standards from a table with a header row: one row per standard injection.

    Every problem refuses its row, with the cell, the text and the reason. A nominal concentration
    below zero is refused.
    """
    ctx = _Context(table, STANDARD_FIELDS, mapping, decimal_mark, thousands, required=STANDARD_REQUIRED)
    standards: list[tuple[str, Standard]] = []
    first_seen: dict[tuple[str, str], int] = {}
    replicate_count: dict[tuple[str, float], int] = {}
    for row_number, cells in ctx.body():
        name = ctx.text(cells, "analyte", row_number) or analyte
        conc = ctx.number(cells, "concentration", row_number, required=True)
        if conc is not None and conc < 0:
            ctx.reject(row_number, "concentration", ctx.raw(cells, "concentration"),
                       "a nominal concentration cannot be below zero; correct it in the table", row_fails=True)
        response = ctx.reading(cells, "response", row_number, required=True)
        is_response = ctx.reading(cells, "is_response", row_number) if "is_response" in ctx.mapping else None
        replicate = ctx.whole(cells, "replicate", row_number)
        sid = ctx.text(cells, "id", row_number) or f"row {row_number}"
        level = ctx.text(cells, "level", row_number)
        if ctx.row_failed(row_number):
            continue
        assert conc is not None and response is not None
        if replicate is None:
            key = (name, conc)
            replicate_count[key] = replicate_count.get(key, 0) + 1
            replicate = replicate_count[key]
        if (name, sid) in first_seen:
            ctx.reject(row_number, "id", sid, f"duplicate standard id (first at row {first_seen[(name, sid)]})", row_fails=True)
            continue
        first_seen[(name, sid)] = row_number
        standards.append(
            (name, Standard(sid, conc, response, replicate, level, True, "", is_response))
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
    kind, run order, dilution factor and nominal value must agree across its rows. An empty
    response or internal-standard cell, or text in it that is neither a number nor a censored
    value, is kept as typed and listed in ``unusable_readings``: the sample is reported without
    that reading. A value refused for want of the table's decimal mark or thousands separator
    still refuses its row (the answer is an import option, not a correction).
    """
    ctx = _Context(table, SAMPLE_FIELDS, mapping, decimal_mark, thousands, required=SAMPLE_REQUIRED)
    # In the order the samples first appear, each sample's place in the lists of kinds, run orders,
    # dilutions, nominal values, measurements (its one Measurement, a list once a second comes) and
    # first rows; its replicate counts and rows by replicate are made only when a second row of it
    # comes (most samples have one). Lists side by side rather than a list per sample: a large table
    # leaves fewer objects behind to be freed.
    index: dict[str, int] = {}
    kinds: list[SampleKind] = []
    orders: list[int | None] = []
    dilutions: list[float] = []
    nominals: list[dict[str, float] | None] = []
    measured: list[Measurement | list[Measurement]] = []
    firsts: list[int] = []
    seen_rows: dict[int, tuple[dict[str, int], dict[tuple[str, int], int]]] = {}
    dilution_column = "dilution" in ctx.mapping
    taken_as_one: list[int] = []
    further_columns = ctx.replicate_columns.get("response", [])
    if further_columns and "replicate" in ctx.mapping:
        raise ColumnMappingProblem(f"{table_place(table)}: the response is mapped to several columns, each a "
                                   "replicate, and the table has a replicate column too: map one or the other.")
    passed_over: list[str] = []
    for row_number, cells in ctx.body():
        sid = ctx.text(cells, "id", row_number)
        if not sid:
            if not ctx.row_failed(row_number):
                ctx.reject(row_number, "id", "", "a sample needs an id", row_fails=True)
            continue
        name = ctx.text(cells, "analyte", row_number) or analyte
        kind_text = ctx.text(cells, "kind", row_number).lower()
        kind = KIND_WORDS.get(kind_text)
        if kind is None:
            ctx.reject(row_number, "kind", ctx.raw(cells, "kind").strip(), f"not a sample kind ({KIND_CHOICES})",
                       row_fails=True)
        response = ctx.sample_reading(cells, "response", row_number, sid)
        further = []  # the row's readings in further replicate columns; an empty cell is no reading
        for i in further_columns:
            if _blank(cells[i] if i < len(cells) else "") and (row_number, i) not in ctx.formulas:
                passed_over.append(f"row {row_number} column {ctx.label(i)}")
            else:
                further.append(ctx.reading_at(cells, i, "response", row_number, sid))
        is_response = ctx.sample_reading(cells, "is_response", row_number, sid) if "is_response" in ctx.mapping else None
        dilution = ctx.number(cells, "dilution", row_number)
        if dilution is not None and dilution <= 0:
            ctx.reject(row_number, "dilution", ctx.raw(cells, "dilution"), "a dilution factor must be above zero", row_fails=True)
        nominal = ctx.number(cells, "nominal", row_number)
        run_order = ctx.whole(cells, "run_order", row_number)
        replicate = ctx.whole(cells, "replicate", row_number)
        if ctx.row_failed(row_number):
            continue
        if dilution is None and dilution_column:
            taken_as_one.append(row_number)
        assert response is not None and kind is not None
        if None in further:
            continue  # a further reading refused its row (a decimal mark or separator to choose)
        if further:
            replicate = None  # each column's reading numbered in turn, after the sample's earlier ones
        at = index.get(sid)  # a dict: the lookup stays constant-time however many samples
        if at is None:
            index[sid] = len(kinds)
            kinds.append(kind)
            orders.append(run_order)
            dilutions.append(dilution or 1.0)
            nominals.append(None if nominal is None else {name: nominal})
            measured.append(Measurement(name, 1 if replicate is None else replicate, response, is_response))
            firsts.append(row_number)
            if not further:
                continue
            response, further = further[0], further[1:]
            at = index[sid]
        first = firsts[at]
        if kinds[at] is not kind:
            ctx.reject(row_number, "kind", ctx.raw(cells, "kind"),
                       f"differs from row {first} of the same sample ({kinds[at].words})", row_fails=True)
        if dilutions[at] != (dilution or 1.0):
            ctx.reject(row_number, "dilution", ctx.raw(cells, "dilution"),
                       f"differs from row {first} of the same sample ({entered(dilutions[at])})", row_fails=True)
        if ctx.row_failed(row_number):
            continue
        seen = seen_rows.get(at)
        if seen is None:
            only = measured[at]
            assert isinstance(only, Measurement)
            seen = seen_rows[at] = ({only.analyte: 1}, {(only.analyte, only.replicate): first})
            measured[at] = [only]
        counts, rows = seen
        if replicate is None:
            replicate = 1 + counts.get(name, 0)
        if (name, replicate) in rows:
            ctx.reject(row_number, "replicate", str(replicate),
                       f"sample {sid!r} already has replicate {replicate} of {name} (row {rows[name, replicate]})",
                       row_fails=True)
            continue
        rows[name, replicate] = row_number
        if nominal is not None:
            values = nominals[at]
            if values is None:
                values = nominals[at] = {}
            values[name] = nominal
        several = measured[at]
        assert isinstance(several, list)
        several.append(Measurement(name, replicate, response, is_response))
        counts[name] = counts.get(name, 0) + 1
        for reading in further:
            replicate = 1 + counts.get(name, 0)
            several.append(Measurement(name, replicate, reading, is_response))
            rows[name, replicate] = row_number
            counts[name] = replicate
    samples = tuple(
        Sample(sid, kinds[i], orders[i], dilutions[i],
               (measured[i],) if type(measured[i]) is Measurement else tuple(measured[i]),  # type: ignore[arg-type]
               () if nominals[i] is None else tuple(nominals[i].items()))  # type: ignore[union-attr]
        for sid, i in index.items()
    )
    failed = ctx.failed_rows
    columns = ""
    if further_columns:
        named = [ctx.column_name("response")] + [ctx.label(i) for i in further_columns]
        columns = f"responses read from the columns {', '.join(named)}, each a replicate"
        if passed_over:
            columns += f"; empty replicate cells passed over: {', '.join(passed_over[:10])}" + (
                f" … and {len(passed_over) - 10} more" if len(passed_over) > 10 else "")
    return ctx.result(samples=samples, dilution_taken_as_one=tuple(r for r in taken_as_one if r not in failed),
                      replicate_columns=columns)


def header_words(header: str) -> tuple[str, str]:
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
    """Shared machinery of the two importers: header mapping, the decimal mark, cell parsing, rejections."""

    def __init__(self, table, fields, mapping, decimal_mark, thousands, required) -> None:  # type: ignore[no-untyped-def]
        if decimal_mark not in (None, ".", ","):
            raise ImportProblem(f"decimal mark: {decimal_mark!r} is not '.' or ','.")
        if thousands not in (None, ".", ",", " ", "'"):
            raise ImportProblem(f"thousands separator: {thousands!r} is not '.', ',', a space or an apostrophe.")
        self.table = table
        self.thousands = thousands
        self.rejected: list[RejectedCell] = []
        self.unusable: list[RejectedCell] = []
        self.failed_rows: set[int] = set()
        self.empty_rows: list[int] = []
        self.warnings: list[str] = []
        self.formulas = {(row, column): text for row, column, text in table.uncalculated}
        rows = list(zip(table.row_numbers, table.rows))
        while rows and all(_blank(c) for c in rows[0][1]):
            self.empty_rows.append(rows.pop(0)[0])
        if not rows:
            raise ImportProblem(f"{table.source}: the table has no rows.")
        header_row, header = rows[0]
        self.header_row = header_row
        self.headers = [str(h).strip() if not isinstance(h, float) else repr(h) for h in header]
        override = dict(mapping or {})
        several = {f: list(override.pop(f)) for f in list(override) if isinstance(override[f], (list, tuple))}
        skipped = several.pop(SKIP, [override.pop(SKIP)] if SKIP in override else [])
        for f, wheres in several.items():
            if f not in REPLICATE_FIELDS or fields is not SAMPLE_FIELDS:
                raise ColumnMappingProblem(f"{table_place(table)}: column mapping: {f} is mapped to "
                                           f"{len(wheres)} columns; only a samples table's response may take several "
                                           "(each a further replicate)")
            override[f] = wheres[0]
        normal = [header_words(h) for h in self.headers]
        self.replicate_columns = {f: [self._column_of(f, w, normal) for w in wheres[1:]] for f, wheres in several.items()}
        self.skipped = [self._column_of(SKIP, w, normal) for w in skipped]
        self.mapping, self.units = self._map_columns(fields, override)
        missing = [f for f in required if f not in self.mapping]
        if missing:
            self._refuse_rows_above_header(rows, required, override)
            raise MissingColumns(table_place(table), header_row, self.headers, missing)
        self._check_replicate_columns()
        self.rows = rows[1:]
        used = set(self.mapping.values())
        self.formula_rows = {row for row, column in self.formulas if column in used}
        text_columns = {i for f, i in self.mapping.items() if f in TEXT_FIELDS}
        tokens = [c for _, r in self.rows for i, c in enumerate(r) if isinstance(c, str) and i not in text_columns]
        self.evidence: DecimalEvidence = decimal_evidence(tokens, table.delimiter)
        self.given_mark = decimal_mark
        if decimal_mark is not None:
            self.decimal_note = f"decimal mark {decimal_mark!r} as given"
        elif thousands in (",", "."):
            decimal_mark = "." if thousands == "," else ","
            self.decimal_note = f"decimal mark {decimal_mark!r} (the thousands separator is {thousands!r})"
        elif table.delimiter is None:
            decimal_mark, self.decimal_note = self.evidence.mark, "numbers read from workbook cells"
            if self.evidence.point or self.evidence.comma or self.evidence.undecided:
                self.decimal_note += f"; numbers stored as text: {self.evidence.note}"
        else:
            decimal_mark, self.decimal_note = self.evidence.mark, self.evidence.note
        self.decimal_mark = decimal_mark
        self.decimal_conflict = decimal_mark is None and self.evidence.conflict

    def _refuse_rows_above_header(self, rows: list[tuple[int, tuple[Cell, ...]]], required: tuple[str, ...],
                                  override: Mapping[str, str | int]) -> None:
        """Stop with the same advice a text table gets when the header row stands below a title or batch
        line (a workbook's merged title in row 1, the header in row 2): the rows above it are named."""
        for n, (row_number, cells) in enumerate(rows[1:HEADER_SEARCH_ROWS], start=1):
            words = {header_words(str(c))[0] for c in cells if isinstance(c, str) and c.strip()}
            texts = {str(c).strip() for c in cells if isinstance(c, str)}
            if all(f in override and str(override[f]) in texts or words & set(SYNONYMS[f]) for f in required):
                above = "; ".join(f"row {r} ({', '.join(repr(c) for c in row if not _blank(c)) or 'empty'})"
                                  for r, row in rows[:n])
                found = ", ".join(repr(str(c).strip()) for c in cells if not _blank(c))
                raise ImportProblem(
                    f"{table_place(self.table)}: the header row must be the first row of the table: delete the rows "
                    f"above it (a title, a batch line): {above}. The header stands in row {row_number} ({found}).")

    def _column_of(self, f: str, where: str | int, normal: list[tuple[str, str]]) -> int:
        """The 0-based column a mapping names (a 1-based number or a header text)."""
        if isinstance(where, int):
            if not (1 <= where <= len(self.headers)):
                raise ColumnMappingProblem(
                    f"{table_place(self.table)}: column mapping: {f} → column {where}, but the table has "
                    f"{len(self.headers)} columns."
                )
            return where - 1
        return self._header_index(f, where, normal)

    def _check_replicate_columns(self) -> None:
        """Refuse a samples table whose unmapped columns look like further readings of the response
        column ("Response 1" mapped, "Response 2" and "Response 3" not): reading one of three readings
        as the sample's result would drop the others without a word."""
        if "response" not in self.mapping or self.replicate_columns.get("response"):
            return
        if "replicate" in self.mapping:
            return  # one reading per row, numbered by its own column
        stem = _NUMBERED.match(self.headers[self.mapping["response"]])
        if stem is None:
            return
        base = header_words(stem.group(1))[0]
        taken = set(self.mapping.values()) | set(self.skipped)
        alike = [self.headers[i] for i in range(len(self.headers)) if i not in taken
                 and (m := _NUMBERED.match(self.headers[i])) and header_words(m.group(1))[0] == base]
        if not alike:
            return
        first = self.headers[self.mapping["response"]]
        maps = " ".join(f'--map samples.response="{h}"' for h in [first, *alike])
        raise ColumnMappingProblem(
            f"{table_place(self.table)}: the response is read from column {first!r}, but the columns "
            f"{', '.join(repr(h) for h in alike)} look like further readings of the same samples, and would not be "
            f"read. Map every column of readings to the response, each read as a further replicate ({maps}), or "
            f"leave a column out on purpose (--map samples.skip=\"{alike[0]}\")."
        )

    def _map_columns(self, fields, override):  # type: ignore[no-untyped-def]
        mapping: dict[str, int] = {}
        units: dict[str, str] = {}
        normal = [header_words(h) for h in self.headers]
        for f, where in override.items():
            if f not in fields:
                raise ColumnMappingProblem(f"{table_place(self.table)}: column mapping: {f!r} is not one of {', '.join(fields)}.")
            mapping[f] = self._column_of(f, where, normal)
        taken = set(mapping.values()) | set(self.skipped)
        for columns in self.replicate_columns.values():
            taken.update(columns)
        if len(taken) < len(mapping) + len(self.skipped) + sum(map(len, self.replicate_columns.values())):
            raise ColumnMappingProblem(f"{table_place(self.table)}: column mapping: one column is mapped twice.")
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
        self.unused = tuple(self.headers[i] for i in range(len(self.headers))
                            if (i not in taken or i in self.skipped) and self.headers[i])
        if self.unused:
            self.warnings.append(f"columns not used: {', '.join(repr(u) for u in self.unused)}")
        return mapping, units

    def _header_index(self, f: str, where: str, normal: list[tuple[str, str]]) -> int:
        """The column whose header is ``where``: as written, else in any case and without its unit."""
        if where in self.headers:
            return self.headers.index(where)
        words = header_words(where)[0]
        matches = [i for i, (w, _) in enumerate(normal) if w == words or self.headers[i].casefold() == where.casefold()]
        headers = ", ".join(repr(h) for h in self.headers)
        if not matches:
            raise ColumnMappingProblem(
                f"{table_place(self.table)}: column mapping: {f} → {where!r}, but no header is {where!r} (headers: {headers})."
            )
        if len(matches) > 1:
            raise ColumnMappingProblem(
                f"{table_place(self.table)}: column mapping: {f} → {where!r} fits columns "
                f"{', '.join(str(i + 1) for i in matches)}; give the column number instead."
            )
        return matches[0]

    def body(self):  # type: ignore[no-untyped-def]
        width = len(self.headers)
        for row_number, cells in self.rows:
            if all(_blank(c) for c in cells) and row_number not in self.formula_rows:
                self.empty_rows.append(row_number)
                continue
            if len(cells) > width and any(not _blank(c) for c in cells[width:]):
                extra = next(c for c in cells[width:] if not _blank(c))
                self.reject(row_number, f"{width + 1}", str(extra), f"the row has more cells than the header ({width})", row_fails=True)
                continue
            yield row_number, cells

    def column_name(self, f: str) -> str:
        return self.label(self.mapping[f])

    def dated(self, row: int, i: int | None, reason: str) -> str:
        """The reason a cell cannot be used, said of a date where the workbook holds one there: a number
        the spreadsheet program turned into a date ("1-10" typed as a dilution) reads as a date."""
        if i is None or (row, i) not in self.table.dates:
            return reason
        return ("is a date in the workbook, not a number (the spreadsheet program probably turned what was typed "
                "into a date: format the cell as a number and type the value again)")

    def label(self, i: int) -> str:
        """Column ``i`` (0-based) as messages name it: "5 (Response 3)"."""
        return f"{i + 1} ({self.headers[i]})" if i < len(self.headers) and self.headers[i] else str(i + 1)

    def raw(self, cells: tuple[Cell, ...], f: str) -> str:
        if f not in self.mapping or self.mapping[f] >= len(cells):
            return ""
        value = cells[self.mapping[f]]
        return repr(value) if isinstance(value, float) else value

    def reject(self, row: int, f: str, text: str, reason: str, *, row_fails: bool, remedy: Remedy | None = None,
               at: int | None = None) -> None:
        if remedy is not None:
            reason = reason.split("; ", 1)[0]  # the advice is given once, with the remedy
        index = at if at is not None else self.mapping.get(f)
        reason = self.dated(row, index, reason)
        column = self.label(at) if at is not None else self.column_name(f) if f in self.mapping else f
        self.rejected.append(RejectedCell(row, column, text, reason, remedy))
        if row_fails:
            self.failed_rows.add(row)

    def row_failed(self, row: int) -> bool:
        return row in self.failed_rows

    def text(self, cells: tuple[Cell, ...], f: str, row: int) -> str:
        if f not in self.mapping:
            return ""
        text = self.raw(cells, f).strip()
        if not text and self.uncalculated(f, row):
            return ""
        return text

    def uncalculated(self, f: str, row: int) -> bool:
        """True, with the cell refused, when the cell of field ``f`` in ``row`` holds a formula with
        no calculated value (only workbook cells read as empty can)."""
        if not self.formulas:
            return False
        formula = self.formulas.get((row, self.mapping[f]))
        if formula is None:
            return False
        self.reject(row, f, formula, UNCALCULATED, row_fails=True)
        return True

    def mark_problem(self, value: str) -> tuple[str, Remedy] | None:
        """Why a token cannot be read while the table's decimal mark is undecided, and the option that answers."""
        t = clean(value).lstrip("<>≤≥").strip()
        if self.decimal_conflict and ("," in t or "." in t):
            mark = "," if "," in t else "."
            return (f"uses '{mark}' while the table uses both decimal marks",
                    Remedy("decimal_mark", None, self.decimal_note))
        if self.decimal_mark is None and self.thousands is None and (problem := ambiguous_problem(value)):
            return problem, Remedy("decimal_mark", None, self.decimal_note)
        return None

    def remedy_for(self, value: str, problem: str) -> Remedy | None:
        """The option that answers a parse problem about marks or separators (None for other problems)."""
        if problem.startswith("has thousands separators"):
            separator = thousands_separator_in(value)
            return Remedy("thousands", separator, _thousands_finding(separator))
        if not problem.startswith("uses '"):
            return None
        other = problem[len("uses '")]
        grouped = thousands_separator_in(value) == other or ambiguous_problem(value) is not None
        if self.given_mark is not None:
            if self.evidence.mark == other:
                finding = f"the decimal mark {self.given_mark!r} was given, but the table's values show {self.evidence.note}"
            elif grouped:
                finding = (f"the decimal mark {self.given_mark!r} was given, but values use {other!r}; if {other!r} "
                           "separates thousands in them instead, name it as the thousands separator")
            else:
                finding = f"the decimal mark {self.given_mark!r} was given, but values use {other!r}"
            return Remedy("decimal_mark", other, finding)
        if grouped:
            return Remedy("thousands", other, _thousands_finding(other))
        return Remedy("decimal_mark", None,
                      f"values use {other!r} although the table's decimal mark is {self.decimal_mark!r} ({self.decimal_note})")

    def parse(self, value: str) -> tuple[Reading | None, str | None, Remedy | None]:
        """A text cell read as a reading, or (None, the reason, the option that answers it)."""
        if question := self.mark_problem(value):
            return None, question[0], question[1]
        parsed = parse_reading(value, self.decimal_mark, self.thousands)
        if parsed.problem:
            problem = parsed.problem.split(": ", 1)[-1]
            return None, problem, self.remedy_for(value, problem)
        return parsed.reading, None, None

    def reading(self, cells: tuple[Cell, ...], f: str, row: int, required: bool = False) -> Reading | None:
        if f not in self.mapping:
            return None
        i = self.mapping[f]
        value = cells[i] if i < len(cells) else ""
        if isinstance(value, float):
            return Reading(value, repr(value))
        if not value and self.uncalculated(f, row):
            return None
        reading, problem, remedy = self.parse(value)
        if problem:
            self.reject(row, f, value, problem, row_fails=True, remedy=remedy)
            return None
        assert reading is not None
        if required and reading.is_missing:
            self.reject(row, f, value, "empty: a value is needed here", row_fails=True)
            return None
        return reading

    def sample_reading(self, cells: tuple[Cell, ...], f: str, row: int, sample_id: str) -> Reading | None:
        """A sample's reading. Empty, or text that is not a number, is kept as typed and listed;
        a value that needs the table's decimal mark or thousands separator refuses the row."""
        if f not in self.mapping:
            return None
        return self.reading_at(cells, self.mapping[f], f, row, sample_id)

    def reading_at(self, cells: tuple[Cell, ...], i: int, f: str, row: int, sample_id: str) -> Reading:
        """The reading of column ``i`` (field ``f``), as :meth:`sample_reading` reads it."""
        value = cells[i] if i < len(cells) else ""
        if isinstance(value, float):
            return Reading(value, repr(value))
        what = "response" if f == "response" else "internal-standard response"
        if not value and (formula := self.formulas.get((row, i))) is not None:
            self.unusable.append(RejectedCell(row, self.label(i), formula,
                                              f"{UNCALCULATED}; sample {sample_id!r} is reported without this {what}"))
            return Reading(None, formula)  # kept as typed, as text that is not a number is
        reading, problem, remedy = self.parse(value)
        if problem and remedy is not None:
            self.reject(row, f, value, problem, row_fails=True, remedy=remedy, at=i)
            return None
        if problem:
            self.unusable.append(RejectedCell(row, self.label(i), value, f"{self.dated(row, i, problem)}; sample "
                                              f"{sample_id!r} is reported without this {what}"))
            return Reading(None, value)
        assert reading is not None
        if reading.is_missing:
            self.unusable.append(RejectedCell(row, self.label(i), value,
                                              f"empty: no {what} recorded; sample {sample_id!r} is reported without it"))
        return reading

    def number(self, cells: tuple[Cell, ...], f: str, row: int, required: bool = False) -> float | None:
        if f not in self.mapping:
            return None
        i = self.mapping[f]
        value = cells[i] if i < len(cells) else ""
        if isinstance(value, float):
            return value
        if not value.strip(" \u00a0\t"):
            if not value and self.uncalculated(f, row):
                return None
            if required:
                self.reject(row, f, value, "empty: a number is needed here", row_fails=True)
            return None
        if question := self.mark_problem(value):
            self.reject(row, f, value, question[0], row_fails=True, remedy=question[1])
            return None
        number, problem = parse_number(clean(value), self.decimal_mark, self.thousands)
        if problem:
            self.reject(row, f, value, problem, row_fails=True, remedy=self.remedy_for(value, problem))
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
        if self.table.delimiter is not None and self.table.sha256 is None:  # pasted text, not a file
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
            unusable_readings=tuple(c for c in self.unusable if c.row not in self.failed_rows),
            unused_columns=self.unused,
            sheet=self.table.sheet,
            hidden_sheet=self.table.hidden_sheet,
            hidden_rows=hidden_rows_note(self.table),
            **parts,
        )


def _thousands_finding(separator: str | None) -> str:
    shown = {" ": "spaces", None: "separators"}.get(separator, repr(separator))
    return f"values are written with thousands separators ({shown} between groups of three digits)"


def _blank(cell: Cell) -> bool:
    return isinstance(cell, str) and not cell.strip(" \u00a0\u202f\t")


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
