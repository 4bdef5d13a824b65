"""The average response factor: mean RF and %RSD by hand, its interval, back-calculation, relative RF."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest
import statsmodels.api as sm
from scipy import stats

import curvewright as cw
from curvewright.core.run import Analyte, Measurement, Reading, Run, RunSettings, Sample, SampleKind, Standard
from curvewright.core.run_analysis import analyse_run

# Invented standards: five levels, responses chosen so that the response factors are round numbers.
X = np.array([1.0, 2.0, 5.0, 10.0, 20.0])
Y = np.array([2.0, 4.2, 9.5, 20.4, 39.0])


def test_mean_response_factor_and_rsd_match_a_hand_computation() -> None:
    cal = cw.fit(X, Y, "average-rf")
    rf = cal.response_factors
    assert rf is not None
    # Hand computation: RF = y/x = 2.0, 2.1, 1.9, 2.04, 1.95; ΣRF = 9.99; mean = 9.99/5 = 1.998.
    np.testing.assert_allclose(rf.factors, [2.0, 2.1, 1.9, 2.04, 1.95], rtol=1e-15)
    assert rf.mean == pytest.approx(1.998, rel=1e-14)
    # Deviations 0.002, 0.102, −0.098, 0.042, −0.048; squares 0.000004 + 0.010404 + 0.009604 + 0.001764
    # + 0.002304 = 0.02408; s² = 0.02408/4 = 0.00602; s = √0.00602.
    assert rf.sd == pytest.approx(np.sqrt(0.00602), rel=1e-12)
    # %RSD = 100·√0.00602/1.998 = 3.8833 %
    assert cal.rf_rsd_percent == pytest.approx(100 * np.sqrt(0.00602) / 1.998, rel=1e-12)
    assert f"{cal.rf_rsd_percent:.4f}" == "3.8833"
    # The curve is y = RF̄·x, reported as b0 = 0 (fixed), b1 = RF̄ with standard error s/√n.
    np.testing.assert_allclose(cal.coefficients, [0.0, 1.998], rtol=1e-14, atol=0)
    assert cal.standard_errors[1] == pytest.approx(np.sqrt(0.00602 / 5), rel=1e-12)
    assert cal.weighting is cw.Weighting.INVERSE_X2
    assert cal.equation(6) == "y = 1.998·x"


def test_other_models_carry_no_response_factors() -> None:
    cal = cw.fit(X, Y, "proportional", "1/x^2")
    assert cal.response_factors is None and cal.rf_rsd_percent is None


def test_the_mean_rf_is_the_line_through_the_origin_weighted_one_over_x_squared() -> None:
    # Reference: statsmodels WLS of y on x without a constant, weights 1/x².
    ref = sm.WLS(Y, X[:, None], weights=1.0 / X**2).fit()
    cal = cw.fit(X, Y, "average-rf")
    assert cal.coefficients[1] == pytest.approx(ref.params[0], rel=1e-13)
    assert cal.standard_errors[1] == pytest.approx(ref.bse[0], rel=1e-12)


def test_each_standard_back_calculates_to_its_rf_over_the_mean() -> None:
    cal = cw.fit(X, Y, "average-rf")
    np.testing.assert_allclose(cal.back_calculated, Y / 1.998, rtol=1e-13)
    # %RE = 100·(RFᵢ/RF̄ − 1): 2.1/1.998 → +5.105 %
    np.testing.assert_allclose(cal.relative_error, 100 * (np.array([2.0, 2.1, 1.9, 2.04, 1.95]) / 1.998 - 1), rtol=1e-10)
    verdict = cal.evaluate(cw.load_profile("general"))
    assert verdict.passed


@pytest.mark.parametrize("y0, m", [(10.0, 1), (30.0, 2), (6.0, 3)])
def test_inverse_interval_is_the_prediction_interval_of_a_new_mean_rf(y0: float, m: int) -> None:
    # Normal prediction interval for the mean of m future observations of the RFs:
    # RF̄ ± t(0.975; n − 1)·s·√(1/m + 1/n) (Hahn & Meeker, Statistical Intervals, 1991, ch. 4; chapter from
    # memory); the concentration interval is ȳ₀ divided by its ends. t from scipy.stats.
    cal = cw.fit(X, Y, "average-rf")
    rf = Y / X
    mean, sd = rf.mean(), rf.std(ddof=1)
    h = stats.t.ppf(0.975, X.size - 1) * sd * np.sqrt(1 / m + 1 / X.size)
    q = cal.quantify([y0], replicates=m)
    assert q.estimate[0] == pytest.approx(y0 / mean, rel=1e-13)
    assert q.lower[0] == pytest.approx(y0 / (mean + h), rel=1e-9)
    assert q.upper[0] == pytest.approx(y0 / (mean - h), rel=1e-9)
    assert q.flags[0] == cw.QuantFlag.IN_RANGE


@pytest.mark.parametrize("m", [1, 3])
def test_a_zero_or_negative_response_reads_the_band_of_the_lowest_standard(m: int) -> None:
    # Below the lowest standard (x_low = 1) the response factors' interval ȳ₀/(RF̄ ± h) no longer
    # applies: at ȳ₀ = 0 it would be [0, 0], a certainty no measurement has. The rule is that of every
    # calibration below its lowest standard (see curvewright.core.weighting): the variance of the new
    # response is held at the lowest standard's, s_RF²·x_low²/m, so the band is
    # (ȳ₀ − RF̄·x)² ≤ t²·(s_RF²·x_low²/m + x²·s_RF²/n), with t on n − 1 df (scipy.stats), solved by hand:
    # (RF̄² − t²s²/n)·x² − 2ȳ₀RF̄·x + ȳ₀² − t²s²·x_low²/m = 0.
    cal = cw.fit(X, Y, "average-rf")
    rf = Y / X
    mean, sd, n = rf.mean(), rf.std(ddof=1), X.size
    t = stats.t.ppf(0.975, n - 1)
    a = mean**2 - t**2 * sd**2 / n
    for y0 in (0.0, -0.5, 0.5):
        b, c = -2 * y0 * mean, y0**2 - t**2 * sd**2 * X.min() ** 2 / m
        roots = np.sort(np.roots([a, b, c]).real)
        q = cal.quantify([y0], replicates=m)
        assert q.estimate[0] == pytest.approx(y0 / mean, abs=1e-15)
        np.testing.assert_allclose([q.lower[0], q.upper[0]], roots, rtol=1e-9)
        assert q.lower[0] < q.estimate[0] < q.upper[0]
        assert q.flags[0] & cw.QuantFlag.BELOW_RANGE
    # at zero the interval is symmetric about 0: ±t·s_RF·x_low/√m/√(RF̄² − t²s_RF²/n), as for the straight
    # lines, whose intervals are not cut at zero either (the result is flagged below the detection limit)
    q = cal.quantify([0.0], replicates=m)
    half = t * sd * X.min() / np.sqrt(m) / np.sqrt(a)
    np.testing.assert_allclose([q.lower[0], q.upper[0]], [-half, half], rtol=1e-9)
    assert q.flags[0] & cw.QuantFlag.BELOW_LOD


def test_a_response_above_the_top_standard_is_flagged() -> None:
    q = cw.fit(X, Y, "average-rf").quantify([80.0])
    assert cw.QuantFlag.ABOVE_RANGE in q.flags[0]


def test_a_blank_standard_is_refused_by_name() -> None:
    with pytest.raises(cw.CalibrationInputError, match="standard 1 is at 0; a response factor y/x needs"):
        cw.fit([0.0, *X], [0.01, *Y], "average-rf")


def invented_is_run(blank: bool = False) -> Run:
    """Invented ratio calibration: analyte area A and internal-standard area A_IS (the IS varies per injection)."""
    xs = [0.0] if blank else []
    xs += [1.0, 2.0, 5.0, 10.0, 20.0]
    is_area = [5000.0, 5200.0, 4800.0, 5100.0, 4900.0, 5050.0][-len(xs):]
    ratio_per_x = [0.40, 0.42, 0.38, 0.41, 0.39]
    standards = []
    for i, (x, a_is) in enumerate(zip(xs, is_area)):
        ratio = 0.001 if x == 0 else ratio_per_x[i - (1 if blank else 0)] * x
        standards.append(Standard(f"S{i + 1}", x, Reading.of(ratio * a_is), 1, internal_standard_response=Reading.of(a_is)))
    analyte = Analyte("toluene", "µg/L", "area", tuple(standards), model="average-rf", uses_internal_standard=True)
    sample = Sample("U1", SampleKind.UNKNOWN, 1, 1.0, (Measurement("toluene", 1, Reading.of(2.0 * 5000.0), Reading.of(5000.0)),))
    return Run("invented", (analyte,), (sample,), RunSettings(acceptance_profile="general"))


def test_with_an_internal_standard_the_factor_is_the_relative_response_factor() -> None:
    result = analyse_run(invented_is_run()).analytes[0]
    cal = result.calibration
    assert cal is not None
    # RRF per unit internal-standard concentration: mean of (A/A_IS)/x = mean(0.40, 0.42, 0.38, 0.41, 0.39) = 0.40
    assert cal.response_factors.mean == pytest.approx(0.40, rel=1e-13)
    assert cal.rf_rsd_percent == pytest.approx(100 * np.std([0.40, 0.42, 0.38, 0.41, 0.39], ddof=1) / 0.40, rel=1e-12)
    # the unknown's ratio 2.0 reads back as 2.0/0.40 = 5
    assert result.samples[0].estimate == pytest.approx(5.0, rel=1e-13)


def test_a_blank_in_a_run_is_left_out_of_the_average_rf_with_the_reason() -> None:
    result = analyse_run(invented_is_run(blank=True)).analytes[0]
    assert result.calibration is not None and result.calibration.n_standards == 5
    (left_out,) = result.unusable_standards
    assert left_out.standard_id == "S1" and "blank is not part of an average response factor" in left_out.reason
    # the same run with a straight line keeps the blank in the fit
    line = replace(invented_is_run(blank=True), analytes=(replace(invented_is_run(blank=True).analytes[0], model="linear"),))
    assert analyse_run(line).analytes[0].calibration.n_standards == 6


@pytest.mark.slow
def test_inverse_interval_covers_at_its_nominal_level_under_a_constant_relative_sd() -> None:
    # Invented design: six levels 1–50 in duplicate, true RF 2.0, a 5 % CV on every response (the average
    # RF's own assumption). The interval is exact there, so 95 % intervals must cover 93–97 % of the time.
    rng = np.random.default_rng(2026)
    x = np.repeat([1.0, 2.0, 5.0, 10.0, 20.0, 50.0], 2)
    x0 = np.array([3.0, 15.0, 40.0])
    covered, total = 0, 0
    for _ in range(1500):
        y = 2.0 * x * (1 + 0.05 * rng.standard_normal(x.size))
        y0 = 2.0 * x0 * (1 + 0.05 * rng.standard_normal(x0.size))
        q = cw.fit(x, y, "average-rf").quantify(y0)
        covered += int(np.sum((q.lower <= x0) & (x0 <= q.upper)))
        total += x0.size
    assert 0.93 <= covered / total <= 0.97, covered / total
