"""Model comparison: every candidate side by side, a recommendation with reasons."""

from __future__ import annotations

import numpy as np
import pytest

import curvewright as cw
from curvewright.core.errors import CalibrationInputError
from tests.conftest import load_strd


def test_pontius_recommends_the_quadratic() -> None:
    # NIST Pontius: the straight line fails lack of fit (F = 214.7, NIST e-Handbook §4.6.1.5).
    x, y = load_strd("nist_strd_pontius.csv")
    result = cw.compare(x, y, weightings=("none",))
    assert result.recommended.model is cw.Model.QUADRATIC
    assert any("lack-of-fit" in r and "significant" in r for r in result.reasons)
    # Mandel's PG on Pontius, recomputed with numpy/scipy: 4218.5.
    assert result.mandel[0].statistic == pytest.approx(4218.5, rel=1e-4)


def test_mandel_equals_partial_f_of_the_square_term() -> None:
    # ISO 8466-1 Mandel statistic equals the partial F of x² (extra sum of squares).
    x, y = load_strd("nist_strd_pontius.csv")
    lin, quad = cw.fit(x, y), cw.fit(x, y, "quadratic")
    partial_f = (lin.sse - quad.sse) / (quad.sse / quad.df_residual)
    assert cw.mandel_test(lin, quad).statistic == pytest.approx(partial_f, rel=1e-12)
    # and t² of the b2 coefficient
    t = quad.coefficients[2] / quad.standard_errors[2]
    assert cw.mandel_test(lin, quad).statistic == pytest.approx(t**2, rel=1e-9)


def invented_wide_range_run(seed: int = 11) -> tuple[np.ndarray, np.ndarray]:
    """An invented LC-MS style curve over three decades with 5 % relative scatter, triplicates."""
    rng = np.random.default_rng(seed)
    x = np.repeat([1.0, 2.0, 5.0, 20.0, 100.0, 250.0, 500.0, 1000.0], 3)
    return x, (0.002 + 0.0125 * x) * (1 + 0.05 * rng.standard_normal(x.size))


def test_heteroscedastic_data_get_a_weighted_recommendation() -> None:
    x, y = invented_wide_range_run()
    result = cw.compare(x, y, profile="ich-m10-chromatographic")
    assert result.variance.heteroscedastic is True
    assert result.variance.end_levels.available and result.variance.end_levels.significant
    assert result.recommended.weighting in (cw.Weighting.INVERSE_X2, cw.Weighting.INVERSE_Y2, cw.Weighting.INVERSE_S2)
    assert result.recommended.model is cw.Model.LINEAR
    assert any("weighting is needed" in r for r in result.reasons)
    labels = {(c.model, c.weighting) for c in result.candidates}
    # 2 models × 8 weightings, and the power curve (the standards span more than two decades) under
    # the 6 weightings it accepts; 1/s² from three replicates per level is refused, with the reason
    assert len(labels) == 14 + 5
    assert {(s.model, s.weighting) for s in result.skipped} == {
        (cw.Model.LINEAR, cw.Weighting.INVERSE_S2), (cw.Model.QUADRATIC, cw.Weighting.INVERSE_S2),
        (cw.Model.POWER, cw.Weighting.INVERSE_S2),
    }
    assert any("power curve" in r and "no substantial improvement" in r for r in result.reasons)
    assert all("fewer than 10" in s.reason for s in result.skipped)
    unweighted = result.candidate("linear", "none")
    assert unweighted.sum_abs_relative_error > result.recommended.sum_abs_relative_error


def test_without_replicates_the_fit_stays_unweighted_and_says_why(fluorescence) -> None:
    result = cw.compare(*fluorescence, include_proportional=True)
    assert result.variance.heteroscedastic is None
    assert result.recommended.model is cw.Model.LINEAR
    assert result.recommended.weighting is cw.Weighting.NONE
    assert any("replicate the lowest and highest" in r for r in result.reasons)
    # The zero standard rules out 1/x weights and the missing replicates rule out 1/s²: listed, not dropped.
    skipped = {(s.model, s.weighting) for s in result.skipped}
    assert (cw.Model.LINEAR, cw.Weighting.INVERSE_X) in skipped
    assert (cw.Model.LINEAR, cw.Weighting.INVERSE_S2) in skipped
    assert all(s.reason for s in result.skipped)
    assert any(c.model is cw.Model.PROPORTIONAL for c in result.candidates)
    assert result.recommended.model is not cw.Model.PROPORTIONAL


def test_candidate_statistics_are_the_calibrations_own() -> None:
    x, y = invented_wide_range_run()
    result = cw.compare(x, y)
    for c in result.candidates:
        cal = cw.fit(x, y, c.model, c.weighting)
        assert c.residual_sd == pytest.approx(cal.residual_sd, rel=1e-12)
        assert c.adjusted_r_squared == pytest.approx(cal.adjusted_r_squared, rel=1e-12)
        assert c.aicc is not None and np.isfinite(c.aicc)


def test_variance_tests_against_scipy() -> None:
    from scipy import stats

    x, y = invented_wide_range_run()
    evidence = cw.compare(x, y).variance
    groups = [y[x == level] for level in np.unique(x)]
    assert evidence.bartlett.statistic == pytest.approx(stats.bartlett(*groups).statistic, rel=1e-12)
    assert evidence.brown_forsythe.p_value == pytest.approx(stats.levene(*groups, center="median").pvalue, rel=1e-12)
    low, high = groups[0], groups[-1]
    f = np.var(high, ddof=1) / np.var(low, ddof=1)
    assert evidence.end_levels.statistic == pytest.approx(f, rel=1e-12)
    # ISO 8466-1 quotes F(9, 9; 99 %) = 5.35 for its ten-replicate design; scipy gives the same.
    assert stats.f.ppf(0.99, 9, 9) == pytest.approx(5.35, abs=0.005)


def assert_variance_tests_match_scipy(groups: list[np.ndarray], rel: float) -> None:
    # scipy.stats.bartlett and scipy.stats.levene(center="median") are the reference library for both tests
    from scipy import stats

    from curvewright.core.variance import bartlett_statistic, brown_forsythe_statistic

    ref = stats.bartlett(*groups)
    assert bartlett_statistic(*groups) == pytest.approx((ref.statistic, ref.pvalue), rel=rel)
    ref = stats.levene(*groups, center="median")
    assert brown_forsythe_statistic(*groups) == pytest.approx((ref.statistic, ref.pvalue), rel=rel)


def test_bartlett_and_brown_forsythe_match_scipy() -> None:
    rng = np.random.default_rng(5)
    assert_variance_tests_match_scipy([rng.normal(0, s, n) for s, n in ((1, 3), (2, 4), (4, 5), (3, 3))], 1e-12)


def test_bartlett_and_brown_forsythe_match_scipy_over_unequal_groups() -> None:
    # The groups are worked as flat arrays: odd and even sizes (the median of an even group is the
    # mean of the middle two), groups of up to 12, given in any order within a group.
    rng = np.random.default_rng(15)
    for _ in range(60):
        sizes = rng.integers(3, 13, size=rng.integers(2, 9))
        groups = [rng.normal(0, rng.uniform(0.1, 10), n) * 10 ** rng.uniform(-4, 4) for n in sizes]
        assert_variance_tests_match_scipy(groups, 1e-11)


def test_the_line_through_the_origin_is_not_made_to_look_better_than_a_needed_intercept() -> None:
    # Invented standards on y = 10 + 5x over a narrow range far from zero: the intercept is about
    # 10 ± 0.8, plainly needed. Against the uncentred total Σy² the proportional model's R² came out
    # above the line's; measured about the mean response, like the other models, it falls below.
    rng = np.random.default_rng(2)
    x = np.repeat([40.0, 45.0, 50.0, 55.0, 60.0], 2)
    y = 10 + 5 * x + 0.3 * rng.standard_normal(x.size)
    result = cw.compare(x, y, weightings=("none",), include_proportional=True)
    line, origin = result.candidate("linear", "none"), result.candidate("proportional", "none")
    assert line.calibration.coefficients[0] == pytest.approx(10, abs=1)
    assert line.calibration.standard_errors[0] == pytest.approx(0.8, abs=0.2)
    assert origin.adjusted_r_squared < line.adjusted_r_squared
    assert origin.calibration.r_squared == pytest.approx(
        1 - origin.calibration.sse / np.sum((y - y.mean()) ** 2), rel=1e-12
    )
    assert any("R² is taken about the mean response for every model" in r for r in result.reasons)
    assert result.notes and "does not compare weightings" in result.notes[0]


DUPLICATES = np.repeat([2.0, 5.0, 10.0, 20.0, 50.0, 100.0], 2)


def recommended_weighting_rate(sd, runs: int) -> float:  # type: ignore[no-untyped-def]
    """Fraction of invented calibrations (6 levels from 2 to 100, duplicates) given a weighted recommendation."""
    rng = np.random.default_rng(20260515)
    weighted = 0
    for _ in range(runs):
        y = 0.5 + 1.2 * DUPLICATES + sd(DUPLICATES) * rng.standard_normal(DUPLICATES.size)
        result = cw.compare(DUPLICATES, y)
        weighted += result.recommended.weighting is not cw.Weighting.NONE
        assert not any("constant within the evidence" in reason for reason in result.reasons)
    return weighted / runs


@pytest.mark.slow
def test_a_true_five_percent_cv_gets_a_weighted_recommendation() -> None:
    # Target: weighted in at least 90 % of calibrations when the SD is 5 % of the response.
    rate = recommended_weighting_rate(lambda x: 0.05 * (0.5 + 1.2 * x), runs=200)
    assert rate >= 0.90, f"weighted in {rate:.3f} of calibrations"


@pytest.mark.slow
def test_a_constant_sd_stays_unweighted() -> None:
    # Target: unweighted in at least 90 % of calibrations when the SD is the same at every level.
    rate = recommended_weighting_rate(lambda x: 0.6 + 0 * x, runs=200)
    assert 1 - rate >= 0.90, f"unweighted in {1 - rate:.3f} of calibrations"


def test_a_weak_variance_test_is_worded_as_weak() -> None:
    # Invented duplicates whose scatter happens not to show its growth: the summary must not claim a
    # constant scatter, and says what the interval for θ still allows.
    y = 0.5 + 1.2 * DUPLICATES + np.array([0.3, -0.3, 0.4, -0.4, -0.5, 0.5, 0.6, -0.6, 0.5, -0.5, 0.7, -0.7])
    result = cw.compare(DUPLICATES, y)
    evidence = result.variance
    assert evidence.heteroscedastic is False and evidence.pooled.available
    assert "does not show the scatter to be constant" in evidence.summary
    assert "the test has little power" in evidence.summary
    assert result.recommended.weighting is cw.Weighting.NONE
    assert any("not proof of a constant scatter" in reason for reason in result.reasons)


def test_the_pooled_variance_function_matches_its_likelihood() -> None:
    # The maximum-likelihood θ of SD ∝ mean^θ from pure-error sums of squares, against a direct
    # numerical maximisation with scipy.optimize of the same χ² likelihood.
    from scipy import optimize, stats

    rng = np.random.default_rng(30)
    y = (0.5 + 1.2 * DUPLICATES) * (1 + 0.05 * rng.standard_normal(DUPLICATES.size))
    evidence = cw.compare(DUPLICATES, y).variance
    levels = np.unique(DUPLICATES)
    ss = np.array([np.sum((y[DUPLICATES == v] - y[DUPLICATES == v].mean()) ** 2) for v in levels])
    mu = np.array([y[DUPLICATES == v].mean() for v in levels])

    def minus_log_likelihood(params: np.ndarray) -> float:
        log_s2, theta = params
        var = np.exp(log_s2) * mu ** (2 * theta)
        return -float(np.sum(stats.chi2.logpdf(ss / var, 1) - np.log(var)))

    best = optimize.minimize(minus_log_likelihood, [np.log(np.mean(ss)), 0.5], method="Nelder-Mead",
                             options={"xatol": 1e-10, "fatol": 1e-12, "maxiter": 20000})
    assert evidence.sd_power == pytest.approx(best.x[1], abs=1e-5)
    null = optimize.minimize_scalar(lambda v: minus_log_likelihood(np.array([v, 0.0])))
    assert evidence.pooled.statistic == pytest.approx(2 * (null.fun - best.fun), rel=1e-6)


def _same(a: object, b: object) -> bool:
    """Equal to the last bit, NaN where NaN (arrays and floats), or equal (anything else)."""
    if isinstance(a, np.ndarray) or isinstance(b, np.ndarray):
        a, b = np.asarray(a), np.asarray(b)
        return a.shape == b.shape and a.dtype == b.dtype and a.tobytes() == b.tobytes()
    if isinstance(a, float) and isinstance(b, float):
        return np.float64(a).tobytes() == np.float64(b).tobytes()
    return bool(a == b)


@pytest.mark.parametrize("case", range(8))
def test_the_polynomials_fitted_together_are_the_fits_made_one_by_one(case: int) -> None:
    # compare() fits the line, the quadratic and the line through the origin under all weightings
    # together; every candidate must be the calibration fit() gives for it alone, to the last bit,
    # and every candidate it skips must carry the reason fit() gives (a blank under 1/x, 1/s²
    # without replicates…), under every weighting. Invented standards of several shapes.
    rng = np.random.default_rng(100 + case)
    levels = np.geomspace(0.5, 0.5 * 10 ** rng.uniform(1, 3), int(rng.integers(5, 9)))
    x = np.repeat(levels, int(rng.integers(1, 4)))
    if case % 3 == 0:
        x = np.concatenate([[0.0, 0.0], x])  # blanks: the 1/x-type weightings cannot be made
    y = (0.03 + 0.9 * x - 0.0005 * case * x**2) * (1 + 0.03 * rng.standard_normal(x.size)) + 0.01 * rng.standard_normal(x.size)
    result = cw.compare(x, y, include_proportional=True)
    fitted = 0
    for model in ("linear", "quadratic", "proportional"):
        for weighting in (w.value for w in cw.Weighting):  # the variance functions too
            try:
                alone = cw.fit(x, y, model, weighting)
            except CalibrationInputError as exc:
                assert any(s.model.value == model and s.weighting.value == weighting and s.reason == str(exc)
                           for s in result.skipped), (model, weighting, str(exc))
                continue
            together = result.candidate(model, weighting).calibration
            fitted += 1
            for name in ("coefficients", "covariance", "standard_errors", "residual_sd", "r_squared",
                         "adjusted_r_squared", "fitted", "residuals", "back_calculated", "relative_error",
                         "leverage", "studentized_residuals", "cooks_distance", "influence_flags", "notes"):
                assert _same(getattr(together, name), getattr(alone, name)), (model, weighting, name)
            assert together.lack_of_fit == alone.lack_of_fit
            assert together.regression == alone.regression
            assert _same(together.influence.influence_thresholds, alone.influence.influence_thresholds)
    assert fitted >= 3  # the unweighted and 1/y-type fits of the line and the quadratic at least


@pytest.mark.parametrize("case", range(4))
def test_the_power_curves_of_a_screen_are_the_fits_made_one_by_one(case: int) -> None:
    # compare() checks the standards and finds the power curve's start values once for all its
    # weightings; every power-curve candidate must be fit() alone to the last bit, and every one it
    # skips must carry fit()'s reason. Invented standards over two to three decades, every weighting
    # (the variance functions too).
    rng = np.random.default_rng(200 + case)
    x = np.repeat(np.geomspace(0.2, 0.2 * 10 ** rng.uniform(2, 3), int(rng.integers(5, 8))), int(rng.integers(2, 4)))
    y = 1.3 * x ** rng.uniform(0.8, 1.1) * (1 + 0.04 * rng.standard_normal(x.size))
    weightings = tuple(w.value for w in cw.Weighting)
    result = cw.compare(x, y, models=("linear", "power"), weightings=weightings)
    fitted = 0
    for weighting in weightings:
        try:
            alone = cw.fit(x, y, "power", weighting)
        except CalibrationInputError as exc:
            assert any(s.model.value == "power" and s.weighting.value == weighting and s.reason == str(exc)
                       for s in result.skipped), (weighting, str(exc))
            continue
        together = result.candidate("power", weighting).calibration
        fitted += 1
        for name in ("coefficients", "covariance", "standard_errors", "residual_sd", "adjusted_r_squared",
                     "fitted", "back_calculated", "leverage", "studentized_residuals", "cooks_distance",
                     "influence_flags", "notes"):
            assert _same(getattr(together, name), getattr(alone, name)), (weighting, name)
        assert together.lack_of_fit == alone.lack_of_fit
    assert fitted >= 4


@pytest.mark.parametrize("case", range(6))
def test_lack_of_fit_and_regression_of_a_stack_are_each_row_tested_alone(case: int) -> None:
    # The screen tests lack of fit and the regression of all weightings of one model at once; each
    # row must be the test of that row alone, to the last bit, including the rows that cannot be
    # tested (weights from the replicates, replicates that agree exactly, a flat curve).
    from curvewright.core.lack_of_fit import lack_of_fit_test, lack_of_fit_tests
    from curvewright.core.levels import group_levels
    from curvewright.core.regression_test import regression_test, regression_tests

    rng = np.random.default_rng(300 + case)
    x = np.repeat(np.geomspace(1.0, 10 ** rng.uniform(1, 3), int(rng.integers(4, 8))), int(rng.integers(2, 4)))
    levels = group_levels(x)
    k = 5
    residuals = 0.02 * rng.standard_normal((k, x.size)) * (1 + x)
    weights = rng.uniform(0.2, 3.0, (k, x.size))
    # exact replicates: equal residuals within each level (small integers, equal weights)
    residuals[2] = np.repeat(rng.integers(-3, 4, levels.n_levels), x.size // levels.n_levels)
    weights[2] = 1.0
    from_replicates = [False, True, False, False, False]
    together = lack_of_fit_tests(residuals, weights, levels, 2, from_replicates)
    for i in range(k):
        alone = lack_of_fit_test(residuals[i].copy(), weights[i].copy(), levels, 2,
                                 weights_from_replicates=from_replicates[i])
        assert together[i] == alone, i
    assert not together[1].available and not together[2].available and together[0].available

    y = 0.1 + 2.0 * x
    fits = []
    for i in range(k):
        z_cov = np.array([[0.01, 0.001 * i], [0.001 * i, 0.02 + 0.001 * i]])
        fitted = y + residuals[i] if i != 3 else np.full_like(y, y.mean())  # row 3: a flat curve
        fits.append((np.array([0.3, 0.05 * (i + 1)]), z_cov, fitted, i == 4))
    tests = regression_tests(fits, (0, 1), y, x.size - 2)
    for i, (coefficients, z_cov, fitted, roundoff) in enumerate(fits):
        assert tests[i] == regression_test(coefficients, z_cov, (0, 1), fitted, y, roundoff, x.size - 2), i
    assert tests[3].p_value == 1.0 and tests[4].p_value == 0.0


def test_a_screen_makes_each_weighting_once_for_its_models() -> None:
    # The line, the quadratic and the power curve of a screen share each weighting's weights (read-only,
    # the same numbers fit() makes); a variance-function weighting is estimated with each model apart.
    x = np.concatenate([[0.0, 0.0], np.repeat([0.5, 2.0, 10.0, 50.0, 200.0], 2)])
    rng = np.random.default_rng(41)
    y = (0.02 + 0.9 * x) * (1 + 0.03 * rng.standard_normal(x.size)) + 0.01
    result = cw.compare(x[2:], y[2:], models=("linear", "quadratic", "power"),
                        weightings=("none", "1/x^2", "1/y", "power"))
    for weighting in ("none", "1/x^2", "1/y"):
        line, quadratic, power = (result.candidate(m, weighting).calibration for m in ("linear", "quadratic", "power"))
        assert line.weight_model is quadratic.weight_model is power.weight_model
        assert not line.weight_model.weights.flags.writeable
        alone = cw.fit(x[2:], y[2:], "quadratic", weighting)
        assert line.weight_model.weights.tobytes() == alone.weight_model.weights.tobytes()
    assert (result.candidate("linear", "power").calibration.weight_model
            is not result.candidate("quadratic", "power").calibration.weight_model)
    # with blanks, the 1/x-type refusal is made once and given to each model in the same words
    with_blanks = cw.compare(x, y, models=("linear", "quadratic"), weightings=("none", "1/x^2"))
    reasons = [s.reason for s in with_blanks.skipped
               if s.weighting is cw.Weighting.INVERSE_X2 and s.model.value in ("linear", "quadratic")]
    assert len(reasons) == 2 and reasons[0] == reasons[1] and "standard 1 has concentration 0" in reasons[0]


@pytest.mark.parametrize("model", ["linear", "quadratic", "proportional"])
def test_the_stacks_back_calculation_is_each_rows_alone_to_the_bit(model: str) -> None:
    """The screen back-calculates the standards of all of a model's weightings at once; each row
    must be what solving the curve alone gives (both branches of a quadratic, responses it never
    reaches, coefficients over many scales)."""
    from curvewright.core.calibration import _stacked_roots
    from curvewright.core.inverse import solve_z
    from curvewright.core.models import Model

    kind = Model.parse(model)
    rng = np.random.default_rng(3)
    p = kind.n_parameters
    a = rng.standard_normal((40, p)) * 10.0 ** rng.uniform(-3, 3, (40, 1))
    branch = rng.choice([-1, 1], 40)
    y = rng.standard_normal(30) * 10.0
    rows = _stacked_roots(kind, a, branch, y)
    for i in range(40):
        alone, _, _ = solve_z(kind, a[i], int(branch[i]), (-1.0, 1.0), y)
        assert _same(rows[i], alone), i
    if model == "quadratic":
        assert np.isnan(rows).any() and np.isfinite(rows).any()


def test_the_power_curve_tried_under_the_variance_function_is_the_fit_made_alone() -> None:
    # compare() fits the power curve the span brings in under the variance function the polynomials were
    # weighted by (the Tarnwick boron standards of tests/test_cli_power_curve_under_variance_function.py); that
    # candidate must be fit() alone to the last bit, judged by the profile as fit() alone is, and listed after
    # its weighting's other rows.
    from tests.test_cli_power_curve_under_variance_function import BORON

    x, y = (np.array(v, dtype=float) for v in zip(*BORON))
    result = cw.compare(x, y)
    rows = [(c.model.value, c.weighting.value) for c in result.candidates]
    at = rows.index(("power", "power"))
    assert rows[at - 2:at] == [("linear", "power"), ("quadratic", "power")]
    together = result.candidate("power", "power")
    alone = cw.fit(x, y, "power", "power")
    for name in ("coefficients", "covariance", "standard_errors", "residual_sd", "adjusted_r_squared", "weights",
                 "fitted", "back_calculated", "leverage", "studentized_residuals", "cooks_distance", "notes"):
        assert _same(getattr(together.calibration, name), getattr(alone, name)), name
    assert together.calibration.lack_of_fit == alone.lack_of_fit
    assert together.verdict.passed == cw.load_profile("general").evaluate(alone).passed
    assert result.recommendation is together
