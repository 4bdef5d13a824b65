"""Fits, influence measures and interval end points against statsmodels (the reference library).

statsmodels' influence measures on a WLS result ignore the weights, so weighted influence is
checked against OLS on the whitened problem (√w·y on √w·X), whose coefficients and standard errors
equal the WLS ones.
"""

from __future__ import annotations

import numpy as np
import pytest
import statsmodels.api as sm

import curvewright as cw

WEIGHTINGS = ["none", "1/x", "1/x^2", "1/y", "1/y^2", "1/s^2", "power", "two-component"]
MODELS = ["linear", "quadratic", "proportional"]


def invented_standards(model: str, seed: int = 7) -> tuple[np.ndarray, np.ndarray]:
    """Six levels × 3 replicates over two decades; scatter grows with concentration."""
    rng = np.random.default_rng(seed)
    x = np.repeat([0.5, 1.0, 2.5, 5.0, 10.0, 25.0], 3)
    truth = {"linear": 0.8 + 12.0 * x, "quadratic": 0.8 + 12.0 * x - 0.15 * x**2, "proportional": 12.0 * x}[model]
    return x, truth * (1 + 0.03 * rng.standard_normal(x.size)) + 0.05 * rng.standard_normal(x.size)


def fit(x: np.ndarray, y: np.ndarray, model: str, weighting: str) -> cw.Calibration:
    """1/s² with the replicate SDs given as known (three replicates are too few to estimate them)."""
    sd = None
    if weighting == "1/s^2":
        sd = np.array([np.std(y[x == v], ddof=1) for v in x])
    return cw.fit(x, y, model, weighting, response_sd=sd)


def design(model: str, x: np.ndarray) -> np.ndarray:
    columns = {"linear": [np.ones_like(x), x], "quadratic": [np.ones_like(x), x, x**2], "proportional": [x]}[model]
    return np.column_stack(columns)


@pytest.mark.parametrize("weighting", WEIGHTINGS)
@pytest.mark.parametrize("model", MODELS)
def test_fit_and_influence_match_statsmodels(model: str, weighting: str) -> None:
    x, y = invented_standards(model)
    cal = fit(x, y, model, weighting)
    w = cal.weights  # for the variance functions, the estimated weights of the final cycle
    X = design(model, x)
    reference = sm.WLS(y, X, weights=w).fit()
    offset = 1 if model == "proportional" else 0  # our b0 = 0 is reported but fixed
    np.testing.assert_allclose(cal.coefficients[offset:], reference.params, rtol=1e-10)
    np.testing.assert_allclose(cal.standard_errors[offset:], reference.bse, rtol=1e-9)
    np.testing.assert_allclose(cal.covariance[offset:, offset:], reference.cov_params(), rtol=1e-9, atol=1e-300)
    assert cal.residual_sd == pytest.approx(np.sqrt(reference.scale), rel=1e-12)
    assert cal.df_residual == reference.df_resid
    # R² about the weighted mean for every model; statsmodels reports the uncentred R² for a model
    # without a constant, so the line through the origin is checked against its centred total.
    centred = 1 - reference.ssr / reference.centered_tss
    assert cal.r_squared == pytest.approx(centred, rel=1e-11)
    assert cal.adjusted_r_squared == pytest.approx(1 - (1 - centred) * (x.size - 1) / reference.df_resid, rel=1e-11)
    if model != "proportional":
        assert cal.r_squared == pytest.approx(reference.rsquared, rel=1e-11)
        assert cal.adjusted_r_squared == pytest.approx(reference.rsquared_adj, rel=1e-11)
    # the F-test of the regression: every term in x zero together
    assert cal.regression.f_statistic == pytest.approx(reference.fvalue, rel=1e-9)
    assert cal.regression.p_value == pytest.approx(reference.f_pvalue, rel=1e-6, abs=1e-300)

    whitened = sm.OLS(y * np.sqrt(w), X * np.sqrt(w[:, None])).fit()
    influence = whitened.get_influence()
    np.testing.assert_allclose(cal.leverage, influence.hat_matrix_diag, rtol=1e-10)
    np.testing.assert_allclose(cal.cooks_distance, influence.cooks_distance[0], rtol=1e-9)
    np.testing.assert_allclose(cal.studentized_residuals, influence.resid_studentized_external, rtol=1e-9)


@pytest.mark.parametrize(
    "model, weighting",
    [("linear", "none"), ("linear", "1/x^2"), ("linear", "1/y"), ("quadratic", "none"), ("quadratic", "1/x"),
     ("proportional", "none"), ("linear", "1/s^2"), ("linear", "power"), ("quadratic", "two-component")],
)
def test_interval_ends_lie_on_statsmodels_prediction_band(model: str, weighting: str) -> None:
    """At each end of the calibration interval, the 95 % prediction band passes through ȳ0."""
    x, y = invented_standards(model)
    cal = fit(x, y, model, weighting)
    y0 = np.array([cal.predict(3.0), cal.predict(12.0)])
    q = cal.quantify(y0)
    reference = sm.WLS(y, design(model, x), weights=cal.weights).fit()
    for k in range(y0.size):
        for end, column, sign in ((q.lower[k], "obs_ci_upper", 1.0), (q.upper[k], "obs_ci_lower", -1.0)):
            exog = design(model, np.array([end]))
            w_new = cal.weight_model.weight_at(np.array([end]), np.array([y0[k]]))
            frame = reference.get_prediction(exog, weights=w_new).summary_frame(alpha=0.05)
            if not cal.weight_model.estimated:
                assert frame[column].iloc[0] == pytest.approx(y0[k], rel=1e-9)
            # statsmodels' pieces (curve SE, residual variance) with the engine's t: with a variance
            # function estimated from the standards, t has Satterthwaite's degrees of freedom
            new_var, curve_var = reference.scale / w_new, frame["mean_se"].to_numpy() ** 2
            t = cal.band_t(0.975, np.array([end]), new_var, curve_var)
            edge = frame["mean"].iloc[0] + sign * float(t[0] * np.sqrt(new_var + curve_var)[0])
            assert edge == pytest.approx(y0[k], rel=1e-9)


def test_numeric_inversion_matches_fieller_where_both_apply() -> None:
    """The general band inversion reproduces the closed-form Fieller interval for a straight line."""
    from curvewright.core import inverse

    x, y = invented_standards("linear")
    cal = cw.fit(x, y)
    y0 = cal.predict(np.array([0.3, 1.0, 7.0, 24.0, 40.0]))
    m = np.array([1, 2, 3, 1, 5])
    t = 2.119905299221011  # t(0.975; 16)
    z_hat, no_solution, _ = inverse.solve_z(cal.model, cal.z_coefficients, 0, (-1.0, 1.0), y0)
    closed = inverse._fieller_z(cal, y0, m, t)
    guess = np.full(y0.size, 0.05)  # a deliberately rough starting half-width, in z units
    lower, upper, past_vertex = inverse._band_edges(cal, y0, m, 0.975, z_hat, no_solution, guess)
    assert not past_vertex.any()
    np.testing.assert_allclose(lower, closed[0], rtol=1e-12, atol=1e-13)
    np.testing.assert_allclose(upper, closed[1], rtol=1e-12, atol=1e-13)
