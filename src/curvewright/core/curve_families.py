"""The calibration curves that are not polynomials: formulas, derivatives, inverses and start values.

Four- and five-parameter logistic (ligand-binding assays)
    4PL  y = d + (a − d)/(1 + (x/c)^b)
    5PL  y = d + (a − d)/(1 + (x/c)^b)^g
    a is the response at zero concentration, d the response at infinite concentration, c the
    concentration of the inflection point of the 4PL (the mid-point, (a + d)/2), b the slope factor
    and g the asymmetry of the 5PL (g = 1 is the 4PL). With b > 0 the curve runs from a to d; it
    rises when d > a and falls when d < a (a competitive assay). Written with t = b·ln(x/c) and the
    logistic function s = 1/(1 + eᵗ), y = d + (a − d)·s^g, which stays finite for every x ≥ 0
    (Gottschalk & Dunn, "The five-parameter logistic: a characterization and comparison with the
    four-parameter logistic", Anal. Biochem. 343 (2005) 54; Findlay & Dillard, "Appropriate
    calibration curve fitting in ligand binding assays", AAPS J. 9 (2007) E260; both from memory).

    Derivatives (with s' = s(1 − s)): ∂y/∂a = s^g, ∂y/∂d = 1 − s^g,
    ∂y/∂b = −(a − d)·g·s^g·(1 − s)·ln(x/c), ∂y/∂c = (a − d)·g·s^g·(1 − s)·b/c,
    ∂y/∂g = (a − d)·s^g·ln s, and dy/dx = −(a − d)·g·s^g·(1 − s)·b/x.

    Inverse: r = (y − d)/(a − d) must lie strictly between 0 and 1 (a response at or beyond an
    asymptote has no concentration); then x = c·((r^(−1/g) − 1))^(1/b).

Power curve (detectors with a power-law response: evaporative light scattering, some ICP-MS work)
    y = a·x^b, for concentrations above zero; ∂y/∂a = x^b, ∂y/∂b = a·x^b·ln x, dy/dx = a·b·x^(b−1),
    inverse x = (y/a)^(1/b) for y/a > 0 (a response of zero or below has no concentration).

    It is fitted to the responses themselves, in their own scale, with the weighting the analyst
    chose, not as a straight line through ln y against ln x. The log-log line would silently weight
    every response by 1/y² (the variance of ln y is about var(y)/y²) whatever weighting was chosen,
    would refuse responses at or below zero, and its curve transformed back would follow the median,
    not the mean, response. Fitted in y, the weighting means what it says: 1/y² for a constant
    relative SD (usual for these detectors), none for a constant SD. The log-log line serves only
    as the start values.

Start values come from the standards themselves (see each ``start`` function); the fit never
needs the analyst to guess them.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable

import numpy as np

from ._arrays import FloatArray
from .models import Model


WeightedProblem = Callable[
    [FloatArray, FloatArray, FloatArray],
    tuple[Callable[[FloatArray], FloatArray], Callable[[FloatArray], FloatArray]],
]
"""(x, y, √w) → (β ↦ √wᵢ·(f(xᵢ; β) − yᵢ), β ↦ √wᵢ·∂f(xᵢ; β)/∂β), evaluated inside the fitter's
error-state context; non-finite values are the fitter's to handle."""


@dataclass(frozen=True)
class CurveFamily:
    """One nonlinear calibration function: its formula, derivatives, inverse and start values."""

    model: Model
    parameter_names: tuple[str, ...]
    formula: str
    function: Callable[[FloatArray, FloatArray], FloatArray]
    jacobian: Callable[[FloatArray, FloatArray], FloatArray]
    slope: Callable[[FloatArray, FloatArray], FloatArray]
    inverse: Callable[[FloatArray, FloatArray], tuple[FloatArray, np.ndarray]]
    """(x̂, beyond) for responses y: x̂ NaN where ``beyond`` (the response is at or beyond an asymptote)."""
    starts: Callable[[FloatArray, FloatArray], list[FloatArray]]
    """Start values to try, best first, from the standards (x, y)."""
    parameter_words: tuple[str, ...]
    weighted_problem: WeightedProblem | None = None
    """The weighted residuals and their Jacobian as functions of β for given (x, y, √w), worked out
    with what does not change during a fit computed once; None: the fitter builds them from
    ``function`` and ``jacobian`` (:func:`curvewright.core.nonlinear.fit_nonlinear`)."""


# --- logistic ---------------------------------------------------------------------------------------
def _logistic_parts(x: FloatArray, c: float, b: float) -> tuple[FloatArray, FloatArray]:
    """s = 1/(1 + (x/c)^b) and ln(x/c) (0 where x = 0, whose terms vanish)."""
    x = np.asarray(x, dtype=np.float64)
    with np.errstate(divide="ignore", invalid="ignore"):
        log_ratio = np.log(x) - np.log(c)
        t = b * log_ratio
        from scipy import special  # loaded on first use: the app's window opens before the engine loads

        s = special.expit(-t)
    return s, np.where(x > 0, log_ratio, 0.0)


def _five_pl(x: FloatArray, p: FloatArray) -> FloatArray:
    a, b, c, d, g = p
    s, _ = _logistic_parts(x, c, b)
    return d + (a - d) * s**g


def _five_pl_jacobian(x: FloatArray, p: FloatArray) -> FloatArray:
    a, b, c, d, g = p
    s, log_ratio = _logistic_parts(x, c, b)
    sg = s**g
    core = (a - d) * g * sg * (1.0 - s)
    with np.errstate(divide="ignore"):
        log_s = np.where(s > 0, np.log(s), 0.0)
    return np.stack([sg, -core * log_ratio, core * b / c, 1.0 - sg, (a - d) * sg * log_s], axis=-1)


def _five_pl_slope(x: FloatArray, p: FloatArray) -> FloatArray:
    a, b, c, d, g = p
    x = np.asarray(x, dtype=np.float64)
    s, _ = _logistic_parts(x, c, b)
    with np.errstate(divide="ignore", invalid="ignore"):
        return -(a - d) * g * s**g * (1.0 - s) * b / x


def _five_pl_inverse(y: FloatArray, p: FloatArray) -> tuple[FloatArray, np.ndarray]:
    a, b, c, d, g = p
    y = np.asarray(y, dtype=np.float64)
    r = (y - d) / (a - d)
    beyond = ~((r > 0) & (r < 1))
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        # r^(−1/g) − 1 = expm1(−ln(r)/g), accurate when r is near 1 (near the zero-concentration end)
        u = np.expm1(-np.log(r) / g)
        x = c * np.exp(np.log(u) / b)
    return np.where(beyond, np.nan, x), beyond


def _four_pl(x: FloatArray, p: FloatArray) -> FloatArray:
    return _five_pl(x, np.append(p, 1.0))


def _four_pl_jacobian(x: FloatArray, p: FloatArray) -> FloatArray:
    return _five_pl_jacobian(x, np.append(p, 1.0))[..., :4]


def _four_pl_slope(x: FloatArray, p: FloatArray) -> FloatArray:
    return _five_pl_slope(x, np.append(p, 1.0))


def _four_pl_inverse(y: FloatArray, p: FloatArray) -> tuple[FloatArray, np.ndarray]:
    return _five_pl_inverse(y, np.append(p, 1.0))


def _level_means(x: FloatArray, y: FloatArray) -> tuple[FloatArray, FloatArray]:
    levels, index = np.unique(x, return_inverse=True)
    return levels, np.bincount(index, weights=y) / np.bincount(index)


def _four_pl_starts(x: FloatArray, y: FloatArray) -> list[FloatArray]:
    """Start values from the standards.

    a and d: the mean responses of the lowest and highest levels, each moved 5 % of the response
    span outward (the asymptotes lie beyond the end standards). b and c: the straight line
    ln((a − y)/(y − d)) = b·ln x − b·ln c through the levels strictly between the asymptotes (the
    logit of the 4PL is linear in ln x). Further starts with b = 1 and b = 3 at the geometric middle
    of the standards follow, in case the first does not converge.
    """
    levels, means = _level_means(x, y)
    low, high = float(means[0]), float(means[-1])
    span = high - low
    a, d = low - 0.05 * span, high + 0.05 * span
    positive = levels > 0
    middle = float(np.exp(np.mean(np.log(levels[positive])))) if positive.any() else 1.0
    starts = []
    r = (means - d) / (a - d)
    usable = positive & (r > 0.01) & (r < 0.99)
    if int(usable.sum()) >= 2:
        logit = np.log((1.0 - r[usable]) / r[usable])
        slope, intercept = np.polyfit(np.log(levels[usable]), logit, 1)
        if slope > 0 and np.isfinite(intercept):
            starts.append(np.array([a, slope, float(np.exp(-intercept / slope)), d]))
    for b in (1.0, 3.0, 0.5):
        starts.append(np.array([a, b, middle, d]))
    return starts


def _five_pl_starts(x: FloatArray, y: FloatArray) -> list[FloatArray]:
    """The 4PL's start values with g = 1 (the 5PL fit begins from the fitted 4PL when it converges)."""
    return [np.append(s, 1.0) for s in _four_pl_starts(x, y)]


# --- power ------------------------------------------------------------------------------------------
def _power(x: FloatArray, p: FloatArray) -> FloatArray:
    a, b = p
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        return a * np.asarray(x, dtype=np.float64) ** b


def _power_jacobian(x: FloatArray, p: FloatArray) -> FloatArray:
    a, b = p
    x = np.asarray(x, dtype=np.float64)
    out = np.empty(x.shape + (2,))
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        xb = x**b
        out[..., 0] = xb
        out[..., 1] = a * xb * np.log(x)
    return out


def _power_problem(
    x: FloatArray, y: FloatArray, root_w: FloatArray
) -> tuple[Callable[[FloatArray], FloatArray], Callable[[FloatArray], FloatArray]]:
    """:data:`WeightedProblem` of the power curve: √w·(a·x^b − y) and the columns √w·x^b and
    √w·(a·x^b·ln x), with ln x taken once. The same operations as :func:`_power` and
    :func:`_power_jacobian` weighted by √w, so the same numbers (x^b worked out once where the
    Jacobian is asked for at the exponent of the last residuals)."""
    x = np.asarray(x, dtype=np.float64)
    with np.errstate(divide="ignore", invalid="ignore"):
        log_x = np.log(x)
    shape = x.shape + (2,)
    # x^b of the last residuals, by b: the fitter asks for the Jacobian where it has just asked for
    # the residuals, and x^b is the same number both times
    kept: list = [math.nan, None]  # type: ignore[type-arg]

    def residuals(p: FloatArray) -> FloatArray:
        a, b = p
        xb = x**b
        kept[0], kept[1] = b, xb
        return root_w * (a * xb - y)

    def jacobian(p: FloatArray) -> FloatArray:
        a, b = p
        xb = kept[1] if b == kept[0] else x**b
        out = np.empty(shape)
        out[..., 0] = root_w * xb
        out[..., 1] = root_w * (a * xb * log_x)
        return out

    return residuals, jacobian


def _power_slope(x: FloatArray, p: FloatArray) -> FloatArray:
    a, b = p
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        return a * b * np.asarray(x, dtype=np.float64) ** (b - 1.0)


def _power_inverse(y: FloatArray, p: FloatArray) -> tuple[FloatArray, np.ndarray]:
    a, b = p
    ratio = np.asarray(y, dtype=np.float64) / a
    beyond = ~(ratio > 0)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        x = np.exp(np.log(ratio) / b)
    return np.where(beyond, np.nan, x), beyond


def _power_starts(x: FloatArray, y: FloatArray) -> list[FloatArray]:
    """ln y = ln a + b·ln x fitted to the standards with responses above zero (then b = 1)."""
    ok = (x > 0) & (y > 0)
    starts = []
    if np.unique(x[ok]).size >= 2:
        b, ln_a = np.polyfit(np.log(x[ok]), np.log(y[ok]), 1)
        starts.append(np.array([float(np.exp(ln_a)), float(b)]))
    top = int(np.argmax(x))
    starts.append(np.array([float(y[top] / x[top]), 1.0]))
    return starts


FAMILIES = {
    Model.FOUR_PL: CurveFamily(
        Model.FOUR_PL, ("a", "b", "c", "d"), "y = d + (a − d)/(1 + (x/c)^b)",
        _four_pl, _four_pl_jacobian, _four_pl_slope, _four_pl_inverse, _four_pl_starts,
        ("response at zero concentration", "slope factor", "inflection point, in concentration units",
         "response at infinite concentration"),
    ),
    Model.FIVE_PL: CurveFamily(
        Model.FIVE_PL, ("a", "b", "c", "d", "g"), "y = d + (a − d)/(1 + (x/c)^b)^g",
        _five_pl, _five_pl_jacobian, _five_pl_slope, _five_pl_inverse, _five_pl_starts,
        ("response at zero concentration", "slope factor", "mid-range concentration",
         "response at infinite concentration", "asymmetry"),
    ),
    Model.POWER: CurveFamily(
        Model.POWER, ("a", "b"), "y = a·x^b",
        _power, _power_jacobian, _power_slope, _power_inverse, _power_starts,
        ("response at unit concentration", "exponent"), _power_problem,
    ),
}
