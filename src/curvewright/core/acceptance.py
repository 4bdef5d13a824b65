"""Acceptance profiles: named, sourced rules for judging a calibration's standards and QC samples.

Profiles are data (JSON files in ``profiles/``, or the laboratory's own), never code. Each names its
source. A standard passes when |%RE| ≤ its tolerance (the lowest and highest non-zero levels may
have their own); a level passes when enough of its replicates pass; the calibration passes when
enough standards and levels pass. Standards of zero nominal concentration (blanks used as a point)
and anchor points (standards beyond the range of a logistic curve that fix its asymptotes) are not
judged, and excluded standards count as not passing — an exclusion never improves the
fraction of standards that pass (common practice in bioanalytical review) unless the profile says
``count_excluded_as_failing: false``.

Fractions are kept exact ("2/3", "3/4") so that 4 passing QCs out of 6 meet a two-thirds rule.
"""

from __future__ import annotations

import json
from dataclasses import replace
from fractions import Fraction
from functools import lru_cache
from importlib import resources
from pathlib import Path
from typing import TYPE_CHECKING, Any, Mapping, Sequence

import numpy as np

from .values import frozen_value
from ._arrays import FloatArray, as_finite_vector, frozen
from .errors import ProfileError
from .levels import Levels, group_levels
from .limit_digits import BOUNDARY
from .number_words import full_number
from .notation import entered

if TYPE_CHECKING:  # pragma: no cover
    from .curve_rules import CurveRules
    from .fitted_curve import FittedCurve

PROFILE_FORMAT = "curvewright-acceptance-profile/1"


@frozen_value
class StandardRules:
    tolerance_percent: float
    lowest_level_tolerance_percent: float
    highest_level_tolerance_percent: float
    min_fraction_passing: Fraction
    min_levels: int
    min_levels_passing: int
    min_fraction_passing_per_level: Fraction
    count_excluded_as_failing: bool = True
    failed_end_level: str = "narrow_range"
    """What a failing lowest or highest level does (:data:`FAILED_END_LEVEL_RULES`)."""


FAILED_END_LEVEL_RULES = ("narrow_range", "note")
"""What a failing lowest or highest non-zero level does: ``narrow_range`` (the default) narrows the
range results are reported in to the lowest and highest passing levels, which become the LLOQ and
the ULOQ, so that nothing beyond the remaining passing standards is reported as a number (ICH M10,
calibration curve: the next passing standard becomes the LLOQ or ULOQ; TNI 2016 Standard V1M4
§1.7.1.1: results outside the range of the remaining standards are not reported quantitatively;
both recalled, not re-read); ``note`` only says so in the verdict's reasons."""


@frozen_value
class QcRules:
    tolerance_percent: float
    min_fraction_passing: Fraction
    min_fraction_passing_per_level: Fraction


@frozen_value
class CheckRules:
    """Windows for the calibration checks, each in percent of the nominal (recovery within 100 ± window).

    A window left out (None) is one the profile does not set: a check of that kind cannot be judged,
    and the run's verdict says so rather than pass it. ``calibration_blank_below`` is what a
    calibration blank must stay below ("reporting_limit"), or None.
    """

    icv_tolerance_percent: float | None = None
    ccv_tolerance_percent: float | None = None
    low_level_tolerance_percent: float | None = None
    calibration_blank_below: str | None = None
    source: str = ""

    def window(self, kind: str) -> float | None:
        """The window in percent for a check of ``kind`` (a :class:`~.run.SampleKind` value)."""
        return {"icv": self.icv_tolerance_percent, "ccv": self.ccv_tolerance_percent,
                "check_standard": self.ccv_tolerance_percent,
                "low_level_check": self.low_level_tolerance_percent}.get(kind)


BELOW_LIMIT_RULES = ("censor", "estimate")
"""How a result between the detection limit and the reporting limit is reported: as "< limit"
(``censor``) or as the estimate with a qualifier that it is estimated (``estimate``)."""


@frozen_value
class ReportingRules:
    between_lod_and_reporting_limit: str = "censor"


@frozen_value
class AcceptanceVerdict:
    """Outcome of judging standards (or QC samples) against a profile.

    ``passing`` has one entry per item judged (False for zero-nominal standards, which are not
    judged: see ``judged``); ``reasons`` says, check by check, what passed and what did not.
    """

    profile: str
    passed: bool
    reasons: tuple[str, ...]
    passing: np.ndarray
    judged: np.ndarray
    tolerance_percent: FloatArray
    relative_error: FloatArray
    n_within: int
    """How many standards (QC samples) are within limits: the numerator of the fraction rule."""
    n_counted: int
    """How many the fraction rule counts: those judged, with the excluded standards when the profile
    counts them as not passing, the standards without a usable value, and the QC samples not judged.
    Every output that gives the count ("n_within of n_counted") reads these two, as the verdict does."""
    counted_excluded: int = 0
    """How many of ``n_counted`` are excluded standards counted as not passing."""
    counted_unusable: int = 0
    """How many of ``n_counted`` are standards without a usable value (or QC samples not judged)."""
    passing_range: tuple[float, float] | None = None
    """For standards: the lowest and highest passing non-zero levels, when the profile narrows the
    range to them (``failed_end_level: narrow_range``) and an end level fails; else None."""
    narrowing: str = ""
    """Why the range was narrowed, in words (empty when it was not)."""

    def count_words(self) -> str:
        """The fraction rule's count as the verdict counts it: "11 of 16 (5 excluded counted as not passing)"."""
        extra = [f"{self.counted_excluded} excluded counted as not passing"] if self.counted_excluded else []
        extra += [f"{self.counted_unusable} without a usable value counted as not passing"] if self.counted_unusable else []
        return f"{self.n_within} of {self.n_counted}" + (f" ({'; '.join(extra)})" if extra else "")


@frozen_value(eq=False)
class _Layout:
    """What judging depends on besides the back-calculated values (see :meth:`AcceptanceProfile._layout`);
    ``judged`` and ``tol`` are read-only and shared by the verdicts made from it."""

    judged: np.ndarray
    n_anchors: int
    nonzero_levels: np.ndarray
    tol: FloatArray
    limit: FloatArray
    n_judged: int


@frozen_value(eq=False)
class _Wording:
    """The words and exact fractions of a profile's standards rules, made once per judging
    (see :meth:`AcceptanceProfile._wording`)."""

    numerator: int
    denominator: int
    level_numerator: int
    level_denominator: int
    limits: str
    levels_passing: str


@frozen_value
class AcceptanceProfile:
    """A named set of acceptance rules with its source."""

    id: str
    name: str
    source: str
    standards: StandardRules
    qc: QcRules
    checks: CheckRules = CheckRules()
    reporting: ReportingRules = ReportingRules()
    caveat: str = ""
    """What the laboratory must confirm before relying on the profile (printed with every verdict)."""
    curve: CurveRules | None = None
    """Rules on the whole calibration (response-factor %RSD, r or r²; :mod:`.curve_rules`), or None."""

    # --- construction ---------------------------------------------------------------------------
    @classmethod
    def from_mapping(cls, data: Mapping[str, Any], origin: str = "profile") -> "AcceptanceProfile":
        """Build a profile from parsed JSON, naming the field of any problem."""
        if not isinstance(data, Mapping):
            raise ProfileError(f"{origin}: expected a JSON object at the top level.")
        if data.get("format") != PROFILE_FORMAT:
            raise ProfileError(f"{origin}: 'format' must be {PROFILE_FORMAT!r}, found {data.get('format')!r}.")
        text = {key: _text(data, key, origin) for key in ("id", "name", "source")}
        s = _section(data, "standards", origin)
        q = _section(data, "qc", origin)
        where = f"{origin} standards"
        standards = StandardRules(
            tolerance_percent=_percent(s, "tolerance_percent", where),
            lowest_level_tolerance_percent=_percent(s, "lowest_level_tolerance_percent", where),
            highest_level_tolerance_percent=_percent(s, "highest_level_tolerance_percent", where),
            min_fraction_passing=_fraction(s, "min_fraction_passing", where),
            min_levels=_count(s, "min_levels", where),
            min_levels_passing=_count(s, "min_levels_passing", where),
            min_fraction_passing_per_level=_fraction(s, "min_fraction_passing_per_level", where),
            count_excluded_as_failing=_flag(s, "count_excluded_as_failing", where),
            failed_end_level=_choice(s, "failed_end_level", where, FAILED_END_LEVEL_RULES),
        )
        where = f"{origin} qc"
        qc = QcRules(
            tolerance_percent=_percent(q, "tolerance_percent", where),
            min_fraction_passing=_fraction(q, "min_fraction_passing", where),
            min_fraction_passing_per_level=_fraction(q, "min_fraction_passing_per_level", where),
        )
        checks = CheckRules()
        if data.get("checks") is not None:
            c = _section(data, "checks", origin)
            where = f"{origin} checks"
            blank = c.get("calibration_blank_below")
            if blank not in (None, "reporting_limit"):
                raise ProfileError(f"{where}: 'calibration_blank_below' must be \"reporting_limit\" or null, found {blank!r}.")
            checks = CheckRules(
                icv_tolerance_percent=_optional_percent(c, "icv_tolerance_percent", where),
                ccv_tolerance_percent=_optional_percent(c, "ccv_tolerance_percent", where),
                low_level_tolerance_percent=_optional_percent(c, "low_level_tolerance_percent", where),
                calibration_blank_below=blank,
                source=_text(c, "source", where),
            )
        reporting = ReportingRules()
        if data.get("reporting") is not None:
            r = _section(data, "reporting", origin)
            rule = r.get("between_lod_and_reporting_limit", "censor")
            if rule not in BELOW_LIMIT_RULES:
                raise ProfileError(f"{origin} reporting: 'between_lod_and_reporting_limit' must be one of "
                                   f"{', '.join(BELOW_LIMIT_RULES)}, found {rule!r}.")
            reporting = ReportingRules(rule)
        caveat = data.get("caveat", "")
        if not isinstance(caveat, str):
            raise ProfileError(f"{origin}: 'caveat' must be text, found {caveat!r}.")
        curve = None
        if data.get("curve") is not None:  # the rules' module loaded only for a profile that has them
            from .curve_rules import CurveRules

            curve = CurveRules.from_mapping(data["curve"], f"{origin} curve")
        return cls(standards=standards, qc=qc, checks=checks, reporting=reporting, caveat=caveat, curve=curve, **text)

    def with_limits(
        self,
        tolerance_percent: float | None = None,
        lowest_level_tolerance_percent: float | None = None,
        highest_level_tolerance_percent: float | None = None,
        name: str | None = None,
    ) -> "AcceptanceProfile":
        """A copy with the laboratory's own tolerances; the name says the limits were changed."""
        changes = {
            k: float(v)
            for k, v in {
                "tolerance_percent": tolerance_percent,
                "lowest_level_tolerance_percent": lowest_level_tolerance_percent,
                "highest_level_tolerance_percent": highest_level_tolerance_percent,
            }.items()
            if v is not None
        }
        for key, value in changes.items():
            if not (0 < value < 1000):
                raise ProfileError(f"{key}: {value!r} must be a percentage above 0.")
        label = ", ".join(f"{k.replace('_', ' ')} {entered(v)}" for k, v in changes.items())
        return replace(
            self,
            standards=replace(self.standards, **changes),
            name=name or (f"{self.name} (laboratory limits: {label})" if label else self.name),
        )

    def to_mapping(self) -> dict[str, Any]:
        """The profile as JSON-ready data (the inverse of :meth:`from_mapping`)."""
        def plain(rules: object) -> dict[str, Any]:
            out = {k: (str(v) if isinstance(v, Fraction) else v) for k, v in vars(rules).items()}
            # the default rule for a failing end level is left out, so that the content hash of a
            # profile that does not name it (every profile written before it could be named) is unchanged
            if out.get("failed_end_level") == FAILED_END_LEVEL_RULES[0]:
                del out["failed_end_level"]
            return out

        out = {
            "format": PROFILE_FORMAT,
            "id": self.id,
            "name": self.name,
            "source": self.source,
            "standards": plain(self.standards),
            "qc": plain(self.qc),
            "checks": plain(self.checks),
            "reporting": plain(self.reporting),
            "caveat": self.caveat,
        }
        if self.curve is not None:  # left out otherwise, so the content hash of a profile without it is unchanged
            out["curve"] = self.curve.to_mapping()
        return out

    @property
    def sha256(self) -> str:
        """SHA-256 of the profile's rules in canonical JSON: which rules judged a run, by content."""
        import hashlib

        text = json.dumps(self.to_mapping(), sort_keys=True, ensure_ascii=False, separators=(",", ":"))
        return hashlib.sha256(text.encode("utf-8")).hexdigest()

    # --- judging --------------------------------------------------------------------------------
    def evaluate(self, cal: "FittedCurve", excluded: int = 0, unusable: int = 0) -> AcceptanceVerdict:
        """Judge the back-calculated standards of ``cal``.

        ``excluded`` is the number of non-zero standards the analyst excluded from this fit (they
        count as not passing when the profile says so); ``unusable`` the number with no usable value
        (censored or unreadable), which always count as not passing.
        """
        if excluded < 0 or unusable < 0:
            raise ProfileError("excluded/unusable: the number of standards left out cannot be negative.")
        return self._judge(cal, self._layout(cal), excluded, unusable)

    def evaluate_all(self, cals: "list[FittedCurve]") -> list[AcceptanceVerdict]:
        """:meth:`evaluate` of each of ``cals`` (no standard excluded or unusable), the same verdicts.

        The fits of the same standards (the same concentration array and levels, as the candidates of
        a model screen are) share their standards' layout, and are judged together: their
        back-calculated errors stacked, the standards passing and each level's count of them taken for
        all at once, the words of the rules made once. A profile with rules on the whole curve judges
        each fit by :meth:`evaluate`'s path, which those rules need."""
        out: list[AcceptanceVerdict | None] = [None] * len(cals)
        groups: dict[int, list[tuple[FloatArray, Levels, _Layout, list[int]]]] = {}
        wording = self._wording()
        for i, cal in enumerate(cals):
            anchors = getattr(cal, "anchors", None)
            if anchors is not None and anchors.any():
                out[i] = self._judge(cal, self._layout(cal), 0, 0, wording)
                continue
            # the same levels object and concentrations equal value for value (each model of a screen
            # keeps its own copy of the checked standards): the same layout
            x = cal.concentration
            kept_here = groups.setdefault(id(cal.levels), [])
            for kept in kept_here:
                if kept[0] is x or (kept[0].shape == x.shape and bool((kept[0] == x).all())):
                    break
            else:
                # the levels are kept beside their layout so that their id stays theirs
                kept = (x, cal.levels, self._layout(cal), [])
                kept_here.append(kept)
            kept[3].append(i)
        for _, levels, layout, members in (kept for kept_here in groups.values() for kept in kept_here):
            if self.curve is not None or len(members) == 1:
                for i in members:
                    out[i] = self._judge(cals[i], layout, 0, 0, wording)
                continue
            errors = np.stack([cals[i].relative_error for i in members])
            with np.errstate(invalid="ignore"):
                passing = frozen(layout.judged & np.isfinite(errors) & (np.abs(errors) <= layout.limit))
            n_pass = np.count_nonzero(passing, axis=1).tolist()
            k, n_levels = len(members), levels.n_levels
            rows, columns = np.nonzero(passing)
            per_level = np.bincount(rows * n_levels + levels.index[columns], minlength=k * n_levels)
            passing_per_level = per_level.reshape(k, n_levels)[:, layout.nonzero_levels].tolist()
            level_sizes = levels.count[layout.nonzero_levels].tolist()
            for row, i in enumerate(members):
                out[i] = self._verdict(cals[i], layout, passing[row], n_pass[row], passing_per_level[row],
                                       level_sizes, 0, 0, wording)
        return [verdict for verdict in out if verdict is not None]

    def _layout(self, cal: "FittedCurve") -> "_Layout":
        """Which standards are judged, the judged non-zero levels, and each standard's tolerance (%)."""
        rules = self.standards
        x = cal.concentration
        # anchor points (logistic curves) are fitted but never judged, and do not make a level
        anchors = getattr(cal, "anchors", None)
        n_anchors = 0 if anchors is None else int(np.count_nonzero(anchors))
        judged = (x != 0) & ~anchors if n_anchors else x != 0
        levels = cal.levels
        index = levels.index
        judged_levels = np.bincount(index[judged], minlength=levels.n_levels) > 0
        nonzero_levels = np.flatnonzero((levels.concentration != 0) & judged_levels)
        # the tolerance of each level (the lowest and highest judged levels have their own), then of each standard
        tol_by_level = np.full(levels.n_levels, rules.tolerance_percent)
        if nonzero_levels.size:
            tol_by_level[nonzero_levels[-1]] = rules.highest_level_tolerance_percent
            tol_by_level[nonzero_levels[0]] = rules.lowest_level_tolerance_percent
        tol = tol_by_level[index]
        return _Layout(frozen(judged), n_anchors, nonzero_levels, frozen(tol), tol + BOUNDARY,
                       int(np.count_nonzero(judged)))

    def _judge(
        self, cal: "FittedCurve", layout: "_Layout", excluded: int, unusable: int,
        wording: "_Wording | None" = None,
    ) -> AcceptanceVerdict:
        """The verdict on ``cal`` from its standards' :meth:`_layout`."""
        re = cal.relative_error
        levels = cal.levels
        nonzero_levels = layout.nonzero_levels
        with np.errstate(invalid="ignore"):
            passing = layout.judged & np.isfinite(re) & (np.abs(re) <= layout.limit)
        passing_per_level = np.bincount(levels.index[passing], minlength=levels.n_levels)[nonzero_levels]
        return self._verdict(
            cal, layout, frozen(passing), int(np.count_nonzero(passing)), passing_per_level.tolist(),
            levels.count[nonzero_levels].tolist(), excluded, unusable,
            self._wording() if wording is None else wording,
        )

    def _wording(self) -> "_Wording":
        """The parts of the verdict's words that depend on the profile's rules alone."""
        rules = self.standards
        required = rules.min_fraction_passing
        needed = Fraction(rules.min_fraction_passing_per_level)
        return _Wording(
            required.numerator, required.denominator, needed.numerator, needed.denominator,
            f" (±{entered(rules.tolerance_percent)} %, ±{entered(rules.lowest_level_tolerance_percent)} % at the lowest "
            f"level, ±{entered(rules.highest_level_tolerance_percent)} % at the highest); "
            f"{_percent_text(rules.min_fraction_passing)} required",
            f" levels pass (a level passes with {_percent_text(rules.min_fraction_passing_per_level)} of its "
            f"standards within limits); at least {rules.min_levels_passing} required",
        )

    def _verdict(
        self, cal: "FittedCurve", layout: "_Layout", passing: np.ndarray, n_pass: int,
        passing_per_level: list[int], level_sizes: list[int], excluded: int, unusable: int, wording: "_Wording",
    ) -> AcceptanceVerdict:
        """The verdict from the standards passing (``passing``, read-only; ``n_pass`` of them), and the
        count passing (``passing_per_level``) and of standards (``level_sizes``) of each judged level."""
        rules = self.standards
        n_anchors, nonzero_levels = layout.n_anchors, layout.nonzero_levels
        levels = cal.levels
        reasons: list[str] = []
        ok = True
        counted_excluded = excluded if rules.count_excluded_as_failing else 0
        n_judged = layout.n_judged + counted_excluded + unusable
        if n_judged == 0:
            raise ProfileError("no standard of non-zero concentration to judge.")
        # passing/judged ≥ the fraction required, compared exactly in integers
        frac_ok = n_pass * wording.denominator >= wording.numerator * n_judged
        ok &= frac_ok
        reasons.append(
            f"{'pass' if frac_ok else 'FAIL'}: {n_pass} of {n_judged} standards within limits{wording.limits}"
            + (f"; {excluded} excluded standard(s) counted as not passing" if counted_excluded else "")
            + (f"; {excluded} excluded standard(s) with recorded reasons not counted" if excluded and not counted_excluded else "")
            + (f"; {unusable} standard(s) without a usable value (not in the fit) counted as not passing: "
               "enter the value, or exclude the standard with a reason" if unusable else "")
            + (f"; {n_anchors} anchor point(s) fitted but not judged" if n_anchors else "")
        )
        # a level passes when passing/standards ≥ the fraction required, compared exactly in integers
        level_numerator, level_denominator = wording.level_numerator, wording.level_denominator
        level_pass = [a * level_denominator >= level_numerator * b
                      for a, b in zip(passing_per_level, level_sizes, strict=True)]
        n_levels = len(level_sizes)
        n_levels_pass = int(sum(level_pass))
        levels_ok = n_levels >= rules.min_levels
        ok &= levels_ok
        reasons.append(
            f"{'pass' if levels_ok else 'FAIL'}: {n_levels} non-zero concentration levels; at least "
            f"{rules.min_levels} required"
        )
        passing_levels_ok = n_levels_pass >= rules.min_levels_passing
        ok &= passing_levels_ok
        reasons.append(f"{'pass' if passing_levels_ok else 'FAIL'}: {n_levels_pass}{wording.levels_passing}"
                       + (f"; levels are judged on the standards in the fit: the {unusable} standard(s) without "
                          "a usable value are in no level, and are counted as not passing among the standards"
                          if unusable else ""))
        passing_range, narrowing = None, ""
        ends_fail = bool(level_pass) and (not level_pass[0] or not level_pass[-1])
        passed_levels = [j for j, ok_level in enumerate(level_pass) if ok_level]
        if ends_fail and rules.failed_end_level == "narrow_range" and passed_levels:
            concentration = levels.concentration[nonzero_levels]
            # the range's ends are the standards' own concentrations (a level's may differ slightly)
            x = cal.concentration
            low = float(x[levels.index == nonzero_levels[passed_levels[0]]].min())
            high = float(x[levels.index == nonzero_levels[passed_levels[-1]]].max())
            failed = [f"the {end} level ({full_number(float(concentration[j]))}) fails"
                      for end, j, fails in (("lowest", 0, not level_pass[0]),
                                            ("highest", len(level_pass) - 1, not level_pass[-1])) if fails]
            narrowing = (f"{' and '.join(failed)}; the reporting range is narrowed to the passing levels "
                         f"{full_number(low)}–{full_number(high)} (LLOQ–ULOQ): results outside it are not reported as numbers")
            passing_range = (low, high)
            reasons.append(f"note: {narrowing}")
        else:
            if level_pass and not level_pass[0]:
                reasons.append(
                    f"note: the lowest level ({entered(levels.concentration[nonzero_levels[0]])}) fails; the "
                    "quantitation range would have to start at the next passing level"
                )
            if len(level_pass) > 1 and not level_pass[-1]:
                reasons.append(
                    f"note: the highest level ({entered(levels.concentration[nonzero_levels[-1]])}) fails; the "
                    "quantitation range would have to end at the previous passing level"
                )
        if self.curve is not None:
            curve_ok, curve_reasons = self.curve.judge(cal)
            ok &= curve_ok
            reasons.extend(curve_reasons)
        return AcceptanceVerdict(
            profile=self.name,
            passed=bool(ok),
            reasons=tuple(reasons),
            passing=passing,
            judged=layout.judged,
            tolerance_percent=layout.tol,
            relative_error=cal.relative_error,
            n_within=n_pass,
            n_counted=n_judged,
            counted_excluded=counted_excluded,
            counted_unusable=unusable,
            passing_range=passing_range,
            narrowing=narrowing,
        )

    def evaluate_qc(self, nominal: object, found: object, not_judged: Sequence[tuple[str, str]] = (),
                    notes: Sequence[str] = ()) -> AcceptanceVerdict:
        """Judge QC samples: found concentrations against their nominal values (arrays of shape (k,)).

        ``not_judged`` names the QC samples that could not be judged, each with the reason (no nominal
        concentration, no reported number): each is counted among the QC samples as not passing, and
        the verdict fails, since a run is never accepted on a QC sample it could not judge. ``notes``
        are said after the verdict's reasons and do not change it. ``passing`` and ``relative_error``
        hold the judged QC samples only.
        """
        x = as_finite_vector(nominal, "QC nominal concentration", ProfileError, item="QC sample")
        y = as_finite_vector(found, "QC found concentration", ProfileError, item="QC sample")
        unjudged = len(not_judged)
        if x.size != y.size or (x.size == 0 and not unjudged and not notes):
            raise ProfileError(f"QC samples: {x.size} nominal values and {y.size} results; give one of each per QC.")
        bad = np.flatnonzero(x <= 0)
        if bad.size:
            raise ProfileError(f"QC nominal concentration: QC sample {int(bad[0]) + 1} has {entered(x[bad[0]])}; it must be above zero.")
        rules = self.qc
        re = 100.0 * (y - x) / x
        passing = np.abs(re) <= rules.tolerance_percent + BOUNDARY
        n_pass = int(passing.sum())
        n_all = x.size + unjudged
        reasons: list[str] = []
        ok = True
        if n_all:
            overall = Fraction(n_pass, n_all) >= rules.min_fraction_passing and not unjudged
            reasons.append(
                f"{'pass' if overall else 'FAIL'}: {n_pass} of {n_all} QC samples within ±{entered(rules.tolerance_percent)} %; "
                f"{_percent_text(rules.min_fraction_passing)} required"
                + (f"; {unjudged} QC sample(s) not judged, counted as not passing" if unjudged else "")
            )
            ok = overall
        else:
            reasons.append("note: no QC sample to judge")
        if x.size:
            levels = group_levels(x)
            for j, level in enumerate(levels.concentration):
                at = levels.index == j
                k_pass, k = int(passing[at].sum()), int(at.sum())
                level_ok = Fraction(k_pass, k) >= rules.min_fraction_passing_per_level
                ok &= level_ok
                reasons.append(
                    f"{'pass' if level_ok else 'FAIL'}: QC level {entered(level)}: {k_pass} of {k} within limits; "
                    f"{_percent_text(rules.min_fraction_passing_per_level)} required"
                )
        reasons += [f"FAIL: QC sample {sample_id!r} not judged: {reason}; the run cannot be accepted on a QC "
                    "sample it could not judge (review needed)" for sample_id, reason in not_judged]
        reasons += [f"note: {note}" for note in notes]
        return AcceptanceVerdict(
            profile=self.name,
            passed=bool(ok),
            reasons=tuple(reasons),
            passing=frozen(passing),
            judged=frozen(np.ones(x.size, dtype=bool)),
            tolerance_percent=frozen(np.full(x.size, rules.tolerance_percent)),
            relative_error=frozen(re),
            n_within=n_pass,
            n_counted=n_all,
            counted_unusable=unjudged,
        )


def available_profiles() -> tuple[str, ...]:
    """Ids of the profiles shipped with Curvewright."""
    ids = []
    for entry in resources.files(__package__).joinpath("profiles").iterdir():
        if entry.name.endswith(".json"):
            ids.append(json.loads(entry.read_text(encoding="utf-8"))["id"])
    return tuple(sorted(ids))


def load_profile(profile: str | Path) -> AcceptanceProfile:
    """Load a shipped profile by id (e.g. ``"ich-m10-chromatographic"``) or a profile file by path."""
    path = Path(profile)
    if isinstance(profile, str) and profile in _shipped():
        return _shipped()[profile]
    if path.suffix == ".json" and path.exists():
        try:
            data = json.loads(path.read_text(encoding="utf-8"))
        except (OSError, UnicodeDecodeError, json.JSONDecodeError) as exc:
            raise ProfileError(f"{path}: cannot read the profile ({exc}).") from None
        return AcceptanceProfile.from_mapping(data, str(path))
    for entry in resources.files(__package__).joinpath("profiles").iterdir():
        if entry.name.endswith(".json"):
            data = json.loads(entry.read_text(encoding="utf-8"))
            if data.get("id") == str(profile):
                return AcceptanceProfile.from_mapping(data, entry.name)
    raise ProfileError(
        f"acceptance profile: {str(profile)!r} is neither a profile file nor one of "
        f"{', '.join(available_profiles())}."
    )


@lru_cache(maxsize=1)
def _shipped() -> dict[str, AcceptanceProfile]:
    """The profiles shipped in the package, read once (they are immutable)."""
    out = {}
    for entry in resources.files(__package__).joinpath("profiles").iterdir():
        if entry.name.endswith(".json"):
            profile = AcceptanceProfile.from_mapping(json.loads(entry.read_text(encoding="utf-8")), entry.name)
            out[profile.id] = profile
    return out


def _section(data: Mapping[str, Any], key: str, origin: str) -> Mapping[str, Any]:
    value = data.get(key)
    if not isinstance(value, Mapping):
        raise ProfileError(f"{origin}: '{key}' must be an object of rules.")
    return value


def _text(data: Mapping[str, Any], key: str, origin: str) -> str:
    value = data.get(key)
    if not isinstance(value, str) or not value.strip():
        raise ProfileError(f"{origin}: '{key}' must be non-empty text.")
    return value


def _percent(data: Mapping[str, Any], key: str, where: str) -> float:
    value = data.get(key)
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not (0 < value < 1000):
        raise ProfileError(f"{where}: '{key}' must be a percentage above 0, found {value!r}.")
    return float(value)


def _optional_percent(data: Mapping[str, Any], key: str, where: str) -> float | None:
    return None if data.get(key) is None else _percent(data, key, where)


def _count(data: Mapping[str, Any], key: str, where: str) -> int:
    value = data.get(key)
    if isinstance(value, bool) or not isinstance(value, int) or value < 0:
        raise ProfileError(f"{where}: '{key}' must be a whole number ≥ 0, found {value!r}.")
    return value


def _flag(data: Mapping[str, Any], key: str, where: str) -> bool:
    value = data.get(key)
    if not isinstance(value, bool):
        raise ProfileError(f"{where}: '{key}' must be true or false, found {value!r}.")
    return value


def _choice(data: Mapping[str, Any], key: str, where: str, allowed: tuple[str, ...]) -> str:
    """An optional choice among ``allowed`` (the first when the key is left out)."""
    value = data.get(key, allowed[0])
    if value not in allowed:
        raise ProfileError(f"{where}: '{key}' must be one of {', '.join(allowed)}, found {value!r}.")
    return value


def _fraction(data: Mapping[str, Any], key: str, where: str) -> Fraction:
    value = data.get(key)
    try:
        if isinstance(value, bool):
            raise TypeError
        fraction = Fraction(value) if isinstance(value, str) else Fraction(str(value))
    except (TypeError, ValueError, ZeroDivisionError):
        raise ProfileError(f"{where}: '{key}' must be a fraction such as \"3/4\" or 0.75, found {value!r}.") from None
    if not (0 <= fraction <= 1):
        raise ProfileError(f"{where}: '{key}' must lie between 0 and 1, found {value!r}.")
    return fraction


@lru_cache(maxsize=64)
def _percent_text(fraction: Fraction) -> str:
    if fraction == 1:
        return "all"
    if fraction.denominator in (3, 6):
        return f"at least {fraction.numerator}/{fraction.denominator}"
    return f"at least {entered(float(fraction) * 100)} %"
