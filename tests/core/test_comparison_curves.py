"""compare() considers the logistic curves on a ligand-binding profile or when asked, and the power
curve over wide spans, with its reasons in words."""

from __future__ import annotations

import numpy as np
import pytest

import curvewright as cw

LBA_LEVELS = np.array([1.0, 2.5, 6.0, 15.0, 40.0, 100.0, 250.0, 600.0])


def immunoassay(seed: int = 21, g: float = 1.0, b: float = 1.3, c: float = 60.0) -> tuple[np.ndarray, np.ndarray]:
    """Invented sandwich immunoassay, 8 levels in duplicate, 3 % CV."""
    rng = np.random.default_rng(seed)
    x = np.repeat(LBA_LEVELS, 2)
    y = 2.8 + (0.05 - 2.8) / (1.0 + (x / c) ** b) ** g
    return x, y * (1.0 + 0.03 * rng.standard_normal(x.size))


def light_scattering(levels: np.ndarray, seed: int = 5) -> tuple[np.ndarray, np.ndarray]:
    """Invented evaporative light-scattering detector: area ∝ x^1.6, 3 % CV, triplicates."""
    rng = np.random.default_rng(seed)
    x = np.repeat(levels, 3)
    return x, 120.0 * x**1.6 * (1.0 + 0.03 * rng.standard_normal(x.size))


def test_ligand_binding_profile_recommends_the_4pl_with_its_reasons() -> None:
    result = cw.compare(*immunoassay(), profile="ich-m10-ligand-binding")
    models = {c.model for c in result.candidates}
    assert {cw.Model.FOUR_PL, cw.Model.FIVE_PL} <= models
    assert result.recommended.model is cw.Model.FOUR_PL
    assert any("ligand-binding profile: a logistic curve is recommended" in r for r in result.reasons)
    assert any("no significant improvement" in r and "4PL" in r for r in result.reasons)
    # the comparison tries the logistic curves it brings in under the fixed weightings only
    assert not any(c.model is cw.Model.FOUR_PL and c.weighting.variance_function for c in result.candidates)


def test_ligand_binding_profile_weights_1_over_y2_when_the_scatter_grows() -> None:
    result = cw.compare(*immunoassay(seed=2), profile="ich-m10-ligand-binding")
    if result.variance.heteroscedastic:
        assert result.recommended.weighting is cw.Weighting.INVERSE_Y2
        assert any("1/y² weighting" in r for r in result.reasons)
    else:
        assert result.recommended.weighting is cw.Weighting.NONE


def test_a_strongly_asymmetric_curve_gets_the_5pl() -> None:
    # g = 0.3, both plateaus approached within the standards, 1 % CV: the 4PL cannot follow the asymmetry
    rng = np.random.default_rng(9)
    x = np.repeat(LBA_LEVELS, 2)
    y = (2.8 + (0.05 - 2.8) / (1.0 + (x / 30.0) ** 1.5) ** 0.3) * (1.0 + 0.01 * rng.standard_normal(x.size))
    result = cw.compare(x, y, profile="ich-m10-ligand-binding", weightings=("none", "1/y^2"))
    assert result.recommended.model is cw.Model.FIVE_PL
    assert any("5PL's asymmetry improves the fit significantly" in r for r in result.reasons)


def test_logistic_curves_asked_for_elsewhere_are_listed_but_a_fitting_line_is_kept() -> None:
    rng = np.random.default_rng(1)
    x = np.repeat([1.0, 2.0, 4.0, 8.0, 16.0, 32.0], 2)
    y = (0.2 + 0.5 * x) * (1 + 0.01 * rng.standard_normal(x.size))
    result = cw.compare(x, y, models=("linear", "quadratic", "4pl"), weightings=("none",))
    assert any(c.model is cw.Model.FOUR_PL for c in result.candidates) or any(
        s.model is cw.Model.FOUR_PL for s in result.skipped
    )
    assert result.recommended.model is cw.Model.LINEAR
    assert any("logistic curves are listed for comparison" in r for r in result.reasons)


def test_power_curve_is_recommended_over_three_decades() -> None:
    x, y = light_scattering(np.array([0.5, 1.5, 5.0, 15.0, 50.0, 150.0, 500.0]))
    result = cw.compare(x, y)
    assert result.recommended.model is cw.Model.POWER
    assert any("over 3 decades the power curve" in r for r in result.reasons)


def test_power_curve_is_not_recommended_below_two_decades_even_when_asked() -> None:
    x, y = light_scattering(np.array([10.0, 15.0, 25.0, 40.0, 60.0, 100.0, 150.0]))
    result = cw.compare(x, y, models=("linear", "quadratic", "power"))
    assert any(c.model is cw.Model.POWER for c in result.candidates)
    assert result.recommended.model is not cw.Model.POWER
    assert any("recommended only when the standards span at least 2 decades; these span 1.2 decades" in r
               for r in result.reasons)
    # without being asked, a span under two decades does not bring the power curve in
    plain = cw.compare(x, y)
    assert not any(c.model is cw.Model.POWER for c in plain.candidates)


def with_anchor_points(seed: int = 21) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The invented immunoassay above at 1 % CV, with an anchor point in duplicate at each end, beyond its levels."""
    rng = np.random.default_rng(seed)
    x = np.concatenate([[0.25, 0.25], np.repeat(LBA_LEVELS, 2), [3000.0, 3000.0]])
    y = (2.8 + (0.05 - 2.8) / (1.0 + (x / 60.0) ** 1.3)) * (1.0 + 0.01 * rng.standard_normal(x.size))
    anchors = (x < LBA_LEVELS[0]) | (x > LBA_LEVELS[-1])
    return x, y, anchors


def test_anchor_points_are_fitted_by_the_logistic_candidates_only_and_judged_by_none() -> None:
    x, y, anchors = with_anchor_points()
    # One anchor response pulled far off the curve: were it judged, it would fail every candidate.
    y[-1] *= 1.15
    result = cw.compare(x, y, profile="ich-m10-ligand-binding", weightings=("none", "1/y^2"), anchor_points=anchors)
    inner = ~anchors
    for c in result.candidates:
        cal = c.calibration
        if c.model in (cw.Model.FOUR_PL, cw.Model.FIVE_PL):
            # fitted to all 20 standards, as the run's own fit does with its anchor points
            same = cw.fit(x, y, c.model, c.weighting, anchor_points=anchors)
            np.testing.assert_allclose(cal.coefficients, same.coefficients, rtol=1e-10)
            np.testing.assert_array_equal(cal.anchors, anchors)
            assert cal.calibrated_range == (1.0, 600.0)
            assert c.notes == ("4 anchor point(s) fitted as anchor points (they fix the asymptotes) and not judged "
                               "for acceptance",)
            judged = np.abs(cal.relative_error[inner])
            assert c.sum_abs_relative_error == pytest.approx(float(np.sum(judged[np.isfinite(judged)])), rel=1e-12)
        else:
            # the other curves are fitted to the 16 calibration standards alone
            assert cal.n_standards == 16 and np.array_equal(cal.concentration, x[inner])
            same = cw.fit(x[inner], y[inner], c.model, c.weighting)
            np.testing.assert_allclose(cal.coefficients, same.coefficients, rtol=1e-10)
            assert len(c.notes) == 1 and c.notes[0].startswith("4 anchor point(s) left out of this fit: they lie beyond "
                                                              "the calibrated range, where ")
        # never judged: the failing count is over the 16 calibration standards at most
        assert not np.any(c.verdict.judged[anchors]) if c.verdict.judged.size == x.size else c.verdict.judged.size == 16
        assert c.standards_failing <= 16
    four = result.candidate("4pl", "1/y^2")
    assert four.standards_failing == 0  # the far-off anchor response is not counted
    assert any(r.startswith("4 anchor point(s) (concentration 0.25, 3000) fix the logistic curves' asymptotes")
               for r in result.reasons)
    # without the anchor marks the same standards would be judged, and the far-off one fails
    plain = cw.compare(x, y, profile="ich-m10-ligand-binding", weightings=("none", "1/y^2"))
    assert plain.candidate("4pl", "1/y^2").standards_failing >= 1
    assert not any("anchor point" in r for r in plain.reasons)


def test_anchor_points_are_checked_against_the_standards() -> None:
    x, y, anchors = with_anchor_points()
    with pytest.raises(cw.CalibrationInputError, match=r"anchor points: give one True/False per standard \(20 standards\)"):
        cw.compare(x, y, profile="ich-m10-ligand-binding", anchor_points=anchors[:-1])


def test_the_demo_immunoassay_s_evidence_leaves_its_anchor_points_unjudged() -> None:
    from curvewright.core.run_analysis import analyse_run
    from curvewright.io.run_document import open_run
    from tests.io.helpers import ROOT

    result = analyse_run(open_run(ROOT / "sample_runs" / "cytokine_serum_4pl.json").run)
    (a,) = result.analytes
    comparison = result.evidence["cytokine"]
    chosen = comparison.candidate(a.calibration.model, a.calibration.weighting)
    # the comparison's candidate for the run's own model is the run's own fit, anchor points and all
    np.testing.assert_allclose(chosen.calibration.coefficients, a.calibration.coefficients, rtol=1e-12)
    assert chosen.standards_failing == int(np.count_nonzero(a.verdict.judged & ~a.verdict.passing))
    line = comparison.candidate("linear", "none")
    assert line.calibration.n_standards == a.calibration.n_standards - 4
    assert 0.8 not in line.calibration.concentration and 6000.0 not in line.calibration.concentration


def test_anchor_points_on_a_general_profile_bring_the_logistic_curves_and_one_of_them_is_recommended() -> None:
    # Anchor points are taken by a logistic curve alone (a run holding them cannot be fitted by any other),
    # so the recommendation must be one the run can use, whatever the profile.
    x, y, anchors = with_anchor_points()
    result = cw.compare(x, y, profile="general", weightings=("none", "1/y^2"), anchor_points=anchors)
    assert {c.model.value for c in result.candidates} >= {"4pl", "5pl", "linear", "quadratic"}
    assert result.recommended.model.value in ("4pl", "5pl")
    assert any(r.startswith("anchor points are marked, and only a logistic curve takes them: a logistic curve is "
                            "recommended") for r in result.reasons)
    # the run can be fitted as recommended, anchor points and all
    cw.fit(x, y, result.recommended.model.value, result.recommended.weighting.value, anchor_points=anchors)
    # without anchor points the general profile keeps the logistic curves out unless asked
    plain = cw.compare(x[~anchors], y[~anchors], profile="general", weightings=("none", "1/y^2"))
    assert not any(c.model.value in ("4pl", "5pl") for c in plain.candidates)
