"""Lack-of-fit F-test with pure error from replicated standards.

The residual sum of squares splits into pure error (scatter of replicates about their level mean)
and lack of fit (distance of the level means from the curve):

    SS_PE = Σ_levels Σ_j wᵢⱼ (yᵢⱼ − ȳᵢ)²          df_PE = n − c
    SS_LF = SSE − SS_PE                          df_LF = c − p
    F = (SS_LF/df_LF) / (SS_PE/df_PE),  p = P(F(df_LF, df_PE) > F)

with c levels, p parameters and ȳᵢ the (weighted) level mean (NIST/SEMATECH e-Handbook of
Statistical Methods §4.4.4.3; Kutner et al., *Applied Linear Statistical Models*, 5th ed., §3.7).
A small p says the model does not follow the level means within the replicate scatter.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ._arrays import FloatArray
from .distributions import f_upper_tail
from .levels import Levels


@dataclass(frozen=True)
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
    response: FloatArray, weights: FloatArray, levels: Levels, sse: float, n_parameters: int
) -> LackOfFit:
    """Split ``sse`` into pure error and lack of fit over ``levels`` and test the ratio."""
    n = response.size
    c = levels.n_levels
    df_pe = n - c
    df_lf = c - n_parameters
    if df_pe == 0:
        return LackOfFit(False, "no standard is replicated, so there is no pure error to test against")
    if df_lf <= 0:
        return LackOfFit(
            False,
            f"there are {c} levels for {n_parameters} parameters, so no level is spare to test the "
            "shape of the curve",
        )
    means = levels.level_means(response, weights)
    ss_pe = float(np.sum(weights * (response - means[levels.index]) ** 2))
    if ss_pe <= 0.0:
        return LackOfFit(
            False,
            "the replicates agree exactly at every level, so the pure error is zero and the ratio "
            "is undefined",
            df_lack_of_fit=df_lf,
            df_pure_error=df_pe,
            ss_pure_error=0.0,
        )
    # Standards made up by mass (inexact replicates) can leave SSE a hair below SS_PE.
    ss_lf = max(sse - ss_pe, 0.0)
    f = (ss_lf / df_lf) / (ss_pe / df_pe)
    return LackOfFit(
        available=True,
        reason=None,
        f_statistic=float(f),
        df_lack_of_fit=df_lf,
        df_pure_error=df_pe,
        p_value=f_upper_tail(f, df_lf, df_pe),
        ss_lack_of_fit=ss_lf,
        ss_pure_error=ss_pe,
    )
