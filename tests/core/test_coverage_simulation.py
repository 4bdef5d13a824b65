"""Simulation: the 95 % calibration interval covers the true concentration 94–96 % of the time.

Each trial draws a fresh set of standards from a known curve, fits it, draws new responses of
unknowns at known concentrations inside the range and checks whether each interval holds the
truth. The interval is the inverted prediction band, which is exact for known weights, so the
observed coverage should sit at 95 % within the simulation's binomial error (SE ≈ 0.2 % here).
"""

from __future__ import annotations

import numpy as np
import pytest

import curvewright as cw

TRIALS = 3000
UNKNOWNS_PER_TRIAL = 4
LEVELS = np.repeat([1.0, 2.0, 5.0, 10.0, 20.0, 40.0], 2)

SCENARIOS = {
    # name: (model, weighting, true curve, response SD as a function of concentration)
    "linear, unweighted": ("linear", "none", lambda x: 0.4 + 2.0 * x, lambda x: 0.5 + 0 * x),
    "quadratic, unweighted": ("quadratic", "none", lambda x: 0.4 + 2.0 * x - 0.02 * x**2, lambda x: 0.5 + 0 * x),
    "linear, 1/x² weighted": ("linear", "1/x^2", lambda x: 0.4 + 2.0 * x, lambda x: 0.05 * x),
}


@pytest.mark.slow
@pytest.mark.parametrize("name", list(SCENARIOS))
def test_calibration_interval_coverage(name: str) -> None:
    model, weighting, curve, sd = SCENARIOS[name]
    rng = np.random.default_rng(20261201)
    covered = 0
    for _ in range(TRIALS):
        y = curve(LEVELS) + sd(LEVELS) * rng.standard_normal(LEVELS.size)
        cal = cw.fit(LEVELS, y, model, weighting)
        truth = rng.uniform(1.0, 40.0, UNKNOWNS_PER_TRIAL)
        y0 = curve(truth) + sd(truth) * rng.standard_normal(truth.size)
        q = cal.quantify(y0)
        solved = ~np.isnan(q.estimate)
        covered += int(np.count_nonzero(solved & (q.lower <= truth) & (truth <= q.upper)))
    coverage = covered / (TRIALS * UNKNOWNS_PER_TRIAL)
    assert 0.94 <= coverage <= 0.96, f"{name}: coverage {coverage:.4f}"
