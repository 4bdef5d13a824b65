"""The results of a run as plain tables: the one source for the workbook, the CSV and the report.

Each table is a title, named columns (with their unit) and rows of plain values: text, numbers at
full precision, whole numbers, or None for an empty cell. Renderers only lay them out.
"""

from __future__ import annotations

import json
from decimal import Decimal
import math
import re
from dataclasses import dataclass, replace
from functools import cached_property
from typing import Any

import numpy as np

from ..core.level_text import percent_label
from .. import CAUTION, __version__
from ..core.errors import CurvewrightError
from ..core.limits import LIMIT_METHOD_NAMES
from ..core.models import Model
from ..core.rounding import RoundingRule, interval_places
from ..core.run import SampleKind
from ..core.reporting import ReportStatus
from ..core.notation import excel_format as notation_excel_format, figures, is_plain, p_text, written
from ..core.notation import P_FIGURES
from .number_text import clean, full_number, signed_text
from .audit import chain_claim, verify_chain  # noqa: F401 - chain_claim: where the record and the tables take it
from .model_choice import NOT_CHOSEN, NOT_CHOSEN_BY, chosen

TYPE_CHECKING = False
if TYPE_CHECKING:
    from ..core.calibration import Calibration
    from ..core.run_analysis import AnalyteResult, RunResult

Value = str | float | int | None


@dataclass(frozen=True)
class Column:
    """A column: its name and unit, the kind of its values, and how a number is shown for reading.

    ``display`` is ``"rule"`` (the run's rounding rule, for reported concentrations), ``"sig:N"``
    (N significant figures), ``"p:N"`` (a p-value to N significant figures, "> 0.999" where they would
    round a p below 1 up to 1: :func:`~curvewright.core.notation.p_text`), ``"dec:N"`` (N decimals),
    ``"signed:N"`` (N decimals with a sign),
    ``"plain"`` (up to six significant figures without trailing zeros: for settings such as a
    tolerance), ``"full"`` (every digit the value holds, without an exponent for ordinary magnitudes
    (:func:`~.number_text.full_number`): for values a person entered, such as a nominal concentration
    or a dilution factor, shown as entered) or ``""`` (six significant figures). Two depend on the
    row (:meth:`Table.columns_for` settles them):
    ``"interval"`` (an end of the interval whose two ends are the table's two ``"interval"``
    columns, shown as :func:`interval_text` prints the pair), ``"entered:NAME"`` (a response
    shown with the decimals it was entered with, the text in column NAME of the row) and
    ``"beside:KIND:N:CENTRE:WINDOW"`` (a recovery or %RE judged within CENTRE ± window: ``"KIND:N"``
    (``dec`` or ``signed``), with more decimals where N would show it on or across a limit
    (:func:`~curvewright.core.limit_digits.decimals_beside_limits`); WINDOW is the column holding
    the row's window, or ``@NAME``: the table's window for the row's value in column NAME) and
    ``"item:NAME"`` (``"full"`` for a row whose item, in column NAME, is one of the table's ``entered``
    items, a value a person entered such as a calibrated range's end; ``"rule"`` for one of its ``ruled``
    items, a computed concentration such as the LOD, shown by the run's rounding rule like every other
    computed value; ``"plain"`` otherwise). Unsettled,
    they show six significant figures (``"beside:"``: its usual decimals; ``"item:"``: ``"plain"``). The workbook keeps every number at full precision and only
    formats it so; the printed record prints it so.
    """

    name: str
    unit: str = ""
    kind: str = "text"  # text | number | int | reported | words (the program's text, numbers inside it)
    display: str = ""

    @property
    def heading(self) -> str:
        return f"{self.name} ({self.unit})" if self.unit else self.name


def shown_decimals(value: float, display: str, rule: RoundingRule | None = None) -> int | None:
    """How many decimals a number is shown with under ``display`` (None: in scientific notation,
    :mod:`curvewright.core.notation`)."""
    text, significant, scientific = _plain_text(float(value), _unsettled(display), rule)
    if scientific or (scientific is None and not is_plain(text)):
        return None
    return _decimal_places(text)


def _plain_text(v: float, display: str, rule: RoundingRule | None) -> tuple[str, int | None, bool | None]:
    """The plain digits a finite number is shown with under a settled ``display``, the significant
    figures they hold where a whole number's zeros may be digits, and the notation when the display
    fixes it (True: scientific, as the other end of its interval needs; None: as the notation says)."""
    if display == "rule" and rule is not None:
        return rule.text(v), (rule.digits if rule.kind == "significant" else None), None
    if display == "plain":
        return _figures_text(v, 6, strip=True), None, None
    if display == "full":
        return full_number(v), None, None
    kind, _, n = display.partition(":")
    if kind in ("dec", "signed", "decsci"):
        places = int(n)
        if places < 0:  # a value shown to the tens, hundreds… of its interval (RoundingRule.places_within)
            text = rule.at_places(v, places) if rule is not None else f"{round(v, places):.0f}"
        elif kind == "signed":
            text = signed_text(v, places)  # no sign on a value that rounds to zero
        else:
            text = f"{v:.{places}f}"
        return text, _figures_at(v, places), (True if kind == "decsci" else None)
    digits = int(n) if kind == "sig" else 6
    return _figures_text(v, digits), digits, None


def _p_plain(v: float, significant: int) -> str:
    """The plain digits :func:`~curvewright.core.notation.figures` writes a p-value with."""
    text = f"{v:.{significant}g}"
    return format(Decimal(text), "f") if "e" in text else text


def _figures_at(v: float, places: int) -> int | None:
    """The significant figures of ``v`` printed to ``places`` decimals (None for zero)."""
    return None if v == 0 else max(1, math.floor(math.log10(abs(v))) + places + 1)


def _figures_text(v: float, digits: int, strip: bool = False) -> str:
    """``v`` to ``digits`` significant figures in plain digits (trailing zeros kept unless ``strip``)."""
    if v == 0:
        return "0" if strip else f"{0:.{digits - 1}f}"
    text = f"{v:.{digits - 1}e}"
    mantissa, power = text.split("e")
    places = digits - 1 - int(power)
    plain = f"{float(text):.{max(places, 0)}f}"
    return plain.rstrip("0").rstrip(".") if strip and "." in plain else plain


def format_value(value: Value, column: Column, rule: RoundingRule | None = None) -> str:
    """A value as printed for reading (the record): numbers by the column's ``display``, written as
    :mod:`curvewright.core.notation` says ("0.0125", "3.20 × 10⁻⁵")."""
    if value is None:
        return ""
    if isinstance(value, str):
        return value
    if column.kind == "int" or (isinstance(value, int) and not isinstance(value, bool)):
        return str(value)
    v = float(value)
    if not math.isfinite(v):
        return display_number(v)
    if column.display.startswith("p:"):
        return p_text(v, int(column.display[2:]))
    text, significant, scientific = _plain_text(v, _unsettled(column.display), rule)
    return written(text, significant=significant, scientific=scientific)


def excel_format(value: Value, column: Column, rule: RoundingRule | None = None) -> str | None:
    """The number format that shows a workbook cell as :func:`format_value` prints it, while the cell
    keeps the full-precision number; None for text. Scientific notation is the spreadsheet's own
    ("0.00E+00"), with the digits :func:`format_value` prints."""
    if not isinstance(value, (int, float)) or isinstance(value, bool):
        return None
    if column.kind == "int" or isinstance(value, int):
        return "0"
    v = float(value)
    if not math.isfinite(v):
        return None
    if column.display.startswith("p:"):  # the literal "> 0.999" where the figures would read 1
        shown = p_text(v, int(column.display[2:]))
        return f'"{shown}"' if shown.startswith(">") else notation_excel_format(_p_plain(v, int(column.display[2:])))
    display = _unsettled(column.display)
    text, significant, scientific = _plain_text(v, display, rule)
    body = notation_excel_format(text, significant, scientific)
    if display.startswith("signed") and "E" not in body:
        # a value that rounds to zero at the shown decimals is shown with no sign (signed_text): "0.0" for
        # it either side of zero, which a format "+0.0;-0.0;0.0" gives only to an exact zero
        return f"{body};{body}" if text[:1] not in "+-\u2212" else f"+{body};-{body};{body}"
    return body


@dataclass(frozen=True)
class Table:
    """A titled table; ``rounding`` is the run's rule for the columns shown by it (``display="rule"``)."""

    title: str
    columns: tuple[Column, ...]
    rows: tuple[tuple[Value, ...], ...]
    rounding: RoundingRule | None = None
    windows: tuple[tuple[str, float], ...] = ()  # for a "beside:...:@NAME" column: the window by the value in NAME
    entered: tuple[str, ...] = ()  # for an "item:NAME" column: the items whose value was entered, shown in full
    ruled: tuple[str, ...] = ()  # for an "item:NAME" column: the items shown by the run's rule (``rounding``)
    p_values: tuple[str, ...] = ()  # for an "item:NAME" column: the items that are p-values (``"p:3"``)
    notice: str = ""
    """What a reader must not miss about the whole table (a record that is not intact), beside its title."""

    def select(self, names: tuple[str, ...], title: str | None = None, where: tuple[str, Value] | None = None) -> "Table":
        """The named columns only (in that order), optionally only rows whose column ``where[0]`` equals ``where[1]``."""
        index = {c.name: i for i, c in enumerate(self.columns)}
        missing = [n for n in names if n not in index]
        if missing:
            raise KeyError(f"table {self.title!r} has no column {missing[0]!r}")
        rows = self.rows
        if where is not None:
            rows = tuple(r for r in rows if r[index[where[0]]] == where[1])
        return replace(self, title=title or self.title, columns=tuple(self.columns[index[n]] for n in names),
                       rows=tuple(tuple(r[index[n]] for n in names) for r in rows))

    def columns_for(self, row: tuple[Value, ...]) -> tuple[Column, ...]:
        """The columns as they show the numbers of ``row``: a display that depends on the row (see
        :class:`Column`) settled to ``"dec:N"``, ``"plain"``, ``"rule"`` or ``"sig:6"``; the others as they are."""
        plan = self._row_displays
        if plan is None:
            return self.columns
        ends, dependent, settled = plan
        interval = "sig:6"
        lower = upper = None
        if ends is not None:
            lower, upper = row[ends[0]], row[ends[1]]
            if isinstance(lower, float) and isinstance(upper, float) and math.isfinite(lower) and math.isfinite(upper):
                places = max(interval_decimals(lower, upper, self.rounding), 0)
                both_plain = all(is_plain(f"{v:.{places}f}") for v in (lower, upper))
                interval = f"dec:{places}" if both_plain else f"decsci:{places}"  # both ends in one notation
            else:
                interval = "plain"  # an end without a number, or unbounded: the other end as display_number shows it
                lower = upper = None
        columns = list(self.columns)
        for j, kind, source in dependent:
            if kind == "interval":
                display = interval
            elif kind == "within":
                display = self._within(row[j], lower, upper, row[source] if source is not None and source >= 0 else 1.0)
            elif kind == "beside":
                display = self._beside(self.columns[j].display, row[j], row, source)
            elif kind == "item":
                item = row[source] if source >= 0 else None
                display = ("full" if item in self.entered else
                           "rule" if item in self.ruled and self.rounding is not None else
                           f"p:{P_FIGURES}" if item in self.p_values else "plain")
            else:
                places = entered_decimals(row[source]) if source >= 0 else None
                display = "sig:6" if places is None else f"dec:{places}"
            column = settled.get((j, display))
            if column is None:
                c = self.columns[j]
                column = settled[(j, display)] = Column(c.name, c.unit, c.kind, display)
            columns[j] = column
        return tuple(columns)

    def _within(self, value: Value, lower: float | None, upper: float | None, factor: Value) -> str:
        """A ``"within"`` column's display for its row: the run's rule, or ``"dec:N"`` where the rule
        would show the value more coarsely than its interval supports (:meth:`.RoundingRule.places_within`)."""
        if self.rounding is None or not isinstance(value, float) or lower is None or upper is None:
            return "rule"
        if not isinstance(factor, (int, float)) or isinstance(factor, bool) or not factor > 0:
            return "rule"
        places = self.rounding.places_within(value, lower / factor, upper / factor)
        return "rule" if places is None else f"dec:{places}"

    def _beside(self, display: str, value: Value, row: tuple[Value, ...], source: tuple[int, bool]) -> str:
        """A ``"beside:"`` column's display for its row: ``"KIND:N"`` with the decimals that show on
        which side of its acceptance limits the value lies (:mod:`curvewright.core.limit_digits`)."""
        from ..core.limit_digits import decimals_beside_limits

        _, kind, usual, centre, _name = display.split(":", 4)
        index, by_table = source
        window: Value = None
        if index >= 0:
            window = row[index]
            if by_table:
                window = dict(self.windows).get(window) if isinstance(window, str) else None
        decimals = int(usual)
        if isinstance(value, float) and isinstance(window, (int, float)) and not isinstance(window, bool) \
                and math.isfinite(float(window)):
            c, w = float(centre), float(window)
            decimals = decimals_beside_limits(value, decimals, (c - w, c + w))
        return f"{kind}:{decimals}"

    @cached_property
    def _row_displays(self):  # type: ignore[no-untyped-def]
        """For :meth:`columns_for`, worked out once: the two interval columns (or None), each column
        shown by its row with what its display reads ("interval"; "within" and the dilution column, or
        None; "entered" and the column of the text, -1 for a column the table lacks), and the settled
        columns made so far; None when no column depends on the row."""
        index = {c.name: i for i, c in enumerate(self.columns)}
        dependent = []
        for j, c in enumerate(self.columns):
            if c.display == "interval":
                dependent.append((j, "interval", None))
            elif c.display == "within" or c.display.startswith("within:"):
                name = c.display.partition(":")[2]
                dependent.append((j, "within", index.get(name, -1) if name else None))
            elif c.display.startswith("entered:"):
                dependent.append((j, "entered", index.get(c.display.partition(":")[2], -1)))
            elif c.display.startswith("beside:"):
                name = c.display.split(":", 4)[4]
                dependent.append((j, "beside", (index.get(name.lstrip("@"), -1), name.startswith("@"))))
            elif c.display.startswith("item:"):
                dependent.append((j, "item", index.get(c.display.partition(":")[2], -1)))
        if not dependent:
            return None
        ends = [j for j, kind, _ in dependent if kind == "interval"]
        return (tuple(ends) if len(ends) == 2 else None), tuple(dependent), {}


def interval_words(run_result: RunResult, analyte: AnalyteResult | None = None) -> str:
    """How the run's intervals are computed, in words: for ``analyte``'s calibration, or for every analyte
    of the run (one method, or each analyte's when they differ)."""
    s = run_result.run.settings
    level = f"{percent_label(s.confidence_level)}"
    if s.interval != "band":
        return f"{level} symmetric x̂ ± t·s_x̂ (s_x̂ by the delta method)"
    if analyte is not None:
        cal = analyte.calibration
        return f"{level} {band_method_words(cal) if cal is not None else 'prediction band inverted'}"
    methods = {a.analyte.name: band_method_words(a.calibration) for a in run_result.analytes if a.calibration is not None}
    distinct = set(methods.values())
    if len(distinct) <= 1:
        return f"{level} {distinct.pop() if distinct else 'prediction band inverted'}"
    return f"{level}; " + "; ".join(f"{name}: {words}" for name, words in methods.items())


def band_method_words(cal: Calibration) -> str:
    """What inverting the prediction band amounts to for ``cal`` (see :mod:`curvewright.core.inverse`,
    :mod:`curvewright.core.nonlinear_calibration` and :mod:`curvewright.core.response_factor`)."""
    from ..core.weighting_kinds import Weighting

    weighting = cal.weighting
    estimated = (
        "; Student's t on Satterthwaite's degrees of freedom for the estimated variance function"
        if weighting.variance_function is not None else ""
    )
    if cal.model is Model.AVERAGE_RF:
        return ("ȳ₀/(RF̄ ± t·s_RF·√(1/m + 1/n)), the prediction interval of the mean of m response factors "
                "(below the lowest standard, the prediction band inverted with the lowest standard's variance)")
    if not cal.model.is_polynomial:
        return ("prediction band inverted numerically over concentrations ≥ 0, the curve's variance by the delta "
                f"method (the lower end 0 where the band holds down to zero){estimated}")
    if weighting is Weighting.INVERSE_S2 or weighting.variance_function is not None:
        return f"prediction band inverted numerically{estimated}"
    if cal.model is Model.QUADRATIC or weighting.uses_concentration:
        return "prediction band inverted, its ends the roots of a polynomial in x"
    return "prediction band inverted: Fieller's interval for a straight line"


def samples_table(result: RunResult) -> Table:
    """One row per sample × analyte: what is reported (text), and the working behind it at full precision.
    The standard error and the interval's ends are on the reported scale (the solution measured × the
    dilution factor), as their headings say."""
    rule = result.run.settings.rounding
    unit = {a.analyte.name: a.analyte.concentration_unit for a in result.analytes}
    columns = (
        Column("Sample id"), Column("Kind"), Column("Analyte"), Column("Run order", kind="int"),
        Column("Replicates", kind="int"), Column("Measured", kind="int"), Column("Censored", kind="int"),
        Column("Replicate responses", kind="words"), Column("Mean response", kind="number", display="sig:6"),
        Column("Estimated concentration", kind="number", display="within:Dilution factor"),
        Column("Dilution factor", kind="number", display="full"),
        Column("Concentration × dilution", kind="number", display="within"), Column("Reported", kind="reported"),
        Column("Standard error × dilution", kind="number", display="sig:3"),
        Column("Lower limit × dilution", kind="number", display="interval"),
        Column("Upper limit × dilution", kind="number", display="interval"),
        Column("Interval", kind="words"), Column("Unit"), Column("Status"), Column("Flags", kind="words"),
        Column("Suggested dilution", kind="number", display="plain"), Column("Nominal", kind="number", display="full"),
        Column("Recovery (%)", kind="number", display="beside:dec:1:100:@Kind"), Column("QC or check"),
    )
    rows = []
    for a in result.analytes:
        words = interval_words(result, a)
        # the readings as entered, sample by sample (the run's samples listed for the analyte, in the
        # run's order, as the results are made; a sample entered without a response has none)
        listed = {s.sample_id for s in a.samples}
        measured = [(sample.id, sample.measurements_of(a.analyte.name)) for sample in result.run.samples
                    if sample.id in listed]
        if [i for i, _ in measured] == [s.sample_id for s in a.samples]:
            measured = [m for _, m in measured]
        else:
            measured = [()] * len(a.samples)
        for s, readings in zip(a.samples, measured):
            rows.append((
                s.sample_id, s.kind.words, s.analyte, s.run_order, s.replicates, len(s.replicate_responses),
                s.censored_readings,
                replicate_text(s.replicate_responses, readings, a.analyte.uses_internal_standard),
                s.mean_response, s.estimate, s.dilution_factor,
                s.reported, s.reported_text or (None if s.reported is None else rule.text_within(s.reported, s.reported_lower, s.reported_upper)),
                s.reported_standard_error, s.reported_lower, s.reported_upper, words if s.reported is not None else "",
                unit[s.analyte], STATUS_WORDS[s.status], s.flag_words, s.suggested_dilution, s.nominal,
                s.recovery_percent, qc_word(s.kind, s.within_limits),
            ))
    return Table("Samples", columns, tuple(rows), rule, tuple(recovery_windows(result).items()))


def recovery_windows(result: RunResult) -> dict[str, float]:
    """The window (±%) around 100 % each judged kind's recovery is judged within, by the kind's words:
    the profile's tolerance for a QC sample, the calibration checks' own for each kind of check (for
    the decimals shown beside the verdict, :mod:`curvewright.core.limit_digits`)."""
    windows = {SampleKind.QC.words: float(result.profile.qc.tolerance_percent)}
    for a in result.analytes:
        for c in (a.checks.checks if a.checks else ()):
            if c.window_percent is not None:
                windows.setdefault(c.kind.words, float(c.window_percent))
    return windows


def replicate_text(values: tuple[float, ...], measurements: tuple, ratio: bool) -> str:  # type: ignore[type-arg]
    """The replicate responses used, joined by " | ": each as it was entered ("503.900" keeps its
    zeros; "503,900" is written with the point), or as its shortest repr where the text does not
    say its decimals (a ratio to the internal standard, an exponent, thousands separators)."""
    from ..core.run_analysis import response_value

    texts = [m.response.text for m in measurements
             if response_value(m.response, m.internal_standard_response, ratio)[0] is not None]
    if ratio or len(texts) != len(values):
        return " | ".join(repr(v) for v in values)
    out = []
    for v, text in zip(values, texts):
        places = entered_decimals(text)
        shown = None if places is None else f"{v:.{places}f}"
        out.append(shown if shown is not None and float(shown) == v else repr(v))
    return " | ".join(out)


def qc_word(kind: SampleKind, within: bool | None) -> str:
    """The "QC or check" cell: pass or FAIL, "not judged" for a QC sample the profile could not judge
    (no nominal concentration or no reported number; the QC verdict names the reason), else empty."""
    if within is None and kind is SampleKind.QC:
        return "not judged"
    return verdict_word(within)


STATUS_WORDS = {
    ReportStatus.IN_RANGE: "reported", ReportStatus.ABOVE_RANGE: "above the range",
    ReportStatus.BELOW_REPORTING_LIMIT: "below the reporting limit", ReportStatus.BELOW_LOD: "below the detection limit",
    ReportStatus.NOT_QUANTIFIED: "not quantified", ReportStatus.NOT_REPORTABLE: "not reportable",
}
"""The status of a result in words (the same in every output)."""


def verdict_word(within: bool | None) -> str:
    return "" if within is None else ("pass" if within else "FAIL")


def checks_table(a: AnalyteResult, rule: RoundingRule | None = None) -> Table:
    """The calibration checks of one analyte: recovery, window and verdict, with the reason (``rule``:
    the run's rounding, for the found concentrations)."""
    unit = a.analyte.concentration_unit
    columns = (Column("Check"), Column("Kind"), Column("Run order", kind="int"), Column("Nominal", unit, "number", "full"),
               Column("Found", unit, "number", "rule"), Column("Recovery (%)", kind="number", display="beside:dec:1:100:Window (±%)"),
               Column("Window (±%)", kind="number", display="plain"), Column("Verdict"), Column("Reason"))
    rows = tuple(
        (c.sample_id, c.kind.words, c.run_order, c.nominal, c.found, c.recovery_percent, c.window_percent,
         "pass" if c.passed else "FAIL", c.reason.split(": ", 2)[-1])
        for c in (a.checks.checks if a.checks else ())
    )
    return Table(f"Calibration checks – {a.analyte.name}", columns, rows, rule)


_CALIBRATION_COLUMNS = (Column("Item"), Column("Value", display="item:Item"), Column("Standard error", display="sig:3"))
"""The calibration table's columns: a value that is a standard's concentration as entered (the table's
``entered`` items) is shown in full (:func:`~curvewright.core.number_words.full_number`), as the
standards table shows it; a computed limit (the LOD, LOQ, x_c, y_c, x_d and a reporting limit taken
from them: the table's ``ruled`` items) by the run's rounding rule, as every other output shows it;
every other value to six significant figures at most."""


def calibration_table(a: AnalyteResult, result: RunResult) -> Table:
    """Key–value rows describing one analyte's calibration."""
    cal = a.calibration
    an = a.analyte
    rows: list[tuple[Value, ...]] = [
        ("Run", result.run.name, None), ("Analyte", an.name, None),
        ("Concentration unit", an.concentration_unit, None), ("Response unit", an.response_unit, None),
        ("Response used", "analyte/internal-standard ratio" if an.uses_internal_standard else "analyte response", None),
        ("Software", f"Curvewright {__version__}", None),
    ]
    chosen_by = _chooser(result, an.name)
    model = cal.model.description if cal else an.model
    rows += [
        ("Model", model + (" (given for this calculation, not the run's choice)" if a.model_overridden else ""), None),
        ("Weighting", cal.weighting.description if cal else an.weighting, None),
        ("Reason for the choice", an.choice_reason or ("(none recorded)" if chosen(result.run, an.name) else NOT_CHOSEN),
         None),
        ("Chosen by", chosen_by, None),
    ]
    if cal is None:
        rows.append(("Calibration", a.not_fitted_words, None))
        return Table(f"Calibration – {an.name}", _CALIBRATION_COLUMNS, tuple(rows))
    rows.append(("Equation", cal.equation(12), None))
    names = cal.coefficient_names
    for power, (name, words, b, se) in enumerate(zip(names, cal.coefficient_descriptions, cal.coefficients,
                                                    cal.standard_errors)):
        fixed = cal.through_origin and power == 0  # b0 fixed at 0
        rows.append((f"{name} ({words})", 0.0 if fixed else float(b), None if fixed else float(se)))
    for i in range(cal.covariance.shape[0]):
        for j in range(i + 1, cal.covariance.shape[0]):
            rows.append((f"covariance({names[i]}, {names[j]})", float(cal.covariance[i, j]), None))
    convergence = getattr(cal, "convergence", "")
    if convergence:
        rows.append(("Fit (nonlinear least squares)", f"converged: {convergence}", None))
    from .model_outputs import response_factor_rows

    rows += response_factor_rows(cal, an.uses_internal_standard)
    lof = cal.lack_of_fit
    rows += [
        ("Standards in the fit (n)", cal.n_standards, None), ("Concentration levels", cal.levels.n_levels, None),
        ("Residual SD", cal.residual_sd, None), ("Residual degrees of freedom", cal.df_residual, None),
        ("R²", cal.r_squared, None), ("Adjusted R²", cal.adjusted_r_squared, None),
        ("Lack-of-fit F", lof.f_statistic if lof.available else f"not tested: {lof.reason}", None),
        ("Lack-of-fit df (lack of fit, pure error)", f"{lof.df_lack_of_fit}, {lof.df_pure_error}" if lof.available else None, None),
        ("Lack-of-fit p", lof.p_value, None), ("Pure-error SD", lof.pure_error_sd, None),
    ]
    mandel = _mandel(cal)
    rows.append(("Mandel's test PG (ISO 8466-1)", mandel[0], None))
    rows.append(("Mandel's test p", mandel[1], None))
    entered: list[str] = []  # the items whose value is a standard's concentration as entered
    ruled: list[str] = []  # the computed limits, shown by the run's rounding rule
    if a.reporting is not None:
        narrowed = a.reporting.narrowing
        ends = [("Calibrated range, LLOQ (lowest passing non-zero standard)" if narrowed else
                 "Calibrated range, LLOQ (lowest non-zero standard)", a.reporting.lloq, None),
                ("Calibrated range, ULOQ (highest passing standard)" if narrowed else
                 "Calibrated range, ULOQ (highest standard)", a.reporting.uloq, None)]
        rows += ends
        entered += [item for item, _, _ in ends]
        if a.reporting.basis == "LLOQ" and a.reporting.reporting_limit == a.reporting.lloq:
            entered.append("Reporting limit (LLOQ)")
        else:  # the LOQ or x_c: a computed limit
            ruled.append(f"Reporting limit ({a.reporting.basis})")
        if narrowed:
            rows += [("Range of the standards in the fit", f"{full_number(a.reporting.standards_range[0])}–"
                      f"{full_number(a.reporting.standards_range[1])}", None),
                     ("Range narrowed, why", narrowed, None)]
        rows += [(f"Reporting limit ({a.reporting.basis})", a.reporting.reporting_limit, None),
                 ("Reporting limit, why", a.reporting.note, None),
                 ("Between the LOD and the reporting limit", BELOW_LIMIT_WORDS[result.profile.reporting.between_lod_and_reporting_limit], None)]
    if cal.vertex is not None:
        rows.append(("Vertex of the quadratic", cal.vertex, None))
    for note in cal.notes:
        rows.append(("Note", note, None))
    rule = result.run.settings.rounding
    rows.append(("Reported values rounded to", rule.description, None))
    departed = rule_departures(a, rule)
    if departed:
        rows.append(("Shown to the decimal place of their interval instead",
                     f"{', '.join(departed)}: the rule ({rule.description}) would show "
                     + ("it" if len(departed) == 1 else "them")
                     + " outside the interval or end a whole number in zeros read as exact digits", None))
    rows.append(("Interval", interval_words(result, a), None))
    if a.limits is not None:
        # ISO 11843-2: the decision limits with their values, for one reading of a test sample and for
        # each other number of readings K the samples have (the limits shrink with K)
        one = " for 1 reading" if a.limits_by_readings else ""
        if a.limits.critical_concentration is not None:
            rows += [(f"Critical value x_c{one} (not detected below it)", a.limits.critical_concentration, None),
                     (f"Critical response y_c{one}", a.limits.critical_response, None)]
            ruled += [f"Critical value x_c{one} (not detected below it)", f"Critical response y_c{one}"]
        lod_label = f"Minimum detectable value x_d{one}" if a.limits.critical_concentration is not None else "LOD"
        ruled += [lod_label, "LOQ"]
        rows += [(lod_label, a.limits.lod, None)]
        for by_k in a.limits_by_readings:
            k = by_k.readings
            labels = [f"Critical value x_c for {k} readings (not detected below it)",
                      f"Critical response y_c for {k} readings", f"Minimum detectable value x_d for {k} readings"]
            rows += list(zip(labels, (by_k.critical_concentration, by_k.critical_response, by_k.lod), (None,) * 3))
            ruled += labels
        rows += [("LOQ", a.limits.loq if a.limits.loq is not None else "not defined by this method", None),
                 ("LOD/LOQ method", a.limits.name, None), ("LOD/LOQ formula", a.limits.description, None)]
        if a.limits.blank_readings:
            unit = f" ({an.response_unit})" if an.response_unit.strip() else " (response units)"
            rows += [("Blank readings (n)", a.limits.blank_readings, None),
                     (f"Blank mean ȳ_b{unit}", a.limits.blank_mean, None),
                     (f"Blank SD σ_b{unit}", a.limits.sigma, None)]
    else:
        rows += [("LOD/LOQ method", LIMIT_METHOD_NAMES[result.run.settings.limits_method], None),
                 ("LOD/LOQ", f"not computed: {a.limits_note}", None)]
    if a.verdict is not None:
        rows.append(("Acceptance profile", result.profile.name, None))
        rows.append(("Profile source", result.profile.source, None))
        rows.append(("Standards verdict", "accepted" if a.verdict.passed else "NOT accepted", None))
        rows += [("Reason", r, None) for r in a.verdict.reasons]
    if a.qc_verdict is not None:
        rows.append(("QC verdict", "accepted" if a.qc_verdict.passed else "NOT accepted", None))
        rows += [("QC reason", r, None) for r in a.qc_verdict.reasons]
    if a.checks is not None:
        rows.append(("Calibration checks verdict", "accepted" if a.checks.passed else "NOT accepted", None))
        rows += [("Calibration check", r, None) for r in a.checks.reasons]
        rows.append(("Calibration check windows, source", result.profile.checks.source, None))
    for u in a.unusable_standards:
        rows.append(("Standard not usable", f"{u.standard_id}: {u.reason}", None))
    return Table(f"Calibration – {an.name}", _CALIBRATION_COLUMNS, tuple(rows), rule, entered=tuple(entered),
                 ruled=tuple(ruled), p_values=("Lack-of-fit p", "Mandel's test p"))


def limits_words(a: AnalyteResult, result: RunResult) -> str:
    """The analyte's limits in one line, as the command's text and the app's results show them: the
    values by the run's rounding rule in the concentration unit, the method's name, and for a blank
    method the blank readings' count, mean and SD in the response unit; or why none were computed."""
    method = LIMIT_METHOD_NAMES[result.run.settings.limits_method]
    if a.limits is None:
        return f"LOD/LOQ not computed ({method}): {a.limits_note}" if a.limits_note else ""
    unit = a.analyte.concentration_unit.strip()
    line = f"{a.limits.values_words(unit, result.run.settings.rounding)} — {a.limits.name}"
    blanks = a.limits.blank_words(a.analyte.response_unit.strip())
    return f"{line}; {blanks}" if blanks else line


def rule_departures(a: AnalyteResult, rule: RoundingRule) -> tuple[str, ...]:
    """The samples of ``a`` whose reported value is shown otherwise than ``rule`` shows it, because the
    rule would show it more coarsely than its interval supports (:meth:`.RoundingRule.text_within`),
    each named once. A value whose text is the same either way ("370" by three significant figures and
    at the unit place of its interval) is not named: what it shows is the rule's."""
    out: list[str] = []
    for s in a.samples:
        if s.reported is None or s.sample_id in out:
            continue
        if rule.text_within(s.reported, s.reported_lower, s.reported_upper) != rule.text(s.reported):
            out.append(s.sample_id)
    return tuple(out)


def standards_table(a: AnalyteResult, rule: RoundingRule | None = None) -> Table:
    cal = a.calibration
    an = a.analyte
    columns = (
        Column("Standard id"), Column("Level"), Column("Replicate", kind="int"),
        Column("Nominal concentration", an.concentration_unit, "number", "full"), Column("Response as entered"),
        Column("Response used", kind="number",
               display="sig:6" if an.uses_internal_standard else "entered:Response as entered"),
        Column("Back-calculated", an.concentration_unit, "number", "rule"),
        Column("Relative error (%)", kind="number", display="beside:signed:1:0:Tolerance (%)"), Column("Tolerance (%)", kind="number", display="plain"),
        Column("Within limits"), Column("Leverage", kind="number", display="dec:3"),
        Column("Cook's distance", kind="number", display="sig:3"),
        Column("Externally studentized residual", kind="number", display="signed:2"), Column("Influence flags"), Column("Included"),
        Column("Exclusion reason"),
    )
    from ..core.run_analysis import back_calculated_outside_fit, response_value

    position = {s.id: i for i, s in enumerate(a.fitted_standards)}
    unusable = {u.standard_id: u.reason for u in a.unusable_standards}  # why, as the analysis found it
    rows = []
    for s in an.standards:
        used, why = response_value(s.response, s.internal_standard_response, an.uses_internal_standard)
        base = [s.id, s.level, s.replicate, s.concentration if s.has_concentration else None, s.response.text, used]
        i = position.get(s.id)
        if cal is not None and i is not None and a.verdict is not None:
            flags = "; ".join(f.value for f in cal.influence_flags[i])
            rows.append(tuple(base + [
                _finite(cal.back_calculated[i]), _finite(cal.relative_error[i]),
                float(a.verdict.tolerance_percent[i]) if a.verdict.judged[i] else None,
                ("yes" if a.verdict.passing[i] else "NO") if a.verdict.judged[i] else (
                    "anchor point, not judged" if s.anchor else "not judged (blank)"),
                float(cal.leverage[i]), _finite(cal.cooks_distance[i]), _finite(cal.studentized_residuals[i]),
                flags, "yes", "",
            ]))
            continue
        back = re_ = None
        if cal is not None and not s.included:  # an excluded standard read off the curve; an unusable one has nothing to read
            back, re_ = back_calculated_outside_fit(cal, s, an.uses_internal_standard)
        reason = s.exclusion_reason if not s.included else f"not usable: {unusable.get(s.id) or why}"
        rows.append(tuple(base + [back, re_, None, "excluded" if not s.included else "not usable", None, None, None, "",
                                  "no", reason]))
    return Table(f"Standards – {an.name}", columns, tuple(rows), rule)


def audit_table(result: RunResult) -> Table:
    """Every entry: when, who, the action, what was done in words, the details as recorded and the entry's hash."""
    from .audit_words import entry_words

    trail = result.run.audit
    _, claim = chain_claim(result.run)
    rows: list[tuple[Value, ...]] = [(None, "", "", "chain check", claim, "", "")]
    for i, e in enumerate(trail, start=1):
        who = f"{e.analyst} ({'ID ' + e.analyst_id + '; ' if e.analyst_id else ''}login {e.user})" if e.analyst else e.user
        rows.append((i, e.time_utc, who, e.action, entry_words(e), json.dumps(e.details, ensure_ascii=False, sort_keys=True),
                     e.hash))
    columns = (Column("Entry", kind="int"), Column("Time (UTC)"), Column("User"), Column("Action"), Column("What was done"),
               Column("Details"), Column("SHA-256"))
    return Table("Audit trail", columns, tuple(rows))


def signatures_table(result: RunResult) -> Table:
    """The run's signatures and withdrawals: who, role, meaning, when, keyed or not, and whether each holds."""
    from .signatures import check_signatures, fingerprint

    from .audit import recorded_signatures

    rows = tuple(
        (c.signature.role, c.signature.name, c.signature.person_id, c.signature.time_utc, c.signature.meaning,
         fingerprint(c.signature.public_key) if c.signature.public_key else "not keyed",
         "holds" if c.holds else "does NOT hold", c.words)
        for c in check_signatures(result.run)
    ) + tuple(
        (r.role, r.name, r.person_id, r.time_utc, r.meaning,
         r.key_fingerprint or ("" if r.role == "approval withdrawn" else "not keyed"), "NOT in the file", r.removed_words)
        for r in recorded_signatures(result.run) if not r.held
    )
    columns = (Column("Role"), Column("Name"), Column("ID"), Column("Time (UTC)"), Column("Meaning"),
               Column("Key fingerprint"), Column("Check"), Column("What was checked"))
    return Table("Signatures", columns, rows)


BELOW_LIMIT_WORDS = {"censor": "reported as below the reporting limit (\"< limit\")",
                     "estimate": "reported as estimated values, marked so; below the LOD as \"< LOD\""}


NOT_ANALYSIS = frozenset({"signed", "approval_withdrawn", "report_written", "data_changed_outside",
                          "document_migrated"})
"""Audit actions that record without doing the analysis: signing, withdrawing an approval, writing an
export, and what opening a file notes (a change made outside the program, an older document read).
A person with only these entries is not one of the run's analysts."""


def analysts_of(result: RunResult) -> tuple[str, ...]:
    """The analysts: the people in the audit trail who entered, changed or judged the data, or signed
    as analyst, in the order they first appear (a reviewer or approver who only signed is not one).
    An analyst's signature the file no longer holds (:func:`.audit.recorded_signatures`) makes no one
    an analyst: a person named only by it is named with what the trail records, as :func:`signers_of`
    names a removed reviewer's or approver's signature, never as having signed."""
    from .audit import recorded_signatures
    from .audit_words import who

    removed = {r.entry: r for r in recorded_signatures(result.run) if not r.held and r.role == "analyst"}
    seen: list[str] = []
    lost: list[tuple[str, str]] = []  # (person, what the trail records) of each removed analyst signature
    for number, e in enumerate(result.run.audit, start=1):
        person = who(e)
        if number in removed:
            lost.append((person, removed[number].removed_words))
            continue
        works = e.action not in NOT_ANALYSIS or (e.action == "signed" and e.details.get("role") == "analyst")
        if works and person not in seen:
            seen.append(person)
    return tuple(seen) + tuple(f"{person}: NOT signed — {words}" for person, words in lost if person not in seen)


def signers_of(result: RunResult, role: str) -> tuple[str, ...]:
    """The people who signed the run in ``role`` ("reviewer", "approver"), in the order they signed,
    as the audit trail names them (:func:`.audit.recorded_signatures`); an approval withdrawn later
    says so, and a signature the file no longer holds says that instead of "signed"."""
    from .audit import recorded_signatures
    from .audit_words import who, when

    trail = result.run.audit
    named: list[str] = []
    for r in recorded_signatures(result.run):
        if r.role != role:
            continue
        e = trail[r.entry - 1]
        if not r.held:
            named.append(f"{who(e)}: NOT signed — {r.removed_words}")
            continue
        words = f"{who(e)}, signed {when(e)}"
        withdrawn = next((w for w in trail[r.entry:] if w.action == "approval_withdrawn"), None)
        if role == "approver" and withdrawn is not None:
            words += f" (approval withdrawn {when(withdrawn)} by {who(withdrawn)})"
        named.append(words)
    return tuple(named)


def run_identity(result: RunResult) -> tuple[tuple[str, str], ...]:
    """Who, what and with what: the run, its method, instrument, analysts, reviewer and approver (each
    person named in their role), dates, profile and the software."""
    from .audit_words import when

    run, method, trail = result.run, result.method, result.run.audit
    return (
        ("Run", run.name),
        ("Method", f"{method.label} — {method.name} (content SHA-256 {method.sha256[:16]}…)" if method
         else "no validated method stored with the run"),
        ("Instrument", run.instrument or "not recorded"),
        ("Analysts", "; ".join(analysts_of(result)) or "not recorded"),
        ("Reviewer", "; ".join(signers_of(result, "reviewer")) or "not signed"),
        ("Approver", "; ".join(signers_of(result, "approver")) or "not signed"),
        ("Created", when(trail[0]) if trail else "not recorded"),
        ("Last change", when(trail[-1]) if trail else "not recorded"),
        ("Acceptance profile", f"{result.profile.name} (rules SHA-256 {result.profile.sha256[:16]}…)"),
        ("Software", f"Curvewright {__version__}"),
    )


def run_information_table(result: RunResult) -> Table:
    """The run's identity, verdict, interval method, content hash and what the audit trail shows."""
    from .integrity import content_sha256

    from .record_check import not_intact_notice, record_problems

    _, claim = chain_claim(result.run)
    notice = not_intact_notice(record_problems(result.run))
    rows: list[tuple[Value, ...]] = [(item, value) for item, value in run_identity(result)]
    if result.method is not None:
        rows.append(("Method content SHA-256", result.method.sha256))
    rows.append(("Acceptance profile rules SHA-256", result.profile.sha256))
    rows += [
        ("Run verdict", "ACCEPTED" if result.accepted else "NOT ACCEPTED"),
        *((("Record", notice),) if notice else ()),
        *(("Reason", r) for r in result.reasons),
        ("Intervals", interval_words(result)),
        ("Between the LOD and the reporting limit", BELOW_LIMIT_WORDS[result.profile.reporting.between_lod_and_reporting_limit]),
        ("Content SHA-256", content_sha256(result.run)),
        ("Audit trail", f"{len(result.run.audit)} entries; {claim}"),
    ]
    if result.run.description:
        rows.insert(1, ("Description", result.run.description))
    return Table("Run information", (Column("Item"), Column("Value")), tuple(rows), notice=notice)


def result_counts(a: AnalyteResult) -> tuple[int, int]:
    """Unknowns and QC samples reported as numbers, and those that are not (exceptions: below or above
    the range, not quantified, not reportable). Blanks and checks are judged elsewhere."""
    judged = [s for s in a.samples if s.kind.value in ("unknown", "qc")]
    reportable = sum(1 for s in judged if s.reportable)
    return reportable, len(judged) - reportable


def analytes_table(result: RunResult) -> Table:
    """One row per analyte: the equation, the calibrated range, the weighting, counts and the verdict."""
    columns = (Column("Analyte"), Column("Equation"), Column("Weighting"), Column("LLOQ", kind="number", display="full"),
               Column("ULOQ", kind="number", display="full"), Column("Unit"), Column("Reportable", kind="int"),
               Column("Exceptions", kind="int"), Column("Verdict"), Column("Not fitted because"))
    rows = []
    for a in result.analytes:
        unit = a.analyte.concentration_unit
        if a.calibration is None:
            rows.append((a.analyte.name, "", "", None, None, unit, None, None, "NOT accepted", a.error or ""))
            continue
        reportable, exceptions = result_counts(a)
        rows.append((a.analyte.name, a.calibration.equation(6), a.calibration.weighting.value,
                     a.reporting.lloq if a.reporting else None, a.reporting.uloq if a.reporting else None, unit,
                     reportable, exceptions, "accepted" if a.accepted else "NOT accepted", ""))
    return Table("Analytes", columns, tuple(rows))


def summary_table(result: RunResult) -> Table:
    """One row per sample × analyte, sample by sample in run order: what is reported, the estimate behind
    it, its interval, the status and the flags as short words (in full on the Samples sheet)."""
    rule = result.run.settings.rounding
    analyte_order = {a.analyte.name: i for i, a in enumerate(result.analytes)}
    unit = {a.analyte.name: a.analyte.concentration_unit for a in result.analytes}
    first_seen: dict[str, int] = {}
    for a in result.analytes:
        for s in a.samples:
            first_seen.setdefault(s.sample_id, len(first_seen))
    everything = [s for a in result.analytes for s in a.samples]

    def order(s):  # type: ignore[no-untyped-def]
        return (s.run_order if s.run_order is not None else math.inf, first_seen[s.sample_id], analyte_order[s.analyte])

    columns = (Column("Sample id"), Column("Kind"), Column("Analyte"), Column("Reported", kind="reported"), Column("Unit"),
               Column("Estimate × dilution", kind="number", display="within"),
               Column("Lower limit × dilution", kind="number", display="interval"),
               Column("Upper limit × dilution", kind="number", display="interval"),
               Column("Status"), Column("Flags (short)"))
    rows = tuple(
        (s.sample_id, s.kind.words, s.analyte,
         s.reported_text or (None if s.reported is None else rule.text_within(s.reported, s.reported_lower, s.reported_upper)),
         unit[s.analyte], _finite(s.reported) if s.reported is not None else None,
         _finite(s.reported_lower) if s.reported_lower is not None else None,
         _finite(s.reported_upper) if s.reported_upper is not None else None,
         STATUS_WORDS[s.status], s.short_flags)
        for s in sorted(everything, key=order)
    )
    return Table("Summary", columns, rows, rule)


def all_tables(result: RunResult) -> tuple[Table, ...]:
    """The workbook's sheets: run information, the analytes, the summary (sample × analyte), the samples
    in full, per analyte its calibration, standards and checks, the signatures and the audit trail."""
    rule = result.run.settings.rounding
    tables = [run_information_table(result), analytes_table(result), summary_table(result), samples_table(result)]
    for a in result.analytes:
        tables += [calibration_table(a, result), standards_table(a, rule)]
        if a.checks is not None:
            tables.append(checks_table(a, rule))
        if a.additions:
            from .model_outputs import additions_table

            tables.append(additions_table(a, result.run.settings.confidence_level))
    if result.run.signatures or any(e.action in ("signed", "approval_withdrawn") for e in result.run.audit):
        tables.append(signatures_table(result))
    tables.append(audit_table(result))
    return tuple(tables)


def display_number(value: float | None, digits: int = 6) -> str:
    """A number for reading on screen: ``digits`` significant figures, "—" when there is none, ∞ for
    an unbounded interval end (full precision stays in the exported cells)."""
    if value is None:
        return "—"
    if value in (float("inf"), float("-inf")):
        return "∞" if value > 0 else "−∞"
    return figures(value, digits)


def interval_text(lower: float | None, upper: float | None, rule: RoundingRule | None = None) -> str:
    """An interval's ends for reading, "lower – upper", to the decimal place of the second significant
    figure of its half-width (the uncertainty to two significant figures, GUM §7.2.6), and never
    coarser than the reporting ``rule`` would print them; ∞ for an unbounded end, "—" when there is none."""
    if lower is None or upper is None:
        return "—"
    ends = (lower, upper)
    if not all(math.isfinite(v) for v in ends):
        return " – ".join(display_number(v, 6) for v in ends)
    places = interval_decimals(lower, upper, rule)
    texts = [f"{v:.{max(places, 0)}f}" if places >= 0 else f"{round(v, places):.0f}" for v in ends]
    scientific = not all(is_plain(t) for t in texts)  # both ends in one notation
    return " – ".join(written(t, significant=_figures_at(v, places), scientific=scientific)
                      for t, v in zip(texts, ends))


def interval_decimals(lower: float, upper: float, rule: RoundingRule | None = None) -> int:
    """The decimal places :func:`interval_text` prints the finite ends of an interval with (negative:
    rounded to tens, hundreds…): :func:`.core.rounding.interval_places`."""
    return interval_places(lower, upper, rule)


_ENTERED = re.compile(r"^[+-]?\d*(?:[.,](\d*))?$")


def entered_decimals(text: Value) -> int | None:
    """The decimal places a number was typed with ("47.38": 2, "2173,732": 3, "90": 0); None when the
    text does not say (exponent, thousands separators, not a number, or more digits than a double holds)."""
    if not isinstance(text, str):
        return None
    t = clean(text)
    match = _ENTERED.match(t)
    if not t or match is None or not any(ch.isdigit() for ch in t):
        return None
    places = len(match.group(1) or "")
    return places if sum(ch.isdigit() for ch in t.lstrip("+-0.,")) <= 15 else None


def _unsettled(display: str) -> str:
    """A ``"within"`` display not settled by its row (see :meth:`Table.columns_for`) shows as ``"rule"``."""
    if display.startswith("beside:"):
        return ":".join(display.split(":", 4)[1:3])
    if display.startswith("item:"):
        return "plain"
    return "rule" if display == "within" or display.startswith("within:") else display


def _decimal_places(text: str) -> int:
    return len(text.split(".", 1)[1]) if "." in text else 0


def caution_line() -> str:
    return CAUTION


def _chooser(result: RunResult, analyte: str) -> str:
    """Who chose the analyte's calibration function and when, as the record names every person
    (:func:`.audit_words.who`, :func:`.audit_words.when`): the last entry that chose it, under whichever
    name the analyte then had (:mod:`.analyte_trail`); for a function nobody chose, :data:`.model_choice.NOT_CHOSEN_BY`."""
    from .analyte_trail import last_entry
    from .audit_words import when, who

    last = last_entry(result.run.audit, analyte, "model_chosen")
    if last is not None:
        return f"{who(last[1])}, {when(last[1])}"
    # no choice in the trail: chosen only if a reason was recorded with the function (:func:`.model_choice.chosen`)
    reason = result.run.analyte(analyte).choice_reason.strip()
    return "(no choice recorded in the audit trail)" if reason else NOT_CHOSEN_BY


def _mandel(cal: Calibration) -> tuple[Any, Any]:
    from ..core.fitting import fit
    from ..core.comparison import mandel_test

    if not cal.model.is_polynomial:
        return f"not applicable to a {cal.model.description} (it compares a straight line with a quadratic)", None
    if cal.through_origin:
        return "not applicable to a line through the origin", None
    try:
        lin = cal if cal.model is Model.LINEAR else fit(cal.concentration, cal.response, "linear", cal.weighting.value)
        quad = cal if cal.model is Model.QUADRATIC else fit(cal.concentration, cal.response, "quadratic", cal.weighting.value)
    except CurvewrightError as exc:
        return f"not computed: {exc}", None
    test = mandel_test(lin, quad)
    return test.statistic, test.p_value


def _finite(value: float) -> float | None:
    return float(value) if np.isfinite(value) else None
