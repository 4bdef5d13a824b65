"""What the history tracks of each run: read from the run's own analysis, never made up."""

from __future__ import annotations

import math

import numpy as np
import pytest

from curvewright.core.run import SampleKind
from curvewright.core.run_analysis import analyse_run
from curvewright.core.tracked import (CALIBRATION_QUANTITIES, method_key, parse_recovery_key, quantity_words,
                                      recovery_key, tracked_values)
from curvewright.io.run_document import open_run
from tests.io.helpers import ROOT

DEMOS = ROOT / "sample_runs"


def test_the_calibration_quantities_are_the_fit_s_own() -> None:
    result = analyse_run(open_run(DEMOS / "nitrate_water_linear.json").run)
    (values,) = tracked_values(result)
    a = result.analytes[0]
    cal = a.calibration
    assert (values.intercept, values.slope) == (cal.coefficients[0], cal.coefficients[1])
    assert values.curvature is None and values.residual_sd == cal.residual_sd
    assert values.lloq == a.reporting.lloq == 0.5
    assert values.rf_rsd_percent is None  # a straight line has no response factors: never made up
    assert values.is_response is None and values.accepted and values.error is None
    assert values.method_key == "general | linear | none" == method_key("general", "linear", "none")


def test_an_average_response_factor_tracks_its_rf_rsd() -> None:
    result = analyse_run(open_run(DEMOS / "volatiles_water_average_rf.json").run)
    values = tracked_values(result)
    assert len(values) == len(result.analytes) >= 2
    for a, v in zip(result.analytes, values, strict=True):
        cal = a.calibration
        assert cal.model.value == v.model == "average-rf"
        # by hand: RF = y/x of each standard in the fit, %RSD = 100·s/mean with s on n − 1
        rf = [float(y) / float(x) for x, y in zip(cal.concentration, cal.response, strict=True)]
        mean = sum(rf) / len(rf)
        sd = math.sqrt(sum((r - mean) ** 2 for r in rf) / (len(rf) - 1))
        assert v.rf_rsd_percent == pytest.approx(100.0 * sd / mean, rel=1e-12)
        assert v.rf_rsd_percent == cal.rf_rsd_percent
        assert v.slope == pytest.approx(mean, rel=1e-12) and v.intercept is None


def test_r_of_an_unweighted_straight_line_is_pearson_s_correlation() -> None:
    result = analyse_run(open_run(DEMOS / "nitrate_water_linear.json").run)
    (values,) = tracked_values(result)
    cal = result.analytes[0].calibration
    # for an unweighted straight line with intercept, sign(b1)·sqrt(R²) equals Pearson's r (a textbook
    # identity); numpy's corrcoef is the reference
    pearson = np.corrcoef(cal.concentration, cal.response)[0, 1]
    assert values.r == pytest.approx(pearson, rel=1e-12)


def test_a_quadratic_tracks_its_curvature_and_the_check_standards() -> None:
    result = analyse_run(open_run(DEMOS / "zinc_emission_quadratic.json").run)
    (values,) = tracked_values(result)
    cal = result.analytes[0].calibration
    assert values.curvature == cal.coefficients[2] and values.model == "quadratic"
    checks = [c.recovery_percent for c in result.analytes[0].checks.checks]
    (check,) = values.recoveries
    assert (check.kind, check.nominal, check.count) == ("check_standard", 5.0, 2)
    assert check.recovery_percent == pytest.approx(sum(checks) / 2, rel=1e-15)


def test_qc_recoveries_are_averaged_per_nominal_level_and_the_is_response_per_run() -> None:
    result = analyse_run(open_run(DEMOS / "veltaprine_plasma_weighted.json").run)
    (values,) = tracked_values(result)
    a = result.analytes[0]
    by_level: dict[float, list[float]] = {}
    for s in a.samples:
        if s.kind is SampleKind.QC:
            by_level.setdefault(s.nominal, []).append(s.recovery_percent)
    assert [(r.kind, r.nominal, r.count) for r in values.recoveries] == [("qc", 3.0, 2), ("qc", 150.0, 2), ("qc", 750.0, 2)]
    for r in values.recoveries:
        assert r.recovery_percent == pytest.approx(float(np.mean(by_level[r.nominal])), rel=1e-15)
    is_values = [s.internal_standard_response.value for s in a.fitted_standards]
    assert values.is_response == pytest.approx(float(np.mean(is_values)), rel=1e-15)
    assert values.is_response_count == len(is_values) == 16
    assert values.value("qc_recovery@150") == values.recoveries[1].recovery_percent
    assert values.value("ccv_recovery@150") is None


def test_r_takes_the_sign_of_the_slope() -> None:
    from tests.io.archive_runs import lead_run

    (values,) = tracked_values(analyse_run(lead_run(1, slope=-3.0, intercept=100.0)))
    assert values.slope < 0 and values.r < 0
    assert values.r == pytest.approx(-math.sqrt(analyse_run(lead_run(1, slope=-3.0, intercept=100.0))
                                                .analytes[0].calibration.r_squared), rel=1e-15)


def test_a_run_without_a_curve_is_tracked_with_its_reason_and_no_numbers() -> None:
    from dataclasses import replace

    from tests.io.archive_runs import lead_run

    run = lead_run(2)
    analyte = run.analytes[0]
    run = run.with_analyte(replace(analyte, standards=analyte.standards[:1]))
    (values,) = tracked_values(analyse_run(run))
    assert values.error and not values.accepted
    assert all(getattr(values, q) is None for q in CALIBRATION_QUANTITIES) and values.recoveries == ()


def test_quantity_keys_read_back_and_speak_with_their_units() -> None:
    assert recovery_key("qc", 150.0) == "qc_recovery@150" and parse_recovery_key("qc_recovery@150") == ("qc", 150.0)
    assert parse_recovery_key("ccv_recovery@0.5") == ("ccv", 0.5)
    assert parse_recovery_key("slope") is None and parse_recovery_key("blank_recovery@1") is None
    assert parse_recovery_key("qc_recovery@nan") is None
    assert quantity_words("slope", "mg/L", "AU") == "slope b1 (AU per mg/L)"
    assert quantity_words("qc_recovery@1.5", "mg/L") == "QC recovery at 1.5 mg/L (%)"
    assert quantity_words("check_standard_recovery@5", "mg/L") == "check standard recovery at 5 mg/L (%)"
    assert quantity_words("lloq") == "LLOQ"


def test_a_logistic_curve_tracks_no_slope_intercept_or_r_of_another_meaning() -> None:
    # The 4PL's b is a slope factor without units and its a is an asymptote: neither is the straight
    # line's slope or intercept that the history follows, nor is the curve through the origin.
    result = analyse_run(open_run(DEMOS / "cytokine_serum_4pl.json").run)
    (values,) = tracked_values(result)
    (a,) = result.analytes
    assert a.calibration.model.value == values.model == "4pl"
    assert not a.calibration.through_origin and not a.calibration.model.has_intercept
    assert (values.slope, values.intercept, values.curvature, values.r, values.rf_rsd_percent) == (None,) * 5
    assert values.residual_sd == a.calibration.residual_sd and values.lloq == 3.0


@pytest.mark.parametrize("model, through", [("linear", False), ("quadratic", False), ("proportional", True),
                                            ("average-rf", True), ("4pl", False), ("5pl", False), ("power", False)])
def test_through_origin_names_the_curves_forced_through_zero(model: str, through: bool) -> None:
    from curvewright.core.model_kinds import Model

    assert Model(model).through_origin is through
    assert Model(model).has_intercept is (model in ("linear", "quadratic"))
