"""The printable calibration record, built as plain content (paragraphs, tables, figure slots).

One record per analyte: identity, the software version and the formulas' sources, the curve with
its bands and the unknowns, residual and influence views, the equation and every statistic at full
precision, the model-evidence table with the chosen model and its reason, the standards and samples
tables, LOD/LOQ with method, the acceptance verdict with reasons, the audit trail, the caution and
signature lines. :mod:`curvewright.app.report_pdf` lays it out as PDF.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime, timezone

from .. import CAUTION, __version__
from ..core.comparison import ModelComparison
from ..core.inverse import INTERVAL_SCOPE_NOTE
from ..core.run_analysis import AnalyteResult, RunResult
from .result_tables import (Column, Table, audit_table, calibration_table, checks_table, interval_words, samples_table,
                            signatures_table, standards_table)

FORMULA_SOURCES = (
    "Least squares by QR decomposition on a centred, scaled basis (Björck 1996); weights scaled to sum to n "
    "(Miller & Miller, Statistics and Chemometrics for Analytical Chemistry, ch. 5).",
    "Lack-of-fit F-test with pure error (NIST/SEMATECH e-Handbook §4.4.4.3; Kutner et al. 2005, §3.7).",
    "Mandel's fitting test (ISO 8466-1; DIN 38402-51); end-level variance F-test (ISO 8466-1); "
    "Bartlett (1937) and Brown–Forsythe (1974) tests across levels.",
    "Leverage, externally studentized residuals (Belsley, Kuh & Welsch 1980), Cook's distance (Cook 1977); "
    "flags: Bonferroni outlier limit on the studentized residual, and Cook's distance above the median of "
    "F(p, n − p) with a residual beyond chance for its leverage (Cook & Weisberg 1982; split of a 5 % false-alarm "
    "rate checked by simulation); leverage above 0.5 noted (Huber 1981).",
    "Calibration interval by inverting the prediction band for the mean of m responses (Fieller's interval for a "
    "straight line; Draper & Smith 1998, §3.2); standard error of x̂ by the delta method, equal to "
    "(s/b)·√(1/m + 1/n + (ȳ₀ − ȳ)²/(b²Σ(x − x̄)²)) for an unweighted line (Miller & Miller, ch. 5).",
    "LOD = 3.3σ/S and LOQ = 10σ/S (ICH Q2(R1)); critical value and minimum detectable value (ISO 11843-2).",
    "AICc (Hurvich & Tsai 1989); weighting choice by Σ|%RE| (Almeida, Castel-Branco & Falcão 2002) and by the "
    "growth of the replicate SD (Tellinghuisen 2007).",
)


STANDARD_ACCURACY_COLUMNS = ("Standard id", "Level", "Replicate", "Nominal concentration", "Response as entered",
                             "Back-calculated", "Relative error (%)", "Tolerance (%)", "Within limits", "Included",
                             "Exclusion reason")
STANDARD_INFLUENCE_COLUMNS = ("Standard id", "Leverage", "Cook's distance", "Studentized residual", "Influence flags")
SAMPLE_COLUMNS = ("Sample id", "Kind", "Run order", "Replicates", "Mean response", "Dilution factor",
                  "Concentration × dilution", "Reported", "Lower limit", "Upper limit", "Status", "Flags", "Nominal",
                  "Recovery (%)", "QC or check")


@dataclass(frozen=True)
class Paragraph:
    text: str
    style: str = "body"  # title | heading | subheading | body | caution | small


@dataclass(frozen=True)
class FigureSlot:
    kind: str  # curve | residuals | influence
    analyte: str
    caption: str


@dataclass(frozen=True)
class PageBreak:
    pass


@dataclass(frozen=True)
class SignatureLines:
    roles: tuple[str, ...] = ("Analyst", "Reviewer")


Block = Paragraph | Table | FigureSlot | PageBreak | SignatureLines


@dataclass(frozen=True, eq=False)
class ReportContent:
    title: str
    blocks: tuple[Block, ...]
    result: RunResult

    def text(self) -> str:
        """Every word of the report, for checks and for a plain-text record."""
        parts = []
        for b in self.blocks:
            if isinstance(b, Paragraph):
                parts.append(b.text)
            elif isinstance(b, Table):
                parts.append(b.title)
                parts.extend(" | ".join(c.heading for c in b.columns) for _ in [0])
                parts.extend(" | ".join("" if v is None else str(v) for v in row) for row in b.rows)
            elif isinstance(b, FigureSlot):
                parts.append(b.caption)
        return "\n".join(parts)


def evidence_table(result: RunResult, a: AnalyteResult) -> tuple[Table, tuple[str, ...]]:
    """The model-evidence table for the standards in the fit, with the recommendation's reasons: the
    run's one comparison (:attr:`RunResult.evidence`, judged by the run's profile), as every output shows it."""
    cal = a.calibration
    columns = (
        Column("Model"), Column("Weighting"), Column("Residual SD", kind="number"), Column("Adjusted R²", kind="number"),
        Column("Lack-of-fit p", kind="number"), Column("Mandel p", kind="number"), Column("Σ|%RE|", kind="number"),
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
            "recommended" if c is comparison.recommended else "",
            "chosen" if (c.model is cal.model and c.weighting is cal.weighting) else "",
        ))
    skipped: dict[str, list[str]] = {}
    for s in comparison.skipped:
        reason = s.reason.split(": ", 1)[-1] if s.reason.startswith("weighting") else s.reason
        skipped.setdefault(s.weighting.value, [])
        if reason not in skipped[s.weighting.value]:
            skipped[s.weighting.value].append(reason)
    reasons = tuple(comparison.reasons) + tuple(
        f"not fitted with {w} weighting: {'; '.join(why)}" for w, why in skipped.items()
    )
    return Table("Model evidence", columns, tuple(rows)), reasons


def build_report(result: RunResult, *, generated: datetime | None = None) -> ReportContent:
    run = result.run
    when = (generated or datetime.now(timezone.utc)).strftime("%Y-%m-%d %H:%M UTC")
    blocks: list[Block] = [
        Paragraph(f"Calibration record — {run.name}", "title"),
        Paragraph(CAUTION, "caution"),
        Paragraph(f"Generated {when} by Curvewright {__version__}. Acceptance profile: {result.profile.name}. "
                  f"Run verdict: {'ACCEPTED' if result.accepted else 'NOT ACCEPTED'}.", "body"),
    ]
    if result.profile.caveat:
        blocks.append(Paragraph(f"About the profile: {result.profile.caveat}", "small"))
    if run.description:
        blocks.append(Paragraph(run.description, "small"))
    for i, a in enumerate(result.analytes):
        name = a.analyte.name
        if i:
            blocks.append(PageBreak())
        blocks.append(Paragraph(f"Analyte: {name} ({a.analyte.concentration_unit}; response in {a.analyte.response_unit})", "heading"))
        verdict = "not fitted" if a.calibration is None else ("ACCEPTED" if a.accepted else "NOT ACCEPTED")
        blocks.append(Paragraph(f"Verdict for {name}: {verdict}", "subheading"))
        if a.calibration is not None:
            blocks.append(Paragraph(f"Equation: {a.calibration.equation(12)}", "body"))
            blocks.append(FigureSlot("curve", name, f"{name}: standards (filled: in the fit; open squares: excluded), "
                                     f"fitted curve with {run.settings.confidence_level:.0%} confidence and prediction bands, "
                                     "unknowns with their concentration intervals; calibrated range and LOQ marked."))
            blocks.append(FigureSlot("residuals", name, f"{name}: relative error of each back-calculated standard against "
                                     "concentration, with the acceptance limits."))
            blocks.append(FigureSlot("influence", name, f"{name}: leverage against the externally studentized residual, "
                                     "with the outlier and influence limits the flags use; flagged standards labelled."))
        blocks.append(calibration_table(a, result))
        table, reasons = evidence_table(result, a)
        blocks.append(table)
        blocks.append(Paragraph(f"Chosen: {a.analyte.model}, {a.analyte.weighting}. Reason given: "
                                f"{a.analyte.choice_reason or '(none recorded)'}", "body"))
        blocks += [Paragraph("• " + r, "small") for r in reasons]
        standards = standards_table(a)
        blocks.append(standards.select(STANDARD_ACCURACY_COLUMNS, f"Standards – {name}: back-calculated accuracy"))
        blocks.append(standards.select(STANDARD_INFLUENCE_COLUMNS, f"Standards – {name}: influence"))
        if a.checks is not None:
            blocks.append(checks_table(a))
            blocks.append(Paragraph(f"Check windows: {result.profile.checks.source}", "small"))
        range_words = "" if a.reporting is None else (
            f" Calibrated range {a.reporting.lloq:g}–{a.reporting.uloq:g} (LLOQ–ULOQ); {a.reporting.note}.")
        blocks.append(Paragraph(f"Samples – {name}: concentrations in {a.analyte.concentration_unit} after dilution; "
                                f"interval: {interval_words(result)}; reported values rounded to "
                                f"{run.settings.rounding.description}.{range_words} {INTERVAL_SCOPE_NOTE}", "subheading"))
        blocks.append(samples_table(result).select(SAMPLE_COLUMNS, f"Samples – {name}", where=("Analyte", name)))
    blocks.append(PageBreak())
    if result.run.signatures:
        blocks.append(signatures_table(result))
    blocks.append(audit_table(result))
    blocks.append(Paragraph("Formulas and their sources", "subheading"))
    blocks += [Paragraph("• " + s, "small") for s in FORMULA_SOURCES]
    blocks.append(Paragraph(CAUTION, "caution"))
    blocks.append(SignatureLines())
    return ReportContent(f"Calibration record — {run.name}", tuple(blocks), result)
