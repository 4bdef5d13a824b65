"""The influence flags: rules chosen by simulation so that they do not cry wolf.

Sources of the rules (see curvewright.core.influence):
* Bonferroni outlier test on the externally studentized residual, |t| > t(1 − α/(2n); n − p − 1)
  (Cook & Weisberg 1982, Residuals and Influence in Regression, §2.2; from memory), α = 0.025.
* Cook's distance against the median of F(p, n − p) (Cook & Weisberg 1982, §3.5; from memory), together
  with |t| > t(1 − α·h/(2p); n − p − 1), α = 0.025: a Bonferroni split of α in proportion to leverage
  (the Bonferroni inequality holds for any split whose parts sum to α).
* Leverage above 0.5 is a note, not a flag (Huber 1981, Robust Statistics; from memory).
The externally studentized residual follows t(n − p − 1) exactly under the model (Belsley, Kuh &
Welsch 1980), which is what makes the first two rules hold their rates.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

import curvewright as cw
from curvewright.core.influence import InfluenceFlag, measure_influence

# name: (model, weighting, concentrations, true curve, response SD); invented designs of the kinds
# laboratories run: duplicates, triplicates, single standards, one far standard, many decades.
DESIGNS = {
    "line, 6 levels × 2": ("linear", "none", np.repeat([1, 2, 5, 10, 20, 40.0], 2), lambda x: 0.4 + 2 * x, lambda x: 0.5 + 0 * x),
    "line 1/x², 8 levels × 2": ("linear", "1/x^2", np.repeat([1, 2, 5, 10, 50, 100, 500, 1000.0], 2),
                                lambda x: 0.4 + 2 * x, lambda x: 0.05 * (0.4 + 2 * x)),
    "quadratic, 7 levels × 2": ("quadratic", "none", np.repeat([1, 2, 4, 8, 12, 16, 20.0], 2),
                                lambda x: 0.4 + 2 * x - 0.03 * x**2, lambda x: 0.3 + 0 * x),
    "line, 6 single standards": ("linear", "none", np.array([1, 2, 4, 6, 8, 10.0]), lambda x: 1 + 2 * x, lambda x: 0.3 + 0 * x),
    "line, one far standard": ("linear", "none", np.array([0, 1, 2, 3, 4, 5, 6, 7, 8, 50.0]), lambda x: 1 + 2 * x,
                               lambda x: 0.3 + 0 * x),
    "quadratic, lone top standard": ("quadratic", "none", np.array([0, 0, 1, 2, 3, 3, 4, 5, 6, 6, 10.0]),
                                     lambda x: 1 + 2 * x - 0.05 * x**2, lambda x: 0.2 + 0 * x),
}
RUNS = 800


def flag_rate(model, weighting, x, curve, sd, rng, shift=None) -> float:  # type: ignore[no-untyped-def]
    flagged = 0
    for _ in range(RUNS):
        y = curve(x) + sd(x) * rng.standard_normal(x.size)
        if shift is not None:
            y[shift] += 8 * sd(x[shift])
        cal = cw.fit(x, y, model, weighting)
        flagged += any(cal.influence_flags[i] for i in range(x.size)) if shift is None else bool(cal.influence_flags[shift])
    return flagged / RUNS


@pytest.mark.slow
@pytest.mark.parametrize("name", list(DESIGNS))
def test_standards_from_the_true_curve_are_rarely_flagged(name: str) -> None:
    # Target: no more than about 5 % of calibrations drawn from the true curve flag any standard
    # (the Bonferroni inequality bounds it by 0.025 + 0.025 when the model holds).
    rate = flag_rate(*DESIGNS[name], np.random.default_rng(20260401))
    # Clopper–Pearson: the simulation must not show the rate above 5 % (one-sided 95 % lower bound).
    lower = stats.beta.ppf(0.05, rate * RUNS, RUNS - rate * RUNS + 1) if rate > 0 else 0.0
    assert lower <= 0.05 and rate <= 0.07, f"{name}: {rate:.3f} of calibrations flag a standard"


@pytest.mark.slow
@pytest.mark.parametrize("name", ["line, 6 levels × 2", "quadratic, 7 levels × 2", "line 1/x², 8 levels × 2"])
def test_a_standard_eight_sd_off_is_caught(name: str) -> None:
    model, weighting, x, curve, sd = DESIGNS[name]
    rate = flag_rate(model, weighting, x, curve, sd, np.random.default_rng(7), shift=5)
    assert rate >= 0.9, f"{name}: the shifted standard is flagged in {rate:.3f} of calibrations"


def test_thresholds_follow_their_formulas() -> None:
    # scipy.stats is the reference for the t and F quantiles.
    x = np.repeat([1, 2, 5, 10, 20, 40.0], 2)
    y = 0.4 + 2 * x + np.tile([0.3, -0.3, -0.2, 0.25, 0.1, -0.4], 2)
    influence = cw.fit(x, y).influence
    n, p = 12, 2
    assert influence.studentized_threshold == pytest.approx(stats.t.ppf(1 - 0.025 / (2 * n), n - p - 1), rel=1e-12)
    assert influence.cooks_threshold == pytest.approx(stats.f.ppf(0.5, p, n - p), rel=1e-12)
    expected = stats.t.ppf(1 - 0.025 * influence.leverage / (2 * p), n - p - 1)
    np.testing.assert_allclose(influence.influence_thresholds, expected, rtol=1e-12)
    assert all(flag.source for flag in InfluenceFlag)


def test_end_standards_of_a_good_line_are_not_flagged() -> None:
    # The design's end points have leverage above 2p/n and Cook's distance above 4/n; neither is a flag.
    x = np.repeat([1, 2, 5, 10, 20, 40.0], 2)
    y = 0.4 + 2 * x + np.array([0.3, -0.3, -0.2, 0.25, 0.1, -0.4, 0.35, -0.1, 0.2, -0.3, 0.6, -0.55])
    cal = cw.fit(x, y)
    assert cal.leverage[-1] > 2 * 2 / 12 and cal.cooks_distance[-1] > 4 / 12
    assert not any(cal.influence_flags)


def test_a_lone_far_standard_is_a_note_not_a_flag() -> None:
    x = np.array([0, 1, 2, 3, 4, 5, 6, 7, 8, 50.0])
    y = 1 + 2 * x + np.array([0.1, -0.2, 0.15, -0.05, 0.2, -0.1, 0.05, -0.15, 0.1, 0.3])
    cal = cw.fit(x, y)
    assert cal.leverage[-1] > 0.5 and not cal.influence_flags[-1]
    assert any("standard 10 has leverage" in note for note in cal.notes)


def test_exact_standards_give_no_flags_and_no_infinite_residuals() -> None:
    # Standards exactly on y = 2 + 3x: the residuals are round-off, not scatter.
    x = np.array([1, 2, 3, 4, 5, 6.0])
    cal = cw.fit(x, 2 + 3 * x)
    assert np.all(cal.studentized_residuals == 0.0) and np.all(cal.cooks_distance == 0.0)
    assert not any(cal.influence_flags)


def test_one_standard_off_exact_others_gives_a_finite_flagged_residual() -> None:
    x = np.array([1, 2, 3, 4, 5, 6, 7, 8.0])
    y = 2 + 3 * x
    y[3] += 0.5
    cal = cw.fit(x, y)
    assert np.all(np.isfinite(cal.studentized_residuals))
    assert InfluenceFlag.OUTLIER in cal.influence_flags[3]


def test_three_point_line_says_why_its_studentized_residuals_are_undefined() -> None:
    cal = cw.fit([1.0, 2.0, 3.0], [1.0, 2.1, 2.9])
    assert np.all(np.isnan(cal.studentized_residuals))
    assert all(flags == (InfluenceFlag.NOT_STUDENTIZED,) for flags in cal.influence_flags)


def test_round_off_floor_scales_with_the_response() -> None:
    e = np.array([1e-14, -2e-14, 1e-14, 0.0])
    h = np.array([0.4, 0.3, 0.3, 0.4])
    exact = measure_influence(e, h, 2, np.array([1e3, 2e3, 3e3, 4e3]))
    assert np.all(exact.studentized_residuals == 0.0)
    real = measure_influence(e, h, 2, np.array([1e-3, 2e-3, 3e-3, 4e-3]))
    assert np.all(real.studentized_residuals[:3] != 0.0)


def test_the_drawn_influence_boundary_is_the_rule_the_flags_use() -> None:
    # The plot's boundary must separate exactly the standards the rule flags: |t| above the boundary
    # at a standard's leverage ⇔ flagged INFLUENTIAL. Where no residual can bring Cook's distance over
    # its threshold (r² ≤ n − p always), the boundary is infinite: nothing there can be flagged.
    from curvewright.core.influence import influence_boundary

    rng = np.random.default_rng(11)
    checked = 0
    for _ in range(300):
        x = np.array([0, 0.5, 1, 2, 3, 4, 5, 6, 8, 20.0])
        y = 1 + 2 * x + 0.3 * rng.standard_normal(x.size)
        y[rng.integers(x.size)] += rng.uniform(-4, 4)
        cal = cw.fit(x, y)
        bound = influence_boundary(cal.leverage, cal.n_parameters, cal.n_standards, cal.influence.cooks_threshold)
        beyond = np.abs(cal.studentized_residuals) > bound
        flagged = np.array([InfluenceFlag.INFLUENTIAL in f for f in cal.influence_flags])
        close = np.isclose(np.abs(cal.studentized_residuals), bound, rtol=1e-9)
        np.testing.assert_array_equal(beyond[~close], flagged[~close])
        checked += int(flagged.sum())
    assert checked > 10  # the draws include standards the rule flags
    h = np.array([0.01, 0.05, 0.3])
    low = influence_boundary(h, 2, 10, stats.f.ppf(0.5, 2, 8))
    assert np.isinf(low[0]) and np.isfinite(low[2])
