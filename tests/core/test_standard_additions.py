"""Standard additions: the extrapolated x-intercept and its interval against published worked examples."""

from __future__ import annotations

import numpy as np
import pytest
import statsmodels.api as sm
from scipy import stats

import curvewright as cw
from curvewright.core.standard_additions import MATRIX_WARNING


def test_published_worked_example_with_dilution_corrected_signals() -> None:
    # D. Harvey, Analytical Chemistry 2.1 (open textbook), solutions to the chapter 5 problems, problem 9
    # (seen in a reproduction of the solutions): 5.00 mL of sample spiked with 0, 0.10, 0.20, 0.30 mL of
    # a 600 ppb standard; signals 0.119, 0.231, 0.339, 0.442 are plotted as S·(V_o + V_std) against
    # C_std·V_std = 0, 60, 120, 180. Printed: S(V_o+V_std) = 0.5955 + 0.009713·C_std·V_std, s_r = 0.00155,
    # C_A·V_o = 0.5955/0.009713 = 61.31, C_A = 12.3 ppb.
    v_std = np.array([0.0, 0.10, 0.20, 0.30])
    signal = np.array([0.119, 0.231, 0.339, 0.442])
    result = cw.standard_additions(600.0 * v_std, signal * (5.00 + v_std))
    assert f"{result.intercept:.4f}" == "0.5955"
    assert f"{result.slope:.6f}" == "0.009713"
    assert f"{result.residual_sd:.5f}" == "0.00155"
    assert f"{result.concentration:.2f}" == "61.31"
    assert f"{result.concentration / 5.00:.1f}" == "12.3"
    assert result.df == 2 and result.t == pytest.approx(stats.t.ppf(0.975, 2), rel=1e-12)


def test_textbook_silver_example() -> None:
    # Miller & Miller, Statistics and Chemometrics for Analytical Chemistry, ch. 5, standard additions
    # example (silver by atomic absorption; from memory): added Ag 0–30 µg/ml in steps of 5, absorbances
    # below; a = 0.3218, b = 0.01864, r = 0.9988, concentration 17.3 µg/ml, 95 % limits 17.3 ± 1.9 µg/ml.
    added = [0.0, 5.0, 10.0, 15.0, 20.0, 25.0, 30.0]
    absorbance = [0.32, 0.41, 0.52, 0.60, 0.70, 0.77, 0.89]
    result = cw.standard_additions(added, absorbance)
    assert f"{result.intercept:.4f}" == "0.3218"
    assert f"{result.slope:.5f}" == "0.01864"
    assert f"{np.sqrt(result.r_squared):.4f}" == "0.9988"
    assert f"{result.concentration:.1f}" == "17.3"
    assert f"{result.t * result.standard_error:.1f}" == "1.9"
    assert result.lower == pytest.approx(result.concentration - result.t * result.standard_error, rel=1e-15)


def delta_method_se(fit) -> float:
    """Standard error of a/b by the delta method from a statsmodels fit's coefficient covariance."""
    a, b = fit.params
    gradient = np.array([1.0 / b, -a / b**2])
    return float(np.sqrt(gradient @ fit.cov_params() @ gradient))


def test_standard_error_equals_the_delta_method_on_the_coefficients() -> None:
    # Reference: statsmodels OLS coefficients and covariance (invented data).
    added = np.array([0.0, 2.0, 4.0, 6.0, 8.0, 0.0, 4.0, 8.0])
    response = np.array([10.3, 14.1, 18.4, 21.8, 26.3, 10.0, 18.0, 26.1])
    ref = sm.OLS(response, sm.add_constant(added)).fit()
    result = cw.standard_additions(added, response, level=0.99)
    assert result.concentration == pytest.approx(ref.params[0] / ref.params[1], rel=1e-12)
    assert result.standard_error == pytest.approx(delta_method_se(ref), rel=1e-10)
    assert result.t == pytest.approx(stats.t.ppf(0.995, added.size - 2), rel=1e-12)


def test_replicate_counts_weight_the_means() -> None:
    added = np.array([0.0, 2.0, 4.0, 6.0, 8.0])
    response = np.array([10.3, 14.1, 18.4, 21.8, 26.3])
    plain = cw.standard_additions(added, response)
    same = cw.standard_additions(added, response, replicates=3)
    for name in ("concentration", "standard_error", "lower", "upper"):
        assert getattr(same, name) == pytest.approx(getattr(plain, name), rel=1e-13)
    counts = np.array([4, 2, 2, 2, 1])
    ref = sm.WLS(response, sm.add_constant(added), weights=counts).fit()  # reference: statsmodels WLS
    weighted = cw.standard_additions(added, response, replicates=counts)
    assert weighted.concentration == pytest.approx(ref.params[0] / ref.params[1], rel=1e-12)
    assert weighted.standard_error == pytest.approx(delta_method_se(ref), rel=1e-10)


def test_every_result_warns_that_matrix_matched_linearity_is_assumed() -> None:
    result = cw.standard_additions([0, 1, 2, 3], [5.0, 6.1, 6.9, 8.0])
    assert result.warnings[0] == MATRIX_WARNING and "matrix-matched linearity" in MATRIX_WARNING
    # a sample far above its additions is extrapolated further than the additions span, and told so
    assert any("reaches further below the first addition" in w for w in result.warnings)
    # the line meets zero response at minus the concentration
    assert result.line([-result.concentration])[0] == pytest.approx(0.0, abs=1e-12)


@pytest.mark.parametrize("added, response, message", [
    ([0, 1, 2], [1.0, 2.0], "3 additions but 2 responses"),
    ([0, -1, 2], [1.0, 2.0, 3.0], "addition 2 is −1; an addition cannot be below zero"),
    ([0, 1], [1.0, 2.0], "2 points leave no degree of freedom"),
    ([0, 1, 2], [3.0, 2.0, 1.0], "the response must rise with the added concentration"),
    ([0, 1, 2], [0.0, 1.0, 2.0], "not below zero"),
    ([0, 1, 2], [1.0, np.nan, 3.0], "response"),
])
def test_unusable_additions_are_refused_with_the_reason(added, response, message) -> None:
    with pytest.raises(cw.CalibrationInputError, match=message):
        cw.standard_additions(added, response)


def test_replicate_counts_are_checked() -> None:
    with pytest.raises(cw.CalibrationInputError, match="replicates of addition 2"):
        cw.standard_additions([0, 1, 2], [1.0, 2.0, 3.1], replicates=[1, 0, 2])
