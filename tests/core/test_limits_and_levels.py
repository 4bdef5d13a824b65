"""Detection limits and the grouping of standards into levels."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

import curvewright as cw
from curvewright.core.levels import group_levels


def test_intercept_sd_method(fluorescence) -> None:
    cal = cw.fit(*fluorescence)
    limits = cal.limits("intercept_sd")
    assert limits.sigma == pytest.approx(cal.standard_errors[0], rel=1e-15)
    assert limits.lod == pytest.approx(3.3 * cal.standard_errors[0] / cal.coefficients[1], rel=1e-14)
    assert "intercept" in limits.description


def test_iso11843_against_its_formula(fluorescence) -> None:
    # ISO 11843-2 (formula recalled, not re-read): x_c = t(0.95; ν)·(σ/b)·q, x_d = δ·(σ/b)·q with δ the
    # non-centrality for which the non-central t has its 5 % quantile at t(0.95; ν).
    x, y = fluorescence
    cal = cw.fit(x, y)
    limits = cal.limits("iso11843")
    nu = x.size - 2
    q = np.sqrt(1 + 1 / x.size + x.mean() ** 2 / np.sum((x - x.mean()) ** 2))
    t = stats.t.ppf(0.95, nu)
    factor = cal.residual_sd / cal.coefficients[1] * q
    assert limits.critical_concentration == pytest.approx(t * factor, rel=1e-12)
    delta = limits.lod / factor
    assert stats.nct.cdf(t, nu, delta) == pytest.approx(0.05, abs=1e-10)
    # The common approximation δ ≈ 2t (for α = β) is close but not equal (common practice).
    assert delta == pytest.approx(2 * t, rel=0.1)
    assert limits.loq is None and "ISO 11843-2" in limits.description


def test_iso11843_refuses_weighted_fits() -> None:
    cal = cw.fit([1, 2, 4, 8, 16], [0.11, 0.2, 0.41, 0.79, 1.62], weighting="1/x")
    with pytest.raises(cw.LimitsError, match="unweighted straight line"):
        cal.limits("iso11843")


def test_weighted_residual_sd_method_uses_the_low_end() -> None:
    x = np.array([1, 2, 4, 8, 16.0])
    cal = cw.fit(x, [0.11, 0.2, 0.41, 0.79, 1.62], weighting="1/x^2")
    limits = cal.limits()
    assert limits.sigma == pytest.approx(cal.residual_sd / np.sqrt(cal.weights[0]), rel=1e-12)
    assert "lowest standard" in limits.description


def test_unknown_limits_method() -> None:
    with pytest.raises(cw.LimitsError, match="not one of"):
        cw.fit([1, 2, 4], [1, 2, 4.1]).limits("signal_to_noise")


def test_levels_group_standards_made_up_by_mass_only_within_a_tolerance_given() -> None:
    x = np.array([0.0, 0.0, 1.002, 0.999, 1.0, 5.01, 4.99, 10.0])
    levels = group_levels(x, 0.005)
    assert levels.n_levels == 4 and not levels.exact
    assert levels.count.tolist() == [2, 3, 2, 1]
    assert levels.concentration[1] == pytest.approx(1.000333, rel=1e-5)
    # without a tolerance every distinct nominal concentration is its own level
    exact = group_levels(x)
    assert exact.n_levels == 7 and exact.exact


def test_exact_levels_only_with_zero_tolerance() -> None:
    assert group_levels(np.array([1.0, 1.001, 1.0]), 0.0).n_levels == 2
    assert group_levels(np.array([1.0, 1.001, 1.0])).n_levels == 2


def test_level_labels_group_standards_and_unlabelled_ones_go_by_concentration() -> None:
    x = np.array([1.002, 0.998, 2.003, 1.996, 5.0, 5.0, 10.0])
    levels = group_levels(x, labels=["L1", "L1", "L2", "L2", "", "", " "])
    assert levels.n_levels == 4 and levels.count.tolist() == [2, 2, 2, 1]
    assert levels.index.tolist() == [0, 0, 1, 1, 2, 2, 3]
    with pytest.raises(cw.CalibrationInputError, match="level labels: 2 labels given for 7 standards"):
        group_levels(x, labels=["L1", "L2"])


def test_inexact_replicates_still_give_lack_of_fit() -> None:
    x = [1.001, 0.998, 2.003, 1.996, 5.0, 5.02, 10.01, 9.98]
    y = [1.02, 0.99, 2.03, 1.98, 5.1, 5.0, 9.9, 10.1]
    for grouping in ({"level_tolerance": 0.005}, {"level_labels": ["a", "a", "b", "b", "c", "c", "d", "d"]}):
        lof = cw.fit(x, y, **grouping).lack_of_fit
        assert lof.available and lof.df_pure_error == 4 and lof.df_lack_of_fit == 2


def test_pure_error_of_inexact_replicates_is_taken_about_the_curve() -> None:
    # Invented standards made up by mass: 6 levels × 3, each within ±0.2 % of its nominal value, on a
    # steep line with little scatter. About the level means the pure error would hold slope × Δx.
    rng = np.random.default_rng(12)
    nominal = np.repeat([1.0, 2.0, 5.0, 10.0, 20.0, 50.0], 3)
    labels = [f"L{int(v)}" for v in nominal]
    p_values, rejected, runs = [], 0, 400
    for _ in range(runs):
        x = nominal * (1 + 0.002 * rng.uniform(-1, 1, nominal.size))
        y = 2.0 + 100.0 * x + 0.5 * rng.standard_normal(x.size)
        cal = cw.fit(x, y, level_labels=labels)
        lof = cal.lack_of_fit
        assert lof.ss_pure_error <= cal.sse * (1 + 1e-12)
        assert lof.ss_pure_error + lof.ss_lack_of_fit == pytest.approx(cal.sse, rel=1e-9)
        p_values.append(lof.p_value)
        rejected += lof.p_value < 0.05
        tolerant = cw.fit(x, y, level_tolerance=0.005).lack_of_fit
        assert tolerant.p_value == pytest.approx(lof.p_value, rel=1e-9)
    # the true curve is a straight line: F follows F(4, 12) closely and p is spread over (0, 1)
    assert sum(p == 1.0 for p in p_values) == 0
    assert 0.02 <= rejected / runs <= 0.08


def test_distinct_concentrations_are_never_refused() -> None:
    # Twelve standards at 1e6 + 0…10 (invented): eleven distinct concentrations.
    x = 1e6 + np.array([0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 10.0])
    y = 3.0 + 0.5 * (x - 1e6) + np.array([0.01, -0.02, 0.0, 0.02, -0.01, 0.01, -0.02, 0.02, 0.0, -0.01, 0.01, -0.01])
    for grouping in ({}, {"level_tolerance": 0.005}):
        cal = cw.fit(x, y, **grouping)
        assert cal.coefficients[1] == pytest.approx(0.5, rel=1e-3)
    assert cw.fit(x, y, level_tolerance=0.005).levels.n_levels == 1
    assert "no level is spare" in cw.fit(x, y, level_tolerance=0.005).lack_of_fit.reason


def test_distribution_functions_match_scipy_stats() -> None:
    # scipy.stats is the reference library for these quantiles and tail probabilities
    from curvewright.core.distributions import f_quantile, f_upper_tail, t_quantile

    for df in (1, 3, 8, 30, 200):
        assert t_quantile(0.975, df) == pytest.approx(stats.t.ppf(0.975, df), rel=1e-13)
        assert f_upper_tail(2.7, 3, df) == pytest.approx(stats.f.sf(2.7, 3, df), rel=1e-12)
        assert f_quantile(0.99, df, 9) == pytest.approx(stats.f.ppf(0.99, df, 9), rel=1e-12)


@pytest.mark.parametrize("tolerance", [None, 0.0, 0.005, 0.3])
def test_levels_without_labels_are_those_of_empty_labels(tolerance: float | None) -> None:
    # Standards without labels are grouped by the sorted values directly; empty labels take the
    # general path (labels first, then renumbering by mean concentration). Both must give the same
    # levels, numbers, means, counts and exactness, bit for bit.
    rng = np.random.default_rng(15)
    for _ in range(300):
        n = int(rng.integers(1, 25))
        x = rng.choice([0.0, 0.1, 0.3, 1.0, 1.001, 2.0, 2.004, 5.0, -1.0, 1e-300, 1e300], n)
        x = x * np.where(rng.random(n) < 0.4, 1 + rng.uniform(-0.004, 0.004, n), 1.0)
        fast, general = group_levels(x, tolerance), group_levels(x, tolerance, [""] * n)
        assert fast.index.tolist() == general.index.tolist()
        assert fast.concentration.tolist() == general.concentration.tolist()
        assert fast.count.tolist() == general.count.tolist()
        assert fast.exact is general.exact


def test_the_limits_that_set_the_flags_are_worked_out_once_and_are_the_default_limits() -> None:
    """quantify() flags against the default limits (residual SD method); they are kept with the
    calibration, so a second call reads the same object, and equal a fresh limits() field by field."""
    x = np.repeat([1.0, 2.0, 5.0, 10.0, 20.0], 2)
    cal = cw.fit(x, 0.3 + 1.7 * x + np.tile([0.02, -0.02], 5))
    first = cal.quantify([0.5, 4.0]).limits
    assert cal.quantify([9.0]).limits is first
    assert first == cal.limits()
    # a calibration whose slope is not significant has no limits: the note says why, every time
    flat = cw.fit(x, 5.0 + np.tile([0.5, -0.5], 5) * np.arange(10) / 10)
    assert not flat.regression.significant
    assert flat.flag_limits[0] is None and "no limit can be computed" in flat.flag_limits[1]
