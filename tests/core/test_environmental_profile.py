"""The environmental profile: response-factor %RSD, else r or r² of a fitted curve, and the check windows."""

from __future__ import annotations

import numpy as np
import pytest

import curvewright as cw
from curvewright.core.acceptance import AcceptanceProfile
from curvewright.core.run import Analyte, Measurement, Reading, Run, RunSettings, Sample, SampleKind, Standard
from curvewright.core.run_analysis import analyse_run

X = np.array([1.0, 2.0, 5.0, 10.0, 20.0, 50.0])


def profile() -> AcceptanceProfile:
    return cw.load_profile("environmental")


def test_the_profile_is_shipped_and_says_its_limits_are_from_memory() -> None:
    assert "environmental" in cw.available_profiles()
    p = profile()
    assert p.curve is not None
    # Limits recalled from US EPA SW-846 Method 8000 practice (from memory, not re-read).
    assert (p.curve.max_rf_rsd_percent, p.curve.min_r, p.curve.min_r_squared) == (20.0, 0.995, 0.99)
    assert (p.checks.icv_tolerance_percent, p.checks.ccv_tolerance_percent) == (20.0, 20.0)
    for text in (p.source, p.curve.source, p.checks.source, p.caveat):
        assert "from memory" in text.lower()


def test_profiles_without_curve_rules_keep_their_content_hash() -> None:
    # The hash judges which rules a run used; a profile without curve rules must map as before.
    general = cw.load_profile("general")
    assert "curve" not in general.to_mapping()
    again = AcceptanceProfile.from_mapping(profile().to_mapping())
    assert again == profile() and again.sha256 == profile().sha256


def test_average_rf_passes_with_a_small_rsd_and_fails_above_twenty_percent() -> None:
    # RFs 3.0, 3.1, 2.9, 3.05, 2.95, 3.0: %RSD ≈ 2.3 %
    good = cw.fit(X, X * np.array([3.0, 3.1, 2.9, 3.05, 2.95, 3.0]), "average-rf")
    verdict = good.evaluate(profile())
    assert verdict.passed
    assert any(r.startswith("pass: response factor %RSD = 2.3") for r in verdict.reasons)
    # RFs 4.2, 3.6, 3.0, 2.6, 2.3, 2.1: mean 2.967, SD 0.80, %RSD ≈ 27 %
    spread = cw.fit(X, X * np.array([4.2, 3.6, 3.0, 2.6, 2.3, 2.1]), "average-rf")
    assert spread.rf_rsd_percent > 20
    verdict = spread.evaluate(profile())
    assert not verdict.passed
    assert any(r.startswith("FAIL: response factor %RSD = 27") and "use a fitted curve" in r for r in verdict.reasons)


def test_a_straight_line_is_judged_by_r_and_a_quadratic_by_r_squared() -> None:
    y = 1.0 + 3.0 * X + np.array([0.2, -0.3, 0.1, 0.4, -0.5, 0.3])
    line = cw.fit(X, y)
    verdict = line.evaluate(profile())
    r = np.corrcoef(X, y)[0, 1]  # Pearson's r (numpy) equals √R² of the unweighted line
    assert any(r_text.startswith(f"pass: r = {r:.5f}; at least 0.995") for r_text in verdict.reasons)
    poor = cw.fit(X, 1.0 + 3.0 * X + np.array([2.0, -3.0, 4.0, -4.0, 6.0, -3.0]) * 2)
    r_poor = np.corrcoef(X, poor.response)[0, 1]
    assert r_poor < 0.995
    assert f"FAIL: r = {r_poor:.5f}; at least 0.995 for a straight line" in poor.evaluate(profile()).reasons
    quadratic = cw.fit(X, 1.0 + 3.0 * X - 0.01 * X**2, "quadratic")
    assert any(t.startswith("pass: r² = 1.00000; at least 0.99 for a quadratic curve") for t in quadratic.evaluate(profile()).reasons)


def test_malformed_curve_rules_are_named() -> None:
    data = profile().to_mapping()
    data["curve"]["min_r"] = 1.5
    with pytest.raises(cw.ProfileError, match="curve: 'min_r' must be a number above 0 and at most 1, found 1.5"):
        AcceptanceProfile.from_mapping(data, "lab.json")


def test_compare_recommends_the_average_rf_when_its_rsd_is_small() -> None:
    x = np.repeat(X, 2)
    y = 3.0 * x * (1 + 0.04 * np.sin(np.arange(x.size)))
    result = cw.compare(x, y, profile="environmental")
    assert result.recommended.model is cw.Model.AVERAGE_RF
    rsd = result.recommended.calibration.rf_rsd_percent
    assert result.reasons[0].startswith(f"the response factors' %RSD is {rsd:.3g} %, within the profile's 20 %")
    # the fitted curve it would otherwise be is named, and the general profile leaves the RF out
    assert result.reasons[1].startswith("had a fitted curve been needed it would have been the ")
    assert all(c.model is not cw.Model.AVERAGE_RF for c in cw.compare(x, y).candidates)


def test_compare_recommends_a_fitted_curve_when_the_rsd_is_too_large_and_says_why() -> None:
    x = np.repeat(X, 2)
    y = 6.0 + 3.0 * x * (1 + 0.01 * np.sin(np.arange(x.size)))  # an intercept: RF falls from 9 to 3.1
    result = cw.compare(x, y, profile="environmental")
    rf = result.candidate("average-rf", "1/x^2")
    assert rf.calibration.rf_rsd_percent > 20
    assert result.recommended.model is cw.Model.LINEAR
    assert "above the profile's 20 %, so the average response factor may not be used" in result.reasons[0]
    assert any(r.startswith("the recommended curve: pass: r = ") for r in result.reasons)


def test_average_rf_in_compare_when_asked_without_the_profile() -> None:
    result = cw.compare(X, 3.0 * X * np.array([1.0, 1.02, 0.98, 1.01, 0.99, 1.0]), models=("linear", "average-rf"))
    labels = [c.label for c in result.candidates]
    assert labels.count("average-rf, the mean of the standards' response factors") == 1
    assert not any(s.model is cw.Model.AVERAGE_RF for s in result.skipped)


def test_continuing_checks_are_judged_in_the_profile_windows() -> None:
    standards = tuple(Standard(f"S{i}", x, Reading.of(3.0 * x), 1) for i, x in enumerate(X))
    analyte = Analyte("benzene", "µg/L", "area", standards, model="average-rf")

    def check(sid: str, kind: SampleKind, order: int, found: float, nominal: float) -> Sample:
        return Sample(sid, kind, order, 1.0, (Measurement("benzene", 1, Reading.of(3.0 * found)),), (("benzene", nominal),))

    samples = (
        check("ICV", SampleKind.ICV, 1, 11.8, 10.0),      # 118 %: inside ±20 %
        Sample("U1", SampleKind.UNKNOWN, 2, 1.0, (Measurement("benzene", 1, Reading.of(30.0)),)),
        check("CCV-1", SampleKind.CCV, 3, 12.5, 10.0),    # 125 %: outside ±20 %
    )
    run = Run("invented", (analyte,), samples, RunSettings(acceptance_profile="environmental"))
    result = analyse_run(run).analytes[0]
    by_id = {s.sample_id: s for s in result.samples}
    assert by_id["ICV"].within_limits is True
    assert by_id["CCV-1"].within_limits is False
    # the unknown before the failed CCV is not bracketed by passing checks, so it is not reported
    assert by_id["U1"].reported_text == "not reportable"
    assert "the check after it, CCV-1 (run order 3), failed" in by_id["U1"].words
