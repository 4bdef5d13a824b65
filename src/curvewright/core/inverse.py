"""Inverse prediction: from the mean response of an unknown to its concentration and interval.

Point estimate
    x̂ solves f(x) = ȳ₀. A straight line gives x̂ = (ȳ₀ − b0)/b1. For the quadratic the root is
    taken on the calibrated branch, the side of the vertex that holds the standards. A response
    beyond the curve's highest (or lowest) value that the prediction band still holds at the vertex
    is read as the vertex itself, flagged ``TURNING_POINT`` and ``BEYOND_TURNING_POINT`` (its
    symmetric interval is unbounded, since the slope there is zero): no concentration gives such a
    response, so the vertex is a stand-in the engine keeps, never a result to report
    (:mod:`.reporting` reports none). Only a response outside the band even there has no solution.

Standard error (delta method)
    s_x̂ = √(σ²/(m·w₀) + var f̂(x̂)) / |f'(x̂)|, with w₀ the weight of the new mean response
    (1 when unweighted) and var f̂ the variance of the fitted curve. For an unweighted straight
    line this is exactly the textbook formula
    s_x0 = (s_y/x / b)·√(1/m + 1/n + (ȳ₀ − ȳ)²/(b²·Σ(xᵢ − x̄)²))
    (Miller & Miller, *Statistics and Chemometrics for Analytical Chemistry*, ch. 5).

Calibration interval (``interval="band"``, the default)
    The set of concentrations whose prediction band for the mean of m new responses contains ȳ₀:
    {x : (ȳ₀ − f̂(x))² ≤ t²·(σ²/(m·w(x)) + var f̂(x))}, t = t(1 − α/2; n − p). For a straight
    line whose weights do not depend on x this is Fieller's interval, solved in closed form
    (Draper & Smith, *Applied Regression Analysis*, 3rd ed., §3.2). Wherever else the band is a
    polynomial in x (a quadratic, unweighted or weighted 1/x, 1/x², 1/y or 1/y²; a straight line
    weighted 1/x or 1/x²) its ends are the roots of a polynomial of degree ≤ 4, solved for all
    unknowns at once (:mod:`.band_polynomial`). Otherwise (1/s², variance functions estimated from
    the standards) the band is inverted numerically, bracketing outward from x̂ and refining to full
    precision. Either way each unknown is solved on its own (its ends never depend on the other
    unknowns of the call), and the interval is the connected set of concentrations around x̂ whose
    band holds ȳ₀. For a quadratic the search stops at the vertex; when the band still holds ȳ₀
    there it goes on past it (flagged ``TURNING_POINT``). Ends are searched up to
    ``SEARCH_HALF_RANGES`` spans of the standards beyond x̂ (or the vertex); when the band does not
    close within that on one side the interval is unbounded there (±inf, flagged).

Symmetric interval (``interval="symmetric"``)
    x̂ ± t·s_x̂.
"""

from __future__ import annotations

from enum import IntFlag
from functools import cached_property
from typing import TYPE_CHECKING

import numpy as np

from .values import frozen_value
from ._arrays import FloatArray, as_confidence_level, as_finite_vector, frozen
from .band_polynomial import (
    BandPolynomial, band_polynomial, crossing_end, horner, polynomial_band_edges, searched_end,
)
from .distributions import t_quantile
from .errors import LimitsError, QuantitationInputError
from .limits import DetectionLimits, detection_limits
from .models import Model
from .weighting import Weighting
from .notation import entered

if TYPE_CHECKING:  # pragma: no cover
    from .fitted_curve import FittedCurve

INTERVAL_METHODS = ("band", "symmetric")
INTERVAL_SCOPE_NOTE = (
    "This interval covers the calibration and the repeatability of the unknown's replicate measurements "
    "only; it is not the full measurement uncertainty, which also holds sampling, preparation, recovery, "
    "matrix effects and between-run variation."
)
"""What the calibration interval is, to be shown wherever it is. Measurement uncertainty comprises every
component (JCGM 100:2008, the GUM, §2.2.3 and §3.3); the Eurachem/CITAC Guide *Quantifying
Uncertainty in Analytical Measurement* (3rd ed., 2012) lists calibration as one source among several
(section numbers from memory)."""
SEARCH_HALF_RANGES = 200.0
"""How far beyond x̂ the band inversion looks for the interval's ends, in spans of the standards
(measured in the fitting variable z)."""
RANGE_SLACK = 1e-9
"""Fraction of the calibrated span allowed for round-off when testing whether x̂ is in range."""
CHUNK = 1 << 15
"""Unknowns worked at once: enough to amortise numpy's per-call cost, few enough to keep the working
arrays small beside the results."""
_MAX_REFINE_STEPS = 100
_MAX_EXPANSIONS = 40


class QuantFlag(IntFlag):
    """What the analyst must know about one unknown's result; several may apply at once."""

    IN_RANGE = 1
    BELOW_RANGE = 2
    ABOVE_RANGE = 4
    BELOW_LOQ = 8
    BELOW_LOD = 16
    NO_SOLUTION = 32
    AMBIGUOUS_ROOT = 64
    UNBOUNDED_INTERVAL = 128
    TURNING_POINT = 256
    BEYOND_ASYMPTOTE = 512
    BEYOND_TURNING_POINT = 1024
    BELOW_MIN_DETECTABLE = 2048

    @property
    def words(self) -> str:
        """The flag(s) in plain words, joined by '; '."""
        return "; ".join(_WORDS[member] for member in self)  # type: ignore[index]

    @property
    def short_words(self) -> str:
        """The flag(s) as short words for a table cell, joined by ', ' (``words`` says them in full)."""
        return ", ".join(_SHORT_WORDS[member] for member in self)  # type: ignore[index]

    def words_for(self, readings: int) -> tuple[str, str]:
        """:attr:`words` and :attr:`short_words` with ISO 11843-2's x_c and x_d named for the ``readings``
        (K) of a test sample they are for ("below the minimum detectable value x_d for 3 readings"), as
        the critical value's own words name them (:func:`min_detectable_words`)."""
        if readings == 1 or QuantFlag.BELOW_MIN_DETECTABLE not in self:
            return self.words, self.short_words
        words, short = min_detectable_words(readings)
        members = list(self)
        return ("; ".join(words if m is QuantFlag.BELOW_MIN_DETECTABLE else _WORDS[m] for m in members),  # type: ignore[index]
                ", ".join(short if m is QuantFlag.BELOW_MIN_DETECTABLE else _SHORT_WORDS[m] for m in members))  # type: ignore[index]


def min_detectable_words(readings: int) -> tuple[str, str]:
    """The words and short words of a result detected but below the minimum detectable value x_d
    (ISO 11843-2), x_c and x_d named for the number K of readings of a test sample they are for
    (nothing added for one reading)."""
    each = "" if readings == 1 else f" for {readings} readings"
    return (f"detected (at or above the critical value x_c{each}) but below the minimum detectable value x_d{each} "
            "(ISO 11843-2): at this level the analyte is missed with a probability above β", f"< x_d{each}")


_WORDS = {
    QuantFlag.IN_RANGE: "inside the calibrated range",
    QuantFlag.BELOW_RANGE: "below the lowest standard",
    QuantFlag.ABOVE_RANGE: "above the highest standard",
    QuantFlag.BELOW_LOQ: "below the quantitation limit (LOQ)",
    QuantFlag.BELOW_LOD: "below the detection limit (LOD)",
    QuantFlag.NO_SOLUTION: (
        "no solution: the curve never reaches this response on its calibrated branch, not even within "
        "its prediction band"
    ),
    QuantFlag.AMBIGUOUS_ROOT: "ambiguous: the curve reaches this response twice within the calibrated range",
    QuantFlag.UNBOUNDED_INTERVAL: "interval unbounded: the calibration cannot bound this concentration",
    QuantFlag.TURNING_POINT: (
        "at the curve's turning point: the prediction band holds this response on both sides of the "
        "turning point, so the interval is read from the band on both sides"
    ),
    QuantFlag.BEYOND_ASYMPTOTE: (
        "beyond an asymptote: the curve approaches this response but never reaches it, so no "
        "concentration gives it"
    ),
    QuantFlag.BEYOND_TURNING_POINT: (
        "beyond the curve's turning point: the response lies beyond the highest (or lowest) value the "
        "curve reaches, so no concentration can be read from it"
    ),
    QuantFlag.BELOW_MIN_DETECTABLE: min_detectable_words(1)[0],
}
_SHORT_WORDS = {
    QuantFlag.IN_RANGE: "in range",
    QuantFlag.BELOW_RANGE: "below range",
    QuantFlag.ABOVE_RANGE: "above range",
    QuantFlag.BELOW_LOQ: "< LOQ",
    QuantFlag.BELOW_LOD: "< LOD",
    QuantFlag.NO_SOLUTION: "no solution",
    QuantFlag.AMBIGUOUS_ROOT: "two roots",
    QuantFlag.UNBOUNDED_INTERVAL: "open interval",
    QuantFlag.TURNING_POINT: "turning point",
    QuantFlag.BEYOND_ASYMPTOTE: "beyond asymptote",
    QuantFlag.BEYOND_TURNING_POINT: "beyond turning point",
    QuantFlag.BELOW_MIN_DETECTABLE: min_detectable_words(1)[1],
}


@frozen_value(eq=False)
class Quantitation:
    """Concentrations of a set of unknowns read from one calibration (arrays of shape (k,)).

    ``estimate``, ``standard_error``, ``lower`` and ``upper`` are in concentration units of the
    standards, for the solution measured (apply dilution factors afterwards). ``lower``/``upper`` are
    ±inf where the interval is unbounded and NaN only where there is no solution (flagged).
    """

    mean_response: FloatArray
    replicates: np.ndarray
    level: float
    interval: str
    df: int
    estimate: FloatArray
    standard_error: FloatArray
    lower: FloatArray
    upper: FloatArray
    flag_bits: np.ndarray
    limits: DetectionLimits | None
    limits_note: str | None

    @cached_property
    def flags(self) -> tuple[QuantFlag, ...]:
        """One :class:`QuantFlag` per unknown; ``QuantFlag.BELOW_LOQ in q.flags[i]`` tests one."""
        return tuple(QuantFlag(int(bits)) for bits in self.flag_bits)

    def flag_words(self) -> tuple[str, ...]:
        """The flags of each unknown in plain words."""
        return tuple(flag.words for flag in self.flags)

    def __len__(self) -> int:
        return int(self.estimate.size)


def checked_request(cal, mean_response: object, replicates: object, level: float,  # type: ignore[no-untyped-def]
                    interval: str) -> tuple[FloatArray, np.ndarray, float]:
    """The unknowns' mean responses, replicate counts and confidence level of a quantitation request,
    checked for every kind of calibration: a curve whose response does not change with concentration
    quantifies nothing; each response is finite, each count whole and positive, the level in (0, 1),
    the interval method known. Raises :class:`QuantitationInputError` naming the field."""
    if not cal.regression.significant:
        raise QuantitationInputError(
            f"calibration: {cal.regression.words}; check the standards' concentrations and responses."
        )
    y0 = as_finite_vector(mean_response, "mean response", QuantitationInputError, item="unknown")
    m = _replicate_counts(replicates, y0.size)
    level = as_confidence_level(level, QuantitationInputError)
    if interval not in INTERVAL_METHODS:
        raise QuantitationInputError(
            f"interval: {interval!r} is not one of {', '.join(map(repr, INTERVAL_METHODS))}."
        )
    return y0, m, level


def quantify(
    cal: "FittedCurve",
    mean_response: object,
    replicates: object = 1,
    level: float = 0.95,
    interval: str = "band",
    limits: DetectionLimits | None = None,
) -> Quantitation:
    """Quantify unknowns; see :meth:`curvewright.core.calibration.Calibration.quantify`."""
    y0, m, level = checked_request(cal, mean_response, replicates, level, interval)
    probability = 0.5 + level / 2.0
    t = t_quantile(probability, cal.df_residual)

    limits_note = None
    if limits is None:
        if hasattr(type(cal), "flag_limits"):
            limits, limits_note = cal.flag_limits  # type: ignore[attr-defined]
        else:
            try:
                limits = detection_limits(cal)
            except LimitsError as exc:
                limits_note = f"LOD/LOQ flags not set: {exc}"

    k = y0.size
    band = None
    if interval == "band" and (cal.model is Model.QUADRATIC or cal.weighting.uses_concentration):
        band = band_polynomial(cal, t)
    # Unknowns are worked in blocks so that the working arrays stay a fixed size however many there
    # are; every unknown's result depends on its own response and replicate count only.
    left = []
    fieller = interval == "band" and cal.model is Model.LINEAR and not cal.weighting.uses_concentration
    line = _line_block(cal, y0, m, t, limits, replicates) if fieller and 0 < k <= CHUNK else None
    if line is not None:
        # one block of a straight line by Fieller's interval, every number finite
        estimate, standard_error, lower, upper, bits = line
        bad = None
    elif 0 < k <= CHUNK:
        # one block: its arrays are the results (each made afresh by the block, none shared)
        estimate, standard_error, lower, upper, bits, bad, block_left = _quantify_block(
            cal, y0, m, probability, t, interval, limits, band)
        if block_left is not None:
            left.append((0, block_left))
    else:
        estimate, standard_error, lower, upper = (np.empty(k) for _ in range(4))
        bits = np.zeros(k, dtype=np.int64)
        bad = np.zeros(k, dtype=bool)
        for first in range(0, k, CHUNK):
            block = slice(first, first + CHUNK)
            (estimate[block], standard_error[block], lower[block], upper[block], bits[block],
             bad[block], block_left) = _quantify_block(cal, y0[block], m[block], probability, t, interval, limits,
                                                       band, crossing_later=True)
            if block_left is not None:
                left.append((first, block_left))
    if left:
        assert band is not None
        _search_left(cal, band, y0, m, left, lower, upper, bits, bad)
    if bad is not None:
        _refuse_unrepresentable(y0, bad)
    return Quantitation(
        mean_response=frozen(y0),
        replicates=frozen(m),
        level=float(level),
        interval=interval,
        df=cal.df_residual,
        estimate=frozen(estimate),
        standard_error=frozen(standard_error),
        lower=frozen(lower),
        upper=frozen(upper),
        flag_bits=frozen(bits),
        limits=limits,
        limits_note=limits_note,
    )


def _quantify_block(
    cal: "FittedCurve",
    y0: FloatArray,
    m: np.ndarray,
    probability: float,
    t: float,
    interval: str,
    limits: DetectionLimits | None,
    band: BandPolynomial | None,
    crossing_later: bool = False,
) -> tuple[FloatArray, FloatArray, FloatArray, FloatArray, np.ndarray, np.ndarray, tuple | None]:
    """Estimate, standard error, interval ends, flag bits and the unrepresentable mask of a block of
    unknowns, and the ends left for the full search of the polynomial band (see :func:`_search_left`);
    with ``crossing_later`` (one block of many), also the direct ends across the lowest standard."""
    range_low, range_high = cal.calibrated_range
    centre, scale = cal.basis.centre, cal.basis.scale
    z_range = ((range_low - centre) / scale, (range_high - centre) / scale)  # Basis.z's operations, on floats
    # Overflow is detected below, per unknown, and refused by name rather than left as inf or NaN.
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        z_hat, no_solution, ambiguous = solve_z(cal.model, cal.z_coefficients, cal.quadratic_branch, z_range, y0)
        at_turning_point = _inside_band_at_vertex(cal, y0, m, probability, no_solution)
        any_at_turning_point = bool(at_turning_point.any())
        if any_at_turning_point:
            z_hat = np.where(at_turning_point, cal.vertex_z if cal.vertex_z is not None else np.nan, z_hat)
            no_solution = no_solution & ~at_turning_point
        x_hat = cal.basis.centre + cal.basis.scale * z_hat
        new_var = _new_response_variance(cal, x_hat, y0, m)
        slope = _slope_z(cal, z_hat) / cal.basis.scale
        curve_var = _curve_variance(cal, z_hat)
        se = np.sqrt(new_var + curve_var) / np.abs(slope)
        flat = slope == 0.0
        past_vertex = np.zeros(y0.size, dtype=bool)
        left = None
        if interval == "symmetric":
            t_hat = cal.band_t(probability, x_hat, new_var, curve_var)
            lower, upper = x_hat - t_hat * se, x_hat + t_hat * se
        else:
            lower, upper, past_vertex, left = _band_interval(
                cal, y0, m, probability, z_hat, no_solution, t * se / cal.basis.scale, band, t, new_var, curve_var,
                crossing_later,
            )
    unsolved = bool(no_solution.any())
    finite_se = np.isfinite(se)
    bad = np.isfinite(x_hat)
    bad &= finite_se | flat if np.ndim(flat) or flat else finite_se
    if interval == "symmetric":
        unbounded = ~finite_se
        bad = ~bad | np.isnan(lower) | np.isnan(upper)
    else:
        bounded = np.isfinite(lower)
        bounded &= np.isfinite(upper)
        if bounded.all():
            # neither end is infinite, nor NaN
            unbounded = None
            np.logical_not(bad, out=bad)
        else:
            unbounded = np.isinf(lower) | np.isinf(upper)
            bad = ~bad | np.isnan(lower) | np.isnan(upper)
    turning = at_turning_point | past_vertex if any_at_turning_point else past_vertex

    # Round-off must not push a response read at exactly an end standard outside the range.
    slack = RANGE_SLACK * (range_high - range_low)
    low, high = range_low - slack, range_high + slack
    bits = _range_bits(x_hat, low, high, limits)
    for flag, mask in ((QuantFlag.AMBIGUOUS_ROOT, ambiguous), (QuantFlag.UNBOUNDED_INTERVAL, unbounded),
                       (QuantFlag.TURNING_POINT, turning),
                       (QuantFlag.BEYOND_TURNING_POINT, at_turning_point if any_at_turning_point else None)):
        if mask is not None and mask.any():
            np.bitwise_or(bits, int(flag), out=bits, where=mask)
    if not unsolved:
        return x_hat, se, lower, upper, bits, bad, left
    # an unknown with no solution carries that flag alone, and NaN for every number
    bits[no_solution] = int(QuantFlag.NO_SOLUTION)
    bad &= ~no_solution
    nan = np.where(no_solution, np.nan, 0.0)
    return x_hat + nan, se + nan, lower + nan, upper + nan, bits, bad, left


def _line_block(
    cal: "FittedCurve", y0: FloatArray, m: np.ndarray, t: float, limits: DetectionLimits | None,
    replicates: object = None,
) -> tuple[FloatArray, FloatArray, FloatArray, FloatArray, np.ndarray] | None:
    """Estimate, standard error, Fieller's interval ends and flag bits of one block of unknowns on a
    straight line (with an intercept) whose weights do not depend on x: the operations of
    :func:`_quantify_block` for that case, in the same order on the same numbers (so the same bits),
    without the masks that are all false there (no unknown lacks a solution, none has two, none
    reaches a turning point). None where that block would take another path or flag an unknown as
    unbounded or unrepresentable (a slope of zero, a band that never closes, a number that is not
    finite): the general block then works it out. ``replicates``, the count as the caller gave it:
    one whole count (a Python int, already checked) makes σ²/m one number for every unknown of an
    unweighted line (the same quotient as each element of σ²/m over the counts ``m``)."""
    a0, a1 = cal.z_coefficients
    scale = cal.basis.scale
    slope = a1 / scale
    if a1 == 0.0 or slope == 0.0:
        return None
    cov = cal.z_covariance
    t2 = t * t
    a_quad = a1 * a1 - t2 * cov[1, 1]
    if a_quad <= 0.0:
        return None
    centre = cal.basis.centre
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        d = y0 - a0
        z_hat = d / a1  # solve_z: (y0 − a₀)/a₁
        x_hat = scale * z_hat
        x_hat += centre
        if type(replicates) is int and cal.weighting is Weighting.NONE:
            new_var = cal.residual_sd**2 / replicates
        else:
            new_var = _new_response_variance(cal, x_hat, y0, m)
        curve_var = horner(z_hat, cal.z_polynomials[1])
        curve_var += new_var
        se = np.sqrt(curve_var, out=curve_var)
        se /= np.abs(slope)
        # Fieller's A·z² + B·z + C = 0 (see _fieller_z): B = −2·(d·b + t²·c₀₁), C = d² − t²·(σ²/(m·w) + c₀₀)
        b_quad = d * a1
        b_quad += t2 * cov[0, 1]
        b_quad *= -2.0
        c_quad = new_var + cov[0, 0]
        c_quad *= t2
        np.multiply(d, d, out=d)
        d -= c_quad
        c_quad = d
        disc = b_quad * b_quad
        c_quad *= 4.0 * a_quad
        disc -= c_quad
        root = np.maximum(disc, 0.0, out=disc)
        np.sqrt(root, out=root)
        np.negative(b_quad, out=b_quad)
        two_a = 2.0 * a_quad
        lower = b_quad - root
        lower /= two_a
        lower *= scale
        lower += centre
        upper = np.add(b_quad, root, out=b_quad)
        upper /= two_a
        upper *= scale
        upper += centre
        total = x_hat + se
        total += lower
        total += upper
    if not np.isfinite(total).all():
        return None
    range_low, range_high = cal.calibrated_range
    slack = RANGE_SLACK * (range_high - range_low)
    return x_hat, se, lower, upper, _range_bits(x_hat, range_low - slack, range_high + slack, limits)


def _search_left(
    cal: "FittedCurve", band: BandPolynomial, y0: FloatArray, m: np.ndarray, left: list,
    lower: FloatArray, upper: FloatArray, bits: np.ndarray, bad: np.ndarray,
) -> None:
    """The ends the blocks left, solved together and written in place: each end in x, its
    "unbounded" and "turning point" flags, and whether it can be represented. First the direct ends
    across the lowest standard (:func:`.band_polynomial.crossing_end`), then the full search for the
    ends left for it and those of the first that are not certain. The blocks counted such an end as
    bounded, finite and short of the vertex, so these flags are only ever added here. Each end
    depends on its own unknown alone (see :func:`.band_polynomial.searched_end`), so its bits are
    those a search block by block would give."""
    vertex_z = cal.vertex_z if cal.model is Model.QUADRATIC else None
    reach = _full_reach(cal)
    for side, (direction, ends) in enumerate(((-1.0, lower), (1.0, upper))):
        parts = [(first + part[0], part[1], part[2]) for first, block_left in left if (part := block_left[side][0])]
        crossing = [(first + part[0], part[1], part[2]) for first, block_left in left
                    if (part := block_left[side][1])]
        if crossing:
            index, start, guess = (np.concatenate(column) for column in zip(*crossing))
            for first in range(0, index.size, CHUNK):
                at = slice(first, first + CHUNK)
                i = index[at]
                z_end, certain, past = crossing_end(band, y0[i], m[i], start[at], reach, vertex_z, guess[at],
                                                    direction)
                x_end = cal.basis.centre + cal.basis.scale * z_end
                ends[i[certain]] = x_end[certain]
                bits[i] |= np.where(past & certain, int(QuantFlag.TURNING_POINT), 0)
                if not certain.all():
                    unsure = ~certain
                    parts.append((i[unsure], start[at][unsure], guess[at][unsure]))
        if not parts:
            continue
        index, start, guess = (np.concatenate(column) for column in zip(*parts))
        for first in range(0, index.size, CHUNK):
            at = slice(first, first + CHUNK)
            i = index[at]
            z_end, past = searched_end(band, y0[i], m[i], start[at], reach, vertex_z, guess[at], direction)
            x_end = cal.basis.centre + cal.basis.scale * z_end
            ends[i] = x_end
            bits[i] |= np.where(np.isinf(x_end), int(QuantFlag.UNBOUNDED_INTERVAL), 0)
            bits[i] |= np.where(past, int(QuantFlag.TURNING_POINT), 0)
            bad[i] |= np.isnan(x_end)


def _flag_table() -> np.ndarray:
    """Flag bits for each code of :func:`_range_bits`: bit 0 below the range, bit 1 above it, bit 2
    below the LOQ, bit 3 below the LOD."""
    table = np.empty(16, dtype=np.int64)
    for code in range(16):
        flag = QuantFlag.BELOW_RANGE if code & 1 else QuantFlag.ABOVE_RANGE if code & 2 else QuantFlag.IN_RANGE
        if code & 4:
            flag |= QuantFlag.BELOW_LOQ
        if code & 8:
            flag |= QuantFlag.BELOW_LOD
        table[code] = int(flag)
    return table


_FLAG_TABLE = _flag_table()


def _range_bits(x_hat: FloatArray, low: float, high: float, limits: DetectionLimits | None) -> np.ndarray:
    """The range, LOQ and LOD flags of each estimate: below ``low``, else above ``high``, else in
    range; below the LOQ and below the LOD besides (NaN is none of these, so in range). The four
    comparisons are packed as bits of one small code per unknown, read from a table in one pass."""
    code = np.less(x_hat, low).view(np.uint8)
    scratch = np.greater(x_hat, high).view(np.uint8)
    scratch <<= 1
    code |= scratch
    if limits is not None:
        if limits.loq is not None:
            np.less(x_hat, limits.loq, out=scratch.view(np.bool_))
            scratch <<= 2
            code |= scratch
        np.less(x_hat, limits.lod, out=scratch.view(np.bool_))
        scratch <<= 3
        code |= scratch
    return _FLAG_TABLE[code]


def _refuse_unrepresentable(y0: FloatArray, bad: np.ndarray) -> None:
    """Refuse unknowns whose concentration or interval overflows double precision, naming the first."""
    if bad.any():
        i = int(np.flatnonzero(bad)[0])
        raise QuantitationInputError(
            f"mean response: unknown {i + 1} is {entered(y0[i])}, so far beyond the standards that its "
            "concentration or interval cannot be represented as a number; check the value and its unit"
            + (f" ({int(bad.sum())} such unknowns in all)." if bad.sum() > 1 else ".")
        )


def _replicate_counts(replicates: object, k: int) -> np.ndarray:
    if type(replicates) is int and k > 0 and 1 <= replicates < 2**53:
        return np.full(k, replicates, dtype=np.int64)  # one whole count for every unknown (the usual 1)
    if np.ndim(replicates) == 0 and k > 0:
        # one count for every unknown: checked once, as the first unknown's
        single = np.asarray(replicates)
        if single.dtype.kind in "iuf":
            value = float(single)
            if np.isfinite(value) and value >= 1 and value == round(value):
                return np.full(k, int(value), dtype=np.int64)
    counts = np.broadcast_to(np.asarray(replicates), (k,)) if np.ndim(replicates) == 0 else np.asarray(replicates)
    if counts.shape != (k,):
        raise QuantitationInputError(
            f"replicates: {counts.size} counts given for {k} unknowns; give one count per unknown or a single count."
        )
    if counts.dtype.kind not in "iuf":
        raise QuantitationInputError(
            f"replicates: {replicates!r}; the number of replicate responses averaged must be a whole "
            "number of at least 1 for each unknown."
        )
    as_float = counts.astype(np.float64)
    bad = np.flatnonzero(~np.isfinite(as_float) | (as_float < 1) | (as_float != np.round(as_float)))
    if bad.size:
        i = int(bad[0])
        raise QuantitationInputError(
            f"replicates: unknown {i + 1} has {counts[i].item()!r}; the number of replicate responses "
            "averaged must be a whole number of at least 1."
        )
    return as_float.astype(np.int64)


def quadratic_roots(a0: object, a1: object, a2: object, y0: FloatArray) -> tuple[FloatArray, FloatArray, np.ndarray]:
    """Both roots of a₂·z² + a₁·z + (a₀ − y₀) = 0 by the stable form q = −(a₁ + sign(a₁)·√disc)/2,
    roots q/a₂ and c/q (Press et al., Numerical Recipes, 3rd ed., §5.6; section from memory), disc
    clipped at zero, and the mask of responses with no real root (disc < 0). The coefficients are
    numbers, or columns of a stack of curves (shape (k, 1)) against responses (n,). Where q is zero
    both roots are q/a₂. :func:`solve_z` and the model screen's back-calculation share it."""
    c = a0 - y0
    disc = a1 * a1 - 4.0 * a2 * c
    no_solution = disc < 0
    root_disc = np.sqrt(np.maximum(disc, 0.0))
    if np.ndim(a1) == 0:
        # a1 + sign(a1)·√disc (a1 is one number: the sign is chosen once)
        q = a1 + root_disc if not np.signbit(a1) else a1 - root_disc
    else:
        q = np.where(np.signbit(a1), a1 - root_disc, a1 + root_disc)
    q *= -0.5
    with np.errstate(invalid="ignore", divide="ignore"):
        r1 = q / a2
        r2 = c / q
    zero = q == 0.0
    if zero.any():
        r2[zero] = r1[zero]
    return r1, r2, no_solution


def solve_z(
    model: Model,
    a: FloatArray,
    branch: int,
    z_range: tuple[float, float],
    y0: FloatArray,
) -> tuple[FloatArray, np.ndarray, np.ndarray]:
    """Solve f(z) = y0 in the fitting variable z for z-coefficients ``a``.

    Returns the root on the calibrated ``branch`` (+1: right of the vertex, −1: left), a mask of
    responses with no solution there and a mask of responses reached twice inside ``z_range``.
    """
    false = np.zeros(y0.size, dtype=bool)
    if model is not Model.QUADRATIC and a[-1] == 0.0:
        # a line of slope exactly zero reaches no response but its own level, and that one everywhere
        return np.full(y0.size, np.nan), ~false, false
    if model.through_origin:
        return y0 / a[0], false, false
    if model is Model.LINEAR:
        return (y0 - a[0]) / a[1], false, false
    a0, a1, a2 = a
    if a2 == 0.0:
        # No curvature at all (±0.0: a quadratic fitted to standards on an exact straight line). The
        # root formula would divide by it and pick an infinite root; the curve is a line in z.
        if a1 == 0.0:
            return np.full(y0.size, np.nan), ~false, false
        return (y0 - a0) / a1, false, false
    r1, r2, no_solution = quadratic_roots(a0, a1, a2, y0)
    root = np.maximum(r1, r2) if branch > 0 else np.minimum(r1, r2)
    other = np.minimum(r1, r2) if branch > 0 else np.maximum(r1, r2)
    z_low, z_high = z_range
    tolerance = 1e-12 * (z_high - z_low)
    ambiguous = (other >= z_low - tolerance) & (other <= z_high + tolerance)
    if ambiguous.any():
        ambiguous &= ~no_solution & (np.abs(other - root) > tolerance)
    if no_solution.any():
        root[no_solution] = np.nan
    return root, no_solution, ambiguous


def _slope_z(cal: "FittedCurve", z: FloatArray) -> FloatArray | np.float64:
    """df/dz at z (one number for a straight line)."""
    a = cal.z_coefficients
    if cal.model.through_origin:
        return a[0]
    if cal.model is Model.LINEAR:
        return a[1]
    return a[1] + 2.0 * a[2] * z


def _curve_variance(cal: "FittedCurve", z: FloatArray) -> FloatArray:
    """Variance of the fitted curve at z: φ(z)ᵀ·C·φ(z), C the coefficient covariance, evaluated as
    the polynomial in z it is."""
    return horner(z, curve_polynomials(cal)[1])


def _new_response_variance(cal: "FittedCurve", x: FloatArray, y0: FloatArray, m: np.ndarray) -> FloatArray:
    """Variance σ²/(m·w) of the mean of m new responses at concentration x with mean y0."""
    if cal.weighting is Weighting.NONE:
        return cal.residual_sd**2 / m
    weight = cal.weight_model.weight_at(x, y0)
    return cal.residual_sd**2 / (m * weight)


def _band_interval(
    cal: "FittedCurve", y0: FloatArray, m: np.ndarray, probability: float, z_hat: FloatArray,
    no_solution: np.ndarray, guess: FloatArray, band: BandPolynomial | None = None, t: float | None = None,
    new_var: FloatArray | None = None, curve_var: FloatArray | None = None, crossing_later: bool = False,
) -> tuple[FloatArray, FloatArray, np.ndarray, tuple | None]:
    """Both ends of the calibration interval, in x, which unknowns' intervals reach past the vertex,
    and, for the polynomial band, the ends left for later: for each side a pair, the ends left for
    the full search and (with ``crossing_later``) the direct ends across the lowest standard, each
    None or the positions, ẑ and guesses of its unknowns (see :func:`_search_left`; the ends left
    stand at ẑ).

    Fieller's closed form for a straight line whose weights do not depend on x; the polynomial band
    (:mod:`.band_polynomial`) wherever ``band`` is given; otherwise the numeric inversion. ``t`` is
    Student's quantile at ``probability`` and ``new_var`` the variance of the new responses' mean
    (σ²/(m·w)), and ``curve_var`` the variance of the curve at ẑ, when the caller has them already.
    """
    closed_form = cal.model is not Model.QUADRATIC and not cal.weighting.uses_concentration
    past_vertex = np.zeros(y0.size, dtype=bool)
    left = None
    if closed_form:
        # the weights of these fits do not depend on x, so the caller's new_var is Fieller's σ²/(m·w)
        t = t_quantile(probability, cal.df_residual) if t is None else t
        z_lo, z_hi = _fieller_z(cal, y0, m, t, new_var)
    elif band is not None:
        solved = not no_solution.any()
        start = z_hat if solved else np.where(no_solution, 0.0, z_hat)
        guess = _usable_guess(guess)
        z_lo, z_hi, past_vertex, sides = polynomial_band_edges(
            band, y0, m, start, _full_reach(cal), cal.vertex_z if cal.model is Model.QUADRATIC else None,
            guess, curve_var if solved else None, defer=True, defer_crossing=crossing_later,
        )
        past_vertex &= ~no_solution
        assert sides is not None
        # an unknown without a solution has no interval to search for
        pairs = [side if crossing_later else (side, None) for side in sides]
        kept = [[None if index is None else index if solved else index[~no_solution[index]] for index in pair]
                for pair in pairs]
        if any(index is not None and index.size for pair in kept for index in pair):
            left = tuple(tuple((index, start[index], guess[index]) if index is not None and index.size else None
                               for index in pair) for pair in kept)
    else:
        z_lo, z_hi, past_vertex = _band_edges(cal, y0, m, probability, z_hat, no_solution, guess)
    to_x = lambda z: cal.basis.centre + cal.basis.scale * z  # noqa: E731
    # scale > 0, so the order of the ends survives the change of variable.
    return to_x(z_lo), to_x(z_hi), past_vertex, left


def _usable_guess(guess: FloatArray) -> FloatArray:
    """The half-widths where each is finite and positive, 1e-3 elsewhere: the array itself when all
    are (its least above zero and its largest finite, found in two reductions; a NaN fails both)."""
    if guess.size and np.minimum.reduce(guess) > 0 and np.maximum.reduce(guess) < np.inf:
        return guess
    return np.where(np.isfinite(guess) & (guess > 0), guess, 1e-3)


def _inside_band_at_vertex(
    cal: "FittedCurve", y0: FloatArray, m: np.ndarray, probability: float, no_solution: np.ndarray
) -> np.ndarray:
    """Responses beyond a quadratic's extreme that its prediction band still holds at the vertex."""
    if cal.model is not Model.QUADRATIC or cal.vertex_z is None or not no_solution.any():
        return np.zeros(y0.size, dtype=bool)
    at_vertex = np.full(y0.size, cal.vertex_z)
    return no_solution & (_band_excess(cal, curve_polynomials(cal), y0, m, probability, at_vertex) <= 0)


def _fieller_z(
    cal: "FittedCurve", y0: FloatArray, m: np.ndarray, t: float, s2_new: FloatArray | None = None
) -> tuple[FloatArray, FloatArray]:
    """Fieller's interval for a straight line, in z: the roots of A·z² + B·z + C = 0 (``s2_new``, the
    variance σ²/(m·w) of each unknown's mean response, is computed when not given)."""
    cov = cal.z_covariance
    if s2_new is None:
        s2_new = _new_response_variance(cal, np.zeros_like(y0), y0, m)
    t2 = t * t
    if cal.model.through_origin:
        (b,) = cal.z_coefficients
        d = y0
        a_quad = b * b - t2 * cov[0, 0]
        b_quad = -2.0 * d * b
        c_quad = d * d - t2 * s2_new
    else:
        a0, b = cal.z_coefficients
        d = y0 - a0
        a_quad = b * b - t2 * cov[1, 1]
        b_quad = -2.0 * (d * b + t2 * cov[0, 1])
        c_quad = d * d - t2 * (s2_new + cov[0, 0])
    if a_quad <= 0.0:
        # The slope is not significantly different from zero: the band never closes.
        inf = np.full_like(y0, np.inf)
        return -inf, inf
    root = np.sqrt(np.maximum(b_quad * b_quad - 4.0 * a_quad * c_quad, 0.0))
    return (-b_quad - root) / (2.0 * a_quad), (-b_quad + root) / (2.0 * a_quad)


def curve_polynomials(cal: "FittedCurve") -> tuple[FloatArray, FloatArray]:
    """Ascending coefficients, in z, of the fitted curve f̂(z) and of its variance φ(z)ᵀ·C·φ(z)
    (kept with the calibration: :attr:`~.fitted_curve.FittedCurve.z_polynomials`)."""
    return cal.z_polynomials


def _band_excess(
    cal: "FittedCurve",
    polys: tuple[FloatArray, FloatArray],
    y0: FloatArray,
    m: np.ndarray,
    probability: float,
    z: FloatArray,
) -> FloatArray:
    """(ȳ₀ − f̂(z))² − t²·(σ²/(m·w) + var f̂(z)); ≤ 0 inside the calibration interval."""
    fitted = horner(z, polys[0])
    curve_var = horner(z, polys[1])
    x = cal.basis.centre + cal.basis.scale * z
    new_var = cal.residual_sd**2 / (m * cal.weight_model.weight_at(x, y0))
    t = cal.band_t(probability, x, new_var, curve_var)
    return (y0 - fitted) ** 2 - t * t * (new_var + curve_var)


def _band_edges(
    cal: "FittedCurve",
    y0: FloatArray,
    m: np.ndarray,
    probability: float,
    z_hat: FloatArray,
    no_solution: np.ndarray,
    guess: FloatArray,
) -> tuple[FloatArray, FloatArray, np.ndarray]:
    """Both ends of the calibration interval around ẑ, in z (vectorised over unknowns).

    Each side walks outward from ẑ (see :func:`_band_crossing`), never past the vertex of a quadratic
    at first. A side still inside the band at the vertex goes on past it: the band holds the response
    on the far side of the turning point too, and the interval is the connected set of
    concentrations whose band holds it. Returns the lower and upper ends and a mask of the unknowns
    whose interval reaches past the vertex.
    """
    k = y0.size
    polys = curve_polynomials(cal)
    start = np.tile(np.where(no_solution, 0.0, z_hat), 2)
    direction = np.repeat([-1.0, 1.0], k)
    yy, mm = np.tile(y0, 2), np.tile(m, 2)
    full_reach = _full_reach(cal)
    reach = np.full(2 * k, full_reach)
    towards_vertex = np.zeros(2 * k, dtype=bool)
    if cal.model is Model.QUADRATIC and cal.vertex_z is not None:
        towards_vertex = (cal.vertex_z - start) * direction >= 0
        reach = np.where(towards_vertex, np.abs(cal.vertex_z - start), reach)
    first = np.tile(np.where(np.isfinite(guess) & (guess > 0), guess, 1e-3), 2)
    offset, closed = _band_crossing(cal, polys, yy, mm, probability, start, direction, reach, first)
    edge = np.where(closed, start + direction * offset, direction * np.inf)
    onward = towards_vertex & ~closed & ~np.tile(no_solution, 2)
    if onward.any():
        vertex = np.full(int(onward.sum()), float(cal.vertex_z))  # type: ignore[arg-type]
        more, more_closed = _band_crossing(
            cal, polys, yy[onward], mm[onward], probability, vertex, direction[onward],
            np.full(vertex.size, full_reach), first[onward],
        )
        edge[onward] = np.where(more_closed, vertex + direction[onward] * more, direction[onward] * np.inf)
    past_vertex = onward[:k] | onward[k:]
    return edge[:k], edge[k:], past_vertex


def _full_reach(cal: "FittedCurve") -> float:
    """How far beyond ẑ (or the vertex) the interval's ends are searched, in z."""
    # the spread of the standards in z: z rises with x, and so do its rounded values, so it is the
    # highest standard's z less the lowest's (the same bits as the spread of every standard's z)
    x, centre, scale = cal.concentration, cal.basis.centre, cal.basis.scale
    spread = (float(np.maximum.reduce(x)) - centre) / scale - (float(np.minimum.reduce(x)) - centre) / scale
    return SEARCH_HALF_RANGES * max(1.0, spread)


def _band_crossing(
    cal: "FittedCurve",
    polys: tuple[FloatArray, FloatArray],
    y0: FloatArray,
    m: np.ndarray,
    probability: float,
    start: FloatArray,
    direction: FloatArray,
    reach: FloatArray,
    first: FloatArray,
) -> tuple[FloatArray, np.ndarray]:
    """Distance from ``start`` along ``direction`` to the first point outside the prediction band.

    Starts from ``first`` (the half-width t·s_ẑ of the symmetric interval, close to the true end),
    doubles outward until it leaves the band (bracketing the first crossing; never beyond
    ``reach``), then refines the crossing by the Illinois variant of regula falsi (Dowell & Jarratt
    1971, BIT 11:168), which keeps the bracket and converges superlinearly. Each side is frozen as
    soon as it has converged, so its result depends on its own unknown only, never on the others
    quantified in the same call. Returns the distance and whether the band closed within reach.
    """

    def excess(at: np.ndarray, offset: FloatArray) -> FloatArray:
        return _band_excess(cal, polys, y0[at], m[at], probability, start[at] + direction[at] * offset)

    every = np.ones(start.size, dtype=bool)
    b = np.minimum(first, reach)
    a = np.zeros(start.size)
    g_a = excess(every, a)
    g_b = excess(every, b)
    # the guess may already lie outside the band; otherwise walk outward by doubling
    inside = g_b <= 0
    closed = ~inside
    for _ in range(_MAX_EXPANSIONS):
        inside &= b < reach
        if not inside.any():
            break
        a[inside], g_a[inside] = b[inside], g_b[inside]
        b[inside] = np.minimum(2.0 * b[inside], reach[inside])
        g_b[inside] = excess(inside, b[inside])
        newly_out = inside & (g_b > 0)
        closed |= newly_out
        inside &= ~newly_out
    side = np.zeros(start.size, dtype=np.int8)
    previous = np.full(start.size, np.inf)
    resolution = 4 * np.finfo(float).eps * (np.abs(start) + b)
    active = closed.copy()
    c = 0.5 * (a + b)
    for _ in range(_MAX_REFINE_STEPS):
        if not active.any():
            break
        at = active
        step = b[at] - g_b[at] * (b[at] - a[at]) / (g_b[at] - g_a[at])
        step = np.where(np.isfinite(step) & (step > a[at]) & (step < b[at]), step, 0.5 * (a[at] + b[at]))
        moving = (np.abs(step - previous[at]) > resolution[at]) & (b[at] - a[at] > resolution[at])
        # a side that has converged keeps its last point and takes no further step
        at = np.flatnonzero(at)[moving]
        active[:] = False
        active[at] = True
        if not at.size:
            break
        step = step[moving]
        c[at] = previous[at] = step
        g_c = excess(at, step)
        out = g_c > 0  # c lies outside the band: it becomes the outer end
        # Illinois step: halve the value kept at an end that survived twice in a row
        g_a[at] = np.where(out, np.where(side[at] == 1, 0.5 * g_a[at], g_a[at]), g_c)
        g_b[at] = np.where(out, g_c, np.where(side[at] == -1, 0.5 * g_b[at], g_b[at]))
        a[at] = np.where(out, a[at], step)
        b[at] = np.where(out, step, b[at])
        side[at] = np.where(out, 1, -1)
    return c, closed
