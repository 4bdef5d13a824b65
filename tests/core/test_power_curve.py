"""The power curve y = a·x^b: fitted in the response's own scale with the chosen weighting."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import optimize

import curvewright as cw

# Invented evaporative light-scattering detector standards: 7 levels in triplicate over three decades
# (0.5 to 500 µg/mL), peak area ∝ x^1.6, 4 % relative scatter.
LEVELS = np.array([0.5, 1.5, 5.0, 15.0, 50.0, 150.0, 500.0])
A, B = 120.0, 1.6


def standards(seed: int = 8) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    x = np.repeat(LEVELS, 3)
    return x, A * x**B * (1.0 + 0.04 * rng.standard_normal(x.size))


@pytest.mark.parametrize("weighting", ["none", "1/y^2", "1/x^2"])
def test_fit_in_the_response_scale_agrees_with_scipy(weighting: str) -> None:
    # The same weighted problem in y (not in ln y) solved by scipy.optimize.least_squares with its own
    # finite-difference Jacobian from the true parameters: fitted values agree to 1e-6 relative.
    x, y = standards()
    cal = cw.fit(x, y, "power", weighting)
    w = {"none": np.ones(x.size), "1/y^2": (y.min() / y) ** 2, "1/x^2": (x.min() / x) ** 2}[weighting]
    w *= x.size / w.sum()
    ref = optimize.least_squares(
        lambda p: np.sqrt(w) * (p[0] * x ** p[1] - y), [A, B], method="trf", jac="3-point", x_scale="jac",
        ftol=1e-15, xtol=1e-15, gtol=1e-15,
    ).x
    np.testing.assert_allclose(cal.fitted, ref[0] * x ** ref[1], rtol=1e-6)
    np.testing.assert_allclose(cal.coefficients, ref, rtol=1e-6)
    assert tuple(cal.parameters) == ("a", "b")
    assert cal.equation(4) == f"y = a·x^b with a = {cal.coefficients[0]:.4g}, b = {cal.coefficients[1]:.4g}"


def test_the_fit_is_not_the_log_log_line() -> None:
    # The straight line through (ln x, ln y) gives other parameters: the fit does not take that shortcut.
    x, y = standards()
    cal = cw.fit(x, y, "power", "1/y^2")
    b, ln_a = np.polyfit(np.log(x), np.log(y), 1)
    assert abs(cal.coefficients[1] - b) > 1e-6 * abs(b)


def test_round_trip_interval_and_flags() -> None:
    cal = cw.fit(*standards(), "power", "1/y^2")
    x = np.geomspace(0.5, 500.0, 19)
    q = cal.quantify(cal.predict(x), replicates=2)
    np.testing.assert_allclose(q.estimate, x, rtol=1e-10)
    assert np.all(q.lower < q.estimate) and np.all(q.estimate < q.upper)
    assert all(cw.QuantFlag.IN_RANGE in f for f in q.flags)
    q = cal.quantify([-5.0, cal.predict(1000.0)])
    assert cw.QuantFlag.NO_SOLUTION in q.flags[0] and np.isnan(q.estimate[0])
    assert cw.QuantFlag.ABOVE_RANGE in q.flags[1]


def test_concentrations_at_or_below_zero_are_refused_by_name() -> None:
    x, y = standards()
    x = x.copy()
    x[0] = 0.0
    with pytest.raises(cw.CalibrationInputError, match="standard 1 is at 0; a power curve"):
        cw.fit(x, y, "power")


def test_the_fitters_form_of_the_weighted_problem_gives_the_curves_own_numbers() -> None:
    # The power curve hands the fitter √w·(a·x^b − y) and its Jacobian with ln x taken once; they
    # must be the curve's own function and derivatives weighted by √w, to the last bit, and a fit
    # from them the same as one from the curve's function and derivatives.
    from curvewright.core.curve_families import FAMILIES
    from curvewright.core.models import Model
    from curvewright.core.nonlinear import fit_nonlinear

    family = FAMILIES[Model.POWER]
    x, y = standards()
    x = np.concatenate([[0.0], x])  # a blank: ln 0 is −∞, and its derivative column must come out the same
    y = np.concatenate([[0.4], y])
    rng = np.random.default_rng(3)
    root_w = np.sqrt(rng.uniform(0.1, 3.0, x.size))
    residuals, jacobian = family.weighted_problem(x, y, root_w)
    for beta in (np.array([A, B]), np.array([0.01, -0.7]), np.array([-3.0, 2.5])):
        with np.errstate(all="ignore"):
            expected_r = root_w * (family.function(x, beta) - y)
            expected_j = root_w[:, None] * family.jacobian(x, beta)
            got_r, got_j = residuals(beta), jacobian(beta)
        np.testing.assert_array_equal(got_r, expected_r)
        np.testing.assert_array_equal(got_j, expected_j)
    w = root_w[1:] ** 2
    fast = fit_nonlinear(family.function, family.jacobian, x[1:], y[1:], np.array([100.0, 1.5]), w,
                         problem=family.weighted_problem)
    plain = fit_nonlinear(family.function, family.jacobian, x[1:], y[1:], np.array([100.0, 1.5]), w)
    assert fast.converged and plain.converged
    np.testing.assert_array_equal(fast.parameters, plain.parameters)
    np.testing.assert_array_equal(fast.covariance, plain.covariance)
    assert fast.evaluations == plain.evaluations


@pytest.mark.parametrize("case", range(5))
@pytest.mark.parametrize("weighting", ["none", "1/x^2", "1/y"])
def test_the_polished_minimum_is_the_exact_one(case: int, weighting: str) -> None:
    # The Gauss–Newton polish stops once a further step could only move the parameters by round-off;
    # the parameters must still be the exact weighted least-squares minimum. Reference: the minimum
    # worked out in 50-digit arithmetic (mpmath): for a given b the best a is Σw·y·xᵇ / Σw·x²ᵇ, and b
    # is the root of the derivative of the weighted sum of squares along that profile. Invented
    # standards over two to three decades.
    import mpmath

    rng = np.random.default_rng(500 + case)
    x = np.repeat(np.geomspace(0.3, 0.3 * 10 ** rng.uniform(2, 3), int(rng.integers(5, 8))), int(rng.integers(2, 4)))
    y = rng.uniform(0.5, 50) * x ** rng.uniform(0.7, 1.2) * (1 + 0.05 * rng.standard_normal(x.size))
    cal = cw.fit(x, y, "power", weighting)
    mpmath.mp.dps = 50
    xs, ys = [mpmath.mpf(float(v)) for v in x], [mpmath.mpf(float(v)) for v in y]
    ws = {"none": [mpmath.mpf(1)] * x.size, "1/x^2": [1 / v**2 for v in xs], "1/y": [1 / v for v in ys]}[weighting]

    def best_a(b):  # type: ignore[no-untyped-def]
        return (mpmath.fsum(w * v * u**b for w, u, v in zip(ws, xs, ys, strict=True))
                / mpmath.fsum(w * u ** (2 * b) for w, u in zip(ws, xs, strict=True)))

    def slope(b):  # type: ignore[no-untyped-def]
        a = best_a(b)
        return mpmath.fsum(w * (a * u**b - v) * a * u**b * mpmath.log(u) for w, u, v in zip(ws, xs, ys, strict=True))

    b = mpmath.findroot(slope, mpmath.mpf(float(cal.coefficients[1])), tol=mpmath.mpf(10) ** -40)
    exact = np.array([float(best_a(b)), float(b)])
    np.testing.assert_allclose(cal.coefficients, exact, rtol=1e-12, atol=0)


def test_a_jacobian_that_is_not_finite_at_the_minimum_is_still_refused() -> None:
    # The record takes the refinement's last Jacobian rather than working it out once more. Where the
    # curve's derivatives are not finite there (a blank: ∂(a·xᵇ)/∂b = a·xᵇ·ln x is 0·(−∞) at x = 0),
    # the refinement's copy holds zeros in their place, and the fit must still be refused as not
    # converged, with the same reason, from the curve's own functions and from its weighted problem.
    from curvewright.core.curve_families import FAMILIES
    from curvewright.core.models import Model
    from curvewright.core.nonlinear import fit_nonlinear

    family = FAMILIES[Model.POWER]
    x, y = standards()
    x, y = np.concatenate([[0.0], x]), np.concatenate([[0.0], y])  # the residual at the blank stays finite
    for problem in (None, family.weighted_problem):
        result = fit_nonlinear(family.function, family.jacobian, x, y, np.array([A, B]), problem=problem)
        assert not result.converged
        assert result.reason == "the curve or its derivatives stopped being finite numbers at the last parameters reached"
        assert np.isnan(result.covariance).all() and np.isnan(result.weighted_jacobian).all()
    # the same standards without the blank converge: the refusal is the blank's derivative alone
    assert fit_nonlinear(family.function, family.jacobian, x[1:], y[1:], np.array([A, B])).converged


def test_the_record_takes_the_refinements_jacobian_with_the_same_numbers() -> None:
    # The fit's record (covariance, leverages, the weighted Jacobian) is made from the Jacobian the
    # refinement evaluated last: it must equal √w·∂f/∂β worked out afresh at the parameters reached,
    # to the last bit, under several weightings and starts. Invented standards.
    from curvewright.core.curve_families import FAMILIES
    from curvewright.core.models import Model
    from curvewright.core.nonlinear import fit_nonlinear

    family = FAMILIES[Model.POWER]
    x, y = standards()
    rng = np.random.default_rng(12)
    for _ in range(20):
        w = rng.uniform(0.05, 4.0, x.size)
        w *= x.size / w.sum()
        start = np.array([A * rng.uniform(0.5, 2.0), B * rng.uniform(0.7, 1.3)])
        for problem in (None, family.weighted_problem):
            result = fit_nonlinear(family.function, family.jacobian, x, y, start, w, problem=problem)
            assert result.converged
            fresh = np.sqrt(w)[:, None] * family.jacobian(x, result.parameters)
            assert result.weighted_jacobian.tobytes() == fresh.tobytes()
            np.testing.assert_array_equal(result.fitted, family.function(x, result.parameters))
