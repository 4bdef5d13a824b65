"""Bad input gets a clear exception naming what is wrong, never a silent NaN result."""

from __future__ import annotations

import numpy as np
import pytest

import curvewright as cw

X = [1.0, 2.0, 4.0, 8.0, 16.0]
Y = [0.11, 0.20, 0.41, 0.79, 1.62]


@pytest.mark.parametrize(
    "x, y, kwargs, message",
    [
        ([1, 2, np.nan, 8, 16], Y, {}, r"concentration: standard 3 is nan"),
        (X, [0.11, np.inf, 0.41, 0.79, 1.62], {}, r"response: standard 2 is inf"),
        (X, ["0.11", "abc", 0.4, 0.8, 1.6], {}, r"response: every value must be a number"),
        (X, Y[:4], {}, r"5 concentrations but 4 responses"),
        ([5, 5, 5, 5], [1, 2, 3, 4], {}, r"all 4 standards are at 5"),
        ([1, 1, 2, 2], [1, 1.1, 2, 2.1], {"model": "quadratic"}, r"2 concentration levels cannot fix the 3 parameters"),
        ([1, 2], [1, 2], {}, r"2 standards leave no degree of freedom"),
        ([], [], {}, r"none given"),
        ([0, 1, 2, 4, 8], Y, {"weighting": "1/x"}, r"standard 1 has concentration 0"),
        ([-1, 1, 2, 4, 8], Y, {"weighting": "1/x^2"}, r"standard 1 has concentration −1"),
        (X, [0.1, -0.2, 0.4, 0.8, 1.6], {"weighting": "1/y"}, r"standard 2 has response −0.2"),
        (X, Y, {"weighting": "1/s^2"}, r"level at concentration 1 has 1 replicate\(s\); weights from fewer than 10"),
        ([1, 1, 2, 2, 4, 4], [1, 1.1, 2, 2.1, 4, 4.2], {"weighting": "1/s^2"}, r"choose 'power' or 'two-component'"),
        (np.repeat([1.0, 2.0, 4.0], 10), np.concatenate([np.full(10, 1.0), 2 + 0.01 * np.arange(10), 4 + 0.01 * np.arange(10)]),
         {"weighting": "1/s^2"}, r"replicates at concentration 1 are all identical"),
        (X, Y, {"weighting": "1/s^2", "response_sd": [0.1, 0.1, 0.1]}, r"3 values given for 5 standards"),
        (X, Y, {"weighting": "1/s^2", "response_sd": [0.1, 0, 0.1, 0.1, 0.1]}, r"standard 2 has SD 0; a standard deviation must be above zero"),
        (X, Y, {"model": "cubic"}, r"model: 'cubic' is not one of"),
        (X, Y, {"weighting": "1/z"}, r"weighting: '1/z' is not one of"),
        (X, Y, {"level_tolerance": 0.9}, r"level tolerance"),
        ([[1, 2], [3, 4]], [1, 2, 3, 4], {}, r"single column"),
    ],
)
def test_fit_refuses_with_a_clear_message(x, y, kwargs, message) -> None:
    with pytest.raises(cw.CalibrationInputError, match=message):
        cw.fit(x, y, **kwargs)


def test_errors_are_value_errors_and_project_errors() -> None:
    with pytest.raises(ValueError):
        cw.fit([1, 1], [1, 2])
    assert issubclass(cw.WeightingError, cw.CalibrationInputError)
    assert issubclass(cw.QuantitationInputError, cw.CurvewrightError)


@pytest.mark.parametrize(
    "kwargs, message",
    [
        ({"mean_response": [0.5, np.nan]}, r"unknown 2 is nan"),
        ({"mean_response": [0.5], "replicates": 0}, r"unknown 1 has 0"),
        ({"mean_response": [0.5, 0.6], "replicates": [1, 2.5]}, r"unknown 2 has 2.5"),
        ({"mean_response": [0.5, 0.6], "replicates": [1, 2, 3]}, r"3 counts given for 2 unknowns"),
        ({"mean_response": [0.5], "level": 95}, r"confidence level: 95"),
        ({"mean_response": [0.5], "interval": "wide"}, r"interval: 'wide'"),
    ],
)
def test_quantify_refuses_with_a_clear_message(kwargs, message) -> None:
    cal = cw.fit(X, Y)
    with pytest.raises(cw.QuantitationInputError, match=message):
        cal.quantify(**kwargs)


def test_leverage_one_standard_is_flagged_not_left_as_bare_nan() -> None:
    # A quadratic through three levels, one of them unreplicated: that standard fixes the curve.
    x = [1.0, 1.0, 5.0, 10.0, 10.0]
    y = [1.02, 0.98, 5.3, 9.9, 10.1]
    cal = cw.fit(x, y, "quadratic")
    assert cal.leverage[2] == pytest.approx(1.0)
    assert cal.influence_flags[2] == (cw.InfluenceFlag.DETERMINES_FIT,)
    assert np.isnan(cal.cooks_distance[2]) and np.isnan(cal.studentized_residuals[2])
    others = np.delete(np.arange(5), 2)
    assert np.all(np.isfinite(cal.cooks_distance[others]))
    assert cw.InfluenceFlag.DETERMINES_FIT.source


def test_no_solution_and_ambiguous_roots_are_flagged_not_extrapolated() -> None:
    # An invented detector that saturates: the quadratic turns over near the top standard.
    x = np.array([1, 2, 4, 6, 8, 10.0])
    y = 10 * x - 0.5 * x**2 + np.array([0.05, -0.04, 0.03, -0.02, 0.04, -0.03])
    cal = cw.fit(x, y, "quadratic")
    assert cal.vertex == pytest.approx(10.0, rel=0.02)
    top = float(cal.predict(cal.vertex))
    q = cal.quantify([top + 5.0, 20.0])
    assert cw.QuantFlag.NO_SOLUTION in q.flags[0]
    assert np.isnan(q.estimate[0]) and np.isnan(q.lower[0])
    assert q.estimate[1] == pytest.approx(2.254, abs=0.05)
    assert cw.QuantFlag.IN_RANGE in q.flags[1]
    assert "never reaches" in q.flags[0].words


def test_vertex_inside_range_gives_ambiguous_flag() -> None:
    x = np.array([1, 2, 4, 6, 8, 10, 12.0])
    y = 10 * x - 0.5 * x**2
    cal = cw.fit(x, y + np.array([0.05, -0.04, 0.03, -0.02, 0.04, -0.03, 0.02]), "quadratic")
    assert cal.notes and "turns over" in cal.notes[0]
    q = cal.quantify([49.0])
    assert cw.QuantFlag.AMBIGUOUS_ROOT in q.flags[0]


def test_a_calibration_whose_response_does_not_change_refuses_to_quantify() -> None:
    # The slope is not distinguishable from zero (F-test of the regression, p ≥ 0.05).
    x = np.array([1, 2, 3, 4, 5, 6.0])
    y = np.array([10.0, 10.4, 9.7, 10.2, 9.9, 10.3])
    cal = cw.fit(x, y)
    assert not cal.regression.significant and cal.regression.p_value > 0.05
    assert "does not change significantly with concentration" in cal.notes[0]
    with pytest.raises(cw.QuantitationInputError, match=r"calibration: the response does not change significantly .* p = "):
        cal.quantify([10.1])
    with pytest.raises(cw.LimitsError, match="no limit can be computed: the response does not change"):
        cal.limits()


def test_out_of_range_flags() -> None:
    cal = cw.fit(X, Y)
    q = cal.quantify([0.05, 0.8, 2.5])
    assert cw.QuantFlag.BELOW_RANGE in q.flags[0]
    assert q.flags[1] & cw.QuantFlag.IN_RANGE
    assert cw.QuantFlag.ABOVE_RANGE in q.flags[2]
    assert "above the highest standard" in q.flag_words()[2]


@pytest.mark.parametrize(
    "x, y, kwargs, message",
    [
        # a quadratic's x² overflows; its b2 would underflow to a silent zero
        (np.array(X) * 1e200, Y, {"model": "quadratic"}, r"concentration and response: .*\(x\^2 leaves the range"),
        # responses near 1e300: the residual variance overflows (1/y² weights too)
        (X, np.array(Y) * 1e300, {}, r"responses up to 1\.62\d*\s×\s10³⁰⁰ .* residual variance overflows"),
        (X, np.array(Y) * 1e300, {"weighting": "1/y^2"}, r"responses up to 1\.62\d*\s×\s10³⁰⁰"),
        # concentrations below 1e-154 under 1/x²: the slope's variance overflows
        (np.array(X) * 1e-160, Y, {"weighting": "1/x^2"}, r"concentrations up to 1\.6\s×\s10⁻¹⁵⁹ .* overflows"),
    ],
)
def test_values_beyond_double_precision_are_refused_by_name(x, y, kwargs, message) -> None:
    with pytest.raises(cw.CalibrationInputError, match=message):
        cw.fit(x, y, **kwargs)


def test_weights_of_tiny_but_representable_concentrations_stay_finite() -> None:
    # 1/x² of 1e-150 would overflow as 1/x²; the weights are formed as (x_min/x)² and stay finite.
    cal = cw.fit(np.array(X) * 1e-150, Y, weighting="1/x^2")
    assert np.all(np.isfinite(cal.weights)) and cal.weights.sum() == pytest.approx(5.0)
    reference = cw.fit(X, Y, weighting="1/x^2")
    assert cal.coefficients[1] == pytest.approx(reference.coefficients[1] * 1e150, rel=1e-12)


@pytest.mark.parametrize(
    "kwargs, message",
    [
        ({"mean_response": [0.5], "level": "0.95"}, r"confidence level: '0.95' is not a number"),
        ({"mean_response": [0.5], "level": True}, r"confidence level: True is not a number"),
        ({"mean_response": [0.5], "replicates": "two"}, r"replicates: 'two'"),
        ({"mean_response": [0.5, 1e308]}, r"mean response: unknown 2 is 1\s×\s10³⁰⁸"),
    ],
)
def test_quantify_refuses_text_and_unrepresentable_values(kwargs, message) -> None:
    with pytest.raises(cw.QuantitationInputError, match=message):
        cw.fit(X, Y).quantify(**kwargs)


def test_bands_check_their_options() -> None:
    cal = cw.fit(X, Y)
    with pytest.raises(cw.CalibrationInputError, match=r"replicates: 0; the number of new responses"):
        cal.prediction_band([2.0], replicates=0)
    with pytest.raises(cw.CalibrationInputError, match=r"replicates: 1\.5"):
        cal.prediction_band([2.0], replicates=1.5)
    with pytest.raises(cw.CalibrationInputError, match=r"confidence level: 'high' is not a number"):
        cal.confidence_band([2.0], level="high")


@pytest.mark.parametrize(
    "options, message",
    [
        ({"replicates": 2.5}, r"replicates: 2\.5; the number of times the test sample is measured"),
        ({"replicates": 0}, r"replicates: 0"),
        ({"alpha": "0.05"}, r"alpha: '0.05' must be a number"),
    ],
)
def test_iso11843_options_are_checked(options, message) -> None:
    with pytest.raises(cw.LimitsError, match=message):
        cw.fit(X, Y).limits("iso11843", **options)


def test_response_sds_are_checked_and_never_silently_ignored() -> None:
    with pytest.raises(cw.WeightingError, match=r"response SD: standard 1 has SD −1; a standard deviation must be above zero"):
        cw.fit(X, Y, response_sd=[-1, 0.1, 0.1, 0.1, 0.1])
    with pytest.raises(cw.WeightingError, match=r"response SD: given, but weighting none does not use it"):
        cw.fit(X, Y, response_sd=[0.1] * 5)
