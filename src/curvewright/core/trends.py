"""Control limits from a baseline of runs, and the multi-rule control checks that flag runs.

A tracked quantity (:mod:`.tracked`) followed through the runs filed for one analyte and method is a
series x₁ … x_n in run order. Its control limits come from a baseline the analyst chooses: the first
N accepted runs, or the accepted runs of a date range. With x̄ and s the mean and the sample
standard deviation (n − 1 in the denominator) of the baseline values, the limits are x̄ ± 2s and
x̄ ± 3s, and each value is read as z = (x − x̄)/s.

The rules (Westgard JO, Barry PL, Hunt MR, Groth T. A multi-rule Shewhart chart for quality control
in clinical chemistry. Clin Chem 1981;27:493–501; the wording of each rule below is from memory of
that paper, not re-read):

=========  =================================================================================
``1-3s``   one value beyond x̄ + 3s or x̄ − 3s (random error)
``2-2s``   two consecutive values beyond the same limit, x̄ + 2s or x̄ − 2s (systematic error)
``R-4s``   one value beyond x̄ + 2s and the next beyond x̄ − 2s, or the reverse (random error).
           The paper applies it to the control values within one run; here each run gives one
           value of a quantity, so it is applied to consecutive runs.
``4-1s``   four consecutive values beyond the same limit, x̄ + 1s or x̄ − 1s (systematic error)
``10-x``   ten consecutive values on the same side of x̄ (systematic error)
=========  =================================================================================

"Beyond" is strict: a value exactly on a limit does not break it, and a value exactly at the
mean belongs to neither side. A rule is broken *at* the run that completes its pattern, so a run
is flagged for what it and the runs before it show. A baseline of fewer than
:data:`RECOMMENDED_BASELINE` values gives provisional limits, and says so (at least 20 control
values to set a mean and SD is common practice; from memory).
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date
from typing import Sequence

import numpy as np
from numpy.lib.stride_tricks import sliding_window_view

from ._arrays import FloatArray, frozen
from .errors import CurvewrightError
from .notation import entered

RULES = ("1-3s", "2-2s", "R-4s", "4-1s", "10-x")
"""The multi-rule checks, in the order they are reported."""

SOURCE = ("Westgard JO, Barry PL, Hunt MR, Groth T. A multi-rule Shewhart chart for quality control in clinical "
          "chemistry. Clin Chem 1981;27:493–501 (rules from memory of the paper, not re-read)")

RULE_WORDS = {
    "1-3s": "one value beyond the mean ± 3 s",
    "2-2s": "two consecutive values beyond the same 2 s limit",
    "R-4s": "two consecutive values beyond opposite 2 s limits",
    "4-1s": "four consecutive values beyond the same 1 s limit",
    "10-x": "ten consecutive values on the same side of the mean",
}
"""What each rule looks for, in words."""

RULE_SOURCES = {
    "1-3s": f"{SOURCE}: the 1-3s rule",
    "2-2s": f"{SOURCE}: the 2-2s rule",
    "R-4s": f"{SOURCE}: the R-4s rule, there within one run; applied here to consecutive runs",
    "4-1s": f"{SOURCE}: the 4-1s rule",
    "10-x": f"{SOURCE}: the 10-x̄ rule",
}

RECOMMENDED_BASELINE = 20
"""Baseline values below which the control limits are called provisional (common practice; from memory)."""
DEFAULT_BASELINE_RUNS = 20
"""The default baseline: the first 20 accepted runs."""


class TrendError(CurvewrightError, ValueError):
    """Control limits cannot be set (too few baseline values, no scatter) or a rule is unknown."""


@dataclass(frozen=True)
class Baseline:
    """Which runs set the control limits: the first ``first_accepted`` accepted runs, or, when a date
    is given, the accepted runs from ``start`` to ``end`` (both days included; either may be open)."""

    first_accepted: int = DEFAULT_BASELINE_RUNS
    start: date | None = None
    end: date | None = None

    def __post_init__(self) -> None:
        if self.start is None and self.end is None and self.first_accepted < 2:
            raise TrendError(f"baseline: the first {self.first_accepted} accepted run(s) cannot set control limits; "
                             "give 2 or more (20 or more is common practice).")
        if self.start is not None and self.end is not None and self.end < self.start:
            raise TrendError(f"baseline: the date range ends ({self.end}) before it starts ({self.start}).")

    @property
    def by_date(self) -> bool:
        return self.start is not None or self.end is not None

    def words(self) -> str:
        if not self.by_date:
            return f"the first {self.first_accepted} accepted runs"
        if self.start is not None and self.end is not None:
            return f"the accepted runs from {self.start} to {self.end}"
        if self.start is not None:
            return f"the accepted runs from {self.start} on"
        return f"the accepted runs up to {self.end}"


@dataclass(frozen=True)
class ControlLimits:
    """x̄ and s of the baseline values, in the quantity's unit, and how many values set them."""

    mean: float
    sd: float
    n: int

    def limit(self, k: float) -> tuple[float, float]:
        """(x̄ − k·s, x̄ + k·s)."""
        return self.mean - k * self.sd, self.mean + k * self.sd

    @property
    def provisional(self) -> bool:
        return self.n < RECOMMENDED_BASELINE


@dataclass(frozen=True)
class RuleBreak:
    """A rule broken at the value ``index`` (the run that completes the pattern); ``indices`` are the
    values that make the pattern, ``side`` is "above", "below" or "both" (R-4s)."""

    rule: str
    index: int
    indices: tuple[int, ...]
    side: str

    @property
    def words(self) -> str:
        where = {"above": "above the mean", "below": "below the mean", "both": "on both sides"}[self.side]
        return f"{self.rule}: {RULE_WORDS[self.rule]} ({where})"


@dataclass(frozen=True)
class TrendPoint:
    """One run's value of the quantity: ``key`` identifies the run (its content hash), ``label`` names it,
    ``day`` is the run's date (UTC) as ``YYYY-MM-DD…``; ``accepted`` its verdict; ``entry`` and ``source``
    its archive entry number and the file it was filed from (None for a run not filed);
    ``record_problems`` the integrity problems of a run filed although its record is not intact (such a
    run never sets control limits)."""

    key: str
    label: str
    day: str
    value: float
    accepted: bool
    entry: int | None = None
    source: str | None = None
    record_problems: str = ""


@dataclass(frozen=True)
class Trend:
    """A series with its control limits and the rules it breaks."""

    points: tuple[TrendPoint, ...]
    baseline: Baseline
    baseline_indices: tuple[int, ...]
    limits: ControlLimits
    z: FloatArray
    breaks: tuple[RuleBreak, ...]
    rules: tuple[str, ...]

    def breaks_at(self, index: int) -> tuple[RuleBreak, ...]:
        return tuple(b for b in self.breaks if b.index == index)

    def index_of(self, key: str) -> int | None:
        for i, p in enumerate(self.points):
            if p.key == key:
                return i
        return None

    @property
    def baseline_words(self) -> str:
        """The baseline as chosen and as found ("the first 20 accepted runs (only 7 are filed)")."""
        words = self.baseline.words()
        n = len(self.baseline_indices)
        if not self.baseline.by_date and n < self.baseline.first_accepted:
            words += f" (only {n} accepted run{'s' if n != 1 else ''} with a value)"
        elif self.baseline.by_date:
            words += f" ({n} run{'s' if n != 1 else ''})"
        if self.limits.provisional:
            words += f"; provisional: fewer than {RECOMMENDED_BASELINE} values"
        return words


def control_limits(values: Sequence[float]) -> ControlLimits:
    """Mean and sample SD (n − 1) of the baseline values."""
    x = np.asarray(values, dtype=np.float64)
    if x.ndim != 1 or x.size < 2:
        raise TrendError(f"control limits need at least 2 baseline values; the baseline has {x.size}. File more "
                         "accepted runs, or choose a wider baseline.")
    if not np.all(np.isfinite(x)):
        raise TrendError("control limits: a baseline value is not a finite number.")
    sd = float(np.std(x, ddof=1))
    if not sd > 0:
        raise TrendError(f"control limits: the {x.size} baseline values are all {entered(float(x[0]))}; with no scatter "
                         "there are no limits to set.")
    return ControlLimits(float(np.mean(x)), sd, int(x.size))


def select_baseline(points: Sequence[TrendPoint], baseline: Baseline) -> tuple[int, ...]:
    """Indices of the points that set the limits: accepted runs whose record is intact, the first N or
    those within the dates."""
    chosen = []
    for i, p in enumerate(points):
        if not p.accepted or p.record_problems:
            continue
        if baseline.by_date:
            day = date.fromisoformat(p.day[:10])
            if (baseline.start is None or day >= baseline.start) and (baseline.end is None or day <= baseline.end):
                chosen.append(i)
        elif len(chosen) < baseline.first_accepted:
            chosen.append(i)
    return tuple(chosen)


def check_rules(z: Sequence[float], rules: Sequence[str] = RULES) -> tuple[RuleBreak, ...]:
    """Every break of the named rules in a series of z-values (value − x̄)/s, in series order."""
    unknown = [r for r in rules if r not in RULES]
    if unknown:
        raise TrendError(f"rule {unknown[0]!r} is not one of {', '.join(RULES)}.")
    z = np.asarray(z, dtype=np.float64)
    out: list[RuleBreak] = []

    def runs(k: int, mask: np.ndarray) -> np.ndarray:
        """Indices i (≥ k−1) where mask holds for the k values ending at i."""
        if z.size < k:
            return np.zeros(0, dtype=int)
        return np.flatnonzero(sliding_window_view(mask, k).all(axis=1)) + k - 1

    def add(rule: str, k: int, ends: np.ndarray, side: str) -> None:
        out.extend(RuleBreak(rule, int(i), tuple(range(int(i) - k + 1, int(i) + 1)), side) for i in ends)

    for rule in rules:
        if rule == "1-3s":
            add(rule, 1, runs(1, z > 3), "above")
            add(rule, 1, runs(1, z < -3), "below")
        elif rule == "2-2s":
            add(rule, 2, runs(2, z > 2), "above")
            add(rule, 2, runs(2, z < -2), "below")
        elif rule == "R-4s":
            if z.size >= 2:
                high, low = z > 2, z < -2
                ends = np.flatnonzero((high[1:] & low[:-1]) | (low[1:] & high[:-1])) + 1
                add(rule, 2, ends, "both")
        elif rule == "4-1s":
            add(rule, 4, runs(4, z > 1), "above")
            add(rule, 4, runs(4, z < -1), "below")
        elif rule == "10-x":
            add(rule, 10, runs(10, z > 0), "above")
            add(rule, 10, runs(10, z < 0), "below")
    order = {r: i for i, r in enumerate(RULES)}
    return tuple(sorted(out, key=lambda b: (b.index, order[b.rule])))


def trend(points: Sequence[TrendPoint], baseline: Baseline = Baseline(), rules: Sequence[str] = RULES) -> Trend:
    """The series' control limits from ``baseline`` and the rules each value breaks.

    ``points`` are in run order. Raises :class:`TrendError` when the baseline holds fewer than two
    values or none that differ.
    """
    pts = tuple(points)
    chosen = select_baseline(pts, baseline)
    if len(chosen) < 2:
        accepted = sum(1 for p in pts if p.accepted)
        raise TrendError(f"control limits need at least 2 baseline values; {baseline.words()} give "
                         f"{len(chosen)} (of {len(pts)} run{'s' if len(pts) != 1 else ''} with a value, "
                         f"{accepted} accepted). File more accepted runs, or choose another baseline.")
    limits = control_limits([pts[i].value for i in chosen])
    z = np.array([(p.value - limits.mean) / limits.sd for p in pts], dtype=np.float64)
    return Trend(pts, baseline, chosen, limits, frozen(z), check_rules(z, rules), tuple(rules))


PROFILE_SECTION = "trend_rules"
"""The section of an acceptance profile that makes rule breaks a failure:
``"trend_rules": {"fail_on": ["1-3s", "R-4s"], "source": "the laboratory's QC procedure"}``."""


def failing_rules(profile: object, origin: str = "profile") -> frozenset[str]:
    """The rules whose break the profile (its JSON mapping) makes a failure of the run; a break of any
    other rule is a warning. A profile without a ``trend_rules`` section makes none a failure."""
    if not isinstance(profile, dict) or profile.get(PROFILE_SECTION) is None:
        return frozenset()
    section = profile[PROFILE_SECTION]
    where = f"{origin} {PROFILE_SECTION}"
    if not isinstance(section, dict):
        raise TrendError(f"{where}: expected an object such as {{\"fail_on\": [\"1-3s\"]}}, found {section!r}.")
    fail_on = section.get("fail_on", [])
    if not isinstance(fail_on, list) or not all(isinstance(r, str) for r in fail_on):
        raise TrendError(f"{where}: 'fail_on' must be a list of rule names ({', '.join(RULES)}), found {fail_on!r}.")
    unknown = [r for r in fail_on if r not in RULES]
    if unknown:
        raise TrendError(f"{where}: 'fail_on' names {unknown[0]!r}, which is not one of {', '.join(RULES)}.")
    return frozenset(fail_on)
