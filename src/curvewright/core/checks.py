"""Calibration checks: each judged against its own window, and the samples they bracket.

A check is a sample of a check kind (:attr:`~.run.SampleKind.is_check`): an initial or continuing
calibration verification (ICV, CCV) or a check standard, judged by its recovery against the
nominal, 100·found/nominal, within 100 ± the profile's window for that kind; the low-level check at
the reporting limit likewise, with its own window; a calibration blank passes when its result is a
non-detect or lies below the reporting limit. A kind for which the profile sets no window cannot be
judged: the check then fails with that reason, so that a run is never called accepted on a check
nobody judged.

Bracketing (with run order): a sample is reportable only when the nearest check before it and the
nearest check after it, for the same analyte, both pass. A sample after a failed check, or before
one, up to the next passing check, is not reportable; so is a sample after the last check (no
check closes its bracket) or without a run order when the checks have one. A run without checks is
not bracketed. (Bracketing samples by passing continuing calibration checks is common practice in
environmental and pharmaceutical QC methods; from memory, not re-read.)
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

from .acceptance import CheckRules
from .limit_digits import BOUNDARY, recovery_decimals
from .reporting import CENSORED_BELOW, CENSORED_BOUND, ReportingRange, ReportStatus, censored_text
from .run import SampleKind
from .notation import entered, figures


@dataclass(frozen=True)
class CheckResult:
    """One calibration check of one analyte: its recovery (None for a calibration blank or without a
    nominal), the window it was held to, and whether it passed, with the reason in words."""

    sample_id: str
    kind: SampleKind
    run_order: int | None
    nominal: float | None
    found: float | None
    recovery_percent: float | None
    window_percent: float | None
    passed: bool
    reason: str


@dataclass(frozen=True)
class CheckVerdict:
    passed: bool
    reasons: tuple[str, ...]
    checks: tuple[CheckResult, ...]


@dataclass(frozen=True)
class CheckInput:
    """What judging a check needs of one sample's result (reported concentration after dilution)."""

    sample_id: str
    kind: SampleKind
    run_order: int | None
    nominal: float | None
    reported: float | None
    status: ReportStatus
    dilution: float
    note: str


def judge_check(c: CheckInput, rules: CheckRules, rng: ReportingRange | None, profile: str, unit: str = "") -> CheckResult:
    """Judge one calibration check against the profile's window for its kind."""
    u = f" {unit}" if unit else ""
    label = c.kind.named(c.sample_id) + (f" (run order {c.run_order})" if c.run_order is not None else "")

    def result(passed: bool, reason: str, recovery: float | None = None, window: float | None = None) -> CheckResult:
        return CheckResult(c.sample_id, c.kind, c.run_order, c.nominal, c.reported, recovery, window, passed,
                           f"{'pass' if passed else 'FAIL'}: {label}: {reason}")

    if c.kind is SampleKind.CALIBRATION_BLANK:
        if rules.calibration_blank_below is None:
            return result(False, f"profile {profile!r} sets no rule for calibration blanks; it cannot be judged")
        if c.status is ReportStatus.NOT_QUANTIFIED and c.note.startswith(CENSORED_BELOW):
            return result(True, f"non-detect ({c.note.split(': ', 1)[-1]})")
        if c.status is ReportStatus.NOT_QUANTIFIED and c.note.startswith(CENSORED_BOUND) and rng is not None:
            # a censored statement that is no non-detect: "> ULOQ", or "< bound" with the bound above the
            # reporting limit, which leaves the blank anywhere below the bound, at the limit and above it
            statement = censored_text(c.note)
            limit = f"{figures(rng.reporting_limit * c.dilution, 4)}{u}"
            why = ("a result above the calibrated range" if statement.startswith(">") else
                   f"its bound lies above the reporting limit {limit}, so the blank may lie at the limit or above it")
            return result(False, f"reported as {statement}, a censored result that is not a non-detect: {why}; "
                          f"a calibration blank passes only below the reporting limit {limit} "
                          f"({c.note.split(' — ', 1)[-1]})")
        if c.reported is None or rng is None:
            return result(False, f"no usable result ({c.note or 'no numeric response'})")
        limit = rng.reporting_limit * c.dilution
        if c.reported < limit:
            return result(True, f"{figures(c.reported, 4)}{u} is below the reporting limit {figures(limit, 4)}{u}")
        return result(False, f"{figures(c.reported, 4)}{u} is not below the reporting limit {figures(limit, 4)}{u}")
    window = rules.window(c.kind.value)
    if window is None:
        return result(False, f"profile {profile!r} sets no window for a {c.kind.words}; it cannot be judged")
    if c.nominal is None or c.nominal <= 0:
        return result(False, "no nominal concentration above zero to judge its recovery against", window=window)
    if c.reported is None:
        return result(False, f"no usable result ({c.note or 'no numeric response'})", window=window)
    recovery = 100.0 * c.reported / c.nominal
    passed = abs(recovery - 100.0) <= window + BOUNDARY
    where = "within" if passed else "outside"
    shown = f"{recovery:.{recovery_decimals(recovery, window)}f}"  # more decimals where one would read as the limit
    return result(passed, f"recovery {shown} % of {entered(c.nominal)}{u}, {where} {entered(100 - window)}–{entered(100 + window)} %",
                  recovery, window)


def judge_checks(inputs: Sequence[CheckInput], rules: CheckRules, rng: ReportingRange | None, profile: str,
                 unit: str = "") -> CheckVerdict | None:
    """Judge every check of one analyte; None when the run has none."""
    checks = tuple(judge_check(c, rules, rng, profile, unit) for c in inputs if c.kind.is_check)
    if not checks:
        return None
    return CheckVerdict(all(c.passed for c in checks), tuple(c.reason for c in checks), checks)


def bracketing(samples: Sequence[tuple[str, int | None]], checks: Sequence[CheckResult]) -> dict[str, str]:
    """The samples (id, run order) that passing checks do not bracket, each with the reason.

    Only samples that are not checks are given; the result names those that may not be reported.
    """
    ordered = sorted((c for c in checks if c.run_order is not None), key=lambda c: c.run_order)  # type: ignore[arg-type, return-value]
    if not ordered:
        return {}
    out: dict[str, str] = {}
    for sid, order in samples:
        if order is None:
            out[sid] = "it has no run order, so the calibration checks that bracket it cannot be told"
            continue
        before = [c for c in ordered if c.run_order < order]  # type: ignore[operator]
        after = [c for c in ordered if c.run_order > order]  # type: ignore[operator]
        previous = before[-1] if before else None
        following = after[0] if after else None
        if previous is not None and not previous.passed:
            out[sid] = f"it follows the failed {previous.kind.named(previous.sample_id)} (run order {previous.run_order})"
        elif following is not None and not following.passed:
            out[sid] = (f"the check after it, {following.kind.named(following.sample_id)} (run order "
                        f"{following.run_order}), failed")
        elif following is None:
            out[sid] = f"no calibration check follows it (the last is {ordered[-1].sample_id}, run order {ordered[-1].run_order})"
        elif previous is None:
            out[sid] = f"no calibration check precedes it (the first is {ordered[0].sample_id}, run order {ordered[0].run_order})"
    return out
