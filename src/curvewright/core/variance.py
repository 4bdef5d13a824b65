"""Evidence on whether the response scatter is the same across the range (homoscedasticity).

* ISO 8466-1 variance F-test: the replicate variances of the lowest and the highest level,
  PG = s²(larger)/s²(smaller), compared with F(f_larger, f_smaller) at 99 % (ISO 8466-1:1990 §5;
  the standard asks for 10 replicates at each end, where the critical value is F(9, 9; 0.99) = 5.35).
* Across every replicated level: Bartlett's test (Bartlett 1937, Proc. R. Soc. A 160:268) and the
  Brown–Forsythe test (Levene's test about the median; Brown & Forsythe 1974, JASA 69:364), which
  is robust to non-normal replicates (both checked against scipy.stats in the tests). Brown–Forsythe needs at
  least 3 replicates per level: with duplicates both deviations from the median are equal and the
  statistic is undefined.
* How the SD grows: the slope k of log(s) against log(x) over the replicated levels with x > 0
  (a power variance function, s ∝ x^k; Tellinghuisen 2007, Analyst 132:536, recommends weights
  from a fitted variance function). k ≈ 1 (constant relative SD) points to 1/x² weights, k ≈ 0.5
  (Poisson-like counts) to 1/x.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import special

from ._arrays import FloatArray
from .distributions import f_quantile, f_upper_tail
from .levels import Levels

ISO_8466_LEVEL = 0.99
"""Confidence level of the ISO 8466-1 variance F-test (ISO 8466-1)."""
LOW_POWER_DF = 4
"""Below this many degrees of freedom at an end level, say that the F-test has little power (common practice)."""
ACROSS_LEVELS_ALPHA = 0.05
"""Significance level for the tests across all replicated levels (common practice)."""


@dataclass(frozen=True)
class VarianceTest:
    """One test of equal variances; ``available`` False with ``reason`` when it cannot be made."""

    name: str
    available: bool
    reason: str | None = None
    statistic: float | None = None
    df: tuple[int, ...] | None = None
    p_value: float | None = None
    critical_value: float | None = None
    significant: bool | None = None


@dataclass(frozen=True)
class VarianceEvidence:
    """All the variance-homogeneity evidence the standards give.

    ``heteroscedastic`` is True when the variance demonstrably changes across the range, False
    when the tests find no change, None when no test could be made (too few replicates).
    """

    end_levels: VarianceTest
    bartlett: VarianceTest
    brown_forsythe: VarianceTest
    heteroscedastic: bool | None
    summary: str
    sd_power: float | None = None
    sd_power_levels: int = 0


def variance_evidence(response: FloatArray, levels: Levels) -> VarianceEvidence:
    """Test whether the replicate variance changes across the levels."""
    end = _end_level_test(response, levels)
    groups = [response[levels.index == j] for j in np.flatnonzero(levels.count >= 2)]
    bartlett = _across_levels("Bartlett", groups, bartlett_statistic)
    brown = (
        _across_levels("Brown–Forsythe", groups, brown_forsythe_statistic)
        if all(g.size >= 3 for g in groups)
        else VarianceTest("Brown–Forsythe", False, "needs at least 3 replicates at every replicated level")
    )
    power, power_levels = _sd_power(response, levels)
    if end.available:
        hetero = bool(end.significant)
        summary = (
            f"ISO 8466-1 F-test of the end levels: F = {end.statistic:.4g} "
            f"{'>' if hetero else '≤'} F({end.df[0]}, {end.df[1]}; 99 %) = {end.critical_value:.4g}: the variance "
            + ("changes across the range" if hetero else "shows no significant change across the range")
        )
        if min(end.df or (0,)) < LOW_POWER_DF:
            summary += f" (with {min(end.df or (0,)) + 1} replicates at an end the test has little power)"
    elif brown.available:
        hetero = bool(brown.significant)
        summary = (
            f"Brown–Forsythe test across {len(groups)} replicated levels: p = {brown.p_value:.3g}: "
            + ("the variance changes across the range" if hetero else "no significant change in variance")
        )
    else:
        hetero = None
        summary = "variance homogeneity could not be tested: " + (end.reason or "too few replicates")
    return VarianceEvidence(end, bartlett, brown, hetero, summary, power, power_levels)


def _sd_power(response: FloatArray, levels: Levels) -> tuple[float | None, int]:
    """Slope of log(SD) on log(concentration) over replicated levels with x > 0 and SD > 0."""
    sd = levels.level_sd(response)
    use = (levels.count >= 2) & (levels.concentration > 0) & (np.nan_to_num(sd) > 0)
    n = int(use.sum())
    if n < 3:
        return None, n
    log_x, log_s = np.log(levels.concentration[use]), np.log(sd[use])
    if np.ptp(log_x) == 0:
        return None, n
    slope = np.polyfit(log_x, log_s, 1)[0]
    return float(slope), n


def _end_level_test(response: FloatArray, levels: Levels) -> VarianceTest:
    name = "ISO 8466-1 end-level F-test"
    low, high = 0, levels.n_levels - 1
    if levels.count[low] < 2 or levels.count[high] < 2:
        return VarianceTest(name, False, "needs replicates at both the lowest and the highest level")
    sd = levels.level_sd(response)
    var_low, var_high = sd[low] ** 2, sd[high] ** 2
    df_low, df_high = int(levels.count[low]) - 1, int(levels.count[high]) - 1
    if min(var_low, var_high) == 0.0:
        return VarianceTest(name, False, "the replicates at an end level are identical (zero variance)")
    if var_high >= var_low:
        f, df = var_high / var_low, (df_high, df_low)
    else:
        f, df = var_low / var_high, (df_low, df_high)
    critical = f_quantile(ISO_8466_LEVEL, *df)
    return VarianceTest(
        name,
        True,
        statistic=float(f),
        df=df,
        p_value=f_upper_tail(f, *df),
        critical_value=critical,
        significant=bool(f > critical),
    )


def bartlett_statistic(*groups: FloatArray) -> tuple[float, float]:
    """Bartlett's T and its p-value (χ² with k − 1 df), as in Snedecor & Cochran, *Statistical Methods*:
    T = [(N − k)·ln s²_p − Σ(nᵢ − 1)·ln s²ᵢ] / [1 + (Σ 1/(nᵢ − 1) − 1/(N − k)) / (3(k − 1))]."""
    n = np.array([g.size for g in groups], dtype=float)
    var = np.array([np.var(g, ddof=1) for g in groups])
    k, total = len(groups), n.sum()
    pooled = np.sum((n - 1) * var) / (total - k)
    numerator = (total - k) * np.log(pooled) - np.sum((n - 1) * np.log(var))
    denominator = 1 + (np.sum(1 / (n - 1)) - 1 / (total - k)) / (3 * (k - 1))
    statistic = float(numerator / denominator)
    return statistic, float(special.chdtrc(k - 1, statistic))


def brown_forsythe_statistic(*groups: FloatArray) -> tuple[float, float]:
    """Levene's W on absolute deviations from each group's median (Brown & Forsythe 1974), with its
    F(k − 1, N − k) p-value."""
    deviations = [np.abs(g - np.median(g)) for g in groups]
    n = np.array([d.size for d in deviations], dtype=float)
    means = np.array([d.mean() for d in deviations])
    k, total = len(groups), n.sum()
    grand = np.sum(n * means) / total
    within = sum(float(np.sum((d - m) ** 2)) for d, m in zip(deviations, means))
    statistic = float((total - k) / (k - 1) * np.sum(n * (means - grand) ** 2) / within)
    return statistic, f_upper_tail(statistic, k - 1, total - k)


def _across_levels(name: str, groups: list[FloatArray], test) -> VarianceTest:  # type: ignore[no-untyped-def]
    if len(groups) < 2:
        return VarianceTest(name, False, "needs at least two replicated levels")
    if any(np.ptp(g) == 0.0 for g in groups):
        return VarianceTest(name, False, "a replicated level has identical replicates (zero variance)")
    with np.errstate(divide="ignore", invalid="ignore"):
        stat, p = test(*groups)
    if not (np.isfinite(stat) and np.isfinite(p)):
        return VarianceTest(name, False, "the replicates do not allow the test (degenerate spread)")
    df = (len(groups) - 1,) if name == "Bartlett" else (len(groups) - 1, sum(map(len, groups)) - len(groups))
    return VarianceTest(name, True, statistic=stat, df=df, p_value=p, significant=bool(p < ACROSS_LEVELS_ALPHA))
