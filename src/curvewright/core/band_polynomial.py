"""Calibration-interval ends in closed form wherever the prediction band is a polynomial.

The ends of an unknown's calibration interval solve, in the fitting variable z,

    g(z) = (ȳ₀ − f̂(z))² − t²·(σ²/(m·w) + φ(z)ᵀ·C·φ(z)) = 0        (x = c + s·z)

(see :mod:`.inverse`). f̂ is a polynomial of degree ≤ 2 in z and φᵀCφ one of degree ≤ 4. The variance
of a new response σ²/w is a polynomial in x, hence in z, for every weighting that is not estimated:
a constant when unweighted; σ²·(x/r)^q/k for 1/x (q = 1) and 1/x² (q = 2) at and above the lowest
standard, and the constant of the lowest standard below it; and for 1/y-type weights a constant for
each unknown, since they follow its measured response (see :mod:`.weighting`). So g is a
polynomial of degree ≤ 4 in z, in at most two pieces split at the lowest standard.

Each unknown's g is expanded about its own ẑ, in h = z − ẑ. With r = ȳ₀ − f̂(ẑ) (zero up to
round-off) the square is (r − f̂′(ẑ)·h − a₂·h²)², so ȳ₀² never cancels against f̂²: the expansion
is as accurate as g evaluated directly. The h⁴ coefficient is the same for every unknown.

The interval is the connected set of z around ẑ where g ≤ 0, searched as far as the numeric
inversion searches (``SEARCH_HALF_RANGES`` spans of the standards beyond ẑ, or beyond the vertex of a
quadratic on the side that faces it). For most unknowns each end is had directly: Halley's method
from the root of g's quadratic part, accepted when g(0) < 0 and g is convex between ẑ and the root
(then g stays below the chord from ẑ to the root, so the root is where the band first lets go).
For the others, the points where g may turn (the real roots of the cubic g′ in each piece), the
piece boundary and the vertex split the search into stretches on which g is monotone. The first of
these points at which g > 0 closes the stretch that holds the end; g has exactly one root there,
which Newton's method, kept inside the bracket by regula falsi and bisection, finds to full
precision. No such point within reach: the interval is unbounded on that side.

The roots of the cubic come from Cardano's formula, or its trigonometric form when all three are
real (Press et al., *Numerical Recipes*, 3rd ed., §5.6; section from memory), polished by Newton
steps. They only split the search: one found a little off, or one too many, moves no end, since the
end itself is solved on g.

Everything is vectorised over the unknowns of a call, and each unknown's ends depend on its own
ȳ₀ and m alone.
"""

from __future__ import annotations

import functools
import math
from typing import TYPE_CHECKING

import numpy as np

from .band_few_ends import other_piece_end
from .values import frozen_value
from ._arrays import FloatArray
from .weighting import Weighting

if TYPE_CHECKING:  # pragma: no cover
    from .fitted_curve import FittedCurve

_MAX_NEWTON_STEPS = 100
_CUBIC_POLISH_STEPS = 2
_FULL_WIDTH_STEPS = 4
"""Newton steps taken on every unknown of a block before the few still moving are worked alone."""
_EPS = float(np.finfo(float).eps)
_CONVEX_STEPS = 4
_EXTREMES_FROM = 8192
"""Unknowns in a block from which the tests of Halley's steps are first tried on the block's extremes
(a few reductions) before each position: below it a reduction costs about as much as the passes it
would save (numpy's fixed cost per call), so every position is tested."""
_FEW_ENDS = 16
"""Up to this many ends across the lowest standard are solved one by one in Python floats
(:mod:`.band_few_ends`), where numpy's fixed cost per operation would be most of the work."""
_CONVERGED = 1e-6
"""Relative size of the last of Halley's steps above which the direct end is not trusted: the error
after a step is of the order of the step cubed, far below a double's resolution."""


@frozen_value
class BandPolynomial:
    """The pieces of g for one calibration and confidence level (ascending coefficients in z).

    The variance of the mean of m new responses is ``new_variance``(z)·v, with v = 1/m, or
    v = (max(ȳ₀, floor)/r)^q/m for 1/y-type weights (the weight follows the measured response, so
    it is one number for each unknown).
    """

    fitted: FloatArray
    """f̂(z), 3 coefficients."""
    curve_variance: FloatArray
    """φ(z)ᵀ·C·φ(z), 5 coefficients."""
    new_variance: FloatArray
    """σ²/w at and above the lowest standard, for v = 1, 3 coefficients."""
    new_variance_below: float
    """σ²/w below the lowest standard, for v = 1."""
    z_break: float
    """z of the lowest standard where the weights depend on x, −inf otherwise."""
    t2: float
    response_power: int = 0
    response_floor: float = 0.0
    response_reference: float = 1.0

    def multiplier(self, y0: FloatArray, m: np.ndarray) -> FloatArray | float:
        """v for each unknown (see the class): one number where the weights do not follow the
        response and every unknown has the same count (the usual single count), the same quotient
        1/m as each element of the array would hold."""
        if not self.response_power and m.size and m.min() == m.max():
            return 1.0 / float(m[0])
        v = 1.0 / m.astype(np.float64)
        if self.response_power:
            ratio = np.maximum(y0, self.response_floor) / self.response_reference
            v = v * (ratio if self.response_power == 1 else ratio * ratio)
        return v

    def about(
        self, y0: FloatArray, v: FloatArray | float, z0: FloatArray, curve_variance: FloatArray | None = None
    ) -> "ShiftedBand":
        """g as polynomials in h = z − z0, one for each unknown, expanded about its own z0.

        With r = ȳ₀ − f̂(z0) and f̂(z0 + h) = f̂(z0) + f̂′(z0)·h + a₂·h², the square is
        (r − f̂′·h − a₂·h²)², expanded without the cancellation of ȳ₀² against f̂²: at ẑ, r is zero.
        ``curve_variance`` is φ(z0)ᵀ·C·φ(z0) when the caller has it (the same bits as computed here).
        """
        f, c, w = self.fitted, self.curve_variance, self.new_variance
        # Each array below is made once and then worked in place where its old value is not read
        # again (the same operations on the same numbers, so the same bits as the expressions in the
        # comments; + and × commute exactly): fewer fresh arrays, and those in use stay in the cache.
        # r = ȳ₀ − f̂(z0)
        r = _trimmed_horner(z0, f)
        r = np.subtract(y0, r, out=r) if _owned(r, y0) else y0 - r
        # where f̂ or the curve variance has no term in z² and above, the terms they would add are
        # exact zeros (z0 is finite for every unknown whose result is kept), and are left out
        curved = f[2] != 0.0
        if curved:
            s1 = z0 * (2.0 * f[2])  # f̂′(z0) = f[1] + 2·f[2]·z0
            s1 += f[1]
        else:
            s1 = f[1]
        # Taylor coefficients of the curve variance about z0
        c0 = _trimmed_horner(z0, c) if curve_variance is None else curve_variance
        c1 = _trimmed_horner(z0, np.array([c[1], 2.0 * c[2], 3.0 * c[3], 4.0 * c[4]]))
        c2 = _trimmed_horner(z0, np.array([c[2], 3.0 * c[3], 6.0 * c[4]]))
        t2 = self.t2
        straight = f[2] == 0.0 and c[3] == 0.0 and c[4] == 0.0  # a straight line: g is quadratic in h
        # −2r is made once for the h and h² terms: s1² − (2r)·a₂ is s1² + (−2r)·a₂, the same bits
        # (negating is exact, so (−2r)·a₂ is −((2r)·a₂), infinities included)
        minus_2r = r * -2.0
        # h²: s1² + (−2r)·a₂ − t²·c2 (s1² − t²·c2 without curvature)
        c2 = _times(c2, t2, z0)
        if curved:
            base2 = s1 * s1
            base2 += minus_2r * f[2]
            base2 -= c2
        else:
            base2 = s1 * s1 - c2
        # h: (−2r)·s1 − t²·c1
        minus_2r = np.multiply(minus_2r, s1, out=minus_2r) if _owned(minus_2r, s1) else minus_2r * s1
        c1 = _times(c1, t2, z0)
        base1 = np.subtract(minus_2r, c1, out=minus_2r) if _owned(minus_2r, c1) else minus_2r - c1
        # constant: r² − t²·c0
        base0 = np.multiply(r, r, out=r)
        base0 -= t2 * c0 if curve_variance is not None else _times(c0, t2, z0)
        # h³: 2·s1·a₂ − t²·(c3 + 4·c4·z0)
        if straight:
            base3 = 0.0
        else:
            cubic = z0 * (4.0 * c[4])
            cubic += c[3]
            cubic *= t2
            if isinstance(s1, np.ndarray):
                base3 = np.multiply(s1, 2.0, out=s1)  # s1 is not read again
                base3 *= f[2]
                base3 -= cubic
            else:
                base3 = (2.0 * s1) * f[2] - cubic
        base = [base0, base1, base2, base3, float(f[2] * f[2] - t2 * c[4])]
        tv = t2 * v
        upper = list(base)
        new_constant = _trimmed_horner(z0, w)
        new_constant = _times(new_constant, tv, z0)
        upper[0] = np.subtract(base[0], new_constant, out=new_constant) if _owned(new_constant, base[0]) else (
            base[0] - new_constant)
        if w[1] != 0.0 or w[2] != 0.0:
            new_linear = z0 * (2.0 * w[2])  # tv·(w1 + 2·w2·z0)
            new_linear += w[1]
            new_linear = _times(new_linear, tv, z0)
            upper[1] = np.subtract(base[1], new_linear, out=new_linear) if _owned(new_linear, base[1]) else (
                base[1] - new_linear)
            upper[2] = base[2] - tv * w[2]
            if np.ndim(upper[2]) == 0 and np.ndim(base[2]) == 0:
                # one v for every unknown and a curve without h² terms of its own (a straight line):
                # this piece's h² term differs from the other piece's, so it is held as an array, as
                # with a v for each unknown (the pieces are chosen term by term, and a number is
                # taken as shared by both)
                upper[2] = np.full(z0.shape, upper[2])
        lower = None
        if np.isfinite(self.z_break):
            lower = list(base)
            lower[0] = base[0] - tv * self.new_variance_below
        return ShiftedBand(z0, upper, lower, self.z_break - z0 if lower is not None else None)


@frozen_value
class ShiftedBand:
    """g about z0 for each unknown: ``upper`` holds where h ≥ ``h_break`` (everywhere when there is
    one piece), ``lower`` below it. Coefficient lists in ascending powers of h; the last (h⁴) is one
    number for every unknown."""

    z0: FloatArray
    upper: list
    lower: list | None
    h_break: FloatArray | None

    def take(self, index: np.ndarray) -> "ShiftedBand":
        """The same for the unknowns at ``index`` only."""
        pick = lambda c: c[index] if np.ndim(c) else c  # noqa: E731
        return ShiftedBand(
            self.z0[index], [pick(c) for c in self.upper], None if self.lower is None else [pick(c) for c in self.lower],
            None if self.h_break is None else self.h_break[index],
        )

    def at_zero(self, below: np.ndarray | None = None, below_index: np.ndarray | None = None) -> list:
        """Coefficients of the piece that holds h = 0 (z = z0); ``below``: h_break > 0, and
        ``below_index``, its positions, when the caller has them."""
        if self.lower is None or self.h_break is None:
            return self.upper
        below = self.h_break > 0 if below is None else below
        if below_index is None:
            if not below.any():
                return self.upper  # every ẑ at or above the lowest standard
            below_index = np.flatnonzero(below)
        if not below_index.size:
            return self.upper
        # the pieces share their h³ and h⁴ terms (the same arrays): those need no choice. Each value
        # is taken whole from its piece, so the same bits as np.where(below, lower, upper); where few
        # ẑ lie below the lowest standard (the usual case) they are written over a copy of the upper
        # piece, which is quicker than choosing at every position
        few = 8 * below_index.size < below.size
        out = []
        for lo, up in zip(self.lower, self.upper):
            if not (np.ndim(up) or np.ndim(lo)) or lo is up:
                out.append(up)
            elif not few:
                out.append(np.where(below, lo, up))
            else:
                chosen = np.array(up, dtype=np.float64) if np.ndim(up) else np.full(below.size, up, dtype=np.float64)
                chosen[below_index] = lo[below_index] if np.ndim(lo) else lo
                out.append(chosen)
        return out

    def excess(self, h: FloatArray) -> FloatArray:
        value = _quartic(self.upper, h)
        if self.lower is not None:
            value = np.where(h >= self.h_break, value, _quartic(self.lower, h))
        return value

    def turning_points(self) -> list[FloatArray]:
        """Real roots of g′ in each piece, each restricted to its piece (NaN where absent)."""
        out: list[FloatArray] = []
        for piece, upper in ((self.upper, True), (self.lower, False)):
            if piece is None:
                continue
            d0, d1, d2, d3 = piece[1], 2.0 * piece[2], 3.0 * piece[3], 4.0 * piece[4]
            for root in _cubic_real_roots(d3, d2, d1, d0):
                if self.h_break is not None:
                    inside = root >= self.h_break if upper else root < self.h_break
                    root = np.where(inside, root, np.nan)
                out.append(root)
        return out


def _owned(made: object, other: object) -> bool:
    """Whether ``made``, just made by the caller, is an array of the shape of the result of an
    element-wise operation with ``other`` (a number or an array), so that it may take that result in
    place."""
    return isinstance(made, np.ndarray) and made.ndim > 0 and (
        not isinstance(other, np.ndarray) or other.shape == made.shape)


def _times(made: FloatArray | float, factor: FloatArray | float, z0: FloatArray) -> FloatArray | float:
    """``factor``·``made``, in place in ``made`` where it is an array the caller just made (one or
    more unknowns, the shape of ``z0``); multiplication commutes exactly."""
    if isinstance(made, np.ndarray) and made.shape == z0.shape and (
            not isinstance(factor, np.ndarray) or factor.shape == made.shape):
        made *= factor
        return made
    return factor * made


def _quartic(c: list, h: FloatArray) -> FloatArray:
    return (((c[4] * h + c[3]) * h + c[2]) * h + c[1]) * h + c[0]


def band_polynomial(cal: "FittedCurve", t: float) -> BandPolynomial | None:
    """The polynomial pieces of g for Student's ``t``, or None where the band is not a polynomial in x.

    None for 1/s² (interpolated SDs) and for variance functions estimated from the standards (their t
    varies along the band too).
    """
    wm = cal.weight_model
    if wm.variance_fit is not None or cal.weighting is Weighting.INVERSE_S2:
        return None
    # the curve and its variance in z (the calibration keeps them), padded to a quadratic's
    curve, variance = cal.z_polynomials
    fitted = _padded(curve, 3)
    curve_variance = _padded(variance, 5)
    s2 = cal.residual_sd**2
    centre, scale = cal.basis.centre, cal.basis.scale
    k, r, power = wm.normaliser, wm.reference, wm.power
    response = {}
    if cal.weighting in (Weighting.INVERSE_X, Weighting.INVERSE_X2):
        a, b = centre / r, scale / r  # x/r = a + b·z
        # (a + b·z)² = a² + 2ab·z + b²·z² (polymul's products; its middle term ab + ba is 2ab exactly)
        shape = [a, b] if power == 1 else [a * a, 2.0 * (a * b), b * b]
        new_variance = _padded(np.array([s2 / k * c for c in shape]), 3)
        low = wm.lowest_concentration
        below = float(s2 / (k * (r / low) ** power))
        z_break = float((low - centre) / scale)
    else:
        new_variance, below, z_break = np.array([s2 / k, 0.0, 0.0]), s2 / k, -np.inf
        if cal.weighting in (Weighting.INVERSE_Y, Weighting.INVERSE_Y2):
            response = dict(response_power=power, response_floor=wm.lowest_response, response_reference=r)
    return BandPolynomial(
        fitted=fitted, curve_variance=curve_variance, new_variance=new_variance, new_variance_below=below,
        z_break=z_break, t2=t * t, **response,
    )


def polynomial_band_edges(
    band: BandPolynomial,
    y0: FloatArray,
    m: np.ndarray,
    start: FloatArray,
    full_reach: float,
    vertex_z: float | None,
    guess: FloatArray,
    curve_variance: FloatArray | None = None,
    defer: bool = False,
    defer_crossing: bool = False,
) -> tuple[FloatArray, FloatArray, np.ndarray, tuple | None]:
    """Lower and upper ends of the calibration interval around ``start`` (ẑ), in z, and which
    unknowns' intervals reach past the vertex. The same search as the numeric inversion
    (:func:`curvewright.core.inverse._band_edges`), solved on the polynomial. ``guess`` is a distance
    from ẑ close to either end (the half-width of the symmetric interval), used to narrow the bracket;
    ``curve_variance``, φᵀCφ at ``start``, when the caller has it.

    With ``defer``, the ends that need the full search are not searched: each such end is left at
    ``start`` and not counted past the vertex, and the last item returned holds the positions of the
    unknowns whose lower and upper ends were left, for :func:`searched_end` (so that the few of a
    large call are searched together, not block by block). Otherwise that item is None. With
    ``defer_crossing`` as well, the direct ends that lie across the lowest standard are left the same
    way, for :func:`crossing_end` (so that the few of each block of a large call are solved together:
    on tiny arrays each call's fixed cost is most of the work); the last item then holds, for each
    side, the positions of the ends left for the full search and of those left across the standard.
    """
    shifted, h_vertex = _about_start(band, y0, m, start, vertex_z, curve_variance)
    first = _Start(shifted)
    ends = []
    left = []
    past_vertex = np.zeros(y0.size, dtype=bool)
    if h_vertex is not None:
        # the vertex lies on one side of every unknown (the usual case) or not
        lowest, highest = np.min(h_vertex), np.max(h_vertex)
    for direction in (-1.0, 1.0):
        facing = None
        if h_vertex is not None:
            if min(lowest * direction, highest * direction) >= 0:
                facing = True  # every unknown faces the vertex on this side
                reach = np.abs(h_vertex) + full_reach
            elif max(lowest * direction, highest * direction) < 0:
                facing = False  # none does: the vertex plays no part on this side
                reach = full_reach
            else:
                towards, reach = _reach_past_vertex(h_vertex, direction, full_reach)
        else:
            reach = full_reach
        h_end, certain, crossed = _convex_end(shifted, first, direction, reach, guess, start)
        over = None
        if crossed is not None and crossed.any():
            # the interval crosses the lowest standard: its end is sought on the other piece
            over = np.flatnonzero(crossed)
            if defer and defer_crossing:
                certain[over] = True  # left below, as the ends for the full search are
            else:
                h_end[over], certain[over] = _end_in_the_other_piece(shifted, over, direction, reach, guess, start)
                over = None
        rest = np.flatnonzero(~certain)
        if h_vertex is not None and facing is not False:
            # an end past the vertex leaves the band holding ȳ₀ all the way to the vertex; h·direction
            # compared without the products (multiplying by ±1 is exact, and NaN compares false)
            beyond_vertex = h_end > h_vertex if direction > 0 else h_end < h_vertex
        if defer:
            across = _NONE_LEFT if over is None else over
            left.append((rest, across) if defer_crossing else rest)
            for index in (rest, across):
                if index.size:
                    h_end[index] = 0.0
                    if h_vertex is not None and facing is not False:
                        beyond_vertex[index] = False
        z_end = start + h_end
        if rest.size and not defer:
            z_end[rest], past = searched_end(
                band, y0[rest], m[rest], start[rest], full_reach, vertex_z, guess[rest], direction
            )
            if h_vertex is not None and facing is not False:
                beyond_vertex[rest] = past
        ends.append(z_end)
        if facing is None and h_vertex is not None:
            past_vertex |= towards & beyond_vertex
        elif facing:
            past_vertex |= beyond_vertex
    return ends[0], ends[1], past_vertex, (left[0], left[1]) if defer else None


_NONE_LEFT = np.zeros(0, dtype=np.intp)
_NONE_LEFT.flags.writeable = False


def crossing_end(
    band: BandPolynomial,
    y0: FloatArray,
    m: np.ndarray,
    start: FloatArray,
    full_reach: float,
    vertex_z: float | None,
    guess: FloatArray,
    direction: float,
) -> tuple[FloatArray, np.ndarray, np.ndarray]:
    """One end (``direction`` −1: lower, +1: upper), in z, of unknowns whose direct end on the piece
    that holds ẑ lay across the lowest standard (left by :func:`polynomial_band_edges` with
    ``defer_crossing``), solved on the other piece (:func:`_end_in_the_other_piece`); where that is
    certain, and whether the end lies past the vertex on the side that faces it. The operations of
    :func:`polynomial_band_edges` on the same numbers, each unknown on its own, so the same bits
    whichever unknowns are solved together; the ends not certain go to :func:`searched_end`."""
    shifted, h_vertex = _about_start(band, y0, m, start, vertex_z)
    if h_vertex is not None:
        towards, reach = _reach_past_vertex(h_vertex, direction, full_reach)
    else:
        reach = full_reach
    h_end, certain = _end_in_the_other_piece(shifted, np.arange(y0.size), direction, reach, guess, start)
    if h_vertex is not None:
        past = towards & (h_end * direction > h_vertex * direction)
    else:
        past = np.zeros(y0.size, dtype=bool)
    return start + h_end, certain, past


def searched_end(
    band: BandPolynomial,
    y0: FloatArray,
    m: np.ndarray,
    start: FloatArray,
    full_reach: float,
    vertex_z: float | None,
    guess: FloatArray,
    direction: float,
) -> tuple[FloatArray, np.ndarray]:
    """One end (``direction`` −1: lower, +1: upper), in z, found by the full search (:func:`_side`),
    and whether it lies past the vertex on the side that faces it. Each unknown's end depends on its
    own ȳ₀, m, ẑ and ``guess`` only, whichever others are searched with it."""
    shifted, h_vertex = _about_start(band, y0, m, start, vertex_z)
    if h_vertex is not None:
        towards, reach = _reach_past_vertex(h_vertex, direction, full_reach)
    else:
        towards = np.zeros(y0.size, dtype=bool)
        reach = np.full(y0.size, full_reach)
    splits = shifted.turning_points()
    if shifted.h_break is not None:
        splits.append(shifted.h_break)
    if h_vertex is not None:
        splits.append(h_vertex)
    h_end, beyond_vertex = _side(
        shifted, shifted.excess(np.zeros(y0.size)), direction, splits, reach, h_vertex, guess, start
    )
    # ẑ plus the distance, as every other end is made
    return start + h_end, towards & beyond_vertex


def _about_start(
    band: BandPolynomial, y0: FloatArray, m: np.ndarray, start: FloatArray, vertex_z: float | None,
    curve_variance: FloatArray | None = None,
) -> tuple[ShiftedBand, FloatArray | None]:
    """g about each unknown's ẑ (``start``) and the distance from ẑ to the vertex (None without one)."""
    shifted = band.about(y0, band.multiplier(y0, m), start, curve_variance)
    return shifted, None if vertex_z is None else vertex_z - start


def _reach_past_vertex(h_vertex: FloatArray, direction: float, full_reach: float) -> tuple[np.ndarray, FloatArray]:
    """Which unknowns face the vertex on the side ``direction``, and how far from ẑ that side is
    searched: to the vertex and ``full_reach`` beyond it where it faces the vertex, else ``full_reach``."""
    towards = h_vertex * direction >= 0
    return towards, np.where(towards, np.abs(h_vertex), 0.0) + full_reach


def _largest_magnitude(values: FloatArray | float) -> float:
    """The largest |value| of ``values``, from their least and largest (NaN where one is NaN, or
    where there are none)."""
    low, high = _extreme(np.minimum, values), _extreme(np.maximum, values)
    if math.isnan(low) or math.isnan(high):
        return float("nan")
    return max(abs(low), abs(high))


def _extreme(ufunc: np.ufunc, values: FloatArray | float) -> float:
    """The least (``np.minimum``) or largest (``np.maximum``) of ``values`` (NaN where one is NaN, or
    where there are none, so that no test on it passes)."""
    return float(ufunc.reduce(values, axis=None)) if np.size(values) else float("nan")


class _Start:
    """What both sides' direct ends share: the coefficients of the piece that holds ẑ, the roots of
    its quadratic part, g(0) < 0, and the terms of g′ and g″ that do not depend on h."""

    def __init__(self, shifted: ShiftedBand) -> None:
        self.below_break = None if shifted.h_break is None else shifted.h_break > 0
        self._below_index = None
        c = shifted.at_zero(self.below_break, None if self.below_break is None else self.below_index())
        self.c = c
        c0, c1, c2 = c[0], c[1], c[2]
        self.inside = c0 < 0
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            # q = −(c1 + sign(c1)·√(c1² − 4·c2·c0))/2, worked in place in one array (the same bits)
            q = c1 * c1
            q -= (4.0 * c2) * c0
            np.sqrt(q, out=q)
            np.copysign(q, c1, out=q)
            q += c1
            q *= -0.5
            self.r1, self.r2 = q / c2, c0 / q
            self.quartic = not (np.ndim(c[3]) == 0 and c[3] == 0.0 and c[4] == 0.0)
            if self.quartic:
                self.twice_c2 = 2.0 * c2
                self.thrice_c3 = 3.0 * c[3]
        self._tolerance = None
        self._largest_tolerance: float | None = None
        self._least_tolerance: float | None = None
        self._largest_abs_six_c3: float | None = None
        self._least_convex_margin: float | None = None

    # g″(v) ≥ 2c2 − 6|c3|·|v| − 12·max(−c4, 0)·v² on [0, h]: when that bound stays above a margin of
    # 1e-6 of 2c2, g is convex there, and g″ evaluated in floating point is ≥ 0 at every point the
    # exact test (see :func:`_exactly_convex`) would look at, since its round-off is below a few units
    # in the last place of 2c2 + 6|c3·v| + 12|c4|·v². The margins and |6c3| at each position are
    # made only when the test at each position is made (:func:`_convex`); the block's extremes of
    # them come from the extremes of 2c2 and c3 (see :meth:`least_convex_margin`).

    @functools.cached_property
    def convex_margin(self) -> FloatArray:
        """2c2·(1 − 1e-6) at each position."""
        return self.twice_c2 * (1.0 - 1e-6)

    @functools.cached_property
    def six_c3(self) -> FloatArray:
        """6c3 at each position."""
        return 6.0 * self.c[3]

    @functools.cached_property
    def abs_six_c3(self) -> FloatArray:
        """|6c3| at each position."""
        return np.abs(self.six_c3)

    def below_index(self) -> np.ndarray:
        """The positions of the unknowns whose ẑ lies below the lowest standard (h_break > 0)."""
        if self._below_index is None:
            self._below_index = np.flatnonzero(self.below_break)
        return self._below_index

    def tolerance(self, start: FloatArray) -> FloatArray:
        """The size of Halley's step below which an end counts as converged, beside its own size
        (:data:`_CONVERGED` times |ẑ|): one array for both sides."""
        if self._tolerance is None:
            self._tolerance = _CONVERGED * np.abs(start)
        return self._tolerance

    def least_tolerance(self, start: FloatArray) -> float:
        """The least of :meth:`tolerance` (NaN where one is NaN), worked out once for both sides."""
        if self._least_tolerance is None:
            self._least_tolerance = _extreme(np.minimum, self.tolerance(start))
        return self._least_tolerance

    def largest_abs_six_c3(self) -> float:
        """The largest |6c3| (NaN where one is NaN), worked out once for both sides."""
        if self._largest_abs_six_c3 is None:
            # max |fl(6c3)| is fl(6·max |c3|): rounding is monotone and symmetric about zero, so the
            # same bits as the largest of :attr:`abs_six_c3`, without making it (NaN where one is NaN)
            self._largest_abs_six_c3 = 6.0 * _largest_magnitude(self.c[3])
        return self._largest_abs_six_c3

    def least_convex_margin(self) -> float:
        """The least of the convexity margins (NaN where one is NaN), worked out once for both sides."""
        if self._least_convex_margin is None:
            # min fl(2c2·(1 − 1e-6)) is fl(min(2c2)·(1 − 1e-6)): multiplying by a positive number and
            # rounding keep the order, so the same bits as the least of :attr:`convex_margin`
            self._least_convex_margin = _extreme(np.minimum, self.twice_c2) * (1.0 - 1e-6)
        return self._least_convex_margin

    def largest_tolerance(self, start: FloatArray) -> float:
        """The largest of :meth:`tolerance` (NaN where one is NaN), worked out once for both sides."""
        if self._largest_tolerance is None:
            self._largest_tolerance = _extreme(np.maximum, self.tolerance(start))
        return self._largest_tolerance


def _convex_end(
    shifted: ShiftedBand,
    first: _Start,
    direction: float,
    reach: FloatArray,
    guess: FloatArray,
    start: FloatArray,
) -> tuple[FloatArray, np.ndarray]:
    """The end on one side where it can be had directly, and where that is certain.

    Halley's method on the piece that holds ẑ, from the root of its quadratic part (g without its
    h³ and h⁴ terms). The root h* found is certainly the first exit from the band when g(0) < 0 and
    g is convex on [0, h*]: a convex function that is negative at 0 and zero at h* stays below
    the chord between them, so it is ≤ 0 on [0, h*] and rises through zero at h*. It must also lie
    within reach and in the same piece as ẑ; it may lie past the vertex of a quadratic, since g ≤ 0
    all the way to it. The others are searched in full (:func:`_side`).
    """
    c = first.c
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        r1 = first.r1
        h = np.where(r1 > 0 if direction > 0 else r1 < 0, r1, first.r2)
        if not first.quartic:
            # g is c0 + c1·h + c2·h² (a straight line): that root is the end, and g″ = 2c2
            convex = c[2] >= 0
            converged = np.isfinite(h)
        else:
            # h·direction > 0, compared without the product (multiplying by ±1 is exact)
            if not _all_on_the_side(h, direction):
                usable = np.isfinite(h) & (h > 0 if direction > 0 else h < 0)
                h = np.where(usable, h, direction * guess)
            tolerance = first.tolerance(start)
            # Halley's step: third-order convergence from the quadratic part's root. Every unknown
            # takes the first step; one whose step is already below the test stops there.
            step = _halley_step(first, h)
            h -= step
            # which stop after the first step: none (the usual case) where the block's extremes tell
            by_extremes = h.size >= _EXTREMES_FROM
            stops = None if by_extremes and _none_converged(step, first.largest_tolerance(start), h) else (
                _step_converged(step, tolerance, h))
            if stops is None or not stops.any():
                # no unknown stops after the first step: every one takes the second, in place; the
                # same bits as the general case below with no step-one stops
                step = _halley_step(first, h)
                h -= step
                # every unknown stopping after the second step is the usual case: decided from the
                # block's extremes where they tell (True stands for "all"), else at each position
                converged = None
                if by_extremes:
                    h_low, h_high = np.minimum.reduce(h), np.maximum.reduce(h)
                    if _all_converged(step, first, start, h_low, h_high):
                        converged = True
                if converged is None:
                    converged = _step_converged(step, tolerance, h)
            else:
                converged = stops
                if not converged.all():
                    step = _halley_step(first, h)
                    after = h - step
                    done = _step_converged(step, tolerance, after)
                    if converged.any():
                        after = np.where(converged, h, after)
                        done |= converged
                    h, converged = after, done
            if converged is not True and not converged.all():
                # the few still moving take their further steps alone
                rest = np.flatnonzero(~converged)
                part = _Start.__new__(_Start)
                part.c = [ci[rest] if np.ndim(ci) else ci for ci in c]
                part.twice_c2, part.thrice_c3 = first.twice_c2[rest], first.thrice_c3[rest]
                hr, tr, moving = h[rest], tolerance[rest], np.ones(rest.size, dtype=bool)
                for _ in range(_CONVEX_STEPS - 2):
                    step = _halley_step(part, hr)
                    hr = np.where(moving, hr - step, hr)
                    moving &= ~(np.abs(step) <= tr + _CONVERGED * np.abs(hr))
                    if not moving.any():
                        break
                h[rest], converged[rest] = hr, ~moving
            # the quick convexity bound decided from the block's extremes where they tell, whether or not
            # every unknown stopped (under 1/x² the steps' test is made at each position, but the bound
            # still holds for the whole block); the extremes of h as it now is
            convex = None
            if by_extremes:
                if converged is not True:
                    # some unknowns took other steps, or the extremes were not taken
                    h_low, h_high = np.minimum.reduce(h), np.maximum.reduce(h)
                if _surely_convex(first, h_low, h_high):
                    convex = True
            if convex is None:
                convex = _convex(first, h)
        # 0 < u ≤ reach with u = h·direction, compared without the product (multiplying and negating
        # by ±1 are exact); within a finite reach it holds only for a finite h
        if direction > 0:
            certain = h > 0
            certain &= h <= reach
        else:
            certain = h < 0
            certain &= h >= -reach
        if not _reach_bounded(reach):
            certain &= np.isfinite(h)
        certain &= first.inside
        if convex is not True:
            certain &= convex
        if converged is not True:
            certain &= converged
        crossed = None
        if first.below_break is not None:
            if direction > 0:
                # above ẑ, only an unknown whose ẑ lies below the lowest standard can cross it: for the
                # others h_break ≤ 0 < h, so the end lies in their piece (the test below gives them
                # "same piece" too); those few are tested alone
                below = first.below_index()
                if below.size:
                    same_piece = h[below] < shifted.h_break[below]
                    crossed = np.zeros(h.size, dtype=bool)
                    crossed[below] = certain[below] & ~same_piece
                    certain[below] &= same_piece
            else:
                same_piece = first.below_break == (h < shifted.h_break)
                crossed = certain & ~same_piece
                certain &= same_piece
    return h, certain, crossed


def _end_in_the_other_piece(
    shifted: ShiftedBand,
    index: np.ndarray,
    direction: float,
    reach: FloatArray | float,
    guess: FloatArray,
    start: FloatArray,
) -> tuple[FloatArray, np.ndarray]:
    """The ends at ``index`` found directly on the other side of the lowest standard, and where that
    is certain: for unknowns whose direct end on the piece that holds ẑ (:func:`_convex_end`) was
    certain but for lying beyond the break, so that g ≤ 0 from ẑ to the break. The same method on the
    other piece from h = 0: when that piece is negative at 0 and convex on [0, h*] it is ≤ 0 there,
    so between the break and h* too, and rises through zero at h*; h* must lie in that piece."""
    below = shifted.h_break[index] > 0  # ẑ below the lowest standard: the other piece is the upper
    if index.size <= _FEW_ENDS:
        return _few_in_the_other_piece(shifted, index, below, direction, reach, guess, start)
    pick = lambda c: c[index] if np.ndim(c) else c  # noqa: E731
    # all of one side of the break, as is usual (a lower end crossing it from above), the other
    # piece is taken whole; the terms the pieces share (the same arrays) need no choice either
    side = "upper" if below.all() else "lower" if not below.any() else None
    other = [
        pick(up) if np.ndim(up) and (lo is up or side == "upper") else
        pick(lo) if np.ndim(lo) and np.ndim(up) and side == "lower" else
        np.where(below, pick(up), pick(lo)) if np.ndim(up) or np.ndim(lo) else up
        for lo, up in zip(shifted.lower, shifted.upper)
    ]
    part = ShiftedBand(shifted.z0[index], other, None, None)
    h, certain, _ = _convex_end(part, _Start(part), direction, reach if np.ndim(reach) == 0 else reach[index],
                                guess[index], start[index])
    certain &= (h < shifted.h_break[index]) != below
    return h, certain


def _few_in_the_other_piece(
    shifted: ShiftedBand,
    index: np.ndarray,
    below: np.ndarray,
    direction: float,
    reach: FloatArray | float,
    guess: FloatArray,
    start: FloatArray,
) -> tuple[FloatArray, np.ndarray]:
    """:func:`_end_in_the_other_piece` for a few unknowns, each solved alone in Python floats
    (:func:`.band_few_ends.other_piece_end`: the same operations on the same numbers, so the same
    bits, without numpy's fixed cost per operation on arrays of one or two elements). Each term of
    the other piece as the arrays' path chooses it: the upper piece's where ẑ lies below the lowest
    standard, else the lower's, and a term held as a number by both pieces is taken as shared."""
    n = index.size
    is_array = lambda c: isinstance(c, np.ndarray) and c.ndim > 0  # noqa: E731 (np.ndim's cost, without it)
    below_list = below.tolist()
    terms = []
    for lo, up in zip(shifted.lower, shifted.upper):
        up_array, lo_array = is_array(up), is_array(lo)
        if not (up_array or lo_array):
            terms.append([float(up)] * n)
        else:
            up_values = up[index].tolist() if up_array else [float(up)] * n
            lo_values = lo[index].tolist() if lo_array else [float(lo)] * n
            terms.append([u if b else l for u, l, b in zip(up_values, lo_values, below_list)])
    # whether the other piece has h³ or h⁴ terms, decided for the whole call as the arrays' path does
    c3, c4 = shifted.upper[3], shifted.upper[4]
    shared = not (is_array(shifted.lower[3]) or is_array(c3) or is_array(shifted.lower[4]) or is_array(c4))
    quartic = not (shared and c3 == 0.0 and c4 == 0.0)
    one_reach = not is_array(reach)
    finite_reach = one_reach and math.isfinite(reach)
    reaches = [float(reach)] * n if one_reach else reach[index].tolist()
    h = np.empty(n)
    certain = np.empty(n, dtype=bool)
    for k, (coefficients, u, g, z, hb, b) in enumerate(zip(
        zip(*terms), reaches, guess[index].tolist(), start[index].tolist(), shifted.h_break[index].tolist(),
        below_list,
    )):
        h[k], certain[k] = other_piece_end(
            coefficients, quartic, direction, u, finite_reach, g, z, hb, b, _CONVERGED, _CONVEX_STEPS - 2
        )
    return h, certain


def _halley_step(first: _Start, h: FloatArray) -> FloatArray:
    """Halley's step g·g′/(g′² − g·g″/2) at h on the piece that holds ẑ (the same bits as
    2·g·g′/(2·g′² − g·g″): scaling by two is exact). g″/2 = 6c4·h² + 3c3·h + c2 is worked from
    halved coefficients, not halved after: scaling by two commutes with every rounding, so the same
    bits wherever no term overflows or falls below the normal range (|·| above about 1e308 or below
    about 2e-308)."""
    c = first.c
    value = c[4] * h
    value += c[3]
    value *= h
    value += c[2]
    value *= h
    value += c[1]
    value *= h
    value += c[0]
    slope = (4.0 * c[4]) * h
    slope += first.thrice_c3
    slope *= h
    slope += first.twice_c2
    slope *= h
    slope += c[1]
    bend = (6.0 * c[4]) * h
    bend += first.thrice_c3
    bend *= h
    bend += c[2]
    bend *= value
    numerator = value
    numerator *= slope
    slope *= slope
    slope -= bend
    numerator /= slope
    return numerator


def _all_on_the_side(h: FloatArray, direction: float) -> bool:
    """Whether every h is finite and on the side ``direction`` (h > 0 above, h < 0 below), decided
    from the least and largest h (two reductions instead of a test at each position). True where
    there are none; False where one is NaN (a NaN makes both comparisons false)."""
    if not h.size:
        return True
    low, high = np.minimum.reduce(h), np.maximum.reduce(h)
    if direction > 0:
        return bool(low > 0.0) and bool(high < np.inf)
    return bool(high < 0.0) and bool(low > -np.inf)


def _reach_bounded(reach: FloatArray | float) -> bool:
    """Whether no ``reach`` is +inf or NaN: then 0 < h ≤ reach (or −reach ≤ h < 0) holds only for a
    finite h (a reach of −inf lets no h through), and no test of h for finiteness is needed. Decided
    from the largest reach (a NaN makes the comparison false: then the test is made)."""
    if np.ndim(reach) == 0:
        return bool(reach < np.inf)
    return bool(np.size(reach) == 0 or np.maximum.reduce(reach) < np.inf)


def _none_converged(step: FloatArray, largest_tolerance: float, h: FloatArray) -> bool:
    """True only where no unknown passes :func:`_step_converged` (|step| ≤ tolerance + 1e-6·|h|),
    found from the block's extremes instead of a test at every position: each unknown's right-hand
    side, worked in floating point, is at most fl(fl(1e-6·max|h|) + max tolerance), since rounding
    and each operation on non-negative numbers keep the order; so when the least |step| exceeds that,
    none passes. False (the full test decides) where the steps change sign or a number is not finite
    (a NaN makes every comparison false)."""
    if not step.size:
        return False
    low, high = np.minimum.reduce(step), np.maximum.reduce(step)
    if low > 0.0:
        least = low
    elif high < 0.0:
        least = -high
    else:
        return False
    h_low, h_high = np.minimum.reduce(h), np.maximum.reduce(h)
    if not (np.isfinite(h_low) and np.isfinite(h_high)):
        return False
    bound = max(-h_low, h_high) * _CONVERGED
    bound += largest_tolerance
    return bool(least > bound)


def _all_converged(step: FloatArray, first: "_Start", start: FloatArray, h_low: float, h_high: float) -> bool:
    """True only where every unknown passes :func:`_step_converged` (|step| ≤ tolerance + 1e-6·|h|),
    found from the block's extremes (``h_low`` and ``h_high``, the least and largest h): each
    unknown's right-hand side, worked in floating point, is at least fl(fl(1e-6·min|h|) + min
    tolerance), and its |step| at most the largest |step|, since rounding and each operation on
    non-negative numbers keep the order. False (the full test decides) where a number is not finite."""
    if not step.size or not (np.isfinite(h_low) and np.isfinite(h_high)):
        return False
    low, high = np.minimum.reduce(step), np.maximum.reduce(step)
    if not (np.isfinite(low) and np.isfinite(high)):
        return False
    # the least |h|: zero where h changes sign (a bound all the same)
    least_h = h_low if h_low > 0.0 else -h_high if h_high < 0.0 else 0.0
    bound = least_h * _CONVERGED
    bound += first.least_tolerance(start)
    return bool(max(-low, high) <= bound)


def _surely_convex(first: "_Start", h_low: float, h_high: float) -> bool:
    """True only where :func:`_convex`'s bound holds at every position (so that it finds g convex
    between 0 and every h): its bound |h|·|6c3| (+ (−12c4·|h|)·|h| where c4 < 0), worked in floating
    point, is at most the same worked with the largest |h| and the largest |6c3|, and it must not
    exceed the least margin. False (the test at each position decides) where a number is not finite."""
    if not (np.isfinite(h_low) and np.isfinite(h_high)):
        return False
    largest_h = max(-h_low, h_high)
    bound = largest_h * first.largest_abs_six_c3()
    c4 = first.c[4]
    if c4 < 0:
        bound += (largest_h * (-12.0 * c4)) * largest_h
    return bool(bound <= first.least_convex_margin())


def _step_converged(step: FloatArray, tolerance: FloatArray, h: FloatArray) -> np.ndarray:
    """|step| ≤ tolerance + 1e-6·|h|, worked in place in ``step`` (which the caller no longer
    needs) and one scratch array; the same operations as written out (addition commutes exactly)."""
    scratch = np.abs(h)
    scratch *= _CONVERGED
    scratch += tolerance
    np.abs(step, out=step)
    return np.less_equal(step, scratch)


def _convex(first: _Start, h: FloatArray) -> np.ndarray:
    """Whether g is convex between 0 and h: the bound of :class:`_Start` where it decides, the exact
    test (:func:`_exactly_convex`) for the others; the same answer as the exact test for every h."""
    c = first.c
    a = np.abs(h)
    bound = a * first.abs_six_c3
    if c[4] < 0:
        a *= -12.0 * c[4]  # (−12·c4·|h|)·|h|, in place: a is not read again
        a *= np.abs(h)
        bound += a
    convex = bound <= first.convex_margin
    unsure = np.flatnonzero(~convex)
    if unsure.size:
        convex[unsure] = _exactly_convex([ci[unsure] if np.ndim(ci) else ci for ci in c], h[unsure])
    return convex


def _exactly_convex(c: list, h: FloatArray) -> np.ndarray:
    """g″ = 2c2 + 6c3·v + 12c4·v² is ≥ 0 at 0, at h and, where it has its least value between them, there."""
    curvature = lambda v: (12.0 * c[4] * v + 6.0 * c[3]) * v + 2.0 * c[2]  # noqa: E731
    convex = (curvature(0.0) >= 0) & (curvature(h) >= 0)
    if c[4] > 0:
        lowest = -c[3] / (4.0 * c[4])
        between = (lowest - 0.0) * (lowest - h) < 0
        convex &= ~between | (curvature(lowest) >= 0)
    return convex


def _side(
    shifted: ShiftedBand,
    g_start: FloatArray,
    direction: float,
    splits: list[FloatArray],
    reach: FloatArray,
    h_vertex: FloatArray | None,
    guess: FloatArray,
    start: FloatArray,
) -> tuple[FloatArray, np.ndarray]:
    """One end, as h: the first root of g from h = 0 along ``direction`` within ``reach``."""
    k = g_start.size
    u = np.empty((len(splits) + 2, k))  # distances from ẑ along the direction
    for row, split in zip(u, splits):
        np.multiply(split, direction, out=row)
    u[-2] = guess
    u[-1] = reach
    valid = (u > 0) & (u <= reach)  # NaN compares False
    u = np.where(valid, u, 0.0)
    g = shifted.excess(direction * u)
    # the nearest point outside the band closes the stretch; the farthest point before it opens it
    outside_u = np.where(valid & (g > 0), u, np.inf)
    outside_row = np.argmin(outside_u, axis=0)
    columns = np.arange(k)
    outside_at = outside_u[outside_row, columns]
    found = np.isfinite(outside_at)
    inside_u = np.where(valid & (u < outside_at), u, 0.0)
    inside_row = np.argmax(inside_u, axis=0)
    inside_at = inside_u[inside_row, columns]
    g_inside = np.where(inside_at > 0, g[inside_row, columns], g_start)
    beyond_vertex = ~found
    if h_vertex is not None:
        beyond_vertex |= outside_at > h_vertex * direction
    end = np.full(k, direction * np.inf)
    at = np.flatnonzero(found)
    if at.size:
        if shifted.lower is not None:
            # the stretch lies in one piece (the break splits the search): pick its coefficients
            assert shifted.h_break is not None
            below = (direction * 0.5 * (inside_at[at] + outside_at[at])) < shifted.h_break[at]
            coefficients = [np.where(below, lo[at] if np.ndim(lo) else lo, up[at] if np.ndim(up) else up)
                            for lo, up in zip(shifted.lower, shifted.upper)]
        else:
            coefficients = [c[at] if np.ndim(c) else c for c in shifted.upper]
        a = direction * inside_at[at]
        b = direction * outside_at[at]
        scale = np.abs(start[at]) + outside_at[at]
        end[at] = _bracketed_root(coefficients, a, b, g_inside[at], g[outside_row[at], at], scale)
    return end, beyond_vertex


def _bracketed_root(
    c: list, a: FloatArray, b: FloatArray, g_a: FloatArray, g_b: FloatArray, scale: FloatArray,
) -> FloatArray:
    """The root of the quartic c between a (≤ 0) and b (> 0), monotone between them: Newton's
    method, falling back to the Illinois variant of regula falsi (Dowell & Jarratt 1971, BIT
    11:168), then to bisection, whenever a step would leave the bracket; until the step is at the
    resolution of a double on the ``scale`` of the search (|ẑ| plus the distance searched), as in
    the numeric inversion, or the value is zero to within its round-off. Each unknown stops on its
    own: after a few steps on the whole block, the unknowns still moving are worked on alone."""
    with np.errstate(divide="ignore", invalid="ignore"):
        h = a - g_a * (b - a) / (g_b - g_a)
    h = np.where((h - a) * (h - b) < 0, h, 0.5 * (a + b))
    resolution = 4.0 * _EPS * scale
    state = [h, a.copy(), b.copy(), g_a.copy(), g_b.copy()]
    result = h.copy()
    active = np.ones(h.size, dtype=bool)
    for _ in range(_FULL_WIDTH_STEPS):
        *state, done = _safeguarded_step(c, *state, resolution)
        result = np.where(active, state[0], result)
        active &= ~done
        if not active.any():
            return result
    index = np.flatnonzero(active)
    state = [array[index] for array in state]
    cc = [ci[index] if np.ndim(ci) else ci for ci in c]
    rr = resolution[index]
    for _ in range(_MAX_NEWTON_STEPS - _FULL_WIDTH_STEPS):
        *state, done = _safeguarded_step(cc, *state, rr)
        result[index] = state[0]
        keep = ~done
        if not keep.any():
            break
        index, rr = index[keep], rr[keep]
        state = [array[keep] for array in state]
        cc = [ci[keep] if np.ndim(ci) else ci for ci in cc]
    return result


def _safeguarded_step(
    c: list, h: FloatArray, a: FloatArray, b: FloatArray, g_a: FloatArray, g_b: FloatArray,
    resolution: FloatArray,
) -> tuple[FloatArray, FloatArray, FloatArray, FloatArray, FloatArray, np.ndarray]:
    """One step of :func:`_bracketed_root` from h: the new point, bracket, end values, and which have converged."""
    g = _quartic(c, h)
    slope = ((4.0 * c[4] * h + 3.0 * c[3]) * h + 2.0 * c[2]) * h + c[1]
    ah = np.abs(h)
    size = (((abs(c[4]) * ah + np.abs(c[3])) * ah + np.abs(c[2])) * ah + np.abs(c[1])) * ah + np.abs(c[0])
    out = g > 0
    # Illinois: the end that stays put has its value halved, so the false position moves on
    g_a = np.where(out, 0.5 * g_a, g)
    g_b = np.where(out, g, 0.5 * g_b)
    a = np.where(out, a, h)
    b = np.where(out, h, b)
    with np.errstate(divide="ignore", invalid="ignore"):
        step = h - g / slope
        false_position = a - g_a * (b - a) / (g_b - g_a)
    step = np.where((step - a) * (step - b) < 0, step, false_position)  # NaN compares False
    step = np.where((step - a) * (step - b) < 0, step, 0.5 * (a + b))
    # the value within its own round-off of zero: h is the root as closely as it can tell
    at_root = np.abs(g) <= 8.0 * _EPS * size
    done = (np.abs(step - h) <= resolution) | (np.abs(b - a) <= resolution) | at_root
    return np.where(at_root, h, step), a, b, g_a, g_b, done


def _cubic_real_roots(d3: float, d2: FloatArray, d1: FloatArray, d0: FloatArray) -> list[FloatArray]:
    """Real roots of d3·z³ + d2·z² + d1·z + d0 (NaN where a root is complex or absent).

    The leading coefficient is one number. Cardano's formula for one real root, the trigonometric
    form for three, then Newton steps on the cubic itself to recover digits lost to cancellation.
    """
    with np.errstate(all="ignore"):
        if d3 != 0.0:
            a, b, c = d2 / d3, d1 / d3, d0 / d3
            p = b - a * a / 3.0
            q = 2.0 * a**3 / 27.0 - a * b / 3.0 + c
            disc = (q / 2.0) ** 2 + (p / 3.0) ** 3
            one = disc > 0
            # one real root: u = ∛(−q/2 − sign(q)·√disc), w = u − p/(3u) (no cancellation in u)
            u = np.cbrt(-q / 2.0 - np.copysign(np.sqrt(np.where(one, disc, 0.0)), q))
            w_one = np.where(u != 0.0, u - p / (3.0 * u), 0.0)
            # three real roots: w = 2·√(−p/3)·cos(θ/3 − 2πj/3)
            rad = np.sqrt(np.where(one, 0.0, np.maximum(-p / 3.0, 0.0)))
            cos_arg = np.where(rad > 0, -q / (2.0 * np.where(rad > 0, rad, 1.0) ** 3), 0.0)
            theta = np.arccos(np.clip(cos_arg, -1.0, 1.0))
            shift = a / 3.0
            roots = [np.where(one, w_one, 2.0 * rad * np.cos(theta / 3.0)) - shift]
            for j in (1, 2):
                roots.append(np.where(one, np.nan, 2.0 * rad * np.cos((theta - 2.0 * np.pi * j) / 3.0) - shift))
        else:
            disc = d1 * d1 - 4.0 * d2 * d0
            real = (disc >= 0) & (d2 != 0.0)
            qq = -0.5 * (d1 + np.copysign(np.sqrt(np.where(real, disc, 0.0)), d1))
            linear = np.where(d1 != 0.0, -d0 / d1, np.nan)
            r1 = np.where(real, qq / d2, np.where(d2 == 0.0, linear, np.nan))
            r2 = np.where(real & (qq != 0.0), d0 / qq, np.nan)
            roots = [r1, r2]
        polished = []
        for r in roots:
            for _ in range(_CUBIC_POLISH_STEPS):
                value = ((d3 * r + d2) * r + d1) * r + d0
                slope = (3.0 * d3 * r + 2.0 * d2) * r + d1
                step = value / slope
                r = np.where(np.isfinite(step), r - step, r)
            polished.append(np.where(np.isfinite(r), r, np.nan))
        return polished


def horner(z: FloatArray, coefficients: FloatArray) -> FloatArray:
    """Σ cᵢ·zⁱ by Horner's rule, in the order of numpy's ``polyval``, so to the same bits wherever z
    is finite (``polyval`` starts from cₙ + 0·z, which is cₙ there; here the first step is cₙ·z +
    cₙ₋₁). Each coefficient is a scalar: ``polyval`` broadcasts coefficients of shape (1,) against z."""
    if len(coefficients) == 1:
        return coefficients[0] + 0.0 * z
    value = coefficients[-1] * z
    value += coefficients[-2]
    for c in coefficients[-3::-1]:
        value *= z
        value += c
    return value


def _trimmed_horner(z: FloatArray, coefficients: FloatArray) -> FloatArray | float:
    """:func:`horner` without the highest coefficients that are zero (the same bits wherever z is
    finite: each of them adds an exact zero), and one number where only a constant is left."""
    n = len(coefficients)
    while n > 1 and coefficients[n - 1] == 0.0:
        n -= 1
    return coefficients[0] if n == 1 else horner(z, coefficients[:n])


def _padded(coefficients: FloatArray, size: int) -> FloatArray:
    out = np.zeros(size)
    out[: len(coefficients)] = coefficients
    return out

