"""Rounding of reported values, done once at the end and only in the "reported" column.

Stored and exported full-precision values are never rounded. A rounding rule keeps either a number
of significant figures or a number of decimal places, with a stated tie-break: round half up (USP
General Notices 7.20: look only at the first digit dropped; 5 rounds up) or round half to even.
Decimal arithmetic on the shortest repr of the double, so 0.145 rounds to 0.15 under half up as a
reader of the printed value expects (Ph. Eur. example), not to 0.14 as binary round-off would give.
The arithmetic runs with enough decimal digits for any double (up to about 1.8e308 with 15 decimals
kept), so a large value is rounded exactly, never refused.

Round-off is removed before the rule is applied: the value is first rounded to
``CLEAN_SIGNIFICANT`` (12) significant figures, half to even, and the rule then rounds that. A result
computed as 2.3450000000000024 for an exact 2.345 (a fitted intercept of 4.999999999999972 for 5) is
a tie, as the arithmetic on exact inputs makes it; 2 decimals half to even give 2.34 and half up
2.35. Twelve figures lie far above the precision of any calibration result and far below the last
digits a double's round-off reaches after a fit (common practice: a double carries 15–17 figures,
and a least-squares fit loses a few of them).

A result with an interval is never shown more coarsely than its interval supports
(:meth:`RoundingRule.text_within`; GUM JCGM 100:2008 §7.2.6: the uncertainty to at most two significant
figures and the result to the same decimal place). The run's rule (a method's, or the default three
significant figures) stands unless it would show the value outside its interval as printed
(:func:`interval_places`), or end a whole number in zeros that read as exact digits ("14500") where
the interval supports digits there (the place of the second significant figure of its half-width);
then the value is shown to the decimal place of its printed interval. A whole number written with an
exponent (from 1e7 up, :mod:`.notation`: "2.03 × 10⁸") ends in no zero read as exact, so for it only
the first reason holds, as for a decimal. A value that rounds to zero at
the place of the second significant figure of its half-width (a response equal to the intercept gives
3.55e-15 with an interval of ±0.066) is indistinguishable from zero at the calibration's resolution and
is shown as zero to the interval's decimal place ("0.000"), never as round-off digits. So 1705105.57 with
the interval 1704513.37 – 1705697.76 (half-width 592: tens) reads 1705110 beside 1704510 – 1705700, not
1710000 (three significant figures), which looks exact and lies outside its own interval. The ends are
printed to that place unless the rule keeps a finer place of them (:func:`interval_places`).
"""

from __future__ import annotations

import math
from typing import Iterable
from decimal import ROUND_HALF_EVEN, ROUND_HALF_UP, Decimal, localcontext

from .notation import is_plain
from .values import frozen_value
from .errors import CurvewrightError


class RoundingError(CurvewrightError, ValueError):
    """A rounding rule is malformed."""


_TIES = {"half_up": ROUND_HALF_UP, "half_even": ROUND_HALF_EVEN}
_REMEMBERED = 4096
"""Distinct values :meth:`RoundingRule.texts` remembers at most (their texts are the same either way)."""
CLEAN_SIGNIFICANT = 12
"""Significant figures a value is first rounded to (half to even), to remove binary round-off."""
_PRECISION = 400
"""Decimal digits for the rounding: 309 integer digits of the largest double and 15 decimals fit."""


@frozen_value
class RoundingRule:
    """``kind`` is "significant" or "decimals"; ``digits`` how many; ``tie`` "half_up" or "half_even"."""

    kind: str = "significant"
    digits: int = 3
    tie: str = "half_up"

    def __post_init__(self) -> None:
        if not isinstance(self.kind, str) or self.kind not in ("significant", "decimals"):
            raise RoundingError(f"rounding kind: {self.kind!r} is not 'significant' or 'decimals'.")
        if isinstance(self.digits, bool) or not isinstance(self.digits, int) or not (0 <= self.digits <= 15):
            raise RoundingError(f"rounding digits: {self.digits!r} must be a whole number from 0 to 15.")
        if self.kind == "significant" and self.digits == 0:
            raise RoundingError("rounding digits: at least 1 significant figure is kept.")
        if not isinstance(self.tie, str) or self.tie not in _TIES:
            raise RoundingError(f"rounding tie-break: {self.tie!r} is not 'half_up' or 'half_even'.")

    @property
    def description(self) -> str:
        what = "significant figures" if self.kind == "significant" else "decimal places"
        tie = "round half up" if self.tie == "half_up" else "round half to even"
        return f"{self.digits} {what}, {tie}"

    def text(self, value: float) -> str:
        """``value`` rounded under this rule, as text that keeps trailing zeros ("12.0")."""
        if not math.isfinite(value):
            return "" if math.isnan(value) else ("∞" if value > 0 else "−∞")
        with localcontext() as context:
            context.prec = _PRECISION
            return self._rounded(value)

    def texts(self, values: Iterable[float]) -> list[str]:
        """``text`` of each value, worked out in one pass: one decimal context for them all, and a
        value met again among the last few thousand distinct ones rounded once (the values seen are
        forgotten a few thousand at a time, so that many distinct values are not all held at once)."""
        out: list[str] = []
        seen: dict[float, str] = {}
        with localcontext() as context:
            context.prec = _PRECISION
            for value in values:
                value = float(value)
                if len(seen) >= _REMEMBERED:
                    seen.clear()
                text = seen.get(value)
                if text is None or value == 0:  # 0.0 and −0.0 are equal keys; each is rounded as itself
                    if not math.isfinite(value):
                        text = "" if math.isnan(value) else ("∞" if value > 0 else "−∞")
                    else:
                        text = self._rounded(value)
                    if value == value:
                        seen[value] = text
                out.append(text)
        return out

    def text_within(self, value: float, lower: float | None, upper: float | None) -> str:
        """``value`` as :meth:`text` rounds it, unless that is coarser than its interval
        ``lower``–``upper`` supports (see the module's text): then to the interval's printed places."""
        text = self.text(value)
        if lower is None or upper is None or _plainly_within(float(value), float(lower), float(upper), text):
            return text
        places = self.places_within(value, lower, upper, text)
        return text if places is None else self.at_places(value, places)

    def texts_within(self, values: Iterable[float], lowers: Iterable[float | None],
                     uppers: Iterable[float | None]) -> list[str]:
        """:meth:`text_within` of each value with its interval's ends (None or NaN: no interval)."""
        out = self.texts(values)
        for k, (value, lower, upper) in enumerate(zip(self._floats(out, values), lowers, uppers)):
            if lower is None or upper is None or _plainly_within(value, float(lower), float(upper), out[k]):
                continue
            places = self.places_within(value, lower, upper, out[k])
            if places is not None:
                out[k] = self.at_places(value, places)
        return out

    @staticmethod
    def _floats(out: list[str], values: Iterable[float]) -> list[float]:
        listed = [float(v) for v in values]
        if len(listed) != len(out):
            raise ValueError("texts_within: the values and their texts differ in length")
        return listed

    def places_within(self, value: float, lower: float | None, upper: float | None,
                      text: str | None = None) -> int | None:
        """The decimal places ``value`` is shown with instead of this rule, because the rule would put it
        outside its interval as printed, or end a whole number in zeros where the interval supports digits
        (see the module's text); None when the rule stands (or there is no finite interval)."""
        if lower is None or upper is None or not math.isfinite(value):
            return None
        lower, upper = float(lower), float(upper)
        if not (math.isfinite(lower) and math.isfinite(upper)) or not upper > lower:
            return None
        text = self.text(value) if text is None else text
        places = interval_places(lower, upper, self)
        kept = _kept_exponent(text) if is_plain(text) else 0  # "2.03 × 10⁸": no zero read as exact
        # zeros ending a whole number ("14500") read as exact digits: they may stand only beyond the place
        # of the second significant figure of the half-width, which the interval's own print keeps
        second_figure = 1 - math.floor(math.log10((upper - lower) / 2.0))
        if abs(value) < 0.5 * 10.0 ** -second_figure:
            return places  # zero at the interval's resolution (round-off such as 3.55e-15): shown as zero there
        if kept <= 0 or -kept >= second_figure:
            shown_lower, shown_upper = (Decimal(self.at_places(v, places)) for v in (lower, upper))
            return None if shown_lower <= Decimal(text) <= shown_upper else places
        # zeros where the interval supports digits, unless the digits there are zeros too ("202000000"
        # for 202024126 printed to the hundred thousand): then the rule's text is the interval's
        return None if self.at_places(value, places) == text else places

    def at_places(self, value: float, places: int) -> str:
        """``value`` rounded to ``places`` decimals (negative: tens, hundreds…) with this rule's tie-break,
        from the value cleaned of round-off as :meth:`text` does."""
        with localcontext() as context:
            context.prec = _PRECISION
            d = _clean(Decimal(repr(float(value))))
            rounded = d.quantize(Decimal(1).scaleb(-places), rounding=_TIES[self.tie])
            text = format(rounded, "f")
            return text[1:] if rounded.is_zero() and text.startswith("-") else text

    def _rounded(self, value: float) -> str:
        """The rounded text of a finite ``value``, in a decimal context of ``_PRECISION`` digits."""
        rounded = self._quantized(_clean(Decimal(repr(float(value)))))
        text = format(rounded, "f")
        if rounded.is_zero() and text.startswith("-"):
            text = text[1:]  # a rounded −0.00 is reported as 0.00
        return text

    def _quantized(self, d: Decimal) -> Decimal:
        """``d`` (cleaned of round-off) rounded under this rule, in a decimal context of ``_PRECISION`` digits."""
        if self.kind == "decimals":
            exponent = -self.digits
        else:
            if d.is_zero():
                exponent = -(self.digits - 1)
            else:
                exponent = d.adjusted() - (self.digits - 1)
        rounded = d.quantize(Decimal(1).scaleb(exponent), rounding=_TIES[self.tie])
        if self.kind == "significant" and not rounded.is_zero() and rounded.adjusted() > d.adjusted():
            # 9.99 → 10.0: the carry added a digit; drop one decimal to keep the figure count.
            rounded = rounded.quantize(Decimal(1).scaleb(exponent + 1), rounding=_TIES[self.tie])
        return rounded

    def places(self, value: float) -> int:
        """The decimal place of the last digit this rule keeps of a finite ``value`` (negative: tens,
        hundreds…): the rule's decimals, or the place of the last significant figure kept, which for
        three significant figures is −3 for 684788 (685000: thousands), 2 for 1.2345 and 8 for 1.2345e-6.
        Unlike the count of decimals in :meth:`text`, this tells the place of a whole number's last kept
        figure, which its text ("685000") does not."""
        if self.kind == "decimals":
            return self.digits
        with localcontext() as context:
            context.prec = _PRECISION
            return -self._quantized(_clean(Decimal(repr(float(value))))).as_tuple().exponent

    def value(self, value: float) -> float:
        """The rounded value as a number (for numeric "reported" cells)."""
        text = self.text(value)
        return float(text.replace("∞", "inf").replace("−", "-")) if text else math.nan


def _plainly_within(value: float, lower: float, upper: float, text: str) -> bool:
    """A quick sufficient test that :meth:`RoundingRule.places_within` keeps the rule's ``text``: a value
    not near zero at the interval's resolution; a text whose last kept digit (:func:`_kept_exponent`) is a
    decimal, or a whole number whose trailing zeros stand beyond the second figure of the half-width; and
    the value farther from each end than the rounding of the value (at most half a unit of that last
    digit, since a rounded value is a multiple of its rounding unit) and of the printed end can move them
    together (with a margin for the float arithmetic of this test)."""
    if not (math.isfinite(lower) and math.isfinite(upper)) or not upper > lower:
        return False
    second_figure = 1 - math.floor(math.log10((upper - lower) / 2.0))
    unit = 10.0 ** -second_figure  # the second figure of the half-width
    if abs(value) < unit:
        return False
    kept = _kept_exponent(text)
    if kept > 0 and -kept < second_figure and is_plain(text):
        return False  # zeros that would read as exact digits: the full test decides
    slack = 1.01 * (0.5 * 10.0 ** kept + 0.5 * unit)
    return value - lower > slack and upper - value > slack


def _clean(d: Decimal) -> Decimal:
    """``d`` rounded to ``CLEAN_SIGNIFICANT`` significant figures, half to even (round-off removed)."""
    if d.is_zero() or not d.is_finite():
        return d
    return d.quantize(Decimal(1).scaleb(d.adjusted() - (CLEAN_SIGNIFICANT - 1)), rounding=ROUND_HALF_EVEN)


def _kept_exponent(text: str) -> int:
    """The power of ten of the last digit a rounded text keeps: −2 for "2.34"; for a whole number, its
    last non-zero digit ("1710000": 4), as a reader takes trailing zeros of a whole number to be padding."""
    if "." in text:
        return -len(text.split(".", 1)[1])
    digits = text.lstrip("-+")
    stripped = digits.rstrip("0")
    return len(digits) - len(stripped) if stripped else 0


def interval_places(lower: float, upper: float, rule: RoundingRule | None = None) -> int:
    """The decimal places the finite ends of an interval are printed with (negative: tens, hundreds…):
    the place of the second significant figure of its half-width (GUM §7.2.6), and never coarser than
    the place of the last digit ``rule`` keeps of either end (:meth:`RoundingRule.places`: its decimals,
    or the place of its last significant figure). So 684788 – 705635 (half-width 10424) is printed to
    the thousand under three significant figures, 685000 – 706000, and 1704513.37 – 1705697.76
    (half-width 592) to the ten, 1704510 – 1705700."""
    half = (upper - lower) / 2.0
    places = 1 - math.floor(math.log10(half)) if half > 0 else 0
    if rule is not None and places < _rule_places_at_most(rule, lower, upper):
        places = max(places, rule.places(lower), rule.places(upper))
    return places


def _rule_places_at_most(rule: RoundingRule, lower: float, upper: float) -> float:
    """A bound, never below the truth, of the place of the last digit ``rule`` keeps of ``lower`` and
    ``upper`` (:meth:`RoundingRule.places`), found without rounding them; infinity where none is found so
    (an end zero or not finite).

    Under ``decimals`` a finite value is printed with exactly ``digits`` places. Under ``significant``
    the last kept digit of a value v ≠ 0 stands at 10^(e − digits + 1), e the exponent of the first
    significant digit of v's shortest repr after round-off is removed; removing round-off and rounding
    can only raise e (9.996 → 10.0), so the rule keeps v to at most digits − 1 − e₀ places (negative:
    tens, hundreds…) for any e₀ ≤ e. e₀ = ⌊log10|v|⌋ where |v| ≥ 10^e₀ is checked exactly (10^e₀ is a double for
    0 ≤ e₀ ≤ 22; the repr of such a v is not below it either); otherwise one less, as ``math.log10``
    may round up to a power of ten from just below it. Where the interval's own places reach this
    bound the rule cannot add to them, and the ends are not rounded (an interval's ends are printed
    for every sample shown, after each edit)."""
    bound = -math.inf
    for v in (lower, upper):
        if v == 0 or not math.isfinite(v):
            return math.inf
        if rule.kind == "decimals":
            bound = max(bound, rule.digits)
            continue
        exponent = math.floor(math.log10(abs(v)))
        if not (0 <= exponent <= 22 and abs(v) >= 10.0 ** exponent):
            exponent -= 1
        bound = max(bound, rule.digits - 1 - exponent)
    return bound

