"""compare() considers the logistic curves on a ligand-binding profile or when asked, and the power
curve over wide spans, with its reasons in words."""

from __future__ import annotations

import numpy as np

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
    # no variance function is estimated for the logistic curves: they are tried only under the weightings they accept
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
