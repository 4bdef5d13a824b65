"""Variance-function weighting ("power", "two-component") for the curves fitted by nonlinear least squares.

The variance function is estimated from all standards as for the polynomials (generalized least squares
with pseudo-likelihood; Carroll & Ruppert, Transformation and Weighting in Regression, Chapman & Hall
1988, ch. 2–3, from memory), with each cycle's curve fitted by weighted nonlinear least squares. The
checks redo the whole estimate independently with scipy.optimize.least_squares (its trust-region
reflective method and its own finite-difference Jacobian) and scipy.optimize.minimize_scalar.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import optimize

import curvewright as cw
from curvewright.core.nonlinear_calibration import NonlinearCalibration

LEVELS = np.array([1.0, 2.5, 6.0, 15.0, 40.0, 100.0, 250.0, 600.0])
TRUE_4PL = (0.05, 1.3, 60.0, 2.8)


def four_pl(x, a, b, c, d):
    return d + (a - d) / (1.0 + (x / c) ** b)


def five_pl(x, a, b, c, d, g):
    return d + (a - d) / (1.0 + (x / c) ** b) ** g


def power_curve(x, a, b):
    return a * x**b


CURVES = {
    "4pl": (four_pl, TRUE_4PL),
    "5pl": (five_pl, (0.05, 1.6, 90.0, 2.8, 0.6)),
    "power": (power_curve, (120.0, 1.6)),
}


def standards(model: str, seed: int = 17) -> tuple[np.ndarray, np.ndarray]:
    """Invented: 8 levels in triplicate, SD ∝ (mean response)^0.8 (4 % CV at a response of 1)."""
    rng = np.random.default_rng(seed)
    curve, truth = CURVES[model]
    x = np.repeat(LEVELS, 3)
    mu = curve(x, *truth)
    return x, mu + 0.04 * mu**0.8 * rng.standard_normal(x.size)


def scipy_fit(x, y, curve, start, w):
    """The weighted problem min Σwᵢ(yᵢ − f(xᵢ))² by scipy.optimize.least_squares, and the leverages of
    the tangent plane hᵢ = diag(√W·J(JᵀWJ)⁻¹Jᵀ·√W) from scipy's finite-difference Jacobian."""
    root_w = np.sqrt(w)
    result = optimize.least_squares(
        lambda p: root_w * (curve(x, *p) - y), np.array(start, dtype=float), method="trf", jac="3-point",
        x_scale="jac", ftol=1e-15, xtol=1e-15, gtol=1e-15, max_nfev=20000,
    )
    j = result.jac  # √wᵢ·∂f/∂β at the solution
    q, _ = np.linalg.qr(j)
    return result.x, np.sum(q * q, axis=1)


def scipy_power_theta(squared, mean):
    """θ maximising the pseudo-likelihood of SD ∝ μ^θ: minimise n·log Σ(r²/(1 − h))/μ^{2θ} + Σ log μ^{2θ}."""
    n = squared.size

    def objective(theta):
        g2 = mean ** (2.0 * theta)
        return n * np.log(np.sum(squared / g2)) + np.sum(np.log(g2))

    return optimize.minimize_scalar(objective, bounds=(-1.0, 3.0), method="bounded",
                                    options={"xatol": 1e-12}).x


@pytest.mark.parametrize("model", ["4pl", "5pl", "power"])
def test_power_of_the_mean_agrees_with_scipy_cycle_by_cycle(model: str) -> None:
    x, y = standards(model)
    curve, truth = CURVES[model]
    cal = cw.fit(x, y, model, "power")
    assert isinstance(cal, NonlinearCalibration)
    # Independent estimate: three cycles of (fit with the weights, θ from the scaled squared
    # residuals, weights 1/μ̂^{2θ} summing to n), then the final fit with the last weights.
    w = np.ones(x.size)
    for _ in range(3):
        beta, h = scipy_fit(x, y, curve, truth, w)
        mu = curve(x, *beta)
        theta = scipy_power_theta((y - mu) ** 2 / (1.0 - h), mu)
        w = mu ** (-2.0 * theta)
        w *= x.size / w.sum()
    beta, _ = scipy_fit(x, y, curve, truth, w)
    fit = cal.weight_model.variance_fit
    assert fit.function.kind == "power"
    assert fit.function.parameter == pytest.approx(theta, abs=1e-6)
    np.testing.assert_allclose(cal.weights, w, rtol=1e-5)
    # the final fit with the same fixed weights, to 1e-6 relative in the fitted values
    # (scipy.optimize.least_squares above)
    fixed = cal.weights
    reference, _ = scipy_fit(x, y, curve, truth, fixed)
    np.testing.assert_allclose(cal.fitted, curve(x, *reference), rtol=1e-6)
    np.testing.assert_allclose(cal.coefficients, beta, rtol=1e-4)
    s2 = float(np.sum(fixed * (y - curve(x, *reference)) ** 2)) / (x.size - len(truth))
    assert cal.residual_sd == pytest.approx(np.sqrt(s2), rel=1e-6)
    assert any(note.startswith("weights from a variance function: SD ∝ (mean response)^θ with θ = ")
               and "weighted nonlinear least squares" in note for note in cal.notes)


@pytest.mark.parametrize("model", ["4pl", "power"])
def test_two_component_weights_are_those_of_the_fitted_kappa(model: str) -> None:
    x, y = standards(model)
    curve, truth = CURVES[model]
    cal = cw.fit(x, y, model, "two-component")
    fit = cal.weight_model.variance_fit
    kappa = fit.function.parameter
    assert fit.function.kind == "two-component" and kappa > 0
    # weights 1/(κ² + μ̂²) of the last cycle's fitted responses, summing to n
    expected = 1.0 / (kappa**2 + fit.fitted_mean**2)
    np.testing.assert_allclose(cal.weights, expected * x.size / expected.sum(), rtol=1e-12)
    # the final fit with those fixed weights (scipy.optimize.least_squares)
    reference, _ = scipy_fit(x, y, curve, truth, cal.weights)
    np.testing.assert_allclose(cal.fitted, curve(x, *reference), rtol=1e-6)
    assert any(note.startswith("weights from a variance function: SD² = a² + b²·(mean response)²") for note in cal.notes)


def test_intervals_carry_the_estimated_shape() -> None:
    # Satterthwaite's degrees of freedom (as for the polynomials): below n − p where the shape is
    # extrapolated, so the interval is wider than with the same weights taken as known.
    x, y = standards("4pl")
    cal = cw.fit(x, y, "4pl", "power")
    at = np.array([1.0, 40.0, 600.0])
    fitted = cal.predict(at)
    new = cal.residual_sd**2 / cal.weight_model.weight_at(at, fitted)
    curve = cal.curve_sd(at) ** 2
    t = cal.band_t(0.975, at, new, curve)
    from scipy import stats

    assert np.all(t > stats.t.ppf(0.975, cal.df_residual))  # scipy.stats Student's t on n − p df
    q = cal.quantify(fitted, replicates=2)
    np.testing.assert_allclose(q.estimate, at, rtol=1e-8)
    assert np.all((q.lower < at) & (at < q.upper))


def test_the_refusals_are_those_of_the_polynomials() -> None:
    # standards exactly on the curve: no scatter to fit a variance function to
    x = np.repeat(LEVELS, 2)
    with pytest.raises(cw.WeightingError, match="every standard lies exactly on the curve"):
        cw.fit(x, four_pl(x, *TRUE_4PL), "4pl", "power")
    # a lower asymptote below zero (blank-subtracted responses): a power of the mean needs every fitted
    # response above zero; the two-component function covers responses near zero
    rng = np.random.default_rng(3)
    x = np.repeat(np.concatenate([[0.0], LEVELS]), 2)
    mu = four_pl(x, -0.2, 1.3, 60.0, 2.8)
    y = mu + np.sqrt(0.01**2 + (0.03 * mu) ** 2) * rng.standard_normal(x.size)
    with pytest.raises(cw.WeightingError, match=r"weighting power: the fitted response at standard \d+ .*"
                                                r"choose 'two-component'"):
        cw.fit(x, y, "4pl", "power")
    cal = cw.fit(x, y, "4pl", "two-component")
    assert cal.weights.sum() == pytest.approx(x.size)



@pytest.mark.slow
@pytest.mark.parametrize("weighting", ["power", "two-component"])
def test_coverage_with_a_variance_function_from_duplicates(weighting: str) -> None:
    # The rule of the estimated weights (tests/core/test_estimated_weights.py): a 95 % interval from
    # weights estimated from the standards covers at least 93 % with duplicates, or the weighting is
    # refused for that design. 4PL, 8 levels in duplicate, 3 % CV; unknowns measured once at four
    # concentrations across the range. 300 calibrations × 4 unknowns: binomial SE about 0.6 %.
    rng = np.random.default_rng(20261203)
    x = np.repeat(LEVELS, 2)
    x0 = np.array([2.0, 10.0, 60.0, 300.0])
    covered = total = 0
    for _ in range(300):
        y = four_pl(x, *TRUE_4PL) * (1.0 + 0.03 * rng.standard_normal(x.size))
        cal = cw.fit(x, y, "4pl", weighting)
        y0 = four_pl(x0, *TRUE_4PL) * (1.0 + 0.03 * rng.standard_normal(x0.size))
        q = cal.quantify(y0)
        covered += int(np.sum((q.lower <= x0) & (x0 <= q.upper)))
        total += x0.size
    assert covered / total >= 0.93, covered / total
