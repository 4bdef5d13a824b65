"""Lack-of-fit F-test with pure error from replicated standards.

The residual sum of squares splits into pure error (scatter of replicates within their level) and
lack of fit (distance of the levels from the curve). With eᵢⱼ = yᵢⱼ − ŷᵢⱼ the residuals and ēᵢ their
weighted mean within level i:

    SS_PE = Σ_levels Σ_j wᵢⱼ (eᵢⱼ − ēᵢ)²          df_PE = n − c
    SS_LF = Σ_levels Wᵢ ēᵢ²  (= SSE − SS_PE)       df_LF = c − p
    F = (SS_LF/df_LF) / (SS_PE/df_PE),  p = P(F(df_LF, df_PE) > F)

with c levels, p parameters and Wᵢ = Σ_j wᵢⱼ. For exact replicates (one concentration per level)
ŷ is constant within a level, so eᵢⱼ − ēᵢ = yᵢⱼ − ȳᵢ and this is the textbook split (NIST/SEMATECH
e-Handbook of Statistical Methods §4.4.4.3; Kutner et al., *Applied Linear Statistical Models*,
5th ed., §3.7). When a level holds slightly different concentrations (standards made up by mass,
grouped by a label or a tolerance) the pure error is taken about the curve drawn through the level
— each level's own line, with the curve's slope and the level's mean residual — never about the
level's mean response, which would count slope × Δx as replicate scatter (with ±0.2 % by mass that
made SS_PE exceed SSE in most runs). This uses near replicates as Kutner et al. §3.7 describe
(from memory); the F-test is then approximate. A small p says the model does not follow the levels
within the replicate scatter.

Sums of squares at the level of round-off are not scatter. Where the level means lie on the curve to
within round-off (SS_LF no larger than if every weighted residual were at the round-off floor
ROUNDOFF·max|√w·y|, :func:`.least_squares.roundoff_floor`), SS_LF is taken as zero: F = 0 and p = 1,
never an F of 10⁻²⁶ made of the last bits of the arithmetic. Where the replicates also agree to within
round-off, the standards lie on the curve: the fit is exact and no lack-of-fit test is meaningful, and
the result says so. Where only the replicates agree, the pure error is zero and the ratio undefined.

When the weights are the replicates' own SDs (1/s² estimated from the same standards), the pure
error is fixed by construction (each level contributes its degrees of freedom exactly), so the
ratio tests nothing and the test is not made.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from .values import frozen_value
from ._arrays import FloatArray
from .distributions import f_upper_tails
from .levels import Levels
from .least_squares import ROUNDOFF


@frozen_value
class LackOfFit:
    """Outcome of the lack-of-fit test.

    When the test cannot be made, ``available`` is False, the numbers are None and ``reason``
    says why in words (no replicates, no level to spare…).
    """

    available: bool
    reason: str | None
    f_statistic: float | None = None
    df_lack_of_fit: int | None = None
    df_pure_error: int | None = None
    p_value: float | None = None
    ss_lack_of_fit: float | None = None
    ss_pure_error: float | None = None

    @property
    def pure_error_sd(self) -> float | None:
        """SD of replicates about their level means, √(SS_PE/df_PE), in response units."""
        if self.ss_pure_error is None or not self.df_pure_error:
            return None
        return float(np.sqrt(self.ss_pure_error / self.df_pure_error))

    def significant(self, alpha: float = 0.05) -> bool | None:
        """True when the model lacks fit at level ``alpha``; None when no test was made."""
        return None if self.p_value is None else bool(self.p_value < alpha)


def lack_of_fit_test(
    residuals: FloatArray,
    weights: FloatArray,
    levels: Levels,
    n_parameters: int,
    *,
    weights_from_replicates: bool = False,
    weighted_response: FloatArray | None = None,
) -> LackOfFit:
    """Split the weighted residual sum of squares over ``levels`` and test lack of fit against pure error.

    ``residuals`` are yᵢ − ŷᵢ in response units, with round-off already set to zero; ``weighted_response``
    (√w·y) sets the round-off level of the sums of squares (None: only exact zeros are round-off).
    """
    return lack_of_fit_tests(residuals[None, :], weights[None, :], levels, n_parameters, [weights_from_replicates],
                             None if weighted_response is None else weighted_response[None, :])[0]


def lack_of_fit_tests(
    residuals: FloatArray,
    weights: FloatArray,
    levels: Levels,
    n_parameters: int,
    weights_from_replicates: Sequence[bool],
    weighted_response: FloatArray | None = None,
) -> list[LackOfFit]:
    """:func:`lack_of_fit_test` of k fits of one model to the same standards at once: ``residuals``
    and ``weights`` are (k, n), one row per fit. The level sums of all rows are taken in one pass
    and the p-values in one call; each row's numbers are those of the row tested alone."""
    k, n = residuals.shape
    c = levels.n_levels
    df_pe = n - c
    df_lf = c - n_parameters
    if df_pe == 0:
        return [LackOfFit(False, "no standard is replicated, so there is no pure error to test against")] * k
    if df_lf <= 0:
        return [LackOfFit(
            False,
            f"there are {c} levels for {n_parameters} parameters, so no level is spare to test the "
            "shape of the curve",
        )] * k
    out: list[LackOfFit | None] = [None] * k
    tested = []
    for i, from_replicates in enumerate(weights_from_replicates):
        if from_replicates:
            out[i] = LackOfFit(
                False,
                "the weights are the replicates' own SDs (1/s²), which fixes the pure error by construction, "
                "so the test cannot be made; use known SDs or a variance function fitted to all levels",
                df_lack_of_fit=df_lf,
                df_pure_error=df_pe,
            )
        else:
            tested.append(i)
    if tested:
        r, w = residuals[tested], weights[tested]
        m = len(tested)
        # bins of row i are i·c … i·c + c − 1: each level's sum is taken in the order of the
        # standards, as for one row alone
        bins = (levels.index[None, :] + c * np.arange(m)[:, None]).ravel()
        level_weight = np.bincount(bins, weights=w.ravel(), minlength=m * c).reshape(m, c)
        mean_residual = np.bincount(bins, weights=(w * r).ravel(), minlength=m * c).reshape(m, c) / level_weight
        ss_pe = np.add.reduce(w * (r - mean_residual[:, levels.index]) ** 2, axis=1)
        ss_lf = np.add.reduce(level_weight * mean_residual**2, axis=1)
        # a sum no larger than if each weighted residual were at the round-off floor is round-off
        tiny = (np.zeros(m) if weighted_response is None else  # n·(roundoff_floor of each row)²
                n * (ROUNDOFF * np.maximum.reduce(np.abs(weighted_response[tested]), axis=1)) ** 2)
        ss_lf = np.where(ss_lf <= tiny, 0.0, ss_lf)
        positive = ss_pe > tiny
        f = (ss_lf / df_lf) / np.where(positive, ss_pe / df_pe, 1.0)
        p_values = f_upper_tails(f, df_lf, df_pe)
        for j, i in enumerate(tested):
            if not positive[j] and ss_lf[j] == 0.0:
                out[i] = LackOfFit(
                    False,
                    "the standards lie on the curve to within round-off (the replicates agree and the levels lie "
                    "on the curve), so the fit is exact and no lack-of-fit test is meaningful",
                    df_lack_of_fit=df_lf,
                    df_pure_error=df_pe,
                    ss_lack_of_fit=0.0,
                    ss_pure_error=0.0,
                )
                continue
            if not positive[j]:
                out[i] = LackOfFit(
                    False,
                    "the replicates agree exactly (to within round-off) at every level, so the pure error is zero "
                    "and the ratio "
                    "is undefined",
                    df_lack_of_fit=df_lf,
                    df_pure_error=df_pe,
                    ss_pure_error=0.0,
                )
                continue
            out[i] = LackOfFit(
                available=True,
                reason=None,
                f_statistic=float(f[j]),
                df_lack_of_fit=df_lf,
                df_pure_error=df_pe,
                p_value=float(p_values[j]),
                ss_lack_of_fit=float(ss_lf[j]),
                ss_pure_error=float(ss_pe[j]),
            )
    return [entry for entry in out if entry is not None]
