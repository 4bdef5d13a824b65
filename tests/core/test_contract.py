"""One contract every model × weighting must keep (round trip, intervals, scale, refusals)."""

from __future__ import annotations

import re

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import curvewright as cw

MODELS = ["linear", "quadratic", "proportional", "4pl", "5pl", "power"]
WEIGHTINGS = ["none", "1/x", "1/x^2", "1/y", "1/y^2", "1/s^2", "power", "two-component"]
NONLINEAR = {"4pl", "5pl", "power"}
"""Curves fitted by nonlinear least squares (the variance-function weightings by nonlinear fits too)."""
CASES = [(m, w) for m in MODELS for w in WEIGHTINGS]
# The average response factor is the mean of yᵢ/xᵢ, the line through the origin weighted 1/x²: it takes
# no other weighting ("none", the default, means its own).
CASES += [("average-rf", "none"), ("average-rf", "1/x^2")]


def standards(model: str, seed: int = 3) -> tuple[np.ndarray, np.ndarray]:
    """Invented standards: 7 levels × 3 replicates from 2 to 200 units, 2 % relative scatter."""
    rng = np.random.default_rng(seed)
    x = np.repeat([2.0, 5.0, 10.0, 20.0, 50.0, 100.0, 200.0], 3)
    return x, truth(model, x) * (1 + 0.02 * rng.standard_normal(x.size))


def truth(model: str, x: np.ndarray) -> np.ndarray:
    return {
        "linear": 1.5 + 3.0 * x,
        "quadratic": 1.5 + 3.0 * x - 0.004 * x**2,
        "proportional": 3.0 * x,
        "average-rf": 3.0 * x,
        "4pl": 3.0 + (0.05 - 3.0) / (1.0 + (x / 40.0) ** 1.2),
        "5pl": 3.0 + (0.05 - 3.0) / (1.0 + (x / 15.0) ** 2.0) ** 0.6,
        "power": 3.0 * x**1.4,
    }[model]


def coefficient_scale(model: str, coefficients: np.ndarray, kx: float, ky: float) -> np.ndarray:
    """How each coefficient changes when concentrations are multiplied by kx and responses by ky."""
    if model in ("4pl", "5pl"):  # a, d in response units, c in concentration units, b and g pure numbers
        return np.array([ky, 1.0, kx, ky, 1.0][: coefficients.size])
    if model == "power":  # a in response/concentration^b, b a pure number
        return np.array([ky / kx ** coefficients[1], 1.0])
    return ky / kx ** np.arange(coefficients.size)


def fit_case(
    x: np.ndarray, y: np.ndarray, model: str, weighting: str, x_scale: float = 1.0, y_scale: float = 1.0
) -> cw.Calibration:
    """1/s² takes its SDs as known (2 % of the true response): three replicates cannot give honest weights."""
    sd = 0.02 * truth(model, x / x_scale) * y_scale if weighting == "1/s^2" else None
    return cw.fit(x, y, model, weighting, response_sd=sd)


@pytest.fixture(scope="module", params=CASES, ids=[f"{m}-{w}" for m, w in CASES])
def calibration(request) -> cw.Calibration:
    model, weighting = request.param
    return fit_case(*standards(model), model, weighting)


def test_round_trip_inside_the_range(calibration: cw.Calibration) -> None:
    x = np.linspace(2.0, 200.0, 41)
    q = calibration.quantify(calibration.predict(x))
    np.testing.assert_allclose(q.estimate, x, rtol=1e-11, atol=1e-11)
    assert all(cw.QuantFlag.IN_RANGE in f for f in q.flags)


def test_interval_contains_estimate_and_narrows_with_replicates(calibration: cw.Calibration) -> None:
    y0 = calibration.predict(np.array([3.0, 30.0, 150.0]))
    widths = []
    for m in (1, 2, 4, 8):
        for method in ("band", "symmetric"):
            q = calibration.quantify(y0, replicates=m, interval=method)
            assert np.all(q.lower < q.estimate) and np.all(q.estimate < q.upper)
        q = calibration.quantify(y0, replicates=m)
        widths.append(q.upper - q.lower)
        # an interval the band cannot close (a weighting that lets the SD grow faster than the curve
        # rises, such as 1/x² on a logistic curve near its plateau) is flagged, never a number
        assert all(cw.QuantFlag.UNBOUNDED_INTERVAL in f for f, w in zip(q.flags, widths[-1]) if not np.isfinite(w))
    widths_array = np.array(widths)
    finite = np.isfinite(widths_array)
    both = finite[1:] & finite[:-1]
    change = np.subtract(widths_array[1:], widths_array[:-1], out=np.full(both.shape, -1.0), where=both)
    assert np.all(change < 0)
    assert np.all(finite[:-1] <= finite[1:])  # once closed, an interval stays closed with more replicates
    assert finite.any()


def test_result_is_immutable(calibration: cw.Calibration) -> None:
    with pytest.raises(ValueError):
        calibration.coefficients[0] = 1.0
    with pytest.raises(AttributeError):
        calibration.residual_sd = 0.0  # type: ignore[misc]
    q = calibration.quantify([100.0])
    with pytest.raises(ValueError):
        q.estimate[0] = 0.0


def test_non_finite_responses_are_refused(calibration: cw.Calibration) -> None:
    with pytest.raises(cw.QuantitationInputError, match="unknown 2"):
        calibration.quantify([10.0, np.nan])


@pytest.mark.parametrize("model, weighting", CASES)
@pytest.mark.parametrize("x_power, y_power", [(3, 0), (0, -4), (-6, 5)])
def test_rescaling_units_rescales_results(model: str, weighting: str, x_power: int, y_power: int) -> None:
    x, y = standards(model)
    kx, ky = 10.0**x_power, 10.0**y_power
    base = fit_case(x, y, model, weighting)
    scaled = fit_case(x * kx, y * ky, model, weighting, x_scale=kx, y_scale=ky)
    factor = coefficient_scale(model, base.coefficients, kx, ky)
    np.testing.assert_allclose(scaled.coefficients, base.coefficients * factor, rtol=1e-9, atol=1e-300)
    if model == "power":
        # a' = a·ky/kx^b depends on b too, so its SE follows the delta method: C' = T·C·Tᵀ with
        # T = ∂(a', b')/∂(a, b) = [[ky/kx^b, −a'·ln kx], [0, 1]]
        a_scaled = scaled.coefficients[0]
        transform = np.array([[factor[0], -a_scaled * np.log(kx)], [0.0, 1.0]])
        expected = np.sqrt(np.diag(transform @ base.covariance @ transform.T))
        np.testing.assert_allclose(scaled.standard_errors, expected, rtol=1e-8)
    else:
        np.testing.assert_allclose(scaled.standard_errors, base.standard_errors * factor, rtol=1e-9, atol=1e-300)
    np.testing.assert_allclose(scaled.fitted, base.fitted * ky, rtol=1e-9)
    assert scaled.residual_sd == pytest.approx(base.residual_sd * ky, rel=1e-9)
    assert scaled.r_squared == pytest.approx(base.r_squared, rel=1e-12)
    np.testing.assert_allclose(scaled.leverage, base.leverage, rtol=1e-9)
    # a Cook's distance near zero comes from a residual near zero, known only to the fit's absolute precision
    np.testing.assert_allclose(scaled.cooks_distance, base.cooks_distance, rtol=1e-7, atol=1e-12)
    np.testing.assert_allclose(scaled.relative_error, base.relative_error, rtol=1e-7, atol=1e-9)
    y0 = base.predict(np.array([4.0, 60.0]))
    a, b = base.quantify(y0), scaled.quantify(y0 * ky)
    for name in ("estimate", "standard_error", "lower", "upper"):
        np.testing.assert_allclose(getattr(b, name), getattr(a, name) * kx, rtol=1e-8)
    if model in NONLINEAR:  # no ICH Q2 limits for these curves: both refuse, with the reason
        for cal in (base, scaled):
            with pytest.raises(cw.LimitsError, match="range of quantitation"):
                cal.limits()
        return
    la, lb = base.limits(), scaled.limits()
    assert lb.lod == pytest.approx(la.lod * kx, rel=1e-9)


@settings(max_examples=60, deadline=None)
@given(
    slope=st.floats(0.05, 50.0),
    intercept=st.floats(-5.0, 5.0),
    noise=st.floats(1e-4, 0.05),
    seed=st.integers(0, 2**31 - 1),
    fraction=st.floats(0.0, 1.0),
)
def test_quantify_inverts_predict_for_random_lines(slope, intercept, noise, seed, fraction) -> None:
    rng = np.random.default_rng(seed)
    x = np.repeat([1.0, 2.0, 4.0, 8.0, 16.0], 2)
    y = intercept + slope * x + noise * slope * rng.standard_normal(x.size)
    cal = cw.fit(x, y)
    x0 = 1.0 + 15.0 * fraction
    q = cal.quantify([cal.predict(x0)], replicates=3)
    assert q.estimate[0] == pytest.approx(x0, rel=1e-9, abs=1e-9)
    assert q.lower[0] <= q.estimate[0] <= q.upper[0]


@settings(max_examples=40, deadline=None)
@given(
    curvature=st.floats(-0.02, 0.02),
    seed=st.integers(0, 2**31 - 1),
    fraction=st.floats(0.0, 1.0),
)
def test_quantify_inverts_predict_for_random_quadratics(curvature, seed, fraction) -> None:
    rng = np.random.default_rng(seed)
    x = np.repeat([1.0, 3.0, 6.0, 10.0, 15.0, 20.0], 2)
    y = 0.3 + 2.0 * x + curvature * x**2
    y = y * (1 + 0.01 * rng.standard_normal(x.size))
    cal = cw.fit(x, y, "quadratic")
    x0 = 1.0 + 19.0 * fraction
    q = cal.quantify([cal.predict(x0)])
    if cw.QuantFlag.AMBIGUOUS_ROOT not in q.flags[0]:
        assert q.estimate[0] == pytest.approx(x0, rel=1e-8, abs=1e-8)


def test_each_unknown_is_quantified_independently_of_the_others_in_the_call(calibration: cw.Calibration) -> None:
    # The inverted band's ends of one unknown must not change, even in the last bit, with the other
    # unknowns quantified alongside it.
    y0 = calibration.predict(np.linspace(2.0, 200.0, 23)) * (1 + 0.01 * np.sin(np.arange(23)))
    together = calibration.quantify(y0, replicates=np.arange(23) % 3 + 1)
    for i in range(y0.size):
        alone = calibration.quantify(y0[i:i + 1], replicates=i % 3 + 1)
        for name in ("estimate", "standard_error", "lower", "upper"):
            assert getattr(alone, name)[0] == getattr(together, name)[i] or (
                np.isnan(getattr(alone, name)[0]) and np.isnan(getattr(together, name)[i])
            ), (name, i)
        assert alone.flag_bits[0] == together.flag_bits[i]


@pytest.mark.parametrize("weighting", [w for w in WEIGHTINGS if w not in ("none", "1/x^2")])
def test_average_response_factor_refuses_other_weightings(weighting: str) -> None:
    x, y = standards("average-rf")
    with pytest.raises(cw.WeightingError, match=re.escape(f"weighting {weighting}: the average response factor")):
        cw.fit(x, y, "average-rf", weighting)



def test_diagnostics_are_worked_out_when_first_read_and_are_those_made_at_once() -> None:
    """fit() defers the influence measures and the lack-of-fit test until they are read (a batch
    that only quantifies never reads them); read, pickled or copied, they are the numbers the
    measures give when made at once, and the fit's notes already hold the influence notes."""
    import pickle

    from curvewright.core.fitted_curve import Deferred
    from curvewright.core.influence import measure_influence
    from curvewright.core.lack_of_fit import lack_of_fit_test

    x = np.repeat([0.5, 1.0, 2.0, 5.0, 10.0, 60.0], [2, 2, 2, 2, 2, 1])
    # replicates that scatter a little (0.4 %), so the pure error, and with it the test, exists
    y = (0.2 + 1.5 * x) * (1 + 0.03 * np.sin(7 * x)) * (1 + 0.004 * np.resize([1.0, -1.0], x.size))
    cal = cw.fit(x, y, "quadratic", "1/x")
    assert type(cal.__dict__["_influence"]) is Deferred and type(cal.__dict__["_lack_of_fit"]) is Deferred
    copy = pickle.loads(pickle.dumps(cal))  # pickling works them out
    assert type(cal.__dict__["_influence"]) is not Deferred
    assert any("leverage" in note for note in cal.notes)
    assert cal.influence.notes == tuple(note for note in cal.notes if "has leverage" in note)
    w = cal.weights
    root_wy = np.sqrt(w) * y
    weighted = np.sqrt(w) * (y - cal.fitted)
    made = measure_influence(weighted, cal.leverage, 3, root_wy)
    np.testing.assert_allclose(cal.studentized_residuals, made.studentized_residuals, rtol=1e-12)
    lack = lack_of_fit_test(y - cal.fitted, w, cal.levels, 3)
    assert lack.available and cal.lack_of_fit.available
    assert cal.lack_of_fit.p_value == pytest.approx(lack.p_value, rel=1e-12)
    assert cal.lack_of_fit.f_statistic == pytest.approx(lack.f_statistic, rel=1e-12)
    for name in ("leverage", "studentized_residuals", "cooks_distance"):
        assert np.array_equal(getattr(copy, name), getattr(cal, name), equal_nan=True)
    assert copy.lack_of_fit == cal.lack_of_fit


@pytest.mark.parametrize("model", ["linear", "quadratic", "proportional"])
@pytest.mark.parametrize("first", ["back_calculated", "relative_error", "pickle"])
def test_the_back_calculation_is_worked_out_when_first_read_and_is_the_one_made_at_once(model: str, first: str) -> None:
    """fit() reads the standards back through the curve only when asked (quantifying unknowns never
    asks); whichever is read first, or when the curve is pickled, the standards read back and their
    relative errors are those worked out at once: each standard's root of f(z) = y on the calibrated
    branch, x̂ = c + s·ẑ, and 100·(x̂ − x)/x (NaN at the zero-concentration blank)."""
    import pickle

    from curvewright.core.fitted_curve import Deferred
    from curvewright.core.inverse import solve_z

    x = np.repeat([0.0, 0.5, 1.0, 2.0, 5.0, 10.0, 40.0], [2, 2, 2, 2, 2, 2, 1])
    y = (0.05 + 1.5 * x - 0.004 * x * x) * (1 + 0.02 * np.sin(7 * x)) + 0.01 * np.cos(3 * x)
    cal = cw.fit(x, y, model, "none")
    assert type(cal.__dict__["_back_calculated"]) is Deferred and type(cal.__dict__["_relative_error"]) is Deferred
    if first == "pickle":
        copy = pickle.loads(pickle.dumps(cal))
        assert type(cal.__dict__["_back_calculated"]) is not Deferred
        assert np.array_equal(copy.back_calculated, cal.back_calculated)
        assert np.array_equal(copy.relative_error, cal.relative_error, equal_nan=True)
    else:
        getattr(cal, first)
    low, high = cal.calibrated_range
    z_range = (float(cal.basis.z(low)), float(cal.basis.z(high)))
    z_back = solve_z(cal.model, cal.z_coefficients, cal.quadratic_branch, z_range, y)[0]
    back = cal.basis.centre + cal.basis.scale * z_back
    assert np.array_equal(cal.back_calculated, back)
    with np.errstate(divide="ignore", invalid="ignore"):
        relative = np.where(x != 0, 100.0 * (back - x) / x, np.nan)
    assert np.array_equal(cal.relative_error, relative, equal_nan=True)
    assert np.isnan(cal.relative_error[0]) and np.isnan(cal.relative_error[1])
    assert not cal.back_calculated.flags.writeable and not cal.relative_error.flags.writeable
    # read twice: the same arrays, worked out once
    assert cal.back_calculated is cal.back_calculated and cal.relative_error is cal.relative_error


@pytest.mark.parametrize("weighting", ["none", "1/x", "1/x^2"])
@pytest.mark.parametrize("model", ["linear", "quadratic", "proportional"])
def test_r_squared_is_worked_out_when_first_read_and_is_the_screens(model: str, weighting: str) -> None:
    """fit() works out R² and the adjusted R² only when one is read (quantifying unknowns never
    reads them): 1 − SSE/SST about the weighted mean response and 1 − (1 − R²)(n − 1)/(n − p)
    (Draper & Smith, *Applied Regression Analysis*, 3rd ed., §1.3 and §5.2), the same bits as the
    model screen's candidate fitted under every weighting at once."""
    import pickle

    from curvewright.core.calibration import fit_weightings
    from curvewright.core.fitted_curve import Deferred

    x = np.repeat([0.5, 1.0, 2.0, 5.0, 10.0, 40.0], [3, 2, 2, 3, 2, 1])
    y = (0.05 + 1.5 * x - 0.004 * x * x) * (1 + 0.03 * np.sin(7 * x))
    cal = cw.fit(x, y, model, weighting)
    assert type(cal.__dict__["_r_squared"]) is Deferred and type(cal.__dict__["_adjusted_r_squared"]) is Deferred
    screen = fit_weightings(x, y, model, [weighting])[0]
    assert type(screen.__dict__["_r_squared"]) is float  # the screen makes it over its stack at once
    copy = pickle.loads(pickle.dumps(cal))
    assert copy.r_squared == screen.r_squared and copy.adjusted_r_squared == screen.adjusted_r_squared
    assert cal.adjusted_r_squared == screen.adjusted_r_squared and cal.r_squared == screen.r_squared
    w = cal.weights
    mean_w = np.sum(w * y) / np.sum(w)
    sse = np.sum(w * (y - cal.fitted) ** 2)
    r2 = 1.0 - sse / np.sum(w * (y - mean_w) ** 2)
    assert cal.r_squared == pytest.approx(r2, rel=1e-12)
    n, p = x.size, cal.n_parameters
    assert cal.adjusted_r_squared == pytest.approx(1.0 - (1.0 - r2) * (n - 1) / (n - p), rel=1e-12)
