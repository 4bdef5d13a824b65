"""Curves whose shape degenerates: a quadratic with no curvature at all, a flat response.

A quadratic fitted to standards lying on an exact straight line can come out with a curvature
coefficient of exactly 0.0 or −0.0, depending on the machine's rounding. Both must read back as the
straight line they are, never as an infinite root.
"""

from __future__ import annotations

import warnings

import numpy as np
import pytest

import curvewright as cw
from curvewright.core import inverse
from curvewright.core.models import Model

# Duplicates at six levels on y = 2 + 3x, ±0.01 alternating: the replicate means lie exactly on the line.
X = np.array([1, 1, 2, 2, 4, 4, 8, 8, 16, 16, 32, 32], dtype=float)
Y = 2.0 + 3.0 * X + np.tile([0.01, -0.01], 6)


@pytest.mark.parametrize("curvature", [0.0, -0.0], ids=["plus-zero", "minus-zero"])
@pytest.mark.parametrize("branch", [1, -1])
def test_a_quadratic_without_curvature_solves_as_a_line(curvature, branch) -> None:
    a = np.array([33.5, 46.5, curvature])
    y0 = np.array([33.5, 80.0, -13.0])
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        z, no_solution, ambiguous = inverse.solve_z(Model.QUADRATIC, a, branch, (-1.0, 1.0), y0)
    assert np.array_equal(z, (y0 - 33.5) / 46.5)
    assert not no_solution.any() and not ambiguous.any()


def test_a_flat_quadratic_has_no_solution_rather_than_a_division_by_zero() -> None:
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        z, no_solution, _ = inverse.solve_z(Model.QUADRATIC, np.array([5.0, 0.0, -0.0]), 1, (-1.0, 1.0), np.array([5.0, 6.0]))
    assert no_solution.all() and np.isnan(z).all()


def test_quadratic_on_straight_line_data_quantifies_like_the_line() -> None:
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        quadratic = cw.fit(X, Y, "quadratic")
        q = quadratic.quantify([20.0, 50.0, 95.0], replicates=2)
    line = cw.fit(X, Y, "linear")
    # the replicate means lie on y = 2 + 3x exactly, so both fits give that line to round-off
    assert np.all(np.isfinite(quadratic.back_calculated))
    assert quadratic.back_calculated == pytest.approx(line.back_calculated, rel=1e-12, abs=1e-12)
    assert q.estimate == pytest.approx([6.0, 16.0, 31.0], rel=1e-12)
    assert np.all(np.isfinite(q.lower)) and np.all(np.isfinite(q.upper))
    assert np.all(q.lower < q.estimate) and np.all(q.estimate < q.upper)


def test_quadratic_forced_to_minus_zero_curvature_still_quantifies(monkeypatch) -> None:
    """The machine-dependent case, made certain: the fit's curvature is replaced by −0.0."""
    from curvewright.core import calibration

    real = calibration.solve_weighted

    def exact_line(design, y, weights):  # type: ignore[no-untyped-def]
        solution = real(design, y, weights)
        coefficients = np.array(solution.coefficients, dtype=float)
        if coefficients.size == 3:
            coefficients[2] = -0.0
        return type(solution)(**{**solution.__dict__, "coefficients": coefficients})

    monkeypatch.setattr(calibration, "solve_weighted", exact_line)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        cal = cw.fit(X, Y, "quadratic")
        q = cal.quantify([50.0])
    assert np.all(np.isfinite(cal.back_calculated))
    assert q.estimate[0] == pytest.approx(16.0, rel=1e-9)


def test_a_flat_response_is_not_a_perfect_fit() -> None:
    # Every standard gives the same response: nothing changes with concentration.
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        cal = cw.fit([1, 2, 3, 4], [5, 5, 5, 5])
    assert cal.r_squared == 0.0
    assert cal.regression.f_statistic == 0.0 and cal.regression.p_value == 1.0 and not cal.regression.significant
    with pytest.raises(cw.QuantitationInputError, match="the fitted response is the same at every standard"):
        cal.quantify([5.0])
    with pytest.raises(cw.LimitsError, match="does not change"):
        cal.limits()
    assert not any(cal.influence_flags)


def test_exact_standards_on_a_line_are_a_perfect_fit() -> None:
    x = np.array([1, 2, 4, 8, 16.0])
    cal = cw.fit(x, 2 + 3 * x)
    assert cal.residual_sd == 0.0 and cal.r_squared == 1.0
    assert cal.regression.significant and cal.regression.p_value == 0.0
    q = cal.quantify([14.0])
    assert q.estimate[0] == pytest.approx(4.0, rel=1e-14) and q.lower[0] == q.upper[0] == q.estimate[0]


def test_comparing_all_zero_responses_warns_of_nothing_and_says_why() -> None:
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        result = cw.compare([1, 1, 2, 2, 3, 3], [0, 0, 0, 0, 0, 0.0])
    assert any("does not change" in reason for reason in result.reasons)
    assert all(not c.calibration.regression.significant for c in result.candidates)


def test_a_weak_but_real_slope_still_quantifies() -> None:
    # slope t ≈ 3 on 4 df: significant at 5 %, so the calibration is used (with a wide interval)
    x = np.array([1, 2, 3, 4, 5, 6.0])
    y = 10 + 0.2 * x + np.array([0.1, -0.15, 0.05, 0.12, -0.1, -0.02])
    cal = cw.fit(x, y)
    assert cal.regression.significant
    assert np.isfinite(cal.quantify([10.7]).estimate[0])


def test_unknowns_at_the_top_standard_near_the_vertex_always_get_a_result() -> None:
    # Invented detector saturating just above the top standard: y = 2x − 0.1x², vertex at 10, top
    # standard 9.5. Noise puts about a third of the top standard's responses above the fitted curve's
    # highest value; the prediction band still holds almost all of them.
    rng = np.random.default_rng(11)
    x = np.repeat([1, 2, 4, 6, 8, 9.5], 2)
    curve = lambda c: 2 * c - 0.1 * c**2  # noqa: E731
    grid = np.linspace(1.0, 9.5, 400)
    covered = results = turning = 0
    for _ in range(150):
        cal = cw.fit(x, curve(x) + 0.05 * rng.standard_normal(x.size), "quadratic")
        y0 = curve(9.5) + 0.05 * rng.standard_normal(4)
        q = cal.quantify(y0)
        low_band, high_band = cal.prediction_band(grid)
        for i in range(y0.size):
            if cw.QuantFlag.NO_SOLUTION in q.flags[i]:
                # only a response outside the prediction band over the whole range has no result
                assert not np.any((low_band <= y0[i]) & (y0[i] <= high_band))
                continue
            results += 1
            covered += q.lower[i] <= 9.5 <= q.upper[i]
            if y0[i] > cal.predict(cal.vertex):
                assert cw.QuantFlag.TURNING_POINT in q.flags[i] and q.estimate[i] == pytest.approx(cal.vertex)
                turning += 1
            assert np.isfinite(q.lower[i]) and np.isfinite(q.upper[i])
    assert results >= 0.97 * 600 and turning >= 100
    assert covered / results >= 0.93
