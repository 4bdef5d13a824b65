"""Four- and five-parameter logistic calibrations: the fit against scipy, inverse prediction, asymptotes,
anchor points, the ligand-binding acceptance profile, convergence, and the coverage of the interval."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import optimize

import curvewright as cw
from curvewright.core.nonlinear_calibration import NonlinearCalibration
from tests.core.verdicts import judged_alike

# An invented sandwich immunoassay: 8 levels in duplicate from 1 to 600 pg/mL, optical density
# rising from 0.05 to 2.8, 3 % relative scatter.
LEVELS = np.array([1.0, 2.5, 6.0, 15.0, 40.0, 100.0, 250.0, 600.0])
TRUE_4PL = (0.05, 1.3, 60.0, 2.8)
TRUE_5PL = (0.05, 1.6, 90.0, 2.8, 0.6)


def four_pl(x, a, b, c, d):
    return d + (a - d) / (1.0 + (x / c) ** b)


def five_pl(x, a, b, c, d, g):
    return d + (a - d) / (1.0 + (x / c) ** b) ** g


def assay(seed: int = 11, truth=TRUE_4PL, curve=four_pl, cv: float = 0.03) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    x = np.repeat(LEVELS, 2)
    return x, curve(x, *truth) * (1.0 + cv * rng.standard_normal(x.size))


def scipy_fit(x, y, curve, start, weights):
    """The same weighted problem solved independently: scipy's trust-region reflective method and its
    own finite-difference Jacobian, from the true parameters, at tolerances near machine precision."""
    root_w = np.sqrt(weights)
    result = optimize.least_squares(
        lambda p: root_w * (curve(x, *p) - y), np.array(start, dtype=float), method="trf", jac="3-point",
        x_scale="jac", ftol=1e-15, xtol=1e-15, gtol=1e-15, max_nfev=20000,
    )
    return result.x


@pytest.mark.parametrize("model, curve, truth", [("4pl", four_pl, TRUE_4PL), ("5pl", five_pl, TRUE_5PL)])
@pytest.mark.parametrize("weighting", ["none", "1/y^2"])
def test_fit_agrees_with_scipy_least_squares(model, curve, truth, weighting) -> None:
    # Check against scipy.optimize.least_squares (an independent solver) to 1e-6 relative in the
    # fitted values, as the issue requires.
    x, y = assay(truth=truth, curve=curve)
    cal = cw.fit(x, y, model, weighting)
    assert isinstance(cal, cw.Calibration)
    weights = np.ones(x.size) if weighting == "none" else (y.min() / y) ** 2
    weights *= x.size / weights.sum()
    reference = scipy_fit(x, y, curve, truth, weights)
    np.testing.assert_allclose(cal.fitted, curve(x, *reference), rtol=1e-6)
    np.testing.assert_allclose(cal.predict(x), curve(x, *reference), rtol=1e-6)
    np.testing.assert_allclose(cal.coefficients, reference, rtol=1e-4)
    np.testing.assert_allclose(cal.weights, weights, rtol=1e-12)
    # the linearised covariance from scipy's Jacobian at its own solution: s²·(JᵀJ)⁻¹
    j = optimize.approx_fprime(reference, lambda p: np.sqrt(weights) * curve(x, *p), 1e-7 * np.abs(reference))
    s2 = float(np.sum(weights * (y - curve(x, *reference)) ** 2)) / (x.size - len(truth))
    np.testing.assert_allclose(cal.standard_errors, np.sqrt(np.diag(s2 * np.linalg.inv(j.T @ j))), rtol=1e-3)
    assert cal.residual_sd == pytest.approx(np.sqrt(s2), rel=1e-6)
    assert cal.df_residual == x.size - len(truth)


def test_named_parameters_equation_and_convergence_are_reported() -> None:
    cal = cw.fit(*assay(), "4pl", "1/y^2")
    assert isinstance(cal, NonlinearCalibration)
    assert tuple(cal.parameters) == ("a", "b", "c", "d")
    assert cal.parameters["c"] == pytest.approx(60.0, rel=0.1)
    assert cal.equation(4).startswith("y = d + (a − d)/(1 + (x/c)^b) with a = ")
    assert cal.covariance.shape == (4, 4)
    np.testing.assert_allclose(cal.covariance, cal.covariance.T)
    assert cal.convergence and cal.evaluations > 0
    assert any("converged" in note for note in cal.notes)
    five = cw.fit(*assay(truth=TRUE_5PL, curve=five_pl), "5pl")
    assert tuple(five.parameters) == ("a", "b", "c", "d", "g")


@pytest.mark.parametrize("model, curve, truth", [("4pl", four_pl, TRUE_4PL), ("5pl", five_pl, TRUE_5PL)])
def test_inverse_prediction_round_trip_and_delta_method(model, curve, truth) -> None:
    cal = cw.fit(*assay(truth=truth, curve=curve), model, "1/y^2")
    x = np.geomspace(1.0, 600.0, 25)
    q = cal.quantify(cal.predict(x), replicates=2)
    np.testing.assert_allclose(q.estimate, x, rtol=1e-10)
    assert all(cw.QuantFlag.IN_RANGE in f for f in q.flags)
    # delta method: SE = √(σ²/(m·w) + var f̂)/|f'(x̂)|, f' here by a central difference
    h = 1e-6 * x
    slope = (cal.predict(x + h) - cal.predict(x - h)) / (2 * h)
    new_var = cal.residual_sd**2 / (2 * cal.weight_model.weight_at(x, cal.predict(x)))
    expected = np.sqrt(new_var + cal.curve_sd(x) ** 2) / np.abs(slope)
    np.testing.assert_allclose(q.standard_error, expected, rtol=1e-6)


@pytest.mark.parametrize("weighting", ["none", "1/x^2"])
def test_interval_ends_lie_on_the_prediction_band(weighting: str) -> None:
    # Inverting the band: at each end of the interval the band for the mean of m responses passes
    # exactly through the unknown's response. (Weightings whose weight depends on x alone: the band
    # drawn by prediction_band weighs a 1/y-type new response at the curve, the interval at ȳ₀.)
    cal = cw.fit(*assay(), "4pl", weighting)
    y0 = cal.predict(np.array([3.0, 30.0, 200.0])) * np.array([1.02, 0.99, 1.01])
    q = cal.quantify(y0, replicates=3)
    assert np.all(q.lower < q.estimate) and np.all(q.estimate < q.upper)
    ends = np.concatenate([q.lower, q.upper])
    responses = np.concatenate([y0, y0])
    closed = np.isfinite(ends) & (ends > 0)
    assert closed.sum() >= 4
    low, high = cal.prediction_band(ends[closed], replicates=3)
    gap = np.minimum(np.abs(low - responses[closed]), np.abs(high - responses[closed]))
    np.testing.assert_allclose(gap, 0.0, atol=1e-9 * float(np.max(y0)))
    # an end at 0: the band still holds the response at the lowest concentrations; an end at +inf:
    # flagged as unbounded
    for i in np.flatnonzero(q.lower == 0):
        low, high = cal.prediction_band(np.array([1e-9]), replicates=3)
        assert low[0] <= y0[i] <= high[0]
    for i in np.flatnonzero(np.isinf(q.upper)):
        assert cw.QuantFlag.UNBOUNDED_INTERVAL in q.flags[i]
    sym = cal.quantify(y0, replicates=3, interval="symmetric")
    np.testing.assert_allclose(sym.upper - sym.estimate, sym.estimate - sym.lower, rtol=1e-12)


def test_responses_beyond_an_asymptote_are_flagged_without_a_result() -> None:
    cal = cw.fit(*assay(), "4pl", "1/y^2")
    a, d = cal.parameters["a"], cal.parameters["d"]
    q = cal.quantify([a - 0.01, d + 0.05, (a + d) / 2])
    for i in (0, 1):
        assert cw.QuantFlag.BEYOND_ASYMPTOTE in q.flags[i] and cw.QuantFlag.NO_SOLUTION in q.flags[i]
        assert np.isnan(q.estimate[i]) and np.isnan(q.lower[i]) and np.isnan(q.upper[i])
        assert "asymptote" in q.flag_words()[i]
    assert q.estimate[2] == pytest.approx(cal.parameters["c"], rel=1e-12)


def test_a_falling_curve_is_calibrated_too() -> None:
    # competitive assay: the response falls from a = 2.5 to d = 0.1
    x, y = assay(truth=(2.5, 1.1, 25.0, 0.1))
    cal = cw.fit(x, y, "4pl", "1/y^2")
    assert cal.parameters["a"] > cal.parameters["d"] and cal.parameters["b"] > 0
    q = cal.quantify(cal.predict([5.0, 50.0]))
    np.testing.assert_allclose(q.estimate, [5.0, 50.0], rtol=1e-10)


def test_anchor_points_fit_the_curve_but_stay_out_of_acceptance_and_the_range() -> None:
    rng = np.random.default_rng(4)
    anchors_x = np.array([0.25, 0.25, 2400.0, 2400.0])
    x = np.concatenate([anchors_x, np.repeat(LEVELS, 2)])
    y = four_pl(x, *TRUE_4PL) * (1 + 0.03 * rng.standard_normal(x.size))
    y[1] *= 1.6  # an anchor point far off: it would fail any acceptance limit
    anchor = np.zeros(x.size, dtype=bool)
    anchor[:4] = True
    cal = cw.fit(x, y, "4pl", "1/y^2", anchor_points=anchor)
    without = cw.fit(x[4:], y[4:], "4pl", "1/y^2")
    assert not np.allclose(cal.coefficients, without.coefficients)  # the anchors take part in the fit
    assert cal.calibrated_range == (1.0, 600.0)
    profile = cw.load_profile("ich-m10-ligand-binding")
    verdict = cal.evaluate(profile)
    assert not verdict.judged[:4].any() and verdict.judged[4:].all()
    assert "16 standards" in verdict.reasons[0] and "4 anchor point(s) fitted but not judged" in verdict.reasons[0]
    # the LLOQ and ULOQ levels (1 and 600), not the anchors, get the ±25 % limit
    np.testing.assert_array_equal(verdict.tolerance_percent[4:6], [25.0, 25.0])
    np.testing.assert_array_equal(verdict.tolerance_percent[6:8], [20.0, 20.0])
    assert any("anchor point" in note for note in cal.notes)
    q = cal.quantify(cal.predict([0.5]))
    assert cw.QuantFlag.BELOW_RANGE in q.flags[0]


def test_anchor_points_are_refused_where_they_do_not_belong() -> None:
    x, y = assay()
    inside = np.zeros(x.size, dtype=bool)
    inside[5] = True
    with pytest.raises(cw.CalibrationInputError,
                       match=rf"the standard at concentration {x[5]:g} is marked as an anchor point but lies within"):
        cw.fit(x, y, "4pl", anchor_points=inside)
    edge = np.zeros(x.size, dtype=bool)
    edge[0] = True
    with pytest.raises(cw.CalibrationInputError, match="anchor points belong to the logistic curves"):
        cw.fit(x, y, "linear", anchor_points=edge)
    with pytest.raises(cw.CalibrationInputError, match="one True/False per standard"):
        cw.fit(x, y, "4pl", anchor_points=[True, False])


def test_ligand_binding_profile_allows_25_percent_only_at_lloq_and_uloq() -> None:
    # ICH M10 ligand-binding profile (±20 %, ±25 % at the LLOQ and ULOQ): the profile's limits
    # applied to this curve's back-calculated standards, recomputed here by hand.
    cal = cw.fit(*assay(seed=3), "4pl", "1/y^2")
    verdict = cal.evaluate(cw.load_profile("ich-m10-ligand-binding"))
    tolerance = np.where(np.isin(cal.concentration, [1.0, 600.0]), 25.0, 20.0)
    np.testing.assert_array_equal(verdict.tolerance_percent, tolerance)
    re = 100.0 * (cal.back_calculated - cal.concentration) / cal.concentration
    np.testing.assert_allclose(cal.relative_error, re, rtol=1e-12)
    np.testing.assert_array_equal(verdict.passing, np.abs(re) <= tolerance + 1e-9)


def test_limits_are_refused_with_the_reason_and_quantify_says_so() -> None:
    cal = cw.fit(*assay(), "4pl", "1/y^2")
    with pytest.raises(cw.LimitsError, match="LLOQ to ULOQ"):
        cal.limits()
    q = cal.quantify([1.0])
    assert q.limits is None and "LLOQ to ULOQ" in (q.limits_note or "")


def test_a_curve_that_cannot_be_fitted_says_why() -> None:
    # Responses that rise and fall at random show no sigmoid to fit.
    x = np.repeat(LEVELS, 2)
    y = np.tile([1.0, 1.3, 0.8, 1.25, 0.85, 1.2, 0.9, 1.1], 2)
    with pytest.raises(cw.ConvergenceError, match="four-parameter logistic .* could not be fitted") as caught:
        cw.fit(x, y, "4pl")
    assert "start values derived from them" in str(caught.value)
    assert "cannot separate the parameters" in str(caught.value)


def test_negative_concentrations_are_refused_by_name() -> None:
    x, y = assay()
    x = x.copy()
    x[2] = -1.0
    with pytest.raises(cw.CalibrationInputError, match="standard 3 is at −1"):
        cw.fit(x, y, "4pl")


@pytest.mark.slow
def test_coverage_of_the_95_percent_interval() -> None:
    # 4PL, 8 levels in duplicate, 3 % CV (so 1/y² weighting), unknowns measured once at four
    # concentrations across the range: the 95 % interval from the inverted band must cover the true
    # concentration 93–97 % of the time. 1000 calibrations × 4 unknowns: binomial SE about 0.35 %.
    rng = np.random.default_rng(20261202)
    x = np.repeat(LEVELS, 2)
    x0 = np.array([2.0, 10.0, 60.0, 300.0])
    covered = total = 0
    for _ in range(1000):
        y = four_pl(x, *TRUE_4PL) * (1.0 + 0.03 * rng.standard_normal(x.size))
        cal = cw.fit(x, y, "4pl", "1/y^2")
        y0 = four_pl(x0, *TRUE_4PL) * (1.0 + 0.03 * rng.standard_normal(x0.size))
        q = cal.quantify(y0)
        covered += int(np.sum((q.lower <= x0) & (x0 <= q.upper)))
        total += x0.size
    assert 0.93 <= covered / total <= 0.97, covered / total


def test_verdicts_judged_together_are_the_verdicts_judged_one_by_one() -> None:
    # A model screen judges all its candidates at once, working out once per set of standards which
    # are judged and at what limit; each verdict must be the one evaluate() gives for that fit alone,
    # with anchor points (judged apart) among them. Invented standards.
    rng = np.random.default_rng(6)
    x = np.concatenate([[0.25, 2400.0], np.repeat(LEVELS, 2)])
    y = four_pl(x, *TRUE_4PL) * (1 + 0.05 * rng.standard_normal(x.size))
    anchor = np.zeros(x.size, dtype=bool)
    anchor[:2] = True
    inner = cw.compare(x[2:], y[2:], models=("linear", "quadratic"))
    cals = [c.calibration for c in inner.candidates] + [cw.fit(x, y, "4pl", "1/y^2", anchor_points=anchor)]
    outcomes = set()
    for name in ("ich-m10-ligand-binding", "ich-m10-chromatographic", "environmental"):
        profile = cw.load_profile(name)
        together = judged_alike(profile, cals)
        assert not together[-1].judged[:2].any()
        outcomes |= {v.passed for v in together}
    assert outcomes == {True, False}  # verdicts both ways among them
