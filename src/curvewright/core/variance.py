"""Evidence on whether the response scatter changes across the range, pooled over every replicated level.

* The decision: a variance function fitted to the replicates of all levels together. The pure-error
  sum of squares of level i, SSᵢ with νᵢ = kᵢ − 1 degrees of freedom, is σ²·μᵢ^{2θ}·χ²(νᵢ) when the
  SD is a power θ of the mean response μᵢ (the power-of-the-mean variance function of Carroll &
  Ruppert, *Transformation and Weighting in Regression*, 1988, fitted here by maximum likelihood to
  the replicates alone, so that it does not depend on the calibration model). With σ² profiled out,
  θ̂ maximises −(N/2)·log(Σ SSᵢ·μᵢ^{−2θ}/N) − θ·Σ νᵢ log μᵢ (N = Σνᵢ), and the likelihood-ratio
  statistic against θ = 0 is referred to χ²(1), one-sided: the scatter of a calibration that changes
  grows with the response (an SD that falls with it is not taken as a reason to weight). The 95 %
  interval for θ is θ̂ ± 1.96/√(2·Σνᵢ(log μᵢ − l̄)²) (the Fisher information of the χ² sums of
  squares). With a level's pure error taken about the curve (see :mod:`.lack_of_fit`), standards made
  up by mass count as replicates too. Levels at zero concentration or with a mean response ≤ 0 are
  left out (the power model does not describe a blank). In the simulation of
  ``tests/core/test_comparison.py`` (6 levels from 2 to 100 in duplicate) the recommendation built on
  it weighted a true 5 % CV in 93.5 % of calibrations and a constant SD in 5 %.
* The ISO 8466-1 variance F-test of the end levels, PG = s²(larger)/s²(smaller) against
  F(f_larger, f_smaller) at 99 % (ISO 8466-1:1990 §5; the standard asks for 10 replicates at each end,
  where the critical value is F(9, 9; 0.99) = 5.35). The ends are those of the working range: the
  lowest level above zero concentration and the highest (a blank is left out, as above). With duplicates it has 1 and 1 degrees of freedom
  and almost no power, so it decides only when fewer than three levels are replicated, and is then
  worded as the weak test it is.
* Across every replicated level: Bartlett's test (Bartlett 1937, Proc. R. Soc. A 160:268) and the
  Brown–Forsythe test (Levene's test about the median; Brown & Forsythe 1974, JASA 69:364), which
  is robust to non-normal replicates (both checked against scipy.stats in the tests). They test any
  difference among the levels, not a trend, and are reported for reference. Brown–Forsythe needs at
  least 3 replicates per level: with duplicates both deviations from the median are equal and the
  statistic is undefined.

A test that finds no change is never worded as proof of a constant scatter: the summary says what
the interval for θ still allows and, with few replicates, that the test has little power.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ._arrays import FloatArray
from .distributions import f_quantile, f_upper_tail
from .levels import Levels
from .notation import figures, fixed, p_equals

ISO_8466_LEVEL = 0.99
"""Confidence level of the ISO 8466-1 variance F-test (ISO 8466-1)."""
LOW_POWER_DF = 4
"""Below this many degrees of freedom at an end level, say that the F-test has little power (common practice)."""
ACROSS_LEVELS_ALPHA = 0.05
"""Significance level for the tests across all replicated levels (common practice)."""
POWER_TEST_ALPHA = 0.05
"""One-sided significance level of the pooled variance-function test (common practice)."""
POWER_BOUNDS = (-1.0, 3.0)
"""Range searched for θ."""
FEW_DEGREES = 10
"""Pure-error degrees of freedom below which the pooled test is said to have little power (common practice)."""


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
    """All the variance evidence the standards give.

    ``heteroscedastic`` is True when the scatter demonstrably grows across the range, False when the
    tests find no change (which does not prove it constant), None when no test could be made (too
    few replicates). ``sd_power`` is θ̂ of SD ∝ mean^θ from the pooled fit, ``power_interval`` its
    95 % interval, over ``sd_power_levels`` levels; ``pooled`` is that test.
    """

    end_levels: VarianceTest
    bartlett: VarianceTest
    brown_forsythe: VarianceTest
    heteroscedastic: bool | None
    summary: str
    sd_power: float | None = None
    sd_power_levels: int = 0
    pooled: VarianceTest | None = None
    power_interval: tuple[float, float] | None = None


def variance_evidence(response: FloatArray, levels: Levels, residuals: FloatArray | None = None) -> VarianceEvidence:
    """Test whether the replicate scatter changes across the levels.

    ``residuals`` (response minus a fitted curve) let the pure error of levels whose standards differ
    slightly in concentration be taken about the curve; without them it is taken about the level mean.
    """
    deviations = _within_level(response if residuals is None else residuals, levels)
    end = _end_level_test(deviations, levels)
    replicated = levels.count >= 2
    keep = replicated[levels.index]
    groups = _Groups.of(deviations[keep], (np.cumsum(replicated) - 1)[levels.index[keep]], levels.count[replicated])
    bartlett = _across_levels("Bartlett", groups, _bartlett)
    brown = (
        _across_levels("Brown–Forsythe", groups, _brown_forsythe)
        if bool(np.all(groups.size >= 3))
        else VarianceTest("Brown–Forsythe", False, "needs at least 3 replicates at every replicated level")
    )
    pooled, theta, interval, used, degrees = _pooled_power_test(response, deviations, levels)
    if pooled.available and theta is not None and interval is not None:
        hetero = bool(pooled.significant)
        low, high = interval
        summary = (
            f"variance function fitted to the replicates of {used} levels: SD ∝ (mean response)^θ with "
            f"θ = {fixed(theta, 2)} (95 % interval {fixed(low, 2)} to {fixed(high, 2)}); "
        )
        if hetero:
            summary += f"the scatter grows with the response (one-sided {p_equals(pooled.p_value, 2)})"
        else:
            summary += (
                f"no significant growth of the scatter with the response (one-sided {p_equals(pooled.p_value, 2)}). "
                "This does not show the scatter to be constant"
            )
            if high >= 1.0:
                summary += ": a constant relative SD (θ = 1) is not excluded"
            if degrees < FEW_DEGREES:
                summary += f"; with {degrees} replicate degrees of freedom the test has little power"
        if end.available and end.df is not None:
            summary += (
                f"; ISO 8466-1 end-level F-test for reference: F = {figures(end.statistic, 4)} on ({end.df[0]}, "
                f"{end.df[1]}) df, {'significant' if end.significant else 'not significant'} at 99 %"
                + (" (little power with so few replicates)" if min(end.df) < LOW_POWER_DF else "")
            )
    elif end.available and end.df is not None:
        hetero = bool(end.significant)
        summary = (
            f"ISO 8466-1 F-test of the end levels: F = {figures(end.statistic, 4)} "
            f"{'>' if hetero else '≤'} F({end.df[0]}, {end.df[1]}; 99 %) = {figures(end.critical_value, 4)}: "
            + ("the variance changes across the range" if hetero else "no significant change across the range")
        )
        if min(end.df) < LOW_POWER_DF:
            summary += f" (with {min(end.df) + 1} replicates at an end the test has little power"
            summary += "; this does not show the scatter to be constant)" if not hetero else ")"
    else:
        hetero = None
        summary = "variance homogeneity could not be tested: " + (end.reason or pooled.reason or "too few replicates")
    return VarianceEvidence(end, bartlett, brown, hetero, summary, theta, used, pooled, interval)


def _within_level(values: FloatArray, levels: Levels) -> FloatArray:
    """``values`` less their level mean: the replicates' deviations (about the curve, for residuals)."""
    return values - levels.level_means(values)[levels.index]


def _pooled_power_test(
    response: FloatArray, deviations: FloatArray, levels: Levels
) -> tuple[VarianceTest, float | None, tuple[float, float] | None, int, int]:
    """Maximum-likelihood θ of SD ∝ μ^θ from the pure-error sums of squares of all replicated levels."""
    name = "variance function of all replicated levels (SD ∝ mean^θ)"
    means = levels.level_means(response)
    sums = np.bincount(levels.index, weights=deviations**2, minlength=levels.n_levels)
    use = (levels.count >= 2) & (levels.concentration > 0) & (means > 0)
    used = int(use.sum())
    if used < 3:
        return VarianceTest(name, False, "needs replicates at three or more levels above zero"), None, None, used, 0
    ss, nu, log_mu = sums[use], (levels.count[use] - 1).astype(float), np.log(means[use])
    degrees = int(nu.sum())
    if np.any(ss <= 0.0):
        return VarianceTest(name, False, "a replicated level has identical replicates (zero variance)"), None, None, used, degrees
    total = float(nu.sum())
    centred = log_mu - float(nu @ log_mu) / total
    spread = float(nu @ centred**2)
    if not spread > 0.0:
        return VarianceTest(name, False, "the replicated levels have one mean response"), None, None, used, degrees
    ss = ss / float(ss.max())

    def profile(theta: float) -> float:
        return -0.5 * total * float(np.log(ss @ np.exp(-2.0 * theta * centred)))

    def score(theta: float) -> float:
        w = ss * np.exp(-2.0 * theta * centred)
        return float(w @ centred) / float(w.sum())

    low, high = POWER_BOUNDS
    if score(low) <= 0.0:
        theta = low
    elif score(high) >= 0.0:
        theta = high
    else:
        from scipy import optimize  # loaded only when a root is searched: most runs never need it

        theta = float(optimize.brentq(score, low, high, xtol=1e-12))
    ratio = max(2.0 * (profile(theta) - profile(0.0)), 0.0)
    from scipy import special  # loaded on first use: importing the engine stays light

    two_sided = float(special.chdtrc(1, ratio))
    p_value = 0.5 * two_sided if theta > 0 else 1.0 - 0.5 * two_sided
    half = 1.959963984540054 / np.sqrt(2.0 * spread)
    test = VarianceTest(name, True, statistic=float(ratio), df=(1,), p_value=p_value,
                        significant=bool(p_value < POWER_TEST_ALPHA))
    return test, theta, (theta - half, theta + half), used, degrees


def _end_level_test(deviations: FloatArray, levels: Levels) -> VarianceTest:
    """ISO 8466-1 F-test of the working range's end levels: the lowest level above zero concentration
    (a blank is no standard of the working range, and its scatter is not the lowest standard's) and
    the highest level."""
    name = "ISO 8466-1 end-level F-test"
    above_zero = np.flatnonzero(levels.concentration > 0)
    if above_zero.size < 2:
        return VarianceTest(name, False, "needs two or more levels above zero concentration")
    low, high = int(above_zero[0]), levels.n_levels - 1
    if levels.count[low] < 2 or levels.count[high] < 2:
        return VarianceTest(name, False, "needs replicates at both the lowest level above zero and the highest level")
    sd = levels.level_sd(deviations)
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


@dataclass(frozen=True)
class _Groups:
    """Groups of values held as flat arrays: ``values`` (shape (N,)), ``group`` (the group number of
    each value, 0 to k − 1, every group present) and ``size`` (shape (k,), the number in each), so
    that a statistic of every group is one pass over the arrays rather than one call per group."""

    values: FloatArray
    group: np.ndarray
    size: np.ndarray

    @classmethod
    def of(cls, values: FloatArray, group: np.ndarray, size: np.ndarray) -> "_Groups":
        return cls(np.asarray(values, dtype=float), np.asarray(group, dtype=np.intp), np.asarray(size, dtype=np.intp))

    @classmethod
    def from_list(cls, groups: tuple[FloatArray, ...]) -> "_Groups":
        size = np.array([np.size(g) for g in groups], dtype=np.intp)
        values = np.concatenate([np.ravel(np.asarray(g, dtype=float)) for g in groups]) if groups else np.zeros(0)
        return cls(values, np.repeat(np.arange(size.size), size), size)

    @property
    def k(self) -> int:
        return int(self.size.size)

    def sums(self, values: FloatArray) -> FloatArray:
        """Σ of ``values`` (aligned with :attr:`values`) within each group."""
        return np.bincount(self.group, weights=values, minlength=self.k)

    def means(self, values: FloatArray) -> FloatArray:
        return self.sums(values) / self.size

    def variances(self) -> FloatArray:
        """Sample variance (n − 1) of each group: Σ(v − v̄)²/(n − 1)."""
        return self.sums((self.values - self.means(self.values)[self.group]) ** 2) / (self.size - 1)

    def sorted_values(self) -> FloatArray:
        """The values sorted within each group, groups one after another in order."""
        return self.values[np.lexsort((self.values, self.group))]

    def starts(self) -> np.ndarray:
        return np.concatenate(([0], np.cumsum(self.size)[:-1])).astype(np.intp)

    def medians(self) -> FloatArray:
        """Median of each group: the middle value, or the mean of the two middle values."""
        ordered, starts = self.sorted_values(), self.starts()
        lower = ordered[starts + (self.size - 1) // 2]
        upper = ordered[starts + self.size // 2]
        return np.where(self.size % 2 == 1, upper, (lower + upper) / 2)

    def constant(self) -> np.ndarray:
        """Boolean of shape (k,): all values of the group are equal."""
        ordered, starts = self.sorted_values(), self.starts()
        return ordered[starts] == ordered[starts + self.size - 1]


def bartlett_statistic(*groups: FloatArray) -> tuple[float, float]:
    """Bartlett's T and its p-value (χ² with k − 1 df), as in Snedecor & Cochran, *Statistical Methods*:
    T = [(N − k)·ln s²_p − Σ(nᵢ − 1)·ln s²ᵢ] / [1 + (Σ 1/(nᵢ − 1) − 1/(N − k)) / (3(k − 1))]."""
    return _bartlett(_Groups.from_list(groups))


def _bartlett(groups: _Groups) -> tuple[float, float]:
    n = groups.size.astype(float)
    var = groups.variances()
    k, total = groups.k, n.sum()
    pooled = np.sum((n - 1) * var) / (total - k)
    numerator = (total - k) * np.log(pooled) - np.sum((n - 1) * np.log(var))
    denominator = 1 + (np.sum(1 / (n - 1)) - 1 / (total - k)) / (3 * (k - 1))
    statistic = float(numerator / denominator)
    from scipy import special  # loaded on first use: importing the engine stays light

    return statistic, float(special.chdtrc(k - 1, statistic))


def brown_forsythe_statistic(*groups: FloatArray) -> tuple[float, float]:
    """Levene's W on absolute deviations from each group's median (Brown & Forsythe 1974), with its
    F(k − 1, N − k) p-value."""
    return _brown_forsythe(_Groups.from_list(groups))


def _brown_forsythe(groups: _Groups) -> tuple[float, float]:
    deviations = np.abs(groups.values - groups.medians()[groups.group])
    n = groups.size.astype(float)
    means = groups.means(deviations)
    k, total = groups.k, n.sum()
    grand = np.sum(n * means) / total
    within = float(np.sum(groups.sums((deviations - means[groups.group]) ** 2)))
    statistic = float((total - k) / (k - 1) * np.sum(n * (means - grand) ** 2) / within)
    return statistic, f_upper_tail(statistic, k - 1, total - k)


def _across_levels(name: str, groups: _Groups, test) -> VarianceTest:  # type: ignore[no-untyped-def]
    if groups.k < 2:
        return VarianceTest(name, False, "needs at least two replicated levels")
    if bool(np.any(groups.constant())):
        return VarianceTest(name, False, "a replicated level has identical replicates (zero variance)")
    with np.errstate(divide="ignore", invalid="ignore"):
        stat, p = test(groups)
    if not (np.isfinite(stat) and np.isfinite(p)):
        return VarianceTest(name, False, "the replicates do not allow the test (degenerate spread)")
    df = (groups.k - 1,) if name == "Bartlett" else (groups.k - 1, int(groups.size.sum()) - groups.k)
    return VarianceTest(name, True, statistic=stat, df=df, p_value=p, significant=bool(p < ACROSS_LEVELS_ALPHA))
