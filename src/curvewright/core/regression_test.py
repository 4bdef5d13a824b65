"""Does the response change with concentration at all? The F-test of the regression.

The curve can turn a response into a concentration only if its response changes with
concentration. The test asks whether every term that depends on x is zero together: with a the
coefficients of the terms in x (the slope of a line; b1 and b2 of a quadratic) and C their
covariance,

    F = aᵀ·C⁻¹·a / q,  q = number of such terms,  p = P(F(q, n − p) > F)

the Wald form of the regression F-test, which for a model with an intercept equals the analysis of
variance ratio (SSR/q)/(SSE/(n − p)) and for one term is the square of the slope's t statistic
(Draper & Smith, *Applied Regression Analysis*, 3rd ed., §1.3 and §6.1; Kutner et al., *Applied
Linear Statistical Models*, 5th ed., §2.7 and §6.5). The curve is taken not to change with
concentration when p ≥ 0.05 (common practice).

Two limits are decided without the ratio, because round-off would decide them otherwise: a fitted
response that is constant to round-off across the standards (all responses equal) does not change
(F = 0, p = 1), and a curve that changes while every residual is round-off (exact standards) does
(F = inf, p = 0).
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from .values import frozen_value
from ._arrays import FloatArray
from .distributions import f_upper_tails
from .least_squares import ROUNDOFF
from .notation import figures, p_equals

REGRESSION_ALPHA = 0.05
"""Significance level below which the response is taken to change with concentration (common practice)."""


@frozen_value
class RegressionTest:
    """Outcome of the F-test of the regression: does the response change with concentration?"""

    f_statistic: float
    df: tuple[int, int]
    p_value: float

    @property
    def significant(self) -> bool:
        """True when the response changes with concentration at the 5 % level."""
        return self.p_value < REGRESSION_ALPHA

    @property
    def words(self) -> str:
        """The outcome in words, with the statistic."""
        numbers = (
            f"F = {figures(self.f_statistic, 4)} on ({self.df[0]}, {self.df[1]}) df, {p_equals(self.p_value, 3)}"
            if np.isfinite(self.f_statistic)
            else "every standard lies on the curve"
        )
        if self.f_statistic == 0.0:
            numbers = "the fitted response is the same at every standard"
        if self.significant:
            return f"the response changes with concentration ({numbers})"
        return (
            f"the response does not change significantly with concentration ({numbers}); the curve "
            "cannot turn a response into a concentration"
        )


def regression_test(
    z_coefficients: FloatArray,
    z_covariance: FloatArray,
    powers: tuple[int, ...],
    fitted: FloatArray,
    response: FloatArray,
    residual_sd_is_roundoff: bool,
    df_residual: int,
) -> RegressionTest:
    """Test the terms of powers ≥ 1 (in the fitting variable z; f is constant in x exactly when it is in z)."""
    return regression_tests([(z_coefficients, z_covariance, fitted, residual_sd_is_roundoff)], powers, response,
                            df_residual)[0]


def regression_tests(
    fits: Sequence[tuple[FloatArray, FloatArray, FloatArray, bool]],
    powers: tuple[int, ...],
    response: FloatArray,
    df_residual: int,
) -> list[RegressionTest]:
    """:func:`regression_test` of several fits of one model to the same responses, each given as
    (z coefficients, z covariance, fitted values, whether the residual SD is round-off); the
    p-values in one call, each the number the fit tested alone gets."""
    slope_terms = [i for i, p in enumerate(powers) if p >= 1]
    q = len(slope_terms)
    df = (q, df_residual)
    floor = ROUNDOFF * float(np.maximum.reduce(np.abs(response), initial=0.0))
    # the terms of powers ≥ 1 follow the intercept's, so they are one block of the coefficients
    first = slope_terms[0] if slope_terms == list(range(slope_terms[0], len(powers))) else None
    out: list[RegressionTest | None] = [None] * len(fits)
    tested = []
    for i, (_, _, fitted, residual_sd_is_roundoff) in enumerate(fits):
        change = float(np.maximum.reduce(fitted) - np.minimum.reduce(fitted)) if fitted.size else 0.0
        if change <= floor:
            out[i] = RegressionTest(0.0, df, 1.0)
        elif residual_sd_is_roundoff:
            out[i] = RegressionTest(float("inf"), df, 0.0)
        else:
            tested.append(i)
    if len(fits) == 1 and tested and first is not None:
        # a fit alone (the usual case): the same LAPACK solve on its own block, without the stack
        a1, c1 = fits[0][0][first:], fits[0][1][first:, first:]
        if q == 1:
            # one slope term (a straight line): LAPACK's solve of a 1 × 1 system is the one division
            slope = a1[0]
            f = float(slope * (slope / c1[0, 0]))
        else:
            f = float(a1 @ np.linalg.solve(c1, a1)) / q
        return [RegressionTest(f, df, float(f_upper_tails(f, q, df_residual)))]
    if tested:
        if first is not None:
            a = np.stack([fits[i][0][first:] for i in tested])
            c = np.stack([fits[i][1][first:, first:] for i in tested])
        else:
            a = np.stack([fits[i][0][slope_terms] for i in tested])
            c = np.stack([fits[i][1][np.ix_(slope_terms, slope_terms)] for i in tested])
        # one LAPACK solve per fit in one call; each fit's quadratic form as its own dot product
        solved = np.linalg.solve(c, a[:, :, None])[:, :, 0]
        statistics = [float(a[j] @ solved[j]) / q for j in range(len(tested))]
        p_values = f_upper_tails(np.array(statistics), q, df_residual)
        for i, f, p_value in zip(tested, statistics, p_values, strict=True):
            out[i] = RegressionTest(f, df, float(p_value))
    return [entry for entry in out if entry is not None]
