"""The direct ends across the lowest standard for a few unknowns, worked in Python floats.

An unknown whose direct calibration-interval end (see :mod:`.band_polynomial`) lies across the lowest
standard has that end solved again on the other piece of g. In a call of a few thousand unknowns only
a handful are such ends, and on arrays of one to a few elements numpy's fixed cost per operation
(about a microsecond) is nearly all of the work: some 120 operations for each side that has any.
Here each of those unknowns is solved on its own, with the same operations in the same order on the
same numbers as :class:`.band_polynomial._Start` and :func:`.band_polynomial._convex_end` on arrays.
Addition, subtraction, multiplication, division and the square root of IEEE 754 doubles are
correctly rounded whether numpy or Python performs them, and copying a sign or taking an absolute
value is exact, so every end and every "certain" is the same to the bit
(``tests/core/test_band_polynomial.py`` holds the two paths equal). Where numpy gives ±inf or NaN
without a word (a division by zero, the square root of a negative number), the helpers below give
the same values, NaN's sign bit included, instead of Python's exceptions.

Method, for each unknown (coefficients c0 … c4 of g about ẑ, in h = z − ẑ, on the other piece):
the root of the quadratic part c0 + c1·h + c2·h² on the side ``direction`` by the stable form
q = −(c1 + sign(c1)·√(c1² − 4·c2·c0))/2, roots q/c2 and c0/q (Press et al., *Numerical Recipes*,
3rd ed., §5.6; section from memory); for a quartic, Halley's steps h ← h − g·g′/(g′² − g·g″/2) until
the step is within 1e-6 of |ẑ| + |h|; the end is certain when g(0) < 0, g is convex between 0 and
the end (Halley's iteration and the convexity test of :mod:`.band_polynomial`), the end lies within
reach on its side, and it lies in the other piece.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

_INF = math.inf
_INVALID = _INF - _INF
"""The NaN the processor makes for an invalid operation, as for numpy's 0/0 and √−1 (its sign bit
is the processor's: set on x86-64), so that such a result has the same bits as on arrays."""


def _divide(a: float, b: float) -> float:
    """a / b as numpy divides doubles with its warnings silenced: ±inf for a nonzero a over a zero
    (the sign of a times the sign of the zero), a NaN a itself, and the processor's NaN for 0/0."""
    if b != 0.0 or b != b:
        return a / b
    if a != a:
        return a
    if a == 0.0:
        return _INVALID
    return math.copysign(_INF, a) * math.copysign(1.0, b)


def _sqrt(a: float) -> float:
    """√a as numpy takes it with its warnings silenced: the processor's NaN below zero (−0.0 stays
    −0.0, a NaN stays itself)."""
    return _INVALID if a < 0.0 else math.sqrt(a)


def _halley_step(c0: float, c1: float, c2: float, c3: float, c4: float, h: float) -> float:
    """:func:`.band_polynomial._halley_step` for one unknown, its in-place operations in order."""
    twice_c2 = 2.0 * c2
    value = ((((c4 * h + c3) * h + c2) * h + c1) * h) + c0
    slope = ((((4.0 * c4) * h + 3.0 * c3) * h + twice_c2) * h) + c1
    bend = (((6.0 * c4) * h + 3.0 * c3) * h + c2) * value
    return _divide(value * slope, slope * slope - bend)


def _exactly_convex(c2: float, c3: float, c4: float, h: float) -> bool:
    """:func:`.band_polynomial._exactly_convex` for one unknown: g″ = 2c2 + 6c3·v + 12c4·v² ≥ 0 at 0,
    at h and, where it has its least value between them, there."""

    def curvature(v: float) -> float:
        return ((12.0 * c4) * v + 6.0 * c3) * v + 2.0 * c2

    convex = curvature(0.0) >= 0 and curvature(h) >= 0
    if c4 > 0:
        lowest = -c3 / (4.0 * c4)
        between = (lowest - 0.0) * (lowest - h) < 0
        convex = convex and (not between or curvature(lowest) >= 0)
    return convex


def other_piece_end(
    c: Sequence[float],
    quartic: bool,
    direction: float,
    reach: float,
    finite_reach: bool,
    guess: float,
    start: float,
    h_break: float,
    below: bool,
    converged_share: float,
    further_steps: int,
) -> tuple[float, bool]:
    """One unknown's direct end (h from ẑ) on the other piece and whether it is certain.

    ``c``: the other piece's five coefficients for this unknown; ``quartic``: whether that piece has
    h³ or h⁴ terms (decided for the whole call, as on arrays); ``reach``: how far the side is searched;
    ``finite_reach``: whether the call's reach was one finite number (then a finite h need not be
    checked); ``below``: ẑ lies below the lowest standard (h_break > 0); ``converged_share``: the
    relative size of the last step accepted (1e-6); ``further_steps``: Halley's steps after the second.
    """
    c0, c1, c2, c3, c4 = c
    inside = c0 < 0
    root = _sqrt(c1 * c1 - 4.0 * c2 * c0)
    q = -0.5 * (c1 + math.copysign(root, c1))
    r1, r2 = _divide(q, c2), _divide(c0, q)
    h = r1 if (r1 > 0 if direction > 0 else r1 < 0) else r2
    if not quartic:
        convex = c2 >= 0
        converged = math.isfinite(h)
    else:
        if not (math.isfinite(h) and (h > 0 if direction > 0 else h < 0)):
            h = direction * guess
        tolerance = converged_share * abs(start)
        step = _halley_step(c0, c1, c2, c3, c4, h)
        h = h - step
        converged = abs(step) <= abs(h) * converged_share + tolerance
        if not converged:
            step = _halley_step(c0, c1, c2, c3, c4, h)
            h = h - step
            converged = abs(step) <= abs(h) * converged_share + tolerance
            if not converged:
                for _ in range(further_steps):
                    step = _halley_step(c0, c1, c2, c3, c4, h)
                    h = h - step
                    if abs(step) <= tolerance + converged_share * abs(h):
                        converged = True
                        break
        # the bound of band_polynomial._Start, then the exact test where it does not decide
        a = abs(h)
        bound = a * abs(6.0 * c3)
        if c4 < 0:
            bound = bound + (a * (-12.0 * c4)) * abs(h)
        convex = bound <= (2.0 * c2) * (1.0 - 1e-6)
        if not convex:
            convex = _exactly_convex(c2, c3, c4, h)
    if direction > 0:
        certain = h > 0 and h <= reach
    else:
        certain = h < 0 and h >= -reach
    if not finite_reach:
        certain = certain and math.isfinite(h)
    certain = certain and inside and convex and converged
    certain = certain and ((h < h_break) != below)
    return h, certain
