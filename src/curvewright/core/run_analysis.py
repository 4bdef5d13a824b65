"""Judging a whole run: fit each analyte as chosen, quantify every sample, apply the profile.

For each analyte the calibration uses the included standards with a nominal concentration of zero
or more and a numeric response (and, for internal-standard calibration, the ratio response/IS
response); any other included standard is reported as not usable, with the reason. Each sample's replicate responses
are averaged (m = number of numeric replicates) and read through the curve; the dilution factor
multiplies the estimate and both interval ends to give the reported concentration. A censored
replicate ("ND", "<0.5") gives no numeric result: the sample is reported with its censored text.

Each result is then reported against the calibrated range (LLOQ–ULOQ, the non-zero standards in the
fit) and the reporting limit (:mod:`.reporting`): one status per result, and its words. QC samples
are compared with their nominal values (recovery in percent) under the profile's QC rules; the
calibration checks (ICV, CCV, check standards, calibration blanks, the low-level check) each under
their own window, and with run order they bracket the samples between them (:mod:`.checks`). A
failed check fails the run's verdict and is named in its reasons.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from functools import cached_property
from typing import TYPE_CHECKING

import numpy as np

from .acceptance import AcceptanceProfile, AcceptanceVerdict, load_profile
from .addition_series import AdditionSeriesResult, analyse_additions
from .calibration import Calibration
from .fitting import fit
from .checks import CheckInput, CheckVerdict, bracketing, judge_checks
from .errors import CurvewrightError, LimitsError, QuantitationInputError
from .inverse import QuantFlag
from .limits import DetectionLimits
from .reporting import ReportingRange, ReportStatus, report_value, report_values, reporting_range
from .run import Analyte, Reading, Run, SampleKind, Standard

if TYPE_CHECKING:  # pragma: no cover
    from .comparison import ModelComparison
    from .method import Method


@dataclass(frozen=True)
class SampleResult:
    """One sample × analyte. Concentrations in the analyte's unit; ``reported_*`` after dilution.

    ``reported`` is the number (estimate × dilution factor), kept for the reviewer whatever is
    reported; ``reported_text`` is what stands for the result ("12.3", "< 1.00 ng/mL (LLOQ)", "> 1000
    ng/mL (ULOQ)", "not reportable"…), by ``status`` (:class:`~.reporting.ReportStatus`); ``flags``
    agree with it. ``note`` lists replicates that could not be used, or why there is no number.
    """

    sample_id: str
    kind: SampleKind
    run_order: int | None
    analyte: str
    replicate_responses: tuple[float, ...]
    mean_response: float | None
    estimate: float | None
    standard_error: float | None
    lower: float | None
    upper: float | None
    dilution_factor: float
    reported: float | None
    reported_lower: float | None
    reported_upper: float | None
    flags: QuantFlag | None
    note: str
    nominal: float | None = None
    recovery_percent: float | None = None
    within_limits: bool | None = None
    """For QC samples: the recovery lies within the profile's QC tolerance; for calibration checks:
    the check passed its own window."""
    status: ReportStatus = ReportStatus.NOT_QUANTIFIED
    reported_text: str = ""
    words: str = ""
    short: str = ""
    suggested_dilution: float | None = None
    """For a result above the range: the total dilution factor for a re-assay in mid-range."""

    @property
    def flag_words(self) -> str:
        """Everything to know about the result, in words (one status, then qualifiers and notes)."""
        parts = [self.words] if self.words else []
        if self.note and self.note not in self.words:
            parts.append(self.note)
        return "; ".join(parts)

    @property
    def short_flags(self) -> str:
        """The flags as short words for a table cell (``flag_words`` says them in full)."""
        if self.estimate is not None and self.note:
            return f"{self.short}, replicate not usable" if self.short else "replicate not usable"
        return self.short

    @property
    def reportable(self) -> bool:
        """A number may be reported for this result (inside the range, or estimated where allowed)."""
        return self.status is ReportStatus.IN_RANGE or (
            self.status is ReportStatus.BELOW_REPORTING_LIMIT and "estimated" in self.short)


@dataclass(frozen=True)
class UnusableStandard:
    standard_id: str
    reason: str


@dataclass(frozen=True, eq=False)
class AnalyteResult:
    """Everything judged for one analyte. ``calibration`` is None when no curve could be fitted
    (``error`` then says why)."""

    analyte: Analyte
    calibration: Calibration | None
    error: str | None
    fitted_standards: tuple[Standard, ...]
    excluded_standards: tuple[Standard, ...]
    unusable_standards: tuple[UnusableStandard, ...]
    limits: DetectionLimits | None
    limits_note: str | None
    verdict: AcceptanceVerdict | None
    qc_verdict: AcceptanceVerdict | None
    samples: tuple[SampleResult, ...]
    model_overridden: bool = False
    checks: CheckVerdict | None = None
    reporting: ReportingRange | None = None
    method_reasons: tuple[str, ...] = ()
    """What the run's validated method requires of this analyte and is not met (a level without a
    standard, a model departing from the method's), or what it notes; "FAIL" marks a failure."""
    additions: tuple[AdditionSeriesResult, ...] = ()
    """The samples measured by standard additions (:mod:`.addition_series`), whatever the calibration."""

    @property
    def by_additions_only(self) -> bool:
        """No calibration standards at all, and samples measured by standard additions: each such sample
        is its own calibration, so the standards' acceptance does not apply to the analyte."""
        return self.calibration is None and not self.analyte.standards and bool(self.additions)

    @property
    def additions_words(self) -> str:
        """For an analyte measured by standard additions only: what was found, in words."""
        done = sum(1 for s in self.additions if s.result is not None)
        failed = [s.sample_id for s in self.additions if s.result is None]
        words = (f"no calibration standards: measured by standard additions only, so the standards' acceptance "
                 f"does not apply; {done} of {len(self.additions)} series extrapolated")
        return words + (f"; FAIL: not extrapolated: {', '.join(failed)}" if failed else "")

    @property
    def not_fitted_words(self) -> str:
        """Why there is no calibration curve, in words (for an analyte whose ``calibration`` is None)."""
        return self.additions_words if self.by_additions_only else f"not fitted: {self.error}"

    @property
    def accepted(self) -> bool:
        if self.by_additions_only:
            return all(s.result is not None for s in self.additions)
        if self.verdict is None or not self.verdict.passed:
            return False
        if self.checks is not None and not self.checks.passed:
            return False
        if any(r.startswith("FAIL") for r in self.method_reasons):
            return False
        return self.qc_verdict is None or self.qc_verdict.passed


@dataclass(frozen=True, eq=False)
class RunResult:
    run: Run
    profile: AcceptanceProfile
    analytes: tuple[AnalyteResult, ...]

    @property
    def accepted(self) -> bool:
        return all(a.accepted for a in self.analytes)

    @property
    def reasons(self) -> tuple[str, ...]:
        out = []
        for a in self.analytes:
            name = a.analyte.name
            if a.by_additions_only:
                out.append(f"{name}: standard additions: {a.additions_words}")
                continue
            if a.error:
                out.append(f"{name}: FAIL: {a.error}")
                continue
            for r in a.verdict.reasons if a.verdict else ():
                out.append(f"{name}: standards: {r}")
            for r in a.qc_verdict.reasons if a.qc_verdict else ():
                out.append(f"{name}: QC: {r}")
            for r in a.checks.reasons if a.checks else ():
                out.append(f"{name}: calibration check: {r}")
            for r in a.method_reasons:
                out.append(f"{name}: method: {r}")
        return tuple(out)

    @cached_property
    def method(self) -> "Method | None":
        """The validated method the run follows (from its stored copy), or None."""
        from .method import method_from_mapping

        return None if self.run.settings.method is None else method_from_mapping(self.run.settings.method, "the run's method")

    @cached_property
    def evidence(self) -> dict[str, "ModelComparison | str"]:
        """Per analyte, the comparison of candidate models on the standards in its fit, judged by the
        run's profile, level tolerance and level labels (the one model evidence every output shows), or
        why there is none."""
        from .comparison import compare

        out: dict[str, ModelComparison | str] = {}
        for a in self.analytes:
            if a.calibration is None:
                out[a.analyte.name] = a.error or "no calibration"
                continue
            try:
                out[a.analyte.name] = compare(a.calibration.concentration, a.calibration.response,
                                              include_proportional=True, profile=self.profile,
                                              level_tolerance=self.run.settings.level_tolerance,
                                              level_labels=[s.level for s in a.fitted_standards],
                                              anchor_points=[s.anchor for s in a.fitted_standards])
            except CurvewrightError as exc:
                out[a.analyte.name] = str(exc)
        return out

    def analyte(self, name: str) -> AnalyteResult:
        for a in self.analytes:
            if a.analyte.name == name:
                return a
        raise KeyError(name)


def run_profile(run: Run) -> AcceptanceProfile:
    """The acceptance profile a run names (its own embedded profile, or a shipped one by id)."""
    if run.settings.custom_profile is not None:
        return AcceptanceProfile.from_mapping(run.settings.custom_profile, "run settings custom_profile")
    return load_profile(run.settings.acceptance_profile)


def analyse_run(
    run: Run, *, analytes: tuple[str, ...] | None = None, model: str | None = None, weighting: str | None = None
) -> RunResult:
    """Fit and quantify every analyte of ``run`` (or those named), optionally overriding the model."""
    profile = run_profile(run)
    chosen = run.analytes if analytes is None else tuple(run.analyte(n) for n in analytes)
    return RunResult(
        run=run,
        profile=profile,
        analytes=tuple(replace(_analyse_analyte(run, a, profile, model, weighting), additions=analyse_additions(run, a, response_value))
                       for a in chosen),
    )


def response_value(reading: Reading, internal_standard: Reading | None, ratio: bool) -> tuple[float | None, str]:
    """The response used for fitting: the reading, or reading/IS for ratio calibration; a reason if none."""
    if reading.is_censored:
        return None, f"response is censored ({reading.text})"
    if not reading.is_number:
        if reading.text.strip():
            return None, f"response {reading.text.strip()!r} is not a number"
        return None, "no response recorded"
    if not ratio:
        return float(reading.value), ""  # type: ignore[arg-type]
    if internal_standard is None or not internal_standard.is_number:
        return None, "no internal-standard response for the ratio"
    if internal_standard.value <= 0:  # type: ignore[operator]
        return None, f"internal-standard response {internal_standard.text} is not above zero"
    return float(reading.value) / float(internal_standard.value), ""  # type: ignore[arg-type]


def _analyse_analyte(
    run: Run, analyte: Analyte, profile: AcceptanceProfile, model: str | None, weighting: str | None
) -> AnalyteResult:
    settings = run.settings
    use_model = model or analyte.model
    fitted, excluded, unusable, x, y, labels, anchors = [], [], [], [], [], [], []
    for s in analyte.standards:
        if not s.included:
            excluded.append(s)
            continue
        if not s.has_concentration:
            text = s.concentration_text.strip()
            unusable.append(UnusableStandard(s.id, f"concentration {text!r} is not a number" if text else "no concentration entered"))
            continue
        if s.concentration < 0:
            unusable.append(UnusableStandard(s.id, f"concentration {s.concentration:g} is below zero"))
            continue
        if s.concentration == 0 and use_model == "average-rf":
            unusable.append(UnusableStandard(s.id, "a response factor y/x needs a concentration above zero, so a "
                                                   "blank is not part of an average response factor calibration"))
            continue
        value, reason = response_value(s.response, s.internal_standard_response, analyte.uses_internal_standard)
        if value is None:
            unusable.append(UnusableStandard(s.id, reason))
            continue
        fitted.append(s)
        x.append(s.concentration)
        y.append(value)
        labels.append(s.level)
        anchors.append(s.anchor)
    use_weighting = weighting or analyte.weighting
    overridden = (model is not None and model != analyte.model) or (
        weighting is not None and weighting != analyte.weighting
    )
    try:
        cal = fit(x, y, use_model, use_weighting, level_tolerance=settings.level_tolerance, level_labels=labels,
                  anchor_points=anchors if any(anchors) else None)
    except CurvewrightError as exc:
        return AnalyteResult(
            analyte=analyte, calibration=None, error=str(exc), fitted_standards=tuple(fitted),
            excluded_standards=tuple(excluded), unusable_standards=tuple(unusable), limits=None,
            limits_note=None, verdict=None, qc_verdict=None, samples=(), model_overridden=overridden,
        )
    limits, limits_note = None, None
    try:
        limits = cal.limits(settings.limits_method)
    except LimitsError as exc:
        limits_note = str(exc)
    excluded_nonzero = sum(1 for s in excluded if s.concentration != 0)
    unusable_nonzero = sum(1 for u in unusable if analyte.standard(u.standard_id).concentration != 0)
    verdict = profile.evaluate(cal, excluded=excluded_nonzero, unusable=unusable_nonzero)
    unit = analyte.concentration_unit
    low, high = cal.calibrated_range  # anchor points of a logistic curve lie outside it
    in_range = cal.concentration[(cal.concentration >= low) & (cal.concentration <= high)]
    rng = reporting_range(in_range, limits.lod if limits else None, limits.loq if limits else None, unit)
    samples = _quantify_samples(run, analyte, cal, limits, rng, profile)
    checks = judge_checks([CheckInput(s.sample_id, s.kind, s.run_order, s.nominal, s.reported, s.status,
                                      s.dilution_factor, s.note) for s in samples],
                          profile.checks, rng, profile.name, unit)
    if checks is not None:
        by_id = {c.sample_id: c for c in checks.checks}
        unbracketed = bracketing([(s.sample_id, s.run_order) for s in samples if not s.kind.is_check], checks.checks)
        samples = tuple(
            replace(s, within_limits=by_id[s.sample_id].passed, recovery_percent=by_id[s.sample_id].recovery_percent)
            if s.sample_id in by_id else
            _report(s, rng, run, profile, unit, not_reportable=unbracketed[s.sample_id])
            if s.sample_id in unbracketed and s.estimate is not None else s
            for s in samples
        )
    samples = tuple(
        replace(s, within_limits=abs(s.recovery_percent - 100.0) <= profile.qc.tolerance_percent + 1e-9)
        if s.recovery_percent is not None and s.kind is SampleKind.QC else s
        for s in samples
    )
    qc = [s for s in samples if s.kind is SampleKind.QC and s.nominal is not None and s.reported is not None]
    qc_verdict = profile.evaluate_qc([s.nominal for s in qc], [s.reported for s in qc]) if qc else None
    return AnalyteResult(
        analyte=analyte,
        calibration=cal,
        error=None,
        fitted_standards=tuple(fitted),
        excluded_standards=tuple(excluded),
        unusable_standards=tuple(unusable),
        limits=limits,
        limits_note=limits_note,
        verdict=verdict,
        qc_verdict=qc_verdict,
        samples=samples,
        model_overridden=overridden,
        checks=checks,
        reporting=rng,
        method_reasons=_method_reasons(run, analyte, cal, use_model, use_weighting),
    )


def _method_reasons(run: Run, analyte: Analyte, cal: Calibration, model: str, weighting: str) -> tuple[str, ...]:
    """What the run's validated method asks of this analyte: every level it fixes has a standard in the
    fit, and the calibration function is the method's (or a recorded reason departs from it)."""
    if run.settings.method is None:
        return ()
    from .method import method_from_mapping

    method = method_from_mapping(run.settings.method, "the run's method")
    fixed = method.analyte(analyte.name)
    if fixed is None:
        return (f"note: method {method.label} does not cover {analyte.name}",)
    out = []
    missing = method.missing_levels(analyte.name, cal.concentration)
    out.append(("FAIL: " if missing else "pass: ")
               + (f"the method's level(s) {', '.join(f'{v:g}' for v in missing)} have no standard in the fit"
                  if missing else f"every level of method {method.label} has a standard in the fit"))
    if (model, weighting) != (fixed.model, fixed.weighting):
        reason = analyte.choice_reason.strip()
        departed = reason and not reason.startswith("fixed by the validated method")
        out.append(("note: " if departed else "FAIL: ")
                   + f"{model}, {weighting} departs from the method's {fixed.model}, {fixed.weighting}"
                   + (f" (reason recorded: {reason})" if departed else " and no reason is recorded"))
    return tuple(out)


def _report(s: SampleResult, rng: ReportingRange, run: Run, profile: AcceptanceProfile, unit: str,
            not_reportable: str = "") -> SampleResult:
    """The sample with what is reported for it (status, text, words, agreeing flags)."""
    engine = s.flags
    value = report_value(s.estimate, s.dilution_factor, engine, rng, run.settings.rounding, unit=unit,
                         below_limit=profile.reporting.between_lod_and_reporting_limit,
                         not_quantified=s.note if s.estimate is None else "", not_reportable=not_reportable)
    return replace(s, status=value.status, reported_text=value.text, words=value.words, short=value.short,
                   flags=value.flags if s.estimate is not None else engine, suggested_dilution=value.suggested_dilution)


def _quantify_samples(
    run: Run, analyte: Analyte, cal: Calibration, limits: DetectionLimits | None, rng: ReportingRange,
    profile: AcceptanceProfile,
) -> tuple[SampleResult, ...]:
    """Every sample of the analyte, quantified and reported.

    Each sample's result is what :func:`_report` gives for it; the work is done over all samples at
    once: the replicate means of the samples with the same number of replicates as one array (each
    mean summed exactly as ``np.mean`` sums that sample's replicates alone), one call of the engine,
    and the statuses and texts by :func:`.reporting.report_values`.
    """
    settings = run.settings
    name, ratio = analyte.name, analyte.uses_internal_standard
    rows = []
    for sample in run.samples:
        measurements = [m for m in sample.measurements if m.analyte == name]
        if not measurements:
            continue
        values, notes, censored = [], [], None
        for m in measurements:
            value, reason = response_value(m.response, m.internal_standard_response, ratio)
            if value is None:
                if m.response.is_censored:
                    censored = m.response.text
                notes.append(f"replicate {m.replicate}: {reason}")
            else:
                values.append(value)
        rows.append((sample, tuple(values), "; ".join(notes), censored))
    positions = [r for r, row in enumerate(rows) if row[1] and row[3] is None]
    counts = np.array([len(rows[r][1]) for r in positions], dtype=np.int64)
    means = np.empty(len(positions))
    for m in np.unique(counts).tolist():  # samples with m replicates: one row each, averaged along the rows
        at = np.flatnonzero(counts == m)
        means[at] = np.array([rows[positions[i]][1] for i in at.tolist()], dtype=float).reshape(at.size, m).mean(axis=1)
    refusal = None
    try:
        quant = cal.quantify(means, counts, settings.confidence_level, settings.interval, limits) if positions else None
    except QuantitationInputError as exc:  # a calibration that cannot quantify: every sample says why
        quant, refusal = None, f"not quantified: {exc}"
    n = len(rows)
    estimate = np.full(n, np.nan)
    dilution = np.array([row[0].dilution_factor for row in rows], dtype=float)
    flags: list[QuantFlag | None] = [None] * n
    reasons = [""] * n
    at = np.array(positions if quant is not None else [], dtype=np.int64)
    if quant is not None:
        estimate[at] = quant.estimate
        flags_of = list(quant.flags)
        for j, r in enumerate(positions):
            flags[r] = flags_of[j]
    index_of = {r: j for j, r in enumerate(at.tolist())}
    for r, (sample, values, note, censored) in enumerate(rows):
        if r in index_of:  # quantified: without an estimate (no solution), the replicates' notes say why
            reasons[r] = note if np.isnan(estimate[r]) else ""
            continue
        reason = f"reported as censored: {censored}" if censored else (refusal or note or "no numeric response")
        reasons[r] = reason if not note or reason == note else f"{reason}; {note}"
    reported = report_values(estimate, dilution, flags, rng, settings.rounding, unit=analyte.concentration_unit,
                             below_limit=profile.reporting.between_lod_and_reporting_limit, not_quantified=reasons)
    if quant is not None:
        columns = [c.tolist() for c in (quant.mean_response, quant.estimate, quant.standard_error, quant.lower,
                                        quant.upper)]
    out = []
    for r, (sample, values, note, censored) in enumerate(rows):
        nominal = sample.nominal_of(name)
        value = reported[r]
        j = index_of.get(r)
        if j is None:
            out.append(SampleResult(
                sample_id=sample.id, kind=sample.kind, run_order=sample.run_order, analyte=name,
                replicate_responses=values, dilution_factor=sample.dilution_factor, nominal=nominal,
                mean_response=None, estimate=None, standard_error=None, lower=None, upper=None,
                reported=None, reported_lower=None, reported_upper=None, flags=None, note=reasons[r],
                status=value.status, reported_text=value.text, words=value.words, short=value.short,
                suggested_dilution=value.suggested_dilution,
            ))
            continue
        df = sample.dilution_factor
        mean, est, se, low, high = (c[j] for c in columns)
        est = None if est != est else est
        got = None if est is None else est * df
        recovery = 100.0 * got / nominal if nominal is not None and got is not None and nominal != 0 else None
        out.append(SampleResult(
            sample_id=sample.id, kind=sample.kind, run_order=sample.run_order, analyte=name,
            replicate_responses=values, dilution_factor=df, nominal=nominal,
            mean_response=mean, estimate=est, standard_error=None if se != se else se,
            lower=None if low != low else low, upper=None if high != high else high,
            reported=got, reported_lower=None if low != low else low * df,
            reported_upper=None if high != high else high * df,
            flags=value.flags if est is not None else flags[r], note=note, recovery_percent=recovery,
            status=value.status, reported_text=value.text, words=value.words, short=value.short,
            suggested_dilution=value.suggested_dilution,
        ))
    return tuple(out)


def _number(value: float) -> float | None:
    return None if value != value else float(value)
