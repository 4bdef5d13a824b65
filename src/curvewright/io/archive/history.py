"""The calibration history of an analyte: a tracked quantity through the filed runs, its control limits
and the rules it breaks (:mod:`curvewright.core.trends`), with a run of today marked; and the verdict
of a run against that history.

The series holds the runs filed for the analyte under one method (profile | model | weighting;
by default the method of the latest run). "Today's run" is an analysed run: when its content is
filed it is marked where it stands; otherwise its value is added at the end of the series, as the
newest run, and judged there.

A rule a run breaks is a warning unless the run's acceptance profile makes it a failure (its
``trend_rules`` section, :func:`curvewright.core.trends.failing_rules`).
"""

from __future__ import annotations

import json
from dataclasses import dataclass, field
from importlib import resources
from typing import Any

from ...core.run import Run
from ...core.run_analysis import RunResult
from ...core.tracked import CALIBRATION_QUANTITIES, TrackedValues, parse_recovery_key, quantity_words, tracked_values
from ...core.trends import RULES, Baseline, RuleBreak, Trend, TrendError, TrendPoint, failing_rules, trend
from .errors import ArchiveError
from .schema import utc_text
from .store import Archive, MethodRecords, MethodSummary, content_hash, run_date
from ...core.notation import figures, fixed


@dataclass(frozen=True)
class Today:
    """A run to mark on the chart: its content hash, name, date and tracked values."""

    key: str
    name: str
    day: str
    values: tuple[TrackedValues, ...]

    @classmethod
    def of(cls, result: RunResult) -> "Today":
        run = result.run
        return cls(content_hash(run), run.name, run_date(run) or utc_text(), tracked_values(result))

    def analyte(self, name: str) -> TrackedValues | None:
        for v in self.values:
            if v.analyte == name:
                return v
        return None


@dataclass(frozen=True)
class History:
    """One quantity of one analyte through the archive. ``trend`` is None when no control limits can be
    set (``problem`` says why); ``today`` is the index of today's run in ``points`` (None when not shown,
    ``today_note`` says why)."""

    analyte: str
    method_key: str
    methods: tuple[str, ...]
    quantity: str
    quantities: tuple[str, ...]
    words: str
    concentration_unit: str
    response_unit: str
    points: tuple[TrendPoint, ...]
    trend: Trend | None
    problem: str | None
    today: int | None = None
    today_note: str = ""
    baseline: Baseline = field(default_factory=Baseline)

    def breaks_at(self, index: int) -> tuple[RuleBreak, ...]:
        return self.trend.breaks_at(index) if self.trend is not None else ()


def history(archive: Archive, analyte: str, quantity: str = "slope", *, method: str | None = None,
            baseline: Baseline | None = None, today: Today | None = None,
            _known: tuple[tuple[MethodSummary, ...], MethodRecords] | None = None) -> History:
    """The history of ``quantity`` for ``analyte`` (see the module's description)."""
    baseline = baseline or Baseline()
    methods = _known[0] if _known is not None else archive.methods(analyte)
    if not methods:
        known = archive.analytes()
        raise ArchiveError(f"{archive.location.shown}: no run of analyte {analyte!r} is filed"
                           + (f" (analytes filed: {', '.join(known)})." if known else " (the archive holds no run yet)."))
    keys = tuple(m.method_key for m in methods)
    if method is None:
        mine = today.analyte(analyte) if today is not None else None
        method = mine.method_key if mine is not None and mine.method_key in keys else keys[0]
    elif method not in keys:
        raise ArchiveError(f"analyte {analyte!r} has no run filed under method {method!r}; its methods: "
                           + "; ".join(f"{m.method_key!r} ({m.runs} run{'s' if m.runs != 1 else ''})" for m in methods) + ".")
    records = _known[1] if _known is not None and _known[1].method_key == method else archive.records(analyte, method)
    quantities = records.quantities
    if quantity not in quantities and quantity not in CALIBRATION_QUANTITIES and parse_recovery_key(quantity) is None:
        raise ArchiveError(f"{quantity!r} is not a tracked quantity; for {analyte} ({method}) choose one of: "
                           f"{', '.join(quantities)}.")
    c_unit, y_unit = records.units
    words = quantity_words(quantity, c_unit, y_unit)
    points = list(records.series.get(quantity, ()))
    today_index, today_note = None, ""
    if today is not None:
        mine = today.analyte(analyte)
        found = next((i for i, p in enumerate(points) if p.key == today.key), None)
        if found is not None:
            today_index = found
        elif mine is None:
            today_note = f"run {today.name!r} has no analyte {analyte!r}"
        elif mine.method_key != method:
            today_note = f"run {today.name!r} uses another method ({mine.method_key})"
        elif mine.value(quantity) is None:
            today_note = f"run {today.name!r} has no {words}"
        else:
            points.append(TrendPoint(today.key, f"{today.name} (not filed)", today.day, float(mine.value(quantity)),
                                     mine.accepted))
            today_index = len(points) - 1
    if quantity == "rf_rsd_percent" and not points:
        problem: str | None = (f"no filed run of {analyte} ({method}) has a response-factor %RSD: it is tracked "
                               "only for runs calibrated by the average response factor")
        result = None
    elif not points:
        problem, result = f"no filed run of {analyte} ({method}) has a {words}", None
    else:
        try:
            result, problem = trend(points, baseline, RULES), None
        except TrendError as exc:
            result, problem = None, str(exc)
    return History(analyte, method, keys, quantity, quantities, words, c_unit, y_unit, tuple(points), result, problem,
                   today_index, today_note, baseline)


@dataclass(frozen=True)
class Finding:
    """A rule one run breaks in one quantity's history; ``failing`` when its profile makes it a failure."""

    analyte: str
    quantity: str
    words: str
    value: float
    z: float
    rule_break: RuleBreak
    failing: bool
    provisional: bool

    @property
    def line(self) -> str:
        verdict = "FAIL (the profile makes this rule a failure)" if self.failing else "warning"
        limits = "; provisional limits" if self.provisional else ""
        return (f"{self.analyte}: {self.words} {figures(self.value, 6)} (z = {fixed(self.z, 2, plus=True)}{limits}): "
                f"{self.rule_break.words} — {verdict}")


@dataclass(frozen=True)
class TrendVerdict:
    """The rules a run breaks in the history of every quantity tracked for it, and what could not be judged."""

    findings: tuple[Finding, ...]
    notes: tuple[str, ...]
    baseline: Baseline

    @property
    def passed(self) -> bool:
        return not any(f.failing for f in self.findings)

    def lines(self) -> list[str]:
        if not self.findings:
            out = [f"trend rules: no rule broken (control limits from {self.baseline.words()})"]
        else:
            out = [f"trend rules (control limits from {self.baseline.words()}; {', '.join(RULES)}):"]
            out += [f"  {f.line}" for f in self.findings]
        return out + [f"  note: {n}" for n in self.notes]


def judge_run(archive: Archive, result: RunResult, baseline: Baseline | None = None) -> TrendVerdict:
    """The rules ``result``'s run breaks in the history of each of its tracked quantities."""
    baseline = baseline or Baseline()
    today = Today.of(result)
    failing = failing_rules(profile_mapping(result.run), f"profile {result.profile.id!r}")
    findings: list[Finding] = []
    notes: list[str] = []
    filed = set(archive.analytes())
    for mine in today.values:
        if mine.error is not None:
            notes.append(f"{mine.analyte}: not judged against its history: {mine.error}")
            continue
        if mine.analyte not in filed:
            notes.append(f"{mine.analyte}: no run of it is filed yet; there is no history to judge it against")
            continue
        methods = archive.methods(mine.analyte)
        if mine.method_key not in {m.method_key for m in methods}:
            notes.append(f"{mine.analyte}: no run is filed under its method ({mine.method_key}) yet")
            continue
        records = archive.records(mine.analyte, mine.method_key)
        quantities = [q for q in records.quantities if mine.value(q) is not None]
        unset: dict[str, list[str]] = {}
        for quantity in quantities:
            h = history(archive, mine.analyte, quantity, method=mine.method_key, baseline=baseline, today=today,
                        _known=(methods, records))
            if h.trend is None or h.today is None:
                unset.setdefault(h.problem or h.today_note, []).append(h.words)
                continue
            for b in h.breaks_at(h.today):
                findings.append(Finding(mine.analyte, quantity, h.words, h.points[h.today].value,
                                        float(h.trend.z[h.today]), b, b.rule in failing, h.trend.limits.provisional))
        notes += [f"{mine.analyte}: {', '.join(words)} not judged: {problem}" for problem, words in unset.items()]
    return TrendVerdict(tuple(findings), tuple(notes), baseline)


def profile_mapping(run: Run) -> dict[str, Any] | None:
    """The JSON of the run's acceptance profile: its own embedded profile, or the shipped one it names."""
    if run.settings.custom_profile is not None:
        return dict(run.settings.custom_profile)
    folder = resources.files("curvewright.core").joinpath("profiles")
    for entry in folder.iterdir():
        if entry.name.endswith(".json"):
            data = json.loads(entry.read_text(encoding="utf-8"))
            if data.get("id") == run.settings.acceptance_profile:
                return data
    return None
