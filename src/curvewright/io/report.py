"""The printable calibration record, built as plain content; :mod:`curvewright.app.report_pdf` lays
it out on pages.

The first page is a summary a reviewer can check in two minutes: the run, its method, instrument,
analysts, reviewer, approver and dates; the verdict and its reasons; per analyte the equation, the
calibrated range, the weighting, and how many results are reportable and how many are exceptions;
the content hash and what the audit trail shows; and the signatures with what each means. Then, per
analyte: the curve, relative-error and influence views, the calibration (numbers at the digits chosen
for each quantity), the model evidence, the standards (those not in the fit with the reason), the
calibration checks and the samples (flags as short words with a legend). Then the full-precision coefficients, the signatures, the audit trail in
words, the formulas' sources and the caution.
"""

from __future__ import annotations

import hashlib
from dataclasses import dataclass, replace
from datetime import datetime, timezone

from ..core.level_text import percent_label
from .. import CAUTION, __version__
from ..core.comparison import ModelComparison
from ..core.inverse import INTERVAL_SCOPE_NOTE
from ..core.reporting import ReportStatus
from ..core.notation import P_FIGURES, entered, entered_span, figures
from ..core.run_analysis import AnalyteResult, RunResult
from .analyte_trail import last_entry
from .audit_words import AUDIT_COLUMNS, audit_rows, when, who
from .integrity import content_sha256
from .model_choice import NOT_CHOSEN, chosen, function_words
from .record_check import not_intact_notice, record_problems
from .result_tables import (Column, Table, calibration_table, chain_claim, checks_table, interval_words, result_counts,
                            run_identity, samples_table, standards_table)
from .signatures import (DEFAULT_MEANINGS, SIGNATURE_COLUMNS, check_signatures, people_in_several_roles,
                         signature_rows)

FORMULA_SOURCES = (
    "Least squares by QR decomposition on a centred, scaled basis (Björck 1996); weights scaled to sum to n "
    "(Miller & Miller, Statistics and Chemometrics for Analytical Chemistry, ch. 5).",
    "Lack-of-fit F-test with pure error (NIST/SEMATECH e-Handbook §4.4.4.3; Kutner et al. 2005, §3.7).",
    "Mandel's fitting test (ISO 8466-1; DIN 38402-51); end-level variance F-test (ISO 8466-1); "
    "Bartlett (1937) and Brown–Forsythe (1974) tests across levels.",
    "Leverage, externally studentized residuals (Belsley, Kuh & Welsch 1980), Cook's distance (Cook 1977); "
    "flags: Bonferroni outlier limit on the externally studentized residual, and Cook's distance above the median of "
    "F(p, n − p) with a residual beyond chance for its leverage (Cook & Weisberg 1982; split of a 5 % false-alarm "
    "rate checked by simulation); leverage above 0.5 noted (Huber 1981).",
    "Calibration interval by inverting the prediction band for the mean of m responses (Fieller's interval for a "
    "straight line; Draper & Smith 1998, §3.2); standard error of the estimated concentration by the delta method, equal to "
    "(s/b)·√(1/m + 1/n + (ȳ₀ − ȳ)²/(b²·Sxx)) for an unweighted line, Sxx being the sum of squared deviations of the standards' concentrations from their mean (Miller & Miller, ch. 5).",
    "LOD = 3.3σ/S and LOQ = 10σ/S (ICH Q2(R1) §6.3, §7.3), σ the residual SD, the SD of the intercept or the SD "
    "of the blank readings (§6.3.2); critical value and minimum detectable value (ISO 11843-2); mean blank + 3 SD "
    "and + 10 SD read through the curve (common practice).",
    "AICc (Hurvich & Tsai 1989); weighting choice by Σ|%RE| (Almeida, Castel-Branco & Falcão 2002) and by the "
    "growth of the replicate SD (Tellinghuisen 2007).",
    "Four- and five-parameter logistic and power curves by weighted nonlinear least squares (Levenberg–Marquardt; "
    "Moré 1978), checked on the NIST StRD nonlinear datasets; their intervals by inverting the prediction band, "
    "standard errors by the delta method.",
    "Average response factor: RF the mean of yᵢ/xᵢ with its %RSD; interval ȳ₀/(RF ± t·s_RF·√(1/m + 1/n)) (the "
    "normal prediction interval; Hahn & Meeker 1991, ch. 4, chapter from memory).",
    "Standard additions: the magnitude of the x-intercept a/b with s = (s_y/x / b)·√(1/n + ȳ²/(b²·Sxx)) "
    "(Miller & Miller, §5.11; Harvey, Analytical Chemistry 2.1, ch. 5; section numbers from memory); it assumes "
    "matrix-matched linearity.",
)



APPENDIX = "appendix and audit trail"
"""What the running header names on the pages after the analytes."""
STANDARD_ACCURACY_COLUMNS = ("Standard id", "Level", "Replicate", "Nominal concentration", "Response as entered",
                             "Back-calculated", "Relative error (%)", "Tolerance (%)", "Within limits")
"""The printed accuracy table ("Within limits" says "excluded" for a standard left out); each
exclusion's reason, person and time are listed beneath it."""
STANDARD_INFLUENCE_COLUMNS = ("Standard id", "Leverage", "Cook's distance", "Externally studentized residual", "Influence flags")
SAMPLE_COLUMNS = ("Sample id", "Kind", "Run order", "Replicates", "Dilution factor", "Concentration × dilution",
                  "Reported", "Interval", "Flags", "Recovery (%)", "QC or check")
SHORT_FLAG_LEGEND = (
    ("in range", "inside the calibrated range (LLOQ to ULOQ) and at or above the reporting limit: reported as the number"),
    ("< LLOQ / < LOQ", "below the reporting limit: reported as “< limit”"),
    ("< LOD", "below the detection limit"),
    ("> ULOQ", "above the calibrated range: not reported as a number; the flags say the dilution for a re-assay"),
    ("estimated", "between the detection and the reporting limit, reported as estimated (where the profile allows)"),
    ("not reportable", "a number exists, but the calibration checks do not bracket the sample"),
    ("not quantified", "no numeric result (a response that is not a number, or none the curve can read)"),
    ("no response", "no response was entered for the sample: reported as “no response recorded”"),
    ("censored", "the response was entered as a limit (< 20) or a word (ND): a limit is read through the curve and "
                 "reported as the concentration it bounds, times the dilution; a word as entered"),
    ("open interval", "the calibration cannot bound the concentration on one side"),
    ("two roots", "the curve reaches the response twice within the calibrated range"),
    ("turning point", "the prediction band holds the response on both sides of the curve's turning point: the "
                      "interval is read from the band on both sides"),
    ("beyond turning point", "the response lies beyond the curve's turning point, where no concentration gives it: "
                             "no number; reported by the side of the range it lies on"),
    ("beyond asymptote", "the response lies beyond an asymptote of the curve: no number; reported by the side of the "
                         "range it lies on"),
    ("no solution", "the curve never gives the response, not even within its prediction band: no number; reported "
                    "by the side of the range it lies on"),
    ("replicate not usable", "a replicate was left out (the lines below the table say which and why)"),
)


@dataclass(frozen=True)
class Paragraph:
    text: str
    style: str = "body"  # title | heading | subheading | body | caution | small | alarm (record not intact)


@dataclass(frozen=True)
class FigureSlot:
    kind: str  # curve | residuals | influence | additions
    analyte: str
    caption: str
    sample: str = ""
    """The sample whose standard-addition series an "additions" figure draws."""


@dataclass(frozen=True)
class PageBreak:
    pass


@dataclass(frozen=True)
class Section:
    """From here on the running header names this analyte (and the method)."""

    text: str


@dataclass(frozen=True)
class SignatureLines:
    """Lines to sign on paper: (role, what signing means)."""

    lines: tuple[tuple[str, str], ...]


@dataclass(frozen=True)
class PrintedTable:
    """A table as printed: headings and cells already in words, numeric columns marked to align right."""

    title: str
    headings: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]
    numeric: tuple[bool, ...]
    note: str = ""
    breakable: tuple[bool, ...] = ()
    """Columns of ids whose long words may be broken so that the other columns keep their width."""


Block = Paragraph | PrintedTable | Table | FigureSlot | PageBreak | Section | SignatureLines


@dataclass(frozen=True, eq=False)
class ReportContent:
    """The record's content: its title and author (for the PDF's metadata), the subject, the running
    header's text and the footer's, and the blocks."""

    title: str
    blocks: tuple[Block, ...]
    result: RunResult
    author: str = ""
    subject: str = ""
    header: str = ""
    footer: str = ""

    def text(self) -> str:
        """Every word of the report, for checks and for a plain-text record."""
        parts = []
        for b in self.blocks:
            if isinstance(b, Paragraph):
                parts.append(b.text)
            elif isinstance(b, PrintedTable):
                parts.append(b.title)
                parts.append(" | ".join(b.headings))
                parts.extend(" | ".join(row) for row in b.rows)
            elif isinstance(b, Table):
                parts.append(b.title)
                parts.append(" | ".join(c.heading for c in b.columns))
                parts.extend(" | ".join("" if v is None else str(v) for v in row) for row in b.rows)
            elif isinstance(b, FigureSlot):
                parts.append(b.caption)
        return "\n".join(parts)


def printed(table: Table, rule=None, note: str = "") -> PrintedTable:  # type: ignore[no-untyped-def]
    """A result table as printed: each number at the digits its column shows (see :class:`Column`)."""
    from .result_tables import format_value

    return PrintedTable(table.title, tuple(c.heading for c in table.columns),
                        tuple(tuple(format_value(v, c, rule) for v, c in zip(row, table.columns_for(row)))
                              for row in table.rows),
                        tuple(c.kind in ("number", "int", "reported") for c in table.columns), note)


def evidence_table(result: RunResult, a: AnalyteResult) -> tuple[Table, tuple[str, ...]]:
    """The model-evidence table for the standards in the fit, with the recommendation's reasons: the
    run's one comparison (:attr:`RunResult.evidence`, judged by the run's profile), as every output shows it."""
    cal = a.calibration
    columns = (
        Column("Model"), Column("Weighting"), Column("Residual SD", kind="number"), Column("Adjusted R²", kind="number"),
        Column("Lack-of-fit p", kind="number", display=f"p:{P_FIGURES}"),
        Column("Mandel p", kind="number", display=f"p:{P_FIGURES}"), Column("Σ|%RE|", kind="number"),
        Column("Standards failing", kind="int"), Column("AICc", kind="number"), Column("Recommended"), Column("Chosen"),
    )
    if cal is None:
        return Table("Model evidence", columns, ()), (f"no comparison: {a.error}",)
    comparison = result.evidence.get(a.analyte.name)
    if not isinstance(comparison, ModelComparison):
        return Table("Model evidence", columns, ()), (f"no comparison: {comparison}",)
    rows = []
    for c in comparison.candidates:
        rows.append((
            c.model.value, c.weighting.value, c.residual_sd, c.adjusted_r_squared, c.lack_of_fit_p,
            c.mandel.p_value if c.mandel else None, c.sum_abs_relative_error, c.standards_failing, c.aicc,
            "recommended" if c is comparison.recommendation else "",
            "chosen" if (c.model is cal.model and c.weighting is cal.weighting) else "",
        ))
    return Table("Model evidence", columns, tuple(rows)), tuple(comparison.reasons) + skipped_reasons(comparison)


_MODEL_WORDS = {
    "linear": "the straight line", "quadratic": "the quadratic", "proportional": "the line through the origin",
    "power": "the power curve", "average-rf": "the average response factor", "4pl": "the 4PL", "5pl": "the 5PL",
}


def skipped_reasons(comparison: ModelComparison) -> tuple[str, ...]:
    """One line per weighting that some candidates could not be fitted with, each reason with the
    models it holds for ("not fitted with power weighting for the line through the origin: …"), so
    that a reason about one model is not read as one about the model recommended."""
    by_weighting: dict[str, dict[str, list[str]]] = {}
    for s in comparison.skipped:
        reason = s.reason.split(": ", 1)[-1] if s.reason.startswith("weighting") else s.reason
        models = by_weighting.setdefault(s.weighting.value, {}).setdefault(reason, [])
        name = _MODEL_WORDS.get(s.model.value, f"the {s.model.value}")
        if name not in models:
            models.append(name)
    return tuple(_not_fitted_line(w, why) for w, why in by_weighting.items())


def _not_fitted_line(weighting: str, why: dict[str, list[str]]) -> str:
    """One weighting's refusals. Reasons that differ only in their first clause (the level each model's
    standards hold, with anchor points left out of all but the logistic curves) give that clause by
    model and their shared explanation once; other reasons follow one another, each once."""
    if len(why) > 1:
        parts = [reason.split("; ", 1) for reason in why]
        tails = {part[1] for part in parts if len(part) == 2}
        if len(tails) == 1 and all(len(part) == 2 for part in parts):
            heads = " and ".join(f"for {_and_list(models)} ({part[0]})" for part, models in zip(parts, why.values()))
            return f"not fitted with {weighting} weighting {heads}: {tails.pop()}"
    return f"not fitted with {weighting} weighting " + "; ".join(
        f"for {_and_list(models)}: {reason.rstrip('.') if i < len(why) - 1 else reason}"
        for i, (reason, models) in enumerate(why.items())
    )


def _and_list(words: list[str]) -> str:
    return words[0] if len(words) == 1 else f"{', '.join(words[:-1])} and {words[-1]}"



def record_author(result: RunResult) -> str:
    """The PDF's author: the analyst who signed, else the person who created the run."""
    analyst = next((s for s in reversed(result.run.signatures) if s.role == "analyst"), None)
    if analyst is not None:
        return analyst.name
    first = result.run.audit[0] if result.run.audit else None
    return (first.analyst or first.user) if first is not None else ""


def summary_blocks(result: RunResult, when_text: str) -> list[Block]:
    """The first page: identity, verdict, per-analyte summary, integrity, signatures."""
    run = result.run
    trail = run.audit
    known = run_identity(result)
    dates = dict(known)
    identity = [(item, value) for item, value in known if item not in ("Created", "Last change")]
    after_people = next(i for i, (item, _) in enumerate(identity) if item == "Approver") + 1
    identity.insert(after_people, ("Dates", f"created {dates['Created']}; last change {dates['Last change']}; "
                                            f"this record {when_text}"))
    blocks: list[Block] = [PrintedTable("Run", ("Item", "Value"), tuple(identity), (False, False))]
    word = "ACCEPTED" if result.accepted else "NOT ACCEPTED"
    failing = [r for r in result.reasons if "FAIL" in r]
    blocks.append(Paragraph(f"Run verdict: {word}" + (" — " + "; ".join(failing) if failing else
                                                      f" — all checks of {result.profile.name} pass"), "subheading"))
    notice = not_intact_notice(record_problems(run))
    if notice:  # beside the verdict, as strong as it; every page's footer points here
        blocks.append(Paragraph(notice, "alarm"))
    if result.profile.caveat:
        blocks.append(Paragraph(f"About the profile: {result.profile.caveat}", "small"))
    rows = []
    for a in result.analytes:
        unit = a.analyte.concentration_unit
        if a.calibration is None:
            rows.append((a.analyte.name, a.not_fitted_words, "", "", "", "", ""))
            continue
        rng = f"{entered_span(a.reporting.lloq, a.reporting.uloq)} {unit}".strip() if a.reporting else ""
        if a.reporting is not None and a.reporting.narrowing:
            rng += " (narrowed: an end level fails)"
        reportable, exceptions = result_counts(a)
        rows.append((a.analyte.name, a.calibration.equation(6), rng, a.calibration.weighting.value,
                     str(reportable), str(exceptions), "accepted" if a.accepted else "NOT accepted"))
    blocks.append(PrintedTable("Analytes", ("Analyte", "Equation", "Range (LLOQ–ULOQ)", "Weighting", "Reportable",
                                            "Exceptions", "Verdict"), tuple(rows),
                               (False, False, False, False, True, True, False),
                               "Reportable: unknowns and QC samples reported as numbers. Exceptions: results below or "
                               "above the range, not quantified or not reportable (see each analyte's samples)."))
    ok, claim = chain_claim(run)
    blocks.append(Paragraph(f"Content SHA-256: {content_sha256(run)}. Audit trail ({len(trail)} entries): {claim}",
                            "small"))
    checks = check_signatures(run)
    signature_table = signature_rows(checks, run)
    if signature_table:
        blocks.append(PrintedTable("Signatures", SIGNATURE_COLUMNS, signature_table,
                                   (False, False, False, False, False)))
        several = people_in_several_roles(run)
        if several:
            blocks.append(Paragraph("One person signed in several roles: " + "; ".join(several)
                                    + ". The laboratory's procedures say whether that is allowed.", "small"))
    signed = {c.signature.role for c in checks}
    to_sign = tuple((role.capitalize(), DEFAULT_MEANINGS[role]) for role in ("analyst", "reviewer", "approver")
                    if role not in signed)
    if to_sign:
        blocks.append(Paragraph("To be signed (the meaning of each signature stands beside its role):", "small"))
        blocks.append(SignatureLines(to_sign))
    return blocks


def analyte_blocks(result: RunResult, a: AnalyteResult) -> list[Block]:
    run = result.run
    name = a.analyte.name
    rule = run.settings.rounding
    method = result.method
    blocks: list[Block] = [PageBreak(), Section(f"{name}" + (f" · method {method.label}" if method else ""))]
    unit = a.analyte.concentration_unit
    blocks.append(Paragraph(f"Analyte: {name}" + (f" ({unit}" + (f"; response in {a.analyte.response_unit})"
                                                                   if a.analyte.response_unit else ")") if unit else ""),
                            "heading"))
    verdict = ("ACCEPTED" if a.accepted else "NOT ACCEPTED") if a.calibration is not None or a.by_additions_only else "not fitted"
    verdict += " (standard additions only)" if a.by_additions_only else ""
    blocks.append(Paragraph(f"Verdict for {name}: {verdict}", "subheading"))
    for r in [r for r in result.reasons if r.startswith(f"{name}: ")]:
        blocks.append(Paragraph("• " + r.split(": ", 1)[1], "small"))
    if a.calibration is not None:
        blocks.append(Paragraph(f"Equation: {a.calibration.equation(6)} (coefficients at full precision in the "
                                "appendix)", "body"))
        anchored = bool(any(s.anchor for s in a.fitted_standards))
        blocks.append(FigureSlot("curve", name, f"{name}: standards (filled: in the fit; open squares: excluded"
                                 + ("; ringed by open hexagons: anchor points, fitted but not judged" if anchored else "")
                                 + f"), fitted curve with {percent_label(run.settings.confidence_level)} confidence and prediction "
                                 "bands, unknowns with their concentration intervals; calibrated range and LOQ marked."))
        blocks.append(FigureSlot("residuals", name, f"{name}: relative error of each back-calculated standard against "
                                 "concentration, with the acceptance limits"
                                 + ("; anchor points are not judged and not drawn (their %RE is in the standards table)"
                                    if anchored else "") + "."))
        blocks.append(FigureSlot("influence", name, f"{name}: leverage against the externally studentized residual, "
                                 "with the outlier and influence limits the flags use; flagged standards labelled."))
    calibration = calibration_table(a, result)
    if a.calibration is not None:  # six significant figures here; every digit in the appendix and the workbook
        calibration = replace(calibration, rows=tuple(("Equation", a.calibration.equation(6), None)
                                                      if row[0] == "Equation" else row for row in calibration.rows))
    blocks.append(printed(calibration, rule))
    table, reasons = evidence_table(result, a)
    blocks.append(_evidence_printed(table, rule))
    if chosen(result.run, name):
        blocks.append(Paragraph(f"Chosen: {a.analyte.model}, {a.analyte.weighting}. Reason given: "
                                f"{a.analyte.choice_reason or '(none recorded)'}", "body"))
    else:
        blocks.append(Paragraph(f"Used: {function_words(a.analyte.model, a.analyte.weighting)}: the {NOT_CHOSEN}.", "body"))
    blocks += [Paragraph("• " + r, "small") for r in reasons]
    standards = standards_table(a, result.run.settings.rounding)
    blocks.append(printed(standards.select(STANDARD_ACCURACY_COLUMNS, f"Standards – {name}: back-calculated accuracy"), rule))
    blocks += exclusion_blocks(result, a)
    blocks += anchor_blocks(result, a)
    blocks.append(printed(standards.select(STANDARD_INFLUENCE_COLUMNS, f"Standards – {name}: influence"), rule))
    if a.checks is not None:
        blocks.append(printed(checks_table(a, rule), rule, f"Check windows: {result.profile.checks.source}"))
    range_words = "" if a.reporting is None else (
        f" Calibrated range {entered_span(a.reporting.lloq, a.reporting.uloq)} (LLOQ–ULOQ); {a.reporting.note}."
        + (f" Range narrowed from the standards' {entered_span(*a.reporting.standards_range)}: "
           f"{a.reporting.narrowing}." if a.reporting.narrowing else ""))
    blocks.append(Paragraph(f"Samples – {name}: concentrations in {unit or '(unit not set)'} after dilution; "
                            f"interval: {interval_words(result, a)}; reported values rounded to "
                            f"{rule.description}.{range_words} {INTERVAL_SCOPE_NOTE}", "small"))
    blocks.append(_samples_printed(result, a))
    blocks += _additions_blocks(result, a)
    return blocks


def _additions_blocks(result: RunResult, a: AnalyteResult) -> list[Block]:
    """The samples measured by standard additions: the line, the extrapolated concentration and its interval."""
    if not a.additions:
        return []
    from ..core.standard_additions import MATRIX_WARNING
    from .model_outputs import additions_table

    level = result.run.settings.confidence_level
    table = additions_table(a, level)
    names = ("Sample id", "Additions", "Intercept a", "Slope b", "Concentration a/b", "Standard error",
             "Dilution factor", "Reported concentration", f"Lower limit ({percent_label(level)})", f"Upper limit ({percent_label(level)})")
    notes = [f"{s.sample_id}: {s.note}" for s in a.additions if s.note]
    notes += [f"{s.sample_id}: {w}" for s in a.additions if s.result is not None for w in s.result.warnings[1:]]
    return [
        Paragraph(f"Standard additions – {a.analyte.name}: the concentration is the magnitude of the x-intercept of the "
                  "line through the spiked portions, x = a/b, with standard error (s/b)·√(1/n + ȳ²/(b²·Σ(xᵢ − x̄)²)) and "
                  f"a t interval; reported after the dilution factor. Warning: {MATRIX_WARNING}.", "small"),
        printed(table.select(names), result.run.settings.rounding),
        *[Paragraph("• " + n, "small") for n in notes],
        *additions_figures(result, a),
    ]


def additions_figures(result: RunResult, a: AnalyteResult) -> list[Block]:
    """One figure per sample whose standard-addition series has a line: the points, the line drawn back to
    its x-intercept, and the extrapolated concentration with its interval on the concentration axis."""
    from ..core.standard_additions import MATRIX_WARNING

    unit = a.analyte.concentration_unit.strip()
    in_unit = f" {unit}" if unit else ""
    out: list[Block] = []
    for s in a.additions:
        r = s.result
        if r is None:
            continue
        diluted = (f"; × dilution factor {entered(s.dilution_factor)}, reported {figures(s.reported, 5)}{in_unit} "
                   f"({figures(s.reported_lower, 5)} to {figures(s.reported_upper, 5)})" if s.dilution_factor != 1 else "")
        out.append(FigureSlot(
            "additions", a.analyte.name,
            f"{a.analyte.name}, {s.sample_id}: the standard-addition series. Mean response of each addition "
            f"against the concentration added ({unit or 'unit not set'}); the line {r.equation(6)} through them, "
            f"dashed where it is extended back to zero response; its x-intercept at −{figures(r.concentration, 5)}{in_unit} "
            f"gives the concentration {figures(r.concentration, 5)}{in_unit} in the measured solution, with its "
            f"{percent_label(r.level)} interval {figures(r.lower, 5)} to {figures(r.upper, 5)}{in_unit} shaded (from −{figures(r.upper, 5)} to "
            f"−{figures(r.lower, 5)}) on the concentration axis{diluted}. "
            f"Warning: {MATRIX_WARNING}.", sample=s.sample_id))
    return out


def exclusion_blocks(result: RunResult, a: AnalyteResult) -> list[Block]:
    """Every standard left out of the fit: its level and nominal concentration, the reason, and who
    left it out and when (the last audit entry that excluded it, under whichever name the analyte then had)."""
    name = a.analyte.name
    excluded = [s for s in a.analyte.standards if not s.included]
    out: list[Block] = unusable_blocks(a)
    if not excluded:
        return out + [Paragraph(f"No standard of {name} is excluded from the fit.", "small")]
    out.append(Paragraph(f"Standards of {name} excluded from the fit ({len(excluded)}):", "small"))
    unit = a.analyte.concentration_unit
    for s in excluded:
        last = last_entry(result.run.audit, name, "standard_excluded", standard=s.id)
        entry = last[1] if last is not None else None
        by = f"; excluded by {who(entry)}, {when(entry)}" if entry is not None else \
            "; no audit entry records the exclusion"
        out.append(Paragraph(f"• {s.id} (level {s.level or '—'}, {entered(s.concentration)} {unit}".rstrip() +
                             f"): {s.exclusion_reason or '(no reason recorded)'}{by}", "small"))
    return out


def unusable_blocks(a: AnalyteResult) -> list[Block]:
    """Every standard not in the fit because it has no usable value (no response, a nominal that is not
    a number or is below zero), with the reason the analysis gives: the screen and the workbook say
    the same."""
    if not a.unusable_standards:
        return []
    rows = {s.id: i + 1 for i, s in enumerate(a.analyte.standards)}
    return [Paragraph(f"Standards of {a.analyte.name} not in the fit, without a usable value "
                      f"({len(a.unusable_standards)}):", "small")] + [
        Paragraph(f"• {u.standard_id} (row {rows.get(u.standard_id, '—')}): {u.reason}", "small")
        for u in a.unusable_standards]


def anchor_blocks(result: RunResult, a: AnalyteResult) -> list[Block]:
    """The anchor points of a logistic curve (fitted, never judged, outside the calibrated range): each
    with its level and nominal concentration, and who marked it, when and why (the last audit entry that
    marked it)."""
    name = a.analyte.name
    marked = [s for s in a.analyte.standards if s.anchor]
    if not marked:
        return []
    unit = a.analyte.concentration_unit
    out: list[Block] = [Paragraph(f"Anchor points of {name} ({len(marked)}): fitted, but not judged for acceptance and "
                                  "outside the calibrated range (LLOQ to ULOQ); their back-calculated values are "
                                  "shown for information.", "small")]
    groups: dict[int, list] = {}  # the standards each marking entry (by its position in the trail) still holds
    for s in marked:
        last = last_entry(result.run.audit, name, "anchor_points_marked", standards=s.id)
        at = last[0] if last is not None else -1
        groups.setdefault(at, []).append(s)
    for at, standards in groups.items():
        named = ", ".join(f"{s.id} ({entered(s.concentration)} {unit})".replace(" )", ")") for s in standards)
        if at < 0:
            out.append(Paragraph(f"• {named}: no audit entry records the mark", "small"))
            continue
        entry = result.run.audit[at]
        out.append(Paragraph(f"• {named}: {entry.details.get('reason') or '(no reason recorded)'}; marked by "
                             f"{who(entry)}, {when(entry)}", "small"))
    return out


def _evidence_printed(table: Table, rule) -> PrintedTable:  # type: ignore[no-untyped-def]
    """The model evidence as printed: "Recommended" and "Chosen" in one column, so that the table fits
    the width of the page in one piece."""
    shown = printed(table, rule)
    rows = tuple(row[:-2] + (" and ".join(w for w in row[-2:] if w),) for row in shown.rows)
    return PrintedTable(shown.title, shown.headings[:-2] + ("Status",), rows, shown.numeric[:-2] + (False,), shown.note)


def _samples_printed(result: RunResult, a: AnalyteResult) -> PrintedTable:
    """The samples of one analyte, the flags as short words (the legend below the table), and every
    reading of a sample whose replicates mix censored and measured readings."""
    from ..core.run_analysis import MIXED_READINGS
    from .result_tables import format_value, interval_text

    rule = result.run.settings.rounding
    full = samples_table(result)
    index = {c.name: i for i, c in enumerate(full.columns)}
    rows = []
    for s, row in zip(a.samples, (r for r in full.rows if r[index["Analyte"]] == a.analyte.name)):
        shown = full.columns_for(row)

        def cell(name: str) -> str:
            return format_value(row[index[name]], shown[index[name]], rule)
        rows.append((s.sample_id, s.kind.words, cell("Run order"), s.replicate_words, cell("Dilution factor"),
                     cell("Concentration × dilution"), s.reported_text,
                     interval_text(s.reported_lower, s.reported_upper, rule) if s.reported is not None else "",
                     s.short_flags, cell("Recovery (%)"), cell("QC or check")))
    used = {word.strip() for row in rows for word in row[8].split(",") if word.strip()}
    legend = "Flags: " + "; ".join(f"{short} — {meaning}" for short, meaning in SHORT_FLAG_LEGEND
                                   if used & {w.strip() for w in short.split("/")}) + ". " + \
             "Each sample's flags in full are in the workbook."
    mixed = [f"{s.sample_id} ({s.note.split('(', 1)[1].split(')', 1)[0]})" for s in a.samples
             if MIXED_READINGS in s.note]
    if mixed:  # every reading of these samples is named here, none left to the workbook alone
        legend += (f" Not quantified because {MIXED_READINGS} (no mean is formed from part of them): "
                   + "; ".join(mixed) + ".")
    # why a sample has no result, or a result from part of its replicates, in the note's own words
    why = [f"{s.sample_id}: {s.note}" for s in a.samples if s.note and MIXED_READINGS not in s.note and s.estimate is None]
    part = [f"{s.sample_id}: {s.note}" for s in a.samples if s.note and MIXED_READINGS not in s.note
            and s.estimate is not None]
    if why:
        legend += " Not quantified: " + "; ".join(why) + "."
    if part:
        legend += " Quantified from the usable replicates only: " + "; ".join(part) + "."
    return PrintedTable(f"Samples – {a.analyte.name}", SAMPLE_COLUMNS, tuple(rows),
                        (False, False, True, True, True, True, True, True, False, True, False), legend,
                        (True,) + (False,) * (len(SAMPLE_COLUMNS) - 1))


def precision_appendix(result: RunResult) -> list[Block]:
    """The coefficients and their covariance at full precision (shortest exact decimal of each double)."""
    blocks: list[Block] = [PageBreak(), Section(APPENDIX),
                           Paragraph("Appendix: calibration coefficients at full precision", "heading")]
    for a in result.analytes:
        cal = a.calibration
        if cal is None:
            continue
        names = cal.coefficient_names
        rows = [(name, entered(float(b)), entered(float(se))) for name, b, se in zip(names, cal.coefficients, cal.standard_errors)]
        for i in range(cal.covariance.shape[0]):
            for j in range(i + 1, cal.covariance.shape[0]):
                rows.append((f"covariance({names[i]}, {names[j]})", entered(float(cal.covariance[i, j])), ""))
        rows.append(("residual SD", entered(float(cal.residual_sd)), ""))
        blocks.append(PrintedTable(f"{a.analyte.name}: {cal.equation(6)}", ("Coefficient", "Value", "Standard error"),
                                   tuple(rows), (False, True, True)))
    return blocks


def audit_blocks(result: RunResult) -> list[Block]:
    """The audit trail in words: who, when, what changed from what to what, and why."""
    ok, claim = chain_claim(result.run)
    return [Section(APPENDIX), Paragraph("Audit trail", "heading"),
            Paragraph(f"Chain check: {claim}", "small"),
            PrintedTable("Audit trail in words", AUDIT_COLUMNS, audit_rows(result.run),
                         (True, False, False, False, False),
                         "Entry hash: the first 12 hex digits of each entry's SHA-256 (all digits in the workbook).")]


def build_report(result: RunResult, *, generated: datetime | None = None) -> ReportContent:
    run = result.run
    when_text = (generated or datetime.now(timezone.utc)).strftime("%Y-%m-%d %H:%M UTC")
    title = f"Calibration record — {run.name}"
    blocks: list[Block] = [Section("summary"), Paragraph(title, "title"), Paragraph(CAUTION, "caution")]
    if run.description:
        blocks.append(Paragraph(run.description, "small"))
    blocks += summary_blocks(result, when_text)
    for a in result.analytes:
        blocks += analyte_blocks(result, a)
    blocks += precision_appendix(result)
    blocks += audit_blocks(result)
    blocks.append(Paragraph("Formulas and their sources", "subheading"))
    blocks += [Paragraph("• " + s, "small") for s in FORMULA_SOURCES]
    blocks.append(Paragraph(CAUTION, "caution"))
    names = ", ".join(a.analyte.name for a in result.analytes)
    method = f" · method {result.method.label}" if result.method else ""
    digest = content_sha256(run)
    return ReportContent(
        title, tuple(blocks), result, author=record_author(result),
        subject=f"Calibration record of run {run.name}: {names}; verdict {'ACCEPTED' if result.accepted else 'NOT ACCEPTED'}",
        header=f"{run.name}{method}",
        footer=f"Curvewright {__version__} · content SHA-256 {digest[:16]}… · generated {when_text}",
    )
