"""Weighted fits over seven decades of concentration against an 80-digit reference.

The reference solves the weighted normal equations in 80-digit arithmetic (mpmath), where their
squared condition number costs nothing; the engine's QR on a centred, scaled basis must agree with
it to at least 10 significant digits (LRE ≥ 10, McCullough 1998) on every coefficient and every
standard error.
"""

from __future__ import annotations

import mpmath
import numpy as np
import pytest

import curvewright as cw
from tests.conftest import lre

REQUIRED_LRE = 10.0
POWERS = {"linear": (0, 1), "quadratic": (0, 1, 2), "proportional": (1,)}


def invented_wide_standards(model: str) -> tuple[np.ndarray, np.ndarray]:
    """Duplicates at every decade from 10⁻³ to 10⁴ (invented), 5 % relative scatter."""
    rng = np.random.default_rng(20260314)
    x = np.repeat(10.0 ** np.arange(-3, 5), 2)
    truth = {"linear": 0.5 + 2.0 * x, "quadratic": 0.5 + 2.0 * x - 1e-5 * x**2, "proportional": 2.0 * x}[model]
    return x, truth * (1 + 0.05 * rng.standard_normal(x.size))


def reference_fit(x: np.ndarray, y: np.ndarray, model: str, weighting: str) -> tuple[list[float], list[float]]:
    """Coefficients and standard errors from the weighted normal equations in 80-digit arithmetic."""
    with mpmath.workdps(80):
        xs = [mpmath.mpf(float(v)) for v in x]
        ys = [mpmath.mpf(float(v)) for v in y]
        raw = {"none": lambda xi, yi: mpmath.mpf(1), "1/x": lambda xi, yi: 1 / xi, "1/x^2": lambda xi, yi: 1 / xi**2,
               "1/y": lambda xi, yi: 1 / yi, "1/y^2": lambda xi, yi: 1 / yi**2}[weighting]
        w = [raw(xi, yi) for xi, yi in zip(xs, ys)]
        powers = POWERS[model]
        p = len(powers)
        normal = mpmath.matrix(p, p)
        right = mpmath.matrix(p, 1)
        for xi, yi, wi in zip(xs, ys, w):
            phi = [xi**k for k in powers]
            for i in range(p):
                right[i] += wi * phi[i] * yi
                for j in range(p):
                    normal[i, j] += wi * phi[i] * phi[j]
        inverse = normal**-1
        coefficients = inverse * right
        sse = sum(
            wi * (yi - sum(coefficients[i] * xi**k for i, k in enumerate(powers))) ** 2
            for xi, yi, wi in zip(xs, ys, w)
        )
        s2 = sse / (len(xs) - p)
        return [float(c) for c in coefficients], [float(mpmath.sqrt(s2 * inverse[i, i])) for i in range(p)]


@pytest.mark.parametrize("weighting", ["1/x^2", "1/y^2", "1/x", "1/y", "none"])
@pytest.mark.parametrize("model", ["linear", "quadratic", "proportional"])
def test_every_coefficient_and_standard_error_to_ten_digits(model: str, weighting: str) -> None:
    x, y = invented_wide_standards(model)
    cal = cw.fit(x, y, model, weighting)
    coefficients, standard_errors = reference_fit(x, y, model, weighting)  # mpmath, 80 digits
    offset = 1 if model == "proportional" else 0  # the fixed b0 = 0 is not estimated
    for k, (estimate, certified) in enumerate(zip(cal.coefficients[offset:], coefficients, strict=True)):
        assert lre(estimate, certified) >= REQUIRED_LRE, f"b{k + offset}: {estimate!r} vs {certified!r}"
    for k, (estimate, certified) in enumerate(zip(cal.standard_errors[offset:], standard_errors, strict=True)):
        assert lre(estimate, certified) >= REQUIRED_LRE, f"SE(b{k + offset}): {estimate!r} vs {certified!r}"
