"""How each result is reported against the calibrated range and the limits.

The calibrated range runs from the lowest to the highest non-zero standard in the fit, the LLOQ and
the ULOQ: a zero standard (a blank used as a point of the curve) does not stretch it. The
reporting limit is the larger of the LLOQ and the computed LOQ (when the limits method gives one);
which one stands is said in a note. Ranges and limits apply to the solution measured, so a
diluted sample's limits are multiplied by its dilution factor.

Each result has exactly one status, and its words, short words and flags all follow from it, so
that no sample is called "inside the calibrated range" and "below the LOQ" at once:

========================  =========================================================================
``IN_RANGE``              reporting limit ≤ x̂ ≤ ULOQ: reported as the number
``ABOVE_RANGE``           x̂ > ULOQ: reported as "> ULOQ", with the dilution that brings it to the
                          middle of the range, (LLOQ + ULOQ)/2, for the re-assay; also a response the
                          curve never gives, on the highest standard's side (no number, no factor)
``BELOW_REPORTING_LIMIT`` LOD ≤ x̂ < reporting limit: "< reporting limit", or, where the profile
                          allows it (``estimate``), the number marked as estimated; also a response
                          the curve never gives, on the lowest standard's side (no number)
``BELOW_LOD``             x̂ < LOD: "< reporting limit" (with ``estimate``: "< LOD")
``NOT_QUANTIFIED``        no numeric result (censored, unreadable, or a response the curve never
                          gives whose side of the range is not known)
``NOT_REPORTABLE``        a number exists but may not be reported (not bracketed by passing
                          calibration checks); the reason says why
========================  =========================================================================

Sources: reporting study-sample results below the LLOQ as below it, and diluting samples above the
ULOQ into the range rather than extrapolating, is the practice ICH M10 sets for study samples and
common practice elsewhere (from memory, not re-read); the dilution target in mid-range and the 1-2-5
series of suggested factors are common practice.
"""

from __future__ import annotations

import math
from dataclasses import replace
from enum import Enum
from typing import Callable, Iterator, Sequence

import numpy as np

from .values import frozen_value
from .number_words import full_number
from .inverse import QuantFlag
from .notation import computed, computed_within, entered, figures, written
from .rounding import RoundingRule


_QUALIFIERS = QuantFlag.AMBIGUOUS_ROOT | QuantFlag.UNBOUNDED_INTERVAL | QuantFlag.TURNING_POINT
"""The engine's flags said beside a result's status, in words and short words."""
_NO_NUMBER = QuantFlag.NO_SOLUTION | QuantFlag.BEYOND_TURNING_POINT
"""The engine's flags of a result from which no concentration is read: the curve never gives the
response (for a response beyond a quadratic's turning point, the engine's stand-in estimate, the
vertex, is not a result)."""
BEYOND_TURNING_POINT_ADVICE = (
    "no number is reported; re-assay the sample diluted (no dilution factor can be worked out from a response "
    "the curve never reaches: choose one that brings the response well inside the standards' responses)")
"""What a result beyond the curve's turning point asks for (common practice: dilute into the range)."""


class ReportStatus(str, Enum):
    IN_RANGE = "in_range"
    ABOVE_RANGE = "above_range"
    BELOW_REPORTING_LIMIT = "below_reporting_limit"
    BELOW_LOD = "below_lod"
    NOT_QUANTIFIED = "not_quantified"
    NOT_REPORTABLE = "not_reportable"


NO_RESPONSE = "no response recorded"
"""Why a sample has no number when no response was entered for it (its cell left empty)."""


def _nothing_recorded(reason: str) -> bool:
    """The reason a result has no number is only that no response was recorded ("no response
    recorded", or "replicate 1: no response recorded; replicate 2: …")."""
    return bool(reason) and all(part.split(": ", 1)[-1] == NO_RESPONSE for part in reason.split("; "))


@frozen_value
class ReportingRange:
    """The range and limits results are reported against, in the concentration unit of the standards
    (the solution measured). ``basis`` says which limit is the reporting limit: "LLOQ" or "LOQ"."""

    lloq: float
    uloq: float
    lod: float | None
    loq: float | None
    reporting_limit: float
    basis: str
    note: str
    narrowing: str = ""
    """Why the range is narrower than the standards' (a failing end level, under the profile's
    ``failed_end_level: narrow_range``), in words; empty when it is not narrowed."""
    standards_range: tuple[float, float] | None = None
    """The lowest and highest non-zero standards in the fit, when the range was narrowed (else None:
    the range is theirs)."""
    critical_value: float | None = None
    """ISO 11843-2 limits: the critical value of the net concentration x_c, below which a result is
    "not detected" (``lod`` then holds the minimum detectable value x_d); None for other limits,
    whose LOD is the detection threshold."""
    critical_replicates: int = 1
    """ISO 11843-2 limits: the number K of readings of a test sample that x_c and x_d are for (they
    shrink with K: q = √(1/K + 1/N + x̄²/Sxx)); 1 for other limits."""

    @property
    def detection_limit(self) -> float | None:
        """The concentration below which a result is not detected: x_c for ISO 11843-2 limits, else the LOD."""
        return self.critical_value if self.critical_value is not None else self.lod

    @property
    def detection_label(self) -> str:
        """The name of :attr:`detection_limit`: "x_c" (for one reading; "x_c for 3 readings" for a
        sample read three times) or "LOD"."""
        if self.critical_value is None:
            return "LOD"
        return "x_c" if self.critical_replicates == 1 else f"x_c for {self.critical_replicates} readings"

    @property
    def not_detected_words(self) -> str:
        """What a result below :attr:`detection_limit` is, in words."""
        return (f"below the critical value {self.detection_label}: not detected (ISO 11843-2)"
                if self.critical_value is not None else "below the detection limit (LOD)")

    @property
    def middle(self) -> float:
        """The concentration a diluted re-assay aims at: the middle of the calibrated range."""
        return 0.5 * (self.lloq + self.uloq)


def reporting_range(concentrations: object, lod: float | None, loq: float | None, unit: str = "",
                    passing_range: tuple[float, float] | None = None, narrowing: str = "",
                    critical_value: float | None = None, rule: RoundingRule | None = None,
                    critical_replicates: int = 1) -> ReportingRange:
    """The calibrated range of the standards in the fit and the reporting limit.

    ``concentrations`` are the nominal concentrations of the standards in the fit; ``lod`` and
    ``loq`` the computed limits (None where the method gives none). ``passing_range`` (with the
    words ``narrowing`` saying why) narrows the range to the lowest and highest passing levels
    when an end level fails the acceptance profile (:attr:`.acceptance.AcceptanceVerdict.passing_range`):
    they become the LLOQ and the ULOQ. ``critical_value`` is the ISO 11843-2 critical value x_c
    (``lod`` then the minimum detectable value x_d): a result below x_c is not detected, so where x_c
    lies above the LLOQ (and the standard defines no LOQ) it is the reporting limit; ``critical_replicates``
    is the number K of readings of a test sample that x_c and x_d are for. The note writes
    the computed limits by ``rule`` (the run's rounding rule; without one, to 4 significant figures)
    and the standards' concentrations as entered (:mod:`.notation`).
    """
    values = [float(c) for c in concentrations]  # type: ignore[attr-defined]
    positive = [c for c in values if c > 0]
    if not positive:
        raise ValueError("no standard of non-zero concentration: the calibrated range is not defined")
    lloq, uloq = min(positive), max(positive)
    standards_range = None
    if passing_range is not None and passing_range != (lloq, uloq):
        standards_range = (lloq, uloq)
        lloq, uloq = passing_range
    else:
        narrowing = ""
    u = f" {unit}" if unit else ""
    shown = (lambda v: computed(v, rule)) if rule is not None else (lambda v: figures(v, 4))
    lowest = "lowest passing standard" if standards_range and lloq != standards_range[0] else "lowest standard"
    if loq is not None and math.isfinite(loq) and loq > lloq:
        return ReportingRange(lloq, uloq, lod, loq, loq, "LOQ",
                              f"the computed LOQ ({shown(loq)}{u}) lies above the {lowest} ({entered(lloq)}{u}): the "
                              "reporting limit is the LOQ, and results between them are below it",
                              narrowing, standards_range, critical_value, critical_replicates)
    if critical_value is not None and math.isfinite(critical_value) and critical_value > lloq:
        x_c = "x_c" if critical_replicates == 1 else f"x_c for {critical_replicates} readings"
        return ReportingRange(lloq, uloq, lod, loq, critical_value, x_c,
                              f"the critical value {x_c} ({shown(critical_value)}{u}, ISO 11843-2) lies above the {lowest} "
                              f"({entered(lloq)}{u}): a result below it is not detected, so the reporting limit is x_c",
                              narrowing, standards_range, critical_value, critical_replicates)
    note = (f"the computed LOQ ({shown(loq)}{u}) lies below the {lowest} ({entered(lloq)}{u}): the reporting limit is "
            f"the LLOQ, the {lowest}" if loq is not None and math.isfinite(loq)
            else f"the reporting limit is the LLOQ, the {lowest} (no LOQ was computed)")
    return ReportingRange(lloq, uloq, lod, loq, lloq, "LLOQ", note, narrowing, standards_range, critical_value,
                          critical_replicates)


@frozen_value
class ReportedValue:
    """What is reported for one result: its status, the text that stands for the value, the flags in
    words and in short words, the flag bits that agree with them, and for a result above the range the
    total dilution factor suggested for the re-assay."""

    status: ReportStatus
    text: str
    words: str
    short: str
    flags: QuantFlag | None
    suggested_dilution: float | None = None


def report_value(
    estimate: float | None,
    dilution: float,
    flags: QuantFlag | None,
    rng: ReportingRange,
    rule: RoundingRule,
    *,
    unit: str = "",
    below_limit: str = "censor",
    not_quantified: str = "",
    not_reportable: str = "",
    interval: tuple[float | None, float | None] = (None, None),
) -> ReportedValue:
    """Report one result: ``estimate`` is the concentration in the solution measured (before the
    dilution factor), ``flags`` the quantitation flags of the engine (for the no-solution, two-root and
    unbounded-interval qualifiers), ``interval`` the ends of its interval in the same terms as
    ``estimate`` (the number is never shown more coarsely than they support:
    :meth:`.RoundingRule.text_within`). ``not_quantified`` gives the reason when there is no number;
    ``not_reportable`` the reason a number may not be reported."""
    extra = flags & _QUALIFIERS if flags is not None else QuantFlag(0)
    if estimate is not None and _below_min_detectable(estimate, rng):
        extra |= QuantFlag.BELOW_MIN_DETECTABLE
    qualifier_words, qualifier_short = extra.words_for(rng.critical_replicates)
    qualifiers = [qualifier_words] if extra else []
    short_qualifiers = [qualifier_short] if extra else []
    if estimate is None or (flags is not None and flags & _NO_NUMBER):
        reason = not_quantified or (
            (flags & (QuantFlag.NO_SOLUTION | QuantFlag.BEYOND_ASYMPTOTE | QuantFlag.BEYOND_TURNING_POINT)).words
            if flags is not None else "no numeric result"
        )
        if flags is not None and flags & _BEYOND_THE_CURVE and flags & _SIDE:
            # the side of the range a response the curve never gives lies on (the replicates' notes said beside)
            value = (_below_the_curve if QuantFlag.BELOW_RANGE in flags else _above_the_curve)(
                flags, dilution, rng, rule, unit)
            return replace(value, words=f"{value.words}; {not_quantified}") if not_quantified else value
        if not not_quantified and flags is not None and QuantFlag.BEYOND_TURNING_POINT in flags:
            reason += f"; {BEYOND_TURNING_POINT_ADVICE}"
        censored = reason.startswith((CENSORED_BELOW, CENSORED_BOUND))
        if _nothing_recorded(reason):  # said as such in every output, not as a failure to quantify
            return ReportedValue(ReportStatus.NOT_QUANTIFIED, NO_RESPONSE, reason, "no response", flags)
        return ReportedValue(ReportStatus.NOT_QUANTIFIED, "not quantified" if not censored else censored_text(reason),
                             reason, "censored" if censored else "not quantified", flags)
    bits = QuantFlag(0)
    if estimate < rng.lloq:
        bits |= QuantFlag.BELOW_RANGE
    elif estimate > rng.uloq:
        bits |= QuantFlag.ABOVE_RANGE
    else:
        bits |= QuantFlag.IN_RANGE if estimate >= rng.reporting_limit else QuantFlag(0)
    if estimate < rng.reporting_limit:
        bits |= QuantFlag.BELOW_LOQ
    detection = rng.detection_limit
    if detection is not None and estimate < detection:
        bits |= QuantFlag.BELOW_LOD
    bits |= extra
    if not_reportable:
        return ReportedValue(ReportStatus.NOT_REPORTABLE, "not reportable",
                             "; ".join([f"not reportable: {not_reportable}"] + qualifiers),
                             ", ".join(["not reportable"] + short_qualifiers), bits)
    return _numeric_value(estimate, dilution, bits, (qualifiers, short_qualifiers),
                          _dilution_texts(dilution, rng, rule, unit), lambda: computed_within(estimate * dilution, *_diluted(interval, dilution), rule), rng,
                          unit, below_limit == "estimate", detection is not None and estimate < detection)


_BEYOND_THE_CURVE = QuantFlag.NO_SOLUTION | QuantFlag.BEYOND_TURNING_POINT | QuantFlag.BEYOND_ASYMPTOTE
"""The engine's flags of a response the curve never gives on its calibrated branch."""
_SIDE = QuantFlag.BELOW_RANGE | QuantFlag.ABOVE_RANGE
"""The side of the calibrated range such a response lies on, where the analysis has worked it out."""


def _never_given(flags: QuantFlag) -> str:
    """Why the curve gives no concentration for the response, in words: beyond its turning point,
    beyond an asymptote, or beyond every response it gives within its prediction band."""
    if QuantFlag.BEYOND_TURNING_POINT in flags:
        return "the response lies beyond the curve's turning point, where no concentration gives it"
    if QuantFlag.BEYOND_ASYMPTOTE in flags:
        return "the response lies beyond an asymptote of the curve, which no concentration reaches"
    return "the curve never gives the response on its calibrated branch, not even within its prediction band"


def _below_the_curve(flags: QuantFlag, dilution: float, rng: ReportingRange, rule: RoundingRule,
                     unit: str) -> ReportedValue:
    """A response the curve never gives, on the side of concentrations below the lowest standard (below the
    lowest response of a rising curve, above the highest of a falling one): every concentration it could
    stand for lies below the calibrated range, so it is reported below the reporting limit, with no number
    and no interval; diluting could not bring it into the range (ICH M10 practice for results below the
    LLOQ, from memory; common practice elsewhere)."""
    _, limit_text, _, _, _ = _dilution_texts(dilution, rng, rule, unit)
    words = (f"below the reporting limit of {limit_text}: {_never_given(flags)}; it lies on the side of the "
             "lowest standard, so the concentration lies below the calibrated range and no number is read (a "
             "re-assay diluted would not help)")
    return ReportedValue(ReportStatus.BELOW_REPORTING_LIMIT, f"< {limit_text}", words,
                         f"< {rng.basis}, {(flags & _BEYOND_THE_CURVE).short_words}", flags)


def _above_the_curve(flags: QuantFlag, dilution: float, rng: ReportingRange, rule: RoundingRule,
                     unit: str) -> ReportedValue:
    """A response the curve never gives, on the side of concentrations above the highest standard: reported
    above the ULOQ with no number, and a re-assay diluted is asked (without a dilution factor, none can be
    worked out from a response the curve never gives; common practice: dilute into the range)."""
    diluted, _, uloq_text, _, uloq_words = _dilution_texts(dilution, rng, rule, unit)
    words = (f"above the calibrated range (ULOQ {uloq_words}): {_never_given(flags)}; it lies on the side of "
             f"the highest standard: {BEYOND_TURNING_POINT_ADVICE}")
    return ReportedValue(ReportStatus.ABOVE_RANGE, f"> {uloq_text} (ULOQ{diluted})", words,
                         f"> ULOQ, {(flags & _BEYOND_THE_CURVE).short_words}", flags)


CENSORED_BELOW = "reported as censored: "
"""How the reason of a censored result begins when it states a non-detect or a concentration below the
reporting limit (what a calibration blank is asked to show)."""
CENSORED_BOUND = "reported as a censored bound: "
"""How the reason of any other censored result that is reported as a statement begins ("> 50 µg/L")."""
_EXPLAINED = " — "


def censored_text(reason: str) -> str:
    """What stands for a censored result: the statement of its reason, before its explanation
    ("reported as censored: < 0.500 µg/L (LLOQ) — …; replicate 1: …" gives "< 0.500 µg/L (LLOQ)")."""
    rest = reason.split(": ", 1)[-1]
    return rest.split(_EXPLAINED, 1)[0].split("; ", 1)[0]


def censored_word_reason(word: str) -> str:
    """The reason of a result whose readings are all the one censoring word ("ND", "BLQ", ">ULOQ"…):
    the word stands for the result, as entered; only words of a result above the range (">ULOQ")
    are not a non-detect."""
    start = CENSORED_BOUND if word.startswith(">") else CENSORED_BELOW
    return (f"{start}{word}{_EXPLAINED}the word entered for the response, reported as entered "
            "(no concentration is read from it)")


def censored_bound_reason(sign: str, response_text: str, bound: float, increasing: bool, dilution: float,
                          rng: ReportingRange, rule: RoundingRule, unit: str = "", response_unit: str = "") -> str:
    """Why, and as what, a sample whose response was entered as a limit ("<20", ">2500") is reported.

    The limit is a RESPONSE. Read through the curve it gives ``bound``, the concentration in the
    solution measured (NaN where the curve never gives that response). On a rising curve a response
    below the limit means a concentration below ``bound`` (on a falling curve, above it), and the
    dilution factor multiplies it: the sample is reported as "< bound × dilution". Where the bound
    lies below the reporting limit the sample is reported as below that limit ("< 0.500 µg/L (LLOQ)"),
    as a measured result there is; where it lies above the ULOQ, "> ULOQ". A bound that says nothing
    within the calibrated range (an upper bound above the ULOQ, a lower bound below the LLOQ) or that
    the curve cannot give is not reported: the reason (a "not quantified: …" text) says why. The
    returned reason begins with :data:`CENSORED_BELOW` or :data:`CENSORED_BOUND` when a statement is
    reported (:func:`censored_text` gives it).
    """
    u = f" {unit}" if unit else ""
    ru = f" {response_unit}" if response_unit else ""
    diluted, limit_text, uloq_text, _, _ = _dilution_texts(dilution, rng, rule, unit)
    as_entered = f"the response was entered as {response_text}{ru}, a limit of the response, not a concentration"
    if not math.isfinite(bound):
        return f"not quantified: {as_entered}, and the curve never gives the response {response_text[1:].strip()}{ru}"
    below = (sign == "<") == increasing  # the concentration lies below the bound
    read = (f"{as_entered}; read through the curve it gives {computed(bound, rule)}{u} in the solution measured"
            + (f" ({computed(bound * dilution, rule)}{u} with the dilution factor {entered(dilution)})" if dilution != 1 else ""))
    if below and bound < rng.reporting_limit:
        return f"{CENSORED_BELOW}< {limit_text}{_EXPLAINED}{read}, below the reporting limit"
    if below and bound > rng.uloq:
        return (f"not quantified: {read}, above the calibrated range (ULOQ {uloq_text}): a bound read beyond the "
                "standards is not reported; re-assay diluted")
    if not below and bound > rng.uloq:
        return f"{CENSORED_BOUND}> {uloq_text} (ULOQ{diluted}){_EXPLAINED}{read}, above the calibrated range"
    if not below and bound < rng.lloq:
        return (f"not quantified: {read}, below the calibrated range (LLOQ {computed(rng.lloq * dilution, rule)}{u}): "
                "a lower bound there says nothing of the concentration")
    outward = written(_outward(rule, bound * dilution, below), significant=rule.digits if rule.kind == "significant" else None)
    statement = f"{'<' if below else '>'} {outward}{u}"
    return f"{CENSORED_BOUND}{statement}{_EXPLAINED}{read}"


def _outward(rule: RoundingRule, value: float, up: bool) -> str:
    """``value`` rounded under ``rule`` away from the inside of a bound: up for an upper bound, down
    for a lower one, so that the statement shown is never stricter than the one worked out
    (< 2.9917 is shown as "< 3.00", not "< 2.99"; < 123,456.7 as "< 124000")."""
    text = rule.text(value)
    try:
        shown = float(text)
    except ValueError:
        return text
    if not math.isfinite(value) or value == 0 or ((shown >= value) if up else (shown <= value)):
        return text
    if rule.kind == "significant":
        step = 10.0 ** (math.floor(math.log10(abs(value))) - rule.digits + 1)
    else:
        step = 10.0 ** -rule.digits
    steps = math.ceil(value / step) if up else math.floor(value / step)
    return rule.text(steps * step)


def _diluted(interval: tuple[float | None, float | None], dilution: float) -> tuple[float | None, float | None]:
    """The ends of an interval times the dilution factor (None, or NaN, stays None)."""
    return tuple(None if v is None or v != v else v * dilution for v in interval)  # type: ignore[return-value]


def _dilution_texts(dilution: float, rng: ReportingRange, rule: RoundingRule,
                    unit: str) -> tuple[str, str, str, str, str]:
    """The texts of a result that depend only on its dilution factor: the dilution itself (empty at 1),
    the reporting limit with its basis, the ULOQ and the LOD, each in the sample's own terms, and the
    ULOQ as the calibration has it and as the sample's (at 1: "50 µg/L"; at 10: "50 µg/L × dilution 10
    = 500 µg/L", so that no number reads as multiplied again)."""
    u = f" {unit}" if unit else ""
    diluted = f" × dilution {entered(dilution)}" if dilution != 1 else ""
    uloq = f"{computed(rng.uloq * dilution, rule)}{u}"
    return (diluted, f"{computed(rng.reporting_limit * dilution, rule)}{u} ({rng.basis}{diluted})", uloq,
            f"{computed(rng.detection_limit * dilution, rule)}{u}" if rng.detection_limit is not None else "",
            f"{computed(rng.uloq, rule)}{u}{diluted} = {uloq}" if diluted else uloq)


def _numeric_value(
    estimate: float, dilution: float, flags: QuantFlag, qualifiers: tuple[list[str], list[str]],
    texts: tuple[str, str, str, str, str], number: Callable[[], str], rng: ReportingRange, unit: str, estimated: bool,
    below_lod: bool,
) -> ReportedValue:
    """What is reported for a result with a number (and no reason it may not be reported): the words of
    every status are written here alone. ``texts`` are :func:`_dilution_texts` of its dilution,
    ``number`` gives the rounded text of the reported value (asked only when it is shown), ``estimated``
    says that results between the LOD and the reporting limit are shown as estimated numbers."""
    u = f" {unit}" if unit else ""
    diluted, limit_text, uloq_text, lod_text, uloq_words = texts
    words_q, short_q = qualifiers
    if estimate > rng.uloq:
        total = dilution * _one_two_five(estimate / rng.middle)
        words = (f"above the calibrated range (ULOQ {uloq_words}): not reported as a "
                 f"number; re-assay at a dilution of ×{entered(total)} to bring it to mid-range")
        return ReportedValue(ReportStatus.ABOVE_RANGE, f"> {uloq_text} (ULOQ{diluted})",
                             "; ".join([words] + words_q), ", ".join(["> ULOQ"] + short_q), flags, total)
    if estimate < rng.reporting_limit:
        status = ReportStatus.BELOW_LOD if below_lod else ReportStatus.BELOW_REPORTING_LIMIT
        if estimated:
            if below_lod:
                label = rng.detection_label
                text, words, short = (f"< {lod_text} ({label}{diluted})",
                                      rng.not_detected_words + ("" if rng.critical_value is not None else ": not detected"),
                                      f"< {label}")
            else:
                text = f"{number()}{u} (estimated, below {rng.basis})"
                words = f"estimated: between the detection limit and the reporting limit of {limit_text}"
                short = "estimated"
        else:
            text = f"< {limit_text}"
            words = f"below the reporting limit of {limit_text}" + (f"; {rng.not_detected_words}" if below_lod else "")
            short = f"< {rng.basis}" + (f", < {rng.detection_label}" if below_lod and rng.basis != rng.detection_label
                                        else "")
        return ReportedValue(status, text, "; ".join([words] + words_q), ", ".join([short] + short_q), flags)
    return ReportedValue(ReportStatus.IN_RANGE, number(), "; ".join(["inside the calibrated range"] + words_q),
                         ", ".join(["in range"] + short_q), flags)


def _below_min_detectable(estimate: float, rng: ReportingRange) -> bool:
    """ISO 11843-2 limits: the result is detected (at or above x_c) but below the minimum detectable value x_d."""
    return (rng.critical_value is not None and rng.lod is not None
            and rng.critical_value <= estimate < rng.lod)


def _one_two_five(factor: float) -> float:
    """The smallest dilution of the 1-2-5 series (2, 5, 10, 20, 50, …) at least ``factor``."""
    if not math.isfinite(factor) or factor <= 1:
        return 2.0
    decade = 10.0 ** math.floor(math.log10(factor))
    for step in (1.0, 2.0, 5.0, 10.0):
        if step * decade >= factor * (1 - 1e-12):
            return step * decade
    return 10.0 * decade


class FlagBits:
    """The engine's flags of many results as bits (an integer array, -1 where a result has none): read
    one at a time, each is its :class:`~.inverse.QuantFlag` (or None), as the sequence of flags it
    stands for; :func:`report_columns` reads the bits themselves, without a flag object per result."""

    __slots__ = ("bits",)

    def __init__(self, bits: object) -> None:
        self.bits = np.asarray(bits, dtype=np.int64).reshape(-1)

    def __len__(self) -> int:
        return self.bits.size

    def __getitem__(self, i: int) -> QuantFlag | None:
        b = int(self.bits[i])
        return None if b < 0 else QuantFlag(b)

    def __iter__(self) -> Iterator[QuantFlag | None]:
        return (None if b < 0 else QuantFlag(b) for b in self.bits.tolist())


_NO_NUMBER_BITS = int(_NO_NUMBER)
_QUALIFIER_BITS = int(_QUALIFIERS)


@frozen_value(eq=False)
class ReportedColumns:
    """What :func:`report_value` gives for many results, as columns (one entry per result): the
    statuses, texts, words and short words, the flag bits that agree with them (-1: None) and the
    suggested dilutions (NaN: None)."""

    statuses: list[ReportStatus]
    texts: list[str]
    words: list[str]
    shorts: list[str]
    bits: np.ndarray
    suggested_dilution: np.ndarray

    def values(self) -> list[ReportedValue]:
        """One :class:`ReportedValue` per result."""
        flag_of: dict[int, QuantFlag | None] = {-1: None}
        out = []
        for status, text, words, short, b, suggested in zip(self.statuses, self.texts, self.words, self.shorts,
                                                            self.bits.tolist(), self.suggested_dilution.tolist()):
            flag = flag_of.get(b)
            if flag is None and b != -1:
                flag = flag_of[b] = QuantFlag(b)
            out.append(ReportedValue(status, text, words, short, flag, None if suggested != suggested else suggested))
        return out


def report_values(
    estimates: object,
    dilutions: object,
    flags: Sequence[QuantFlag | None],
    rng: ReportingRange,
    rule: RoundingRule,
    *,
    unit: str = "",
    below_limit: str = "censor",
    not_quantified: Sequence[str] | None = None,
) -> list[ReportedValue]:
    """:func:`report_value` for many results at once, equal to it result by result (see
    :func:`report_columns`)."""
    return report_columns(estimates, dilutions, flags, rng, rule, unit=unit, below_limit=below_limit,
                          not_quantified=not_quantified).values()


def report_columns(
    estimates: object,
    dilutions: object,
    flags: Sequence[QuantFlag | None] | FlagBits,
    rng: ReportingRange,
    rule: RoundingRule,
    *,
    unit: str = "",
    below_limit: str = "censor",
    not_quantified: Sequence[str] | None = None,
    lowers: object = None,
    uppers: object = None,
) -> ReportedColumns:
    """:func:`report_value` for many results at once, as columns, equal to it result by result.

    ``estimates`` are the concentrations in the solution measured (NaN where there is none),
    ``dilutions`` the dilution factors, ``flags`` the engine's flags of each result and
    ``not_quantified`` the reason of each result without a number (None: none given), ``lowers`` and
    ``uppers`` the ends of each result's interval in the terms of ``estimates`` (NaN or None: none); the flags may
    be given as :class:`FlagBits`, read without a flag object per result. The status
    and flag bits of the numeric results are worked out over arrays. A result's words, short words
    and (but for the rounded number) text depend only on its status, qualifiers, dilution factor and
    whether it lies below the LOD, except above the range (the suggested dilution): each such group's
    are made once, by :func:`_numeric_value` itself, and the rounded numbers in one pass
    (:meth:`.RoundingRule.texts_within`); a result above the range is reported one at a time.
    """
    est = np.asarray(estimates, dtype=float).reshape(-1)
    dil = np.asarray(dilutions, dtype=float).reshape(-1)
    n = est.size
    low = np.full(n, np.nan) if lowers is None else np.asarray(lowers, dtype=float).reshape(-1)
    high = np.full(n, np.nan) if uppers is None else np.asarray(uppers, dtype=float).reshape(-1)
    if dil.size != n or len(flags) != n or (not_quantified is not None and len(not_quantified) != n):
        raise ValueError("report_values: the estimates, dilutions, flags and reasons differ in length")
    bits_in = (flags.bits if isinstance(flags, FlagBits) else
               np.array([-1 if f is None else int(f) for f in flags], dtype=np.int64))
    qualifiers_of: dict[int, tuple[list[str], list[str]]] = {}
    by_dilution: dict[float, tuple[str, str, str, str, str]] = {}
    flag_of: dict[int, QuantFlag] = {}

    def parts(b: int, x: int, factor: float) -> tuple[QuantFlag, tuple[list[str], list[str]], tuple[str, str, str, str, str]]:
        flag = flag_of.get(b)
        if flag is None:
            flag = flag_of[b] = QuantFlag(b)
        quals = qualifiers_of.get(x)
        if quals is None:
            q = QuantFlag(x)
            q_words, q_short = q.words_for(rng.critical_replicates)
            quals = qualifiers_of[x] = ([q_words] if q else [], [q_short] if q else [])
        texts_here = by_dilution.get(factor)
        if texts_here is None:
            texts_here = by_dilution[factor] = _dilution_texts(factor, rng, rule, unit)
        return flag, quals, texts_here

    def part(est: np.ndarray, dil: np.ndarray, bits_in: np.ndarray, offset: int, low: np.ndarray,
             high: np.ndarray) -> ReportedColumns:
        """The columns of the results from ``offset`` on (``est``, ``dil`` and ``bits_in`` are theirs)."""
        n = est.size
        statuses = np.empty(n, dtype=object)
        texts = np.empty(n, dtype=object)
        words = np.empty(n, dtype=object)
        shorts = np.empty(n, dtype=object)
        bits_out = bits_in.copy()
        suggested = np.full(n, np.nan)
        numeric = ~np.isnan(est) & ((bits_in < 0) | ((bits_in & _NO_NUMBER_BITS) == 0))

        def put(i: int, value: ReportedValue) -> None:
            statuses[i], texts[i], words[i], shorts[i] = value.status, value.text, value.words, value.short
            bits_out[i] = -1 if value.flags is None else int(value.flags)
            if value.suggested_dilution is not None:
                suggested[i] = value.suggested_dilution

        for i in np.flatnonzero(~numeric).tolist():  # no number: the reason is said for each
            estimate = None if math.isnan(est[i]) else float(est[i])
            put(i, report_value(estimate, float(dil[i]), flags[offset + i], rng, rule, unit=unit, below_limit=below_limit,
                                not_quantified=not_quantified[offset + i] if not_quantified is not None else ""))
        where = np.flatnonzero(numeric)
        e, d = est[where], dil[where]
        extra = np.where(bits_in[where] < 0, 0, bits_in[where] & _QUALIFIER_BITS)
        limit = rng.reporting_limit
        below_range = e < rng.lloq
        above = ~below_range & (e > rng.uloq)
        bits = np.where(below_range, int(QuantFlag.BELOW_RANGE),
                        np.where(above, int(QuantFlag.ABOVE_RANGE), np.where(e >= limit, int(QuantFlag.IN_RANGE), 0)))
        bits |= np.where(e < limit, int(QuantFlag.BELOW_LOQ), 0)
        detection = rng.detection_limit
        below_lod = e < detection if detection is not None else np.zeros(e.size, dtype=bool)
        if rng.critical_value is not None and rng.lod is not None:  # detected, but below x_d (ISO 11843-2)
            extra = extra | np.where(~below_lod & (e < rng.lod), int(QuantFlag.BELOW_MIN_DETECTABLE), 0)
        bits |= np.where(below_lod, int(QuantFlag.BELOW_LOD), 0) | extra
        bits_out[where] = bits
        reported = e * d
        estimated = below_limit == "estimate"
        # which results show a rounded number: inside the range, and estimates between the LOD and the limit
        numbered = (e <= rng.uloq) & ((e >= limit) | (estimated & ~below_lod))
        numbers = np.empty(where.size, dtype=object)
        shown_low, shown_high = (low[where] * d)[numbered].tolist(), (high[where] * d)[numbered].tolist()
        values = reported[numbered]
        rounded = rule.texts_within(values.tolist(), shown_low, shown_high)
        # written as the notation says; a value well inside its plain magnitudes needs no look at its text
        magnitude = np.abs(values)
        surely_plain = ((magnitude >= 1.001e-4) & (magnitude < 0.999e7)) | (magnitude == 0)
        if not surely_plain.all():
            for k in np.flatnonzero(~surely_plain).tolist():
                rounded[k] = computed_within(float(values[k]), shown_low[k], shown_high[k], rule, text=rounded[k])
        for k in np.flatnonzero(surely_plain & (values < 0)).tolist():  # the person's minus sign, as written
            rounded[k] = computed_within(float(values[k]), shown_low[k], shown_high[k], rule, text=rounded[k])
        numbers[numbered] = rounded
        # the order _numeric_value judges in: above the ULOQ, below the reporting limit, else in range
        over = e > rng.uloq
        case = np.where(over, 0, np.where(e < limit, np.where(below_lod, 1, 2), 3))

        for k in np.flatnonzero(over).tolist():  # above the range: the suggested dilution is each result's own
            flag, quals, texts_here = parts(int(bits[k]), int(extra[k]), float(d[k]))
            put(int(where[k]), _numeric_value(float(e[k]), float(d[k]), flag, quals, texts_here, lambda: "", rng, unit,
                                              estimated, bool(below_lod[k])))
        # every other result: one group per status case, qualifiers and dilution factor (bits follow from them)
        rest = np.flatnonzero(~over)
        for c, x, b, factor, members in _groups(rest, case, extra, bits, d):
            first = int(members[0])
            flag, quals, texts_here = parts(b, x, factor)
            marker = "\x00"  # stands for the rounded number in the group's text
            value = _numeric_value(float(e[first]), factor, flag, quals, texts_here, lambda: marker, rng, unit,
                                   estimated, c == 1)
            rows = where[members]
            statuses[rows] = value.status
            words[rows] = value.words
            shorts[rows] = value.short
            if marker in value.text:
                head, tail = value.text.split(marker)
                texts[rows] = [head + t + tail for t in numbers[members].tolist()] if head or tail else numbers[members]
            else:
                texts[rows] = value.text
        return ReportedColumns(statuses.tolist(), texts.tolist(), words.tolist(), shorts.tolist(), bits_out, suggested)

    if n <= _PART:
        return part(est, dil, bits_in, 0, low, high)
    # many results: a part at a time, so that the arrays of the work stay small; each result's entries
    # depend on it alone, so they are the same as those of all the results worked out at once
    statuses: list[ReportStatus] = []
    texts: list[str] = []
    words: list[str] = []
    shorts: list[str] = []
    bits_out = np.empty(n, dtype=np.int64)
    suggested = np.empty(n)
    for start in range(0, n, _PART):
        stop = min(start + _PART, n)
        done = part(est[start:stop], dil[start:stop], bits_in[start:stop], start, low[start:stop], high[start:stop])
        statuses += done.statuses
        texts += done.texts
        words += done.words
        shorts += done.shorts
        bits_out[start:stop] = done.bits
        suggested[start:stop] = done.suggested_dilution
    return ReportedColumns(statuses, texts, words, shorts, bits_out, suggested)


_PART = 8192
"""Results reported at a time by :func:`report_columns`."""


_FEW = 256
"""Up to this many results are grouped in a dictionary; more, over arrays (the same groups)."""


def _groups(rest: np.ndarray, case: np.ndarray, extra: np.ndarray, bits: np.ndarray, d: np.ndarray,
            ) -> list[tuple[int, int, int, float, np.ndarray]]:
    """The results ``rest`` (positions in the numeric results) grouped by status case, qualifier bits,
    flag bits and dilution factor: (case, qualifiers, bits, dilution factor, the members in ascending
    order) per group. A few results are grouped in a dictionary, many over arrays; the groups and
    their members are the same either way, and only their order may differ, which the caller does
    not depend on (each result is written in its own place)."""
    if rest.size == 0:
        return []
    if rest.size <= _FEW:
        found: dict[tuple[int, int, int, float], list[int]] = {}
        for k, key in zip(rest.tolist(), zip(case[rest].tolist(), extra[rest].tolist(), bits[rest].tolist(),
                                             d[rest].tolist())):
            members = found.get(key)
            if members is None:
                found[key] = [k]
            else:
                members.append(k)
        return [(c, x, b, f, np.array(m, dtype=np.intp)) for (c, x, b, f), m in found.items()]
    keys = np.stack([case[rest], extra[rest], bits[rest]], axis=1)
    factor_codes, factor_of = np.unique(d[rest], return_inverse=True)
    keys = np.concatenate([keys, factor_of.reshape(-1, 1)], axis=1)
    groups, group_of = np.unique(keys, axis=0, return_inverse=True)
    group_of = group_of.reshape(-1)
    order = np.argsort(group_of, kind="stable")
    bounds = np.searchsorted(group_of[order], np.arange(groups.shape[0] + 1))
    return [(c, x, b, float(factor_codes[f]), rest[order[bounds[g]:bounds[g + 1]]])
            for g, (c, x, b, f) in enumerate(groups.tolist())]
