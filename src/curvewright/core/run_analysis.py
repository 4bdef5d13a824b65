"""Judging a whole run: fit each analyte as chosen, quantify every sample, apply the profile.

For each analyte the calibration uses the included standards with a nominal concentration of zero
or more and a numeric response (and, for internal-standard calibration, the ratio response/IS
response); any other included standard is reported as not usable, with the reason. Each sample's replicate responses
are averaged (m = number of numeric replicates) and read through the curve; the dilution factor
multiplies the estimate and both interval ends to give the reported concentration. A censored
replicate gives no numeric result: a response limit ("<20") is read through the curve and reported as
a concentration statement (times the dilution), a word ("ND") as entered, and a sample whose replicates
mix censored and measured readings is not quantified, every reading named (:func:`_censored_reasons`).

Each result is then reported against the calibrated range (LLOQ–ULOQ, the non-zero standards in the
fit) and the reporting limit (:mod:`.reporting`): one status per result, and its words. QC samples
are compared with their nominal values (recovery in percent) under the profile's QC rules; the
calibration checks (ICV, CCV, check standards, calibration blanks, the low-level check) each under
their own window, and with run order they bracket the samples between them (:mod:`.checks`). A
failed check fails the run's verdict and is named in its reasons.
"""

from __future__ import annotations

import math
from array import array
from dataclasses import replace
from functools import cached_property
from typing import TYPE_CHECKING, Any, Iterable, Iterator, Sequence

import numpy as np

from .values import frozen_value
from .acceptance import AcceptanceProfile, AcceptanceVerdict, load_profile
from .calibration import Calibration
from .fitting import fit
from .errors import CurvewrightError, LimitsError, QuantitationInputError
from .inverse import QuantFlag
from .limit_digits import BOUNDARY
from .limits import BLANK_METHODS, BlankReadings, DetectionLimits
from .reporting import (NO_RESPONSE, FlagBits, ReportingRange, ReportStatus, censored_bound_reason, censored_word_reason,
                        report_columns, report_value, reporting_range)
from .rounding import RoundingRule
from .run import Analyte, Measurement, Reading, Run, Sample, SampleKind, Standard
from .unread_text import why_not_read
from .notation import entered

if TYPE_CHECKING:  # pragma: no cover
    from .addition_series import AdditionSeriesResult
    from .checks import CheckVerdict
    from .comparison import ModelComparison
    from .method import Method


@frozen_value
class SampleResult:
    """One sample × analyte. Concentrations in the analyte's unit. ``estimate``, ``standard_error``,
    ``lower`` and ``upper`` are in the solution measured (read from the curve); ``reported``,
    ``reported_standard_error``, ``reported_lower`` and ``reported_upper`` are each of them times the
    dilution factor, in the sample as received.

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
    readings: int = 0
    """Every reading entered for the analyte (its replicates, one per replicate row): measured, censored
    ("<20", "ND") or not usable (text that is not a number, a row whose response cell is empty, a
    ratio without its internal-standard response), as the flag "replicate not usable" and the note
    say. ``replicate_responses`` holds the measured ones."""
    censored_readings: int = 0
    """How many of ``readings`` are censored."""

    @property
    def replicates(self) -> int:
        """The replicates entered: every reading, whether measured, censored or not usable."""
        return max(self.readings, len(self.replicate_responses))

    @property
    def replicate_words(self) -> str:
        """The replicates entered, with how many were measured, censored and not usable where they
        differ ("2 (1 measured, 1 censored)"); the count alone where every reading was measured."""
        return replicate_words(self.replicates, len(self.replicate_responses), self.censored_readings)

    @property
    def reported_standard_error(self) -> float | None:
        """The standard error of ``reported``: ``standard_error`` × dilution factor (concentration units)."""
        return None if self.standard_error is None else self.standard_error * self.dilution_factor

    @property
    def flag_words(self) -> str:
        """Everything to know about the result, in words (one status, then qualifiers and notes)."""
        return flag_words_of(self.words, self.note)

    @property
    def short_flags(self) -> str:
        """The flags as short words for a table cell (``flag_words`` says them in full)."""
        if self.estimate is not None and self.note:
            return f"{self.short}, replicate not usable" if self.short else "replicate not usable"
        return self.short

    @property
    def reportable(self) -> bool:
        """A number may be reported for this result (inside the range, or estimated where allowed)."""
        return is_reportable(self.status, self.short)


def replicate_words(readings: int, measured: int, censored: int) -> str:
    """``readings`` replicates entered, of which ``measured`` were measured and ``censored`` censored
    (the rest not usable), in words: "2", or "2 (1 measured, 1 censored)", each count held to
    its word by a no-break space so that a narrow column breaks the words only between the counts."""
    if measured == readings:
        return str(readings)
    parts = [f"{measured}\u00a0measured"]
    if censored:
        parts.append(f"{censored}\u00a0censored")
    if readings - measured - censored:
        parts.append(f"{readings - measured - censored}\u00a0not\u00a0usable")
    return f"{readings} ({', '.join(parts)})"


def flag_words_of(words: str, note: str) -> str:
    """A result's status words, then its note where the words do not already say it (``flag_words``)."""
    parts = [words] if words else []
    if note and note not in words:
        parts.append(note)
    return "; ".join(parts)


def is_reportable(status: ReportStatus, short: str) -> bool:
    """A number may be reported: inside the range, or below the reporting limit where the short words
    say it is estimated (``reportable``)."""
    return status is ReportStatus.IN_RANGE or (status is ReportStatus.BELOW_REPORTING_LIMIT and "estimated" in short)


_NONE = -1
"""In an integer column (flag bits, ``within_limits``): the field is None."""


@frozen_value(eq=False)
class SampleColumns:
    """The samples of one analyte as columns, one entry per sample: what :class:`SampleResult` holds,
    without an object per sample. :meth:`result` makes one sample's result, :meth:`results` them all,
    equal field for field to what the analysis reports.

    In the float columns NaN stands for None. ``quantified`` marks the samples read through the curve:
    only they have a mean response (kept as computed) and the numbers that follow from the estimate
    (``reported`` = estimate × dilution factor, and the interval ends likewise). The replicate
    responses of all samples stand one after another in ``replicate_values``, ``replicate_counts``
    of them per sample; ``reading_counts`` holds every reading entered per sample (measured, censored
    or not usable, a row with an empty response cell too) and ``censored_counts`` the censored ones. ``flags`` holds the flag bits (-1: None), ``within_limits`` 1, 0 or -1 (None).
    """

    analyte: str
    ids: list[str]
    kinds: list[SampleKind]
    run_orders: list[int | None]
    replicate_values: np.ndarray
    replicate_counts: np.ndarray
    reading_counts: np.ndarray
    censored_counts: np.ndarray
    quantified: np.ndarray
    mean_response: np.ndarray
    estimate: np.ndarray
    standard_error: np.ndarray
    lower: np.ndarray
    upper: np.ndarray
    dilution: np.ndarray
    nominal: np.ndarray
    recovery_percent: np.ndarray
    within_limits: np.ndarray
    flags: np.ndarray
    notes: list[str]
    statuses: list[ReportStatus]
    texts: list[str]
    words: list[str]
    shorts: list[str]
    suggested_dilution: np.ndarray

    def __len__(self) -> int:
        return len(self.ids)

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, SampleColumns):
            return NotImplemented
        return self.analyte == other.analyte and self.results() == other.results()

    __hash__ = None  # type: ignore[assignment]

    def chunks(self, size: int = 4096, start: int = 0, stop: int | None = None,
               ) -> Iterator[tuple[int, dict[str, list[Any]]]]:
        """The columns ``size`` samples at a time (of the samples from ``start`` to ``stop``: all by
        default), as plain Python values (NaN kept; see the class): (index of the first sample, the
        columns by name)."""
        names = ("mean_response", "estimate", "standard_error", "lower", "upper", "dilution", "nominal",
                 "recovery_percent", "within_limits", "flags", "suggested_dilution", "quantified", "replicate_counts",
                 "reading_counts", "censored_counts")
        end = len(self.ids) if stop is None else min(stop, len(self.ids))
        for start in range(start, end, size):
            stop = min(start + size, end)
            out: dict[str, list[Any]] = {name: getattr(self, name)[start:stop].tolist() for name in names}
            for name in ("ids", "kinds", "run_orders", "notes", "statuses", "texts", "words", "shorts"):
                out[name] = getattr(self, name)[start:stop]
            yield start, out

    def results(self, start: int = 0, stop: int | None = None) -> tuple[SampleResult, ...]:
        """Every sample's result (or those of the samples from ``start`` to ``stop``)."""
        end = len(self.ids) if stop is None else min(stop, len(self.ids))
        start = max(0, min(start, end))
        first = int(np.sum(self.replicate_counts[:start]))
        counts = self.replicate_counts[start:end]
        offsets = np.concatenate([[0], np.cumsum(counts)]).tolist()
        values = self.replicate_values[first:first + offsets[-1]].tolist()
        out = []
        for begin, c in self.chunks(start=start, stop=end):
            for k in range(len(c["ids"])):
                i = begin + k - start
                out.append(_result_of(self.analyte, c, k, tuple(values[offsets[i]:offsets[i + 1]])))
        return tuple(out)

    def result(self, i: int) -> SampleResult:
        """The result of the ``i``-th sample."""
        start = int(np.sum(self.replicate_counts[:i]))
        values = tuple(self.replicate_values[start:start + int(self.replicate_counts[i])].tolist())
        c = {name: [v[i] if isinstance(v, list) else v[i].item()] for name, v in (
            (name, getattr(self, name)) for name in (
                "mean_response", "estimate", "standard_error", "lower", "upper", "dilution", "nominal",
                "recovery_percent", "within_limits", "flags", "suggested_dilution", "quantified", "replicate_counts",
                "reading_counts", "censored_counts", "ids", "kinds", "run_orders", "notes", "statuses", "texts", "words", "shorts"))}
        return _result_of(self.analyte, c, 0, values)

    @classmethod
    def of(cls, analyte: str, results: Sequence[SampleResult]) -> "SampleColumns":
        """The columns of ``results`` (each as :meth:`results` gives it back)."""
        def floats(values: Iterable[float | None]) -> np.ndarray:
            return np.array([np.nan if v is None else v for v in values], dtype=float)

        quantified = np.array([s.mean_response is not None for s in results], dtype=bool)
        return cls(
            analyte=analyte, ids=[s.sample_id for s in results], kinds=[s.kind for s in results],
            run_orders=[s.run_order for s in results],
            replicate_values=np.array([v for s in results for v in s.replicate_responses], dtype=float),
            replicate_counts=np.array([len(s.replicate_responses) for s in results], dtype=np.int64),
            reading_counts=np.array([s.replicates for s in results], dtype=np.int64),
            censored_counts=np.array([s.censored_readings for s in results], dtype=np.int64),
            quantified=quantified, mean_response=floats(s.mean_response for s in results),
            estimate=floats(s.estimate for s in results), standard_error=floats(s.standard_error for s in results),
            lower=floats(s.lower for s in results), upper=floats(s.upper for s in results),
            dilution=floats(s.dilution_factor for s in results), nominal=floats(s.nominal for s in results),
            recovery_percent=floats(s.recovery_percent for s in results),
            within_limits=np.array([_NONE if s.within_limits is None else int(s.within_limits) for s in results],
                                   dtype=np.int8),
            flags=np.array([_NONE if s.flags is None else int(s.flags) for s in results], dtype=np.int64),
            notes=[s.note for s in results], statuses=[s.status for s in results],
            texts=[s.reported_text for s in results], words=[s.words for s in results],
            shorts=[s.short for s in results], suggested_dilution=floats(s.suggested_dilution for s in results),
        )


def _result_of(analyte: str, c: dict[str, list[Any]], k: int, values: tuple[float, ...]) -> SampleResult:
    """The result of the ``k``-th sample of a chunk of columns (:meth:`SampleColumns.chunks`)."""
    def some(value: float) -> float | None:
        return None if value != value else value

    bits = c["flags"][k]
    flags = None if bits == _NONE else QuantFlag(bits)
    within = c["within_limits"][k]
    common = dict(sample_id=c["ids"][k], kind=c["kinds"][k], run_order=c["run_orders"][k], analyte=analyte,
                  replicate_responses=values, dilution_factor=c["dilution"][k], nominal=some(c["nominal"][k]),
                  flags=flags, note=c["notes"][k], recovery_percent=some(c["recovery_percent"][k]),
                  within_limits=None if within == _NONE else bool(within), status=c["statuses"][k],
                  reported_text=c["texts"][k], words=c["words"][k], short=c["shorts"][k],
                  suggested_dilution=some(c["suggested_dilution"][k]), readings=c["reading_counts"][k],
                  censored_readings=c["censored_counts"][k])
    if not c["quantified"][k]:
        return SampleResult(mean_response=None, estimate=None, standard_error=None, lower=None, upper=None,
                            reported=None, reported_lower=None, reported_upper=None, **common)
    df = c["dilution"][k]
    est, se, low, high = some(c["estimate"][k]), c["standard_error"][k], c["lower"][k], c["upper"][k]
    return SampleResult(
        mean_response=c["mean_response"][k], estimate=est, standard_error=some(se), lower=some(low),
        upper=some(high), reported=None if est is None else est * df, reported_lower=None if low != low else low * df,
        reported_upper=None if high != high else high * df, **common)


@frozen_value
class UnusableStandard:
    standard_id: str
    reason: str


@frozen_value(eq=False)
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
    sample_columns: SampleColumns | None
    """The samples' results as columns (None: no sample was quantified, the analyte has no curve)."""
    model_overridden: bool = False
    checks: CheckVerdict | None = None
    reporting: ReportingRange | None = None
    limits_by_readings: tuple[DetectionLimits, ...] = ()
    """ISO 11843-2 limits for the numbers of readings K > 1 that the analyte's samples have, in
    increasing K (``limits`` are those for one reading); empty for other limits."""
    method_reasons: tuple[str, ...] = ()
    """What the run's validated method requires of this analyte and is not met (a level without a
    standard, a model departing from the method's), or what it notes; "FAIL" marks a failure."""
    additions: tuple[AdditionSeriesResult, ...] = ()
    """The samples measured by standard additions (:mod:`.addition_series`), whatever the calibration."""

    @cached_property
    def samples(self) -> tuple[SampleResult, ...]:
        """Every sample's result (made from :attr:`sample_columns` when first read)."""
        return () if self.sample_columns is None else self.sample_columns.results()

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


@frozen_value(eq=False)
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
        if self.run.settings.method is None:  # nothing of methods loaded for a run without one
            return None
        from .method import method_from_mapping

        return method_from_mapping(self.run.settings.method, "the run's method")

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
        kept = run.settings.kept_profile()  # read once, by the document's reader
        if kept is not None:
            return kept
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
        analytes=tuple(replace(_analyse_analyte(run, a, profile, model, weighting), additions=_additions(run, a))
                       for a in chosen),
    )


def _additions(run: Run, analyte: Analyte) -> tuple["AdditionSeriesResult", ...]:
    """The analyte's standard-addition series (:func:`.addition_series.analyse_additions`); none, and
    nothing of them loaded, when no sample of the run was measured by standard additions."""
    if not any(s.additions for s in run.samples):
        return ()
    from .addition_series import analyse_additions

    return analyse_additions(run, analyte, response_value)


def back_calculated_outside_fit(calibration: Calibration, standard: Standard,
                                ratio: bool) -> tuple[float | None, float | None]:
    """The back-calculated concentration of a standard that is not in the fit (excluded, or not
    usable), read off the curve as one response of an unknown, and its relative error in % against
    the nominal concentration, 100·(x̂ − x)/x; None where the standard has no usable response or
    nominal, where the curve cannot read the response back, and for the relative error at a nominal
    of zero."""
    used, _ = response_value(standard.response, standard.internal_standard_response, ratio)
    if used is None or not standard.has_concentration:
        return None, None
    try:
        estimate = float(calibration.quantify([used]).estimate[0])
    except CurvewrightError:
        return None, None  # the curve cannot read responses back (the calibration says why)
    if not np.isfinite(estimate):
        return None, None
    if standard.concentration == 0:
        return estimate, None
    return estimate, 100.0 * (estimate - standard.concentration) / standard.concentration


def response_value(reading: Reading, internal_standard: Reading | None, ratio: bool) -> tuple[float | None, str]:
    """The response used for fitting: the reading, or reading/IS for ratio calibration; a reason if none."""
    if reading.is_censored:
        return None, f"response is censored ({reading.text})"
    if not reading.is_number:
        if reading.text.strip():  # kept as typed: why, in the words its cell uses
            return None, f"response {reading.text.strip()!r} {why_not_read(reading.text)}"
        return None, NO_RESPONSE
    if not ratio:
        return float(reading.value), ""  # type: ignore[arg-type]
    if internal_standard is None or not internal_standard.is_number:
        return None, "no internal-standard response for the ratio"
    if internal_standard.value <= 0:  # type: ignore[operator]
        return None, f"internal-standard response {internal_standard.text} is not above zero"
    return float(reading.value) / float(internal_standard.value), ""  # type: ignore[arg-type]


def _not_fitted(exc: CurvewrightError, analyte: Analyte, fitted: list[Standard], excluded: list[Standard],
                unusable: list[UnusableStandard]) -> str:
    """Why no curve was fitted, in terms of the standards entered (never "none given" when the table
    holds standards): with none usable, that none of those entered can be used, how many are excluded
    and why the first three others cannot be used; with some usable, the fit's reason and the same
    account of the others."""
    if not unusable and not excluded:
        return str(exc)
    shown = "; ".join(f"{u.standard_id}: {u.reason}" for u in unusable[:3])
    more = f" and {len(unusable) - 3} more" if len(unusable) > 3 else ""
    parts = ", ".join(part for part in (f"{len(excluded)} excluded" if excluded else "",
                                        f"{len(unusable)} without a usable value ({shown}{more})" if unusable else "")
                      if part)
    if not fitted:
        n = len(analyte.standards)
        entered = "the one standard entered" if n == 1 else f"the {n} standards entered"
        return f"standards: none of {entered} can be used in the fit: {parts}."
    return f"{str(exc).rstrip('.')}; {len(fitted)} standard(s) usable, {parts}."


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
            unusable.append(UnusableStandard(s.id, f"concentration {text!r} {why_not_read(text)}" if text
                                                else "no concentration entered"))
            continue
        if s.concentration < 0:
            unusable.append(UnusableStandard(s.id, f"concentration {entered(s.concentration)} is below zero"))
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
            analyte=analyte, calibration=None, error=_not_fitted(exc, analyte, fitted, excluded, unusable),
            fitted_standards=tuple(fitted),
            excluded_standards=tuple(excluded), unusable_standards=tuple(unusable), limits=None,
            limits_note=None, verdict=None, qc_verdict=None, sample_columns=None, model_overridden=overridden,
        )
    limits, limits_note = None, None
    try:
        if settings.limits_method in BLANK_METHODS:
            limits = cal.limits(settings.limits_method, blanks=blank_readings(run, analyte))
        else:
            limits = cal.limits(settings.limits_method)
    except LimitsError as exc:
        limits_note = str(exc)
    excluded_nonzero = sum(1 for s in excluded if s.concentration != 0)
    unusable_nonzero = sum(1 for u in unusable if analyte.standard(u.standard_id).concentration != 0)
    verdict = profile.evaluate(cal, excluded=excluded_nonzero, unusable=unusable_nonzero)
    unit = analyte.concentration_unit
    low, high = cal.calibrated_range  # anchor points of a logistic curve lie outside it
    in_range = cal.concentration[(cal.concentration >= low) & (cal.concentration <= high)]
    rng = reporting_range(in_range, limits.lod if limits else None, limits.loq if limits else None, unit,
                          verdict.passing_range, verdict.narrowing,
                          limits.critical_concentration if limits else None, settings.rounding)
    limits_by_readings: dict[int, DetectionLimits] = {}
    ranges_by_readings: dict[int, ReportingRange] = {}
    if limits is not None and limits.critical_concentration is not None:
        # ISO 11843-2: x_c and x_d depend on the number K of readings of the test sample (q = √(1/K + …)),
        # so a sample read K times is judged against the limits for K, not those for one reading
        for k in _reading_counts(run, analyte):
            if k > 1:
                limits_by_readings[k] = cal.limits(settings.limits_method, replicates=k)
                ranges_by_readings[k] = reporting_range(
                    in_range, limits_by_readings[k].lod, None, unit, verdict.passing_range, verdict.narrowing,
                    limits_by_readings[k].critical_concentration, settings.rounding, critical_replicates=k)
    columns = _quantify_samples(run, analyte, cal, limits, rng, profile, ranges_by_readings)
    check_kinds = {kind for kind in SampleKind if kind.is_check}
    check_results = [columns.result(i) for i, kind in enumerate(columns.kinds) if kind in check_kinds]
    checks = None  # no calibration check among the samples: none judged, and the judge is not loaded
    if check_results:
        from .checks import CheckInput, bracketing, judge_checks

        checks = judge_checks([CheckInput(s.sample_id, s.kind, s.run_order, s.nominal, s.reported, s.status,
                                          s.dilution_factor, s.note) for s in check_results],
                              profile.checks, rng, profile.name, unit)
    samples: tuple[SampleResult, ...] | None = None
    qc_verdict = None
    # QC samples judged over the columns (and a nominal value on another sample noted)
    if checks is None and (SampleKind.QC in columns.kinds or not np.isnan(columns.nominal).all()):
        columns, qc_verdict = _judge_qc(columns, profile, unit)
    elif checks is not None:  # results judged further against the checks: as objects
        samples = columns.results()
    if checks is not None:
        by_id = {c.sample_id: c for c in checks.checks}
        unbracketed = bracketing([(s.sample_id, s.run_order) for s in samples if not s.kind.is_check], checks.checks)
        samples = tuple(
            replace(s, within_limits=by_id[s.sample_id].passed, recovery_percent=by_id[s.sample_id].recovery_percent)
            if s.sample_id in by_id else
            _report(s, ranges_by_readings.get(len(s.replicate_responses), rng), run, profile, unit,
                    not_reportable=unbracketed[s.sample_id])
            if s.sample_id in unbracketed and s.estimate is not None else s
            for s in samples
        )
    if samples is not None:
        samples = tuple(
            replace(s, within_limits=abs(s.recovery_percent - 100.0) <= profile.qc.tolerance_percent + BOUNDARY)
            if s.recovery_percent is not None and s.kind is SampleKind.QC and _inside(s.flags) else s
            for s in samples
        )
        qc = [s for s in samples if s.kind is SampleKind.QC and s.nominal is not None and s.reported is not None
              and _inside(s.flags)]
        columns = SampleColumns.of(analyte.name, samples)
        not_judged, notes = _qc_not_judged(columns, unit)
        qc_verdict = (profile.evaluate_qc([s.nominal for s in qc], [s.reported for s in qc], not_judged, notes)
                      if qc or not_judged or notes else None)
    result = AnalyteResult(
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
        sample_columns=columns,
        model_overridden=overridden,
        checks=checks,
        reporting=rng,
        limits_by_readings=tuple(limits_by_readings[k] for k in sorted(limits_by_readings)),
        method_reasons=_method_reasons(run, analyte, cal, use_model, use_weighting),
    )
    if samples is not None:
        result.__dict__["samples"] = samples  # already made: the columns give the same results
    return result


def _judge_qc(columns: SampleColumns, profile: AcceptanceProfile,
              unit: str) -> tuple[SampleColumns, AcceptanceVerdict | None]:
    """The QC samples judged over the columns: each with a recovery and a result reported as a number
    inside the range is within the profile's QC tolerance or not, and the QC samples with a nominal
    value and such a result are judged by the profile's QC rules (what the result objects' judging
    gives, sample for sample); the others are named as not judged (:func:`_qc_not_judged`), which
    fails the QC verdict: a QC sample is judged on the number the run reports for it, never on one
    it does not report (below the reporting limit, above the ULOQ, estimated; common practice); a QC
    sample held back only because a calibration check around it failed is still judged."""
    is_qc = np.fromiter((k is SampleKind.QC for k in columns.kinds), bool, len(columns))
    recovery = columns.recovery_percent
    reported = _in_range(columns)
    judged = is_qc & ~np.isnan(recovery) & reported
    within = columns.within_limits.copy()
    within[judged] = np.abs(recovery[judged] - 100.0) <= profile.qc.tolerance_percent + BOUNDARY
    counted = is_qc & ~np.isnan(columns.nominal) & columns.quantified & ~np.isnan(columns.estimate) & reported
    verdict = None
    not_judged, notes = _qc_not_judged(columns, unit)
    if counted.any() or not_judged or notes:
        # the reported number is the estimate times the dilution factor, as each result object has it
        found = [e * d for e, d in zip(columns.estimate[counted].tolist(), columns.dilution[counted].tolist())]
        verdict = profile.evaluate_qc(columns.nominal[counted].tolist(), found, not_judged, notes)
    return replace(columns, within_limits=within), verdict


def _in_range(columns: SampleColumns) -> np.ndarray:
    """Which results have a number inside the range, at or above the reporting limit (the flag
    ``IN_RANGE``: reported as the number, or not reportable for a reason of the run's checks alone)."""
    return (columns.flags >= 0) & ((columns.flags & int(QuantFlag.IN_RANGE)) != 0)


def _inside(flags: QuantFlag | None) -> bool:
    """One result's :func:`_in_range`."""
    return flags is not None and QuantFlag.IN_RANGE in flags


_NAMED = 5
"""At most this many unknowns with a nominal concentration are named in the QC verdict's note."""


def _qc_not_judged(columns: SampleColumns, unit: str) -> tuple[list[tuple[str, str]], list[str]]:
    """The QC samples that cannot be judged, each with the reason (no nominal concentration, or no
    reported number), and a note naming the unknowns that carry a nominal concentration (an empty or
    unknown kind): they are quantified as unknowns and their nominal is not used."""
    kinds = columns.kinds
    has_nominal = ~np.isnan(columns.nominal)
    is_qc = np.fromiter((k is SampleKind.QC for k in kinds), bool, len(columns))
    has_number = columns.quantified & ~np.isnan(columns.estimate) & _in_range(columns)
    not_judged = []
    for i in np.flatnonzero(is_qc & ~(has_nominal & has_number)).tolist():
        if not has_nominal[i]:
            reason = "no nominal concentration (the cell is empty or not a number)"
        else:
            said = columns.notes[i] or columns.words[i] or "not quantified"
            reason = (f"no reported number ({said})" if np.isnan(columns.estimate[i]) or not columns.quantified[i]
                      else f"its result is not reported as a number ({said}), and a QC sample is judged only on "
                      "a number the run reports")
        not_judged.append((columns.ids[i], reason))
    notes = []
    is_unknown = np.fromiter((k is SampleKind.UNKNOWN for k in kinds), bool, len(columns))
    odd = np.flatnonzero(is_unknown & has_nominal).tolist()
    if odd:
        named = ", ".join(f"{columns.ids[i]!r} ({entered(columns.nominal[i])} {unit})".replace(" )", ")")
                          for i in odd[:_NAMED])
        more = f" and {len(odd) - _NAMED} more" if len(odd) > _NAMED else ""
        notes.append(f"{len(odd)} sample(s) of kind unknown (the kind cell empty or 'unknown') with a nominal "
                     f"concentration: {named}{more}; each is quantified as an unknown and its nominal is not used "
                     "(give the kind QC to judge it as a QC sample)")
    return not_judged, notes


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
               + (f"the method's level(s) {', '.join(f'{entered(v)}' for v in missing)} have no standard in the fit"
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
                         not_quantified=s.note if s.estimate is None else "", not_reportable=not_reportable,
                         interval=(s.lower, s.upper))
    return replace(s, status=value.status, reported_text=value.text, words=value.words, short=value.short,
                   flags=value.flags if s.estimate is not None else engine, suggested_dilution=value.suggested_dilution)


def blank_readings(run: Run, analyte: Analyte) -> BlankReadings:
    """The analyte's readings in the run's samples of type blank: every numeric response (the ratio to
    the internal standard where the analyte uses one), in the order the samples were entered, and each reading that
    cannot enter an SD with its reason; a blank sample without a reading of the analyte is not counted."""
    name, ratio = analyte.name, analyte.uses_internal_standard
    values: list[float] = []
    not_numeric: list[str] = []
    samples = 0
    for sample in run.samples:
        if sample.kind is not SampleKind.BLANK:
            continue
        measured = [m for m in sample.measurements if m.analyte == name]
        if not measured:
            continue
        samples += 1
        for m in measured:
            value, reason = response_value(m.response, m.internal_standard_response, ratio)
            if value is None:
                not_numeric.append(f"{sample.id}: {reason}")
            else:
                values.append(value)
    return BlankReadings(tuple(values), samples, tuple(not_numeric))


def _reading_counts(run: Run, analyte: Analyte) -> set[int]:
    """The numbers of numeric readings the analyte's samples have (as :func:`_quantify_samples` counts them)."""
    name, ratio = analyte.name, analyte.uses_internal_standard
    return {sum(1 for m in sample.measurements if m.analyte == name
                and response_value(m.response, m.internal_standard_response, ratio)[0] is not None)
            for sample in run.samples}


def _quantify_samples(
    run: Run, analyte: Analyte, cal: Calibration, limits: DetectionLimits | None, rng: ReportingRange,
    profile: AcceptanceProfile, ranges_by_readings: dict[int, ReportingRange] | None = None,
) -> SampleColumns:
    """Every sample of the analyte, quantified and reported, as columns.

    Each sample's result is what :func:`_report` gives for it; the work is done over all samples at
    once: the replicate means of the samples with the same number of replicates as one array (each
    mean summed exactly as ``np.mean`` sums that sample's replicates alone), one call of the engine,
    and the statuses and texts by :func:`.reporting.report_columns`. ``ranges_by_readings`` holds, for
    ISO 11843-2 limits, the reporting range of the samples read K > 1 times (their x_c and x_d are
    those for K readings); every other sample is reported against ``rng``.
    """
    settings = run.settings
    name, ratio = analyte.name, analyte.uses_internal_standard
    ids: list[str] = []
    kinds: list[SampleKind] = []
    run_orders: list[int | None] = []
    # numbers gathered in typed arrays (8 bytes each), not as lists of Python numbers
    dilution_list = array("d")
    nominal_list = array("d")
    values = array("d")
    counts_list = array("q")
    readings_list = array("q")  # every reading entered, and the censored ones among them
    censored_list = array("q")
    notes: list[str] = []
    censored_of: dict[int, list[tuple[Measurement, float | None]]] = {}
    measured_of: dict[int, list[Measurement]] = {}
    for sample in run.samples:
        measurements = [m for m in sample.measurements if m.analyte == name]
        if not measurements and not _awaits_response(sample, name):
            continue  # measured for another analyte only, or by standard additions
        r = len(ids)
        count, censored, unusable, reasons_here = 0, 0, 0, [] if measurements else [NO_RESPONSE]
        for m in measurements:
            value, reason = response_value(m.response, m.internal_standard_response, ratio)
            if value is None:
                if m.response.is_censored:
                    censored += 1
                    censored_of.setdefault(r, []).append((m, _censored_limit(m, ratio)))
                else:  # a replicate row without a number the curve can use: text, an empty cell, no IS response
                    unusable += 1
                reasons_here.append(f"replicate {m.replicate}: {reason}")
            else:
                values.append(value)
                count += 1
        if count and r in censored_of:  # censored and measured replicates: the measured ones are named too
            measured_of[r] = [m for m in measurements
                              if response_value(m.response, m.internal_standard_response, ratio)[0] is not None]
        ids.append(sample.id)
        kinds.append(sample.kind)
        run_orders.append(sample.run_order)
        dilution_list.append(sample.dilution_factor)
        nominal = sample.nominal_of(name)
        nominal_list.append(np.nan if nominal is None else nominal)
        counts_list.append(count)
        readings_list.append(count + censored + unusable)
        censored_list.append(censored)
        notes.append("; ".join(reasons_here))
    n = len(ids)
    replicate_values = np.frombuffer(values, dtype=float).copy() if values else np.empty(0)
    del values
    replicate_counts = np.frombuffer(counts_list, dtype=np.int64).copy() if counts_list else np.empty(0, np.int64)
    del counts_list
    offsets = np.concatenate([[0], np.cumsum(replicate_counts)])
    quantifiable = replicate_counts > 0
    if censored_of:
        quantifiable[list(censored_of)] = False
    positions = np.flatnonzero(quantifiable)
    counts = replicate_counts[positions]
    means = np.empty(positions.size)
    for m in np.unique(counts).tolist():  # samples with m replicates: one row each, averaged along the rows
        at = np.flatnonzero(counts == m)
        starts = offsets[positions[at]]
        means[at] = replicate_values[starts[:, None] + np.arange(m)].reshape(at.size, m).mean(axis=1)
    refusal = None
    try:
        quant = cal.quantify(means, counts, settings.confidence_level, settings.interval, limits) if positions.size else None
    except QuantitationInputError as exc:  # a calibration that cannot quantify: every sample says why
        quant, refusal = None, f"not quantified: {exc}"
    estimate = np.full(n, np.nan)
    mean_response, standard_error, lower, upper = (np.full(n, np.nan) for _ in range(4))
    dilution = np.array(dilution_list, dtype=float)
    del dilution_list
    engine_bits = np.full(n, _NONE, dtype=np.int64)  # the engine's flags of each sample (-1: None)
    quantified = np.zeros(n, dtype=bool)
    if quant is not None:
        quantified[positions] = True
        estimate[positions] = quant.estimate
        mean_response[positions] = quant.mean_response
        standard_error[positions] = quant.standard_error
        lower[positions] = quant.lower
        upper[positions] = quant.upper
        engine_bits[positions] = quant.flag_bits
        del quant
        # a response beyond a quadratic's turning point: the engine's stand-in (the vertex) is no result
        beyond = (engine_bits >= 0) & ((engine_bits & int(QuantFlag.BEYOND_TURNING_POINT)) != 0)
        if beyond.any():  # no number, and that flag alone (as a response with no solution has its own)
            for column in (estimate, standard_error, lower, upper):
                column[beyond] = np.nan
            engine_bits[beyond] = int(QuantFlag.BEYOND_TURNING_POINT)
        _mark_side_of_curve(engine_bits, mean_response, cal, rng)
    censored_reasons = _censored_reasons(censored_of, measured_of, cal, analyte, rng, settings.rounding, dilution)
    reasons = [""] * n
    no_estimate = np.isnan(estimate).tolist()
    for r, (done, note) in enumerate(zip(quantified.tolist(), notes)):
        if done:  # quantified: without an estimate (no solution), the replicates' notes say why
            reasons[r] = note if no_estimate[r] else ""
            continue
        reason = censored_reasons.get(r) or refusal or note or "no numeric response"
        reasons[r] = reason if not note or reason == note else f"{reason}; {note}"
    reported = report_columns(estimate, dilution, FlagBits(engine_bits), rng, settings.rounding,
                              unit=analyte.concentration_unit,
                              below_limit=profile.reporting.between_lod_and_reporting_limit, not_quantified=reasons,
                              lowers=lower, uppers=upper)
    for k, rng_k in (ranges_by_readings or {}).items():  # samples read K times: judged against the limits for K
        rows = np.flatnonzero(quantified & (replicate_counts == k))
        if rows.size:
            part = report_columns(estimate[rows], dilution[rows], FlagBits(engine_bits[rows]), rng_k, settings.rounding,
                                  unit=analyte.concentration_unit,
                                  below_limit=profile.reporting.between_lod_and_reporting_limit,
                                  not_quantified=[reasons[r] for r in rows.tolist()], lowers=lower[rows],
                                  uppers=upper[rows])
            for j, r in enumerate(rows.tolist()):
                reported.statuses[r], reported.texts[r] = part.statuses[j], part.texts[j]
                reported.words[r], reported.shorts[r] = part.words[j], part.shorts[j]
            reported.bits[rows] = part.bits
            reported.suggested_dilution[rows] = part.suggested_dilution
    nominal = np.array(nominal_list, dtype=float)
    del nominal_list
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        got = estimate * dilution
        recovery = np.where(quantified & ~np.isnan(estimate) & ~np.isnan(nominal) & (nominal != 0),
                            100.0 * got / nominal, np.nan)
    # a result with an estimate has the flags its report agrees with; any other keeps the engine's
    has_estimate = quantified & ~np.isnan(estimate)
    bits = np.where(has_estimate, reported.bits, engine_bits)
    return SampleColumns(
        analyte=name, ids=ids, kinds=kinds, run_orders=run_orders, replicate_values=replicate_values,
        replicate_counts=replicate_counts, quantified=quantified,
        reading_counts=np.frombuffer(readings_list, dtype=np.int64).copy() if readings_list else np.empty(0, np.int64),
        censored_counts=np.frombuffer(censored_list, dtype=np.int64).copy() if censored_list else np.empty(0, np.int64), mean_response=mean_response, estimate=estimate,
        standard_error=standard_error, lower=lower, upper=upper, dilution=dilution, nominal=nominal,
        recovery_percent=recovery, within_limits=np.full(n, _NONE, dtype=np.int8), flags=bits,
        notes=[reasons[r] if not done else note for r, (done, note) in enumerate(zip(quantified.tolist(), notes))],
        statuses=reported.statuses, texts=reported.texts, words=reported.words, shorts=reported.shorts,
        suggested_dilution=reported.suggested_dilution,
    )


MIXED_READINGS = "the replicates mix censored and measured readings"
"""How the reason of a sample not quantified for mixing censored and measured replicates names it."""


def _censored_limit(m: Measurement, ratio: bool) -> float | None:
    """The response limit of a censored reading ("<20": 20), as the fit's responses are (for ratio
    calibration divided by the internal-standard response); None for a word ("ND") or where the
    ratio cannot be formed."""
    limit = m.response.limit
    if limit is None or m.response.qualifier not in ("<", ">"):
        return None
    if not ratio:
        return float(limit)
    istd = m.internal_standard_response
    if istd is None or not istd.is_number or istd.value <= 0:  # type: ignore[operator]
        return None
    return float(limit) / float(istd.value)  # type: ignore[arg-type]


def _censored_reasons(censored_of: dict[int, list[tuple[Measurement, float | None]]],
                      measured_of: dict[int, list[Measurement]], cal: Calibration, analyte: Analyte,
                      rng: ReportingRange, rule: RoundingRule, dilution: np.ndarray) -> dict[int, str]:
    """What each sample with a censored reading is reported as (its reason; see
    :func:`.reporting.censored_bound_reason`).

    A sample whose replicates mix censored and measured readings is not quantified: no mean is formed
    from part of its readings, and the reason names every reading of both kinds. Replicates all "<"
    limits are read at the largest limit, all ">" at the smallest (each replicate's response lies
    beyond its own limit, so the mean lies beyond that one); replicates all the same word ("ND") are
    reported as that word; any other mixture is not quantified, its readings named. The response
    limits are read through the curve in one call."""
    reasons: dict[int, str] = {}
    wanted: dict[int, tuple[str, float, str]] = {}
    for r, entries in censored_of.items():
        texts = [f"replicate {m.replicate} {m.response.text.strip()}" for m, _ in entries]
        measured = measured_of.get(r)
        if measured:
            shown = "; ".join(f"replicate {m.replicate} {m.response.text.strip()}" for m in measured)
            reasons[r] = (f"not quantified: {MIXED_READINGS} (censored: "
                          f"{'; '.join(texts)}; measured: {shown}); no mean is formed from part of them: "
                          "review the readings")
            continue
        signs = {m.response.qualifier for m, _ in entries}
        limits = [limit for _, limit in entries]
        if len(signs) == 1 and None not in limits and signs <= {"<", ">"}:
            sign = signs.pop()
            pick = max if sign == "<" else min
            limit, text = pick(((lim, m.response.text.strip()) for m, lim in entries), key=lambda e: e[0])
            wanted[r] = (sign, limit, text)
        elif len({m.response.text.strip().upper() for m, _ in entries}) == 1 and None in limits:
            word = entries[0][0].response.text.strip()
            reasons[r] = (censored_word_reason(word) if entries[0][0].response.limit is None else
                          f"not quantified: the censored response {word} cannot be read through the curve "
                          "(no internal-standard response for the ratio)")
        else:
            reasons[r] = f"not quantified: the replicates are censored differently ({'; '.join(texts)})"
    if wanted:
        rows = list(wanted)
        responses = np.array([wanted[r][1] for r in rows])
        with np.errstate(all="ignore"):
            try:
                quant = cal.quantify(responses, 1)
                bounds = np.where((quant.flag_bits & int(QuantFlag.NO_SOLUTION | QuantFlag.BEYOND_TURNING_POINT)) != 0, np.nan, quant.estimate)
            except CurvewrightError:
                bounds = np.full(len(rows), np.nan)
            low, high = cal.predict(np.array([rng.lloq, rng.uloq]))
        increasing = bool(high > low)
        for r, bound in zip(rows, bounds.tolist()):
            sign, _, text = wanted[r]
            reasons[r] = censored_bound_reason(sign, text, float(bound), increasing, float(dilution[r]), rng, rule,
                                               analyte.concentration_unit, analyte.response_unit)
    return reasons


def _mark_side_of_curve(engine_bits: np.ndarray, mean_response: np.ndarray, cal: Calibration,
                        rng: ReportingRange) -> None:
    """Add, in place, to each result from which the curve reads no concentration (no solution, beyond the
    turning point or an asymptote) the side of the calibrated range its response lies on.

    The calibrated branch of the curve is monotone and runs through the fitted responses f(LLOQ) and
    f(ULOQ); a response it never gives lies beyond one end of the branch. Beyond the low-concentration
    end (below the lowest response of a rising curve, above the highest of a falling one) every
    concentration the curve could stand for lies below the lowest standard: the result is reported
    below the reporting limit (``BELOW_RANGE``), as a measured result there is, and diluting could not
    help. Beyond the high-concentration end it lies above the highest standard (``ABOVE_RANGE``) and a
    re-assay diluted is asked. Reporting results below the LLOQ as below it and diluting those above
    the ULOQ is the practice ICH M10 sets for study samples and common practice elsewhere (from memory).
    """
    no_number = (engine_bits >= 0) & ((engine_bits & int(QuantFlag.NO_SOLUTION | QuantFlag.BEYOND_TURNING_POINT)) != 0)
    if not no_number.any():
        return
    with np.errstate(all="ignore"):
        at_low, at_high = (float(v) for v in cal.predict(np.array([rng.lloq, rng.uloq])))
    if not (math.isfinite(at_low) and math.isfinite(at_high)) or at_low == at_high:
        return
    rising = at_high > at_low
    y = mean_response
    low_side = no_number & ((y < at_low) if rising else (y > at_low))
    high_side = no_number & ((y > at_high) if rising else (y < at_high))
    engine_bits[low_side] |= int(QuantFlag.BELOW_RANGE | QuantFlag.BELOW_LOQ)
    engine_bits[high_side] |= int(QuantFlag.ABOVE_RANGE)


def _awaits_response(sample: Sample, analyte: str) -> bool:
    """A sample entered with no response at all (no measurement of any analyte, no addition series,
    and no nominal value of another analyte only): it is listed among ``analyte``'s samples with "no
    response recorded", as a sample whose response cell was read empty from a file is, and never left
    out of the results."""
    if sample.measurements or sample.additions:
        return False
    return not sample.nominal or sample.nominal_of(analyte) is not None


def _number(value: float) -> float | None:
    return None if value != value else float(value)
