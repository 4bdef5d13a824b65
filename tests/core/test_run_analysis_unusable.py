"""Standards the analysis cannot use are reported with the reason, never fitted."""

from __future__ import annotations

import pytest

import curvewright as cw
from curvewright.core.run import Analyte, Reading, Run, RunSettings, Standard
from curvewright.core.run_analysis import analyse_run


def test_a_negative_nominal_concentration_is_not_usable() -> None:
    # invented standards on y = 1 + 2x; the one typed as -2 (a slip for 2) must not enter the fit
    xs = [0.0, 1.0, 2.0, 4.0, 8.0, -2.0]
    standards = tuple(Standard(f"S{i}", x, Reading.of(1 + 2 * abs(x) + 0.01 * (-1) ** i)) for i, x in enumerate(xs))
    run = Run("invented", (Analyte("boron", "mg/L", "AU", standards),), (), RunSettings())
    result = analyse_run(run).analytes[0]
    assert [u.standard_id for u in result.unusable_standards] == ["S5"]
    assert result.unusable_standards[0].reason == "concentration −2 is below zero"
    assert [s.id for s in result.fitted_standards] == ["S0", "S1", "S2", "S3", "S4"]
    direct = cw.fit(xs[:5], [s.response.value for s in standards[:5]])  # the same fit, computed directly
    assert result.calibration.coefficients.tolist() == pytest.approx(direct.coefficients.tolist(), rel=1e-14)
    # counted as not passing, like any other standard without a usable value
    assert "1 standard(s) without a usable value" in " ".join(result.verdict.reasons)
