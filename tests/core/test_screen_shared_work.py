"""The model screen shares work between its candidates; each must still get the numbers it gets alone."""

from __future__ import annotations

import numpy as np

import curvewright as cw
from curvewright.core.comparison import _aicc
from curvewright.core.influence import measure_influence


def test_each_candidates_aicc_is_its_own_with_the_weights_sums_shared() -> None:
    # The candidates under one fixed weighting share their weights array, and the screen takes Σ ln w
    # once for them: each AICc must be the one worked out for that fit alone, to the last bit.
    # Invented standards over 2.3 decades (the power curve joins the line and the quadratic).
    rng = np.random.default_rng(44)
    x = np.repeat([0.5, 1.0, 2.0, 5.0, 10.0, 20.0, 50.0, 100.0], 3)
    y = (0.02 + 1.3 * x) * (1 + 0.03 * rng.standard_normal(x.size))
    screen = cw.compare(x, y, weightings=("none", "1/x", "1/x^2", "1/y", "1/y^2"))
    assert {c.model.value for c in screen.candidates} == {"linear", "quadratic", "power"}
    for candidate in screen.candidates:
        alone = _aicc(candidate.calibration)
        assert alone is not None and candidate.aicc is not None
        assert candidate.aicc.hex() == alone.hex()


def test_each_candidates_influence_is_the_one_measured_for_it_alone() -> None:
    # A screen measures the influence of each model's fits under all weightings in one pass and hands
    # each fit the rows of those read-only stacks: they must equal the measures of that fit alone,
    # flags and notes included (a standard of high leverage among them). Invented standards.
    rng = np.random.default_rng(45)
    x = np.array([1.0, 1.0, 2.0, 2.0, 4.0, 4.0, 8.0, 8.0, 60.0])
    y = (0.1 + 2.0 * x) * (1 + 0.02 * rng.standard_normal(x.size))
    y[3] *= 1.2  # a standard off the curve
    screen = cw.compare(x, y, weightings=("none", "1/x", "1/x^2"))
    named = 0
    for candidate in screen.candidates:
        cal = candidate.calibration
        got = cal.influence
        root_w = np.sqrt(cal.weights)
        alone = measure_influence(root_w * (cal.response - cal.fitted), cal.leverage, cal.n_parameters,
                                  root_w * cal.response)
        for field in ("leverage", "studentized_residuals", "cooks_distance", "internal_studentized",
                      "influence_thresholds"):
            a = getattr(got, field)
            assert not a.flags.writeable
            np.testing.assert_allclose(a, getattr(alone, field), rtol=1e-9, atol=1e-12, err_msg=field)
        assert got.flags == alone.flags and got.notes == alone.notes
        named += len(got.notes)
    assert named > 0  # the standard at 60 is named for its leverage
