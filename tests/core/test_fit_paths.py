"""The shorter paths a single fit takes give the numbers of the general ones, to the bit.

A fit alone groups its standards without a tolerance, counts its distinct concentrations from those
levels, tests its regression without stacking it beside other fits and works out the LOD/LOQ of a
1/x-type weighting without the curve's response at the lowest standard. Each is held here to the
general path on many invented designs.
"""

from __future__ import annotations

import numpy as np
import pytest

import curvewright as cw
from curvewright.core import inverse
from curvewright.core.levels import _group_equal, _group_sorted, group_levels
from curvewright.core.regression_test import regression_tests


def _invented_concentrations(seed: int) -> np.ndarray:
    """Concentrations as analysts write them: replicated levels, zeros (blanks), negative values of
    a baseline-corrected scale, signed zeros, values a few units in the last place apart, and
    concentrations read from a balance."""
    rng = np.random.default_rng(seed)
    kind = seed % 5
    if kind == 0:
        values = np.repeat(rng.choice([0.0, 0.5, 1.0, 2.0, 5.0, 10.0, 25.0], rng.integers(2, 7), replace=False),
                           rng.integers(1, 4))
    elif kind == 1:
        values = rng.uniform(-5.0, 5.0, rng.integers(1, 40))
    elif kind == 2:
        base = rng.uniform(0.1, 100.0)
        values = base + np.array([0, 1, 1, 2, 3, 3, 3], dtype=float) * np.spacing(base)
    elif kind == 3:
        values = np.array([0.0, -0.0, 0.0, 1.0, 1.0, -1.0, 2.0])
    else:
        values = np.round(rng.uniform(0.0, 50.0, rng.integers(3, 30)), 1)
    return rng.permutation(values)


@pytest.mark.parametrize("seed", range(200))
def test_grouping_without_a_tolerance_is_the_general_grouping(seed: int) -> None:
    x = _invented_concentrations(seed)
    key, exact = _group_equal(x)
    general_key, general_exact = _group_sorted(x, 0.0)
    assert key.dtype == general_key.dtype
    assert np.array_equal(key, general_key)
    assert exact == general_exact
    levels = group_levels(x)
    # every distinct concentration is one level, so the fit counts them from the levels
    assert levels.n_levels == np.unique(x).size
    # the levels of labelled standards with every label empty take the general path
    labelled = group_levels(x, labels=[""] * x.size)
    assert np.array_equal(levels.index, labelled.index)
    assert np.array_equal(levels.concentration, labelled.concentration)
    assert np.array_equal(levels.count, labelled.count) and levels.exact == labelled.exact


def _invented_fit(seed: int, model: str, weighting: str) -> cw.Calibration:
    rng = np.random.default_rng(1000 + seed)
    x = np.repeat(np.geomspace(rng.uniform(0.05, 1.0), rng.uniform(50.0, 500.0), rng.integers(4, 9)),
                  rng.integers(1, 4))
    y = rng.uniform(0.0, 0.3) + rng.uniform(0.5, 3.0) * x * (1.0 - rng.uniform(0.0, 1e-3) * x)
    y = y * (1.0 + 0.04 * rng.standard_normal(x.size))
    return cw.fit(x, y, model, weighting)


@pytest.mark.parametrize("model", ["linear", "quadratic", "proportional"])
@pytest.mark.parametrize("seed", range(40))
def test_the_regression_test_of_a_fit_alone_is_the_stacks(seed: int, model: str) -> None:
    cal = _invented_fit(seed, model, ("none", "1/x", "1/x^2")[seed % 3])
    fit = (cal.z_coefficients, cal.z_covariance, cal.fitted, False)
    alone = regression_tests([fit], cal.basis.powers, cal.response, cal.df_residual)[0]
    stacked = regression_tests([fit, fit], cal.basis.powers, cal.response, cal.df_residual)
    for other in stacked:
        assert alone.f_statistic == other.f_statistic
        assert alone.p_value == other.p_value
        assert alone.df == other.df
    assert cal.regression.f_statistic == alone.f_statistic and cal.regression.p_value == alone.p_value


@pytest.mark.parametrize("weighting", ["1/x", "1/x^2", "1/y", "1/y^2"])
@pytest.mark.parametrize("seed", range(20))
def test_weighted_limits_use_the_weight_at_the_lowest_standard(seed: int, weighting: str) -> None:
    # ICH Q2 (R1), 6.3 and 7.3 (the 3.3·σ/S and 10·σ/S rules), with σ the residual SD of a new
    # response at the lowest standard: s/√w(x_low, ŷ(x_low)); 1/x-type weights do not depend on ŷ.
    cal = _invented_fit(seed, ("linear", "quadratic")[seed % 2], weighting)
    x_low = float(cal.concentration.min())
    weight = float(cal.weight_model.weight_at(np.array(x_low), np.array(float(cal.predict(x_low)))))
    sigma = cal.residual_sd / np.sqrt(weight)
    limits = cal.limits()
    assert limits.sigma == float(sigma)
    assert limits.lod == float(3.3 * sigma / abs(float(cal.coefficients[1])))
    assert limits.loq == float(10.0 * sigma / abs(float(cal.coefficients[1])))


@pytest.mark.parametrize("model", ["linear", "quadratic"])
@pytest.mark.parametrize("weighting", ["none", "1/x", "1/x^2", "1/y^2"])
@pytest.mark.parametrize("seed", range(15))
def test_the_band_polynomial_kept_pieces_are_those_worked_out_afresh(seed: int, model: str, weighting: str) -> None:
    from numpy.polynomial.polynomial import polymul

    from curvewright.core.band_polynomial import band_polynomial
    from curvewright.core.inverse import SEARCH_HALF_RANGES, _full_reach

    cal = _invented_fit(seed, model, weighting)
    # f̂ and φᵀCφ in z, summed term by term as the covariance's entries fall on each power
    fitted, variance = np.zeros(3), np.zeros(5)
    for i, p in enumerate(cal.basis.powers):
        fitted[p] = cal.z_coefficients[i]
        for j, q in enumerate(cal.basis.powers):
            variance[p + q] += cal.z_covariance[i, j]
    band = band_polynomial(cal, 2.1)
    assert np.array_equal(band.fitted, fitted) and np.array_equal(band.curve_variance, variance)
    assert not cal.z_polynomials[0].flags.writeable and not cal.z_polynomials[1].flags.writeable
    wm = cal.weight_model
    if weighting in ("1/x", "1/x^2"):
        # σ²/(k·(x/r)^q) with x/r = centre/r + (scale/r)·z, its square by numpy's polynomial product
        ratio = np.array([cal.basis.centre / wm.reference, cal.basis.scale / wm.reference])
        shape = ratio if wm.power == 1 else polymul(ratio, ratio)
        expected = np.zeros(3)
        expected[: shape.size] = cal.residual_sd**2 / wm.normaliser * shape
        assert np.array_equal(band.new_variance, expected)
        # the weight of new responses, one per unknown, as numpy broadcasts it
        x = np.linspace(0.0, 2.0 * cal.concentration.max(), 7)
        y = np.linspace(0.1, 1.0, 7)
        assert np.array_equal(wm.weight_at(x, y), np.broadcast_to(
            wm.normaliser * (wm.reference / np.maximum(x, wm.lowest_concentration)) ** wm.power, x.shape))
    # how far the ends are searched: the spread of every standard's z
    spread = float(np.ptp(cal.basis.z(cal.concentration)))
    assert _full_reach(cal) == SEARCH_HALF_RANGES * max(1.0, spread)


@pytest.mark.parametrize("model", ["linear", "quadratic", "proportional"])
@pytest.mark.parametrize("seed", range(10))
def test_a_fit_is_assembled_as_the_constructor_makes_it(seed: int, model: str) -> None:
    import dataclasses
    import pickle

    cal = _invented_fit(seed, model, ("none", "1/x^2")[seed % 2])
    fields = {f.name: getattr(cal, f.name) for f in dataclasses.fields(cal)}
    made = type(cal)(**fields)
    assert list(vars(made)) == list(vars(cal))  # the same keys in the same order
    assert all(vars(made)[key] is value for key, value in vars(cal).items())
    assert pickle.dumps(made) == pickle.dumps(cal)
    with pytest.raises(dataclasses.FrozenInstanceError):
        cal.residual_sd = 0.0  # type: ignore[misc]


@pytest.mark.parametrize("powers", [(0, 1), (0, 1, 2), (1,)])
def test_the_design_matrix_is_the_stack_of_powers(powers: tuple[int, ...]) -> None:
    from curvewright.core.models import Basis

    basis = Basis(centre=1.5, scale=2.5, powers=powers)
    x = np.array([0.0, -0.0, 1.5, 1e-300, -3.5, 1e154, 7.25, 4.0])
    for values in (x, x.reshape(2, 4), np.array(2.0)):
        z = basis.z(values)
        expected = np.stack([z**p for p in powers], axis=-1)
        made = basis.design(values)
        assert made.shape == expected.shape and made.tobytes() == expected.tobytes()


@pytest.mark.parametrize("interval", ["band", "symmetric"])
@pytest.mark.parametrize("model, weighting", [("linear", "none"), ("linear", "1/x^2"), ("quadratic", "1/x^2"),
                                              ("proportional", "1/y")])
def test_one_block_of_unknowns_gives_arrays_of_its_own(model: str, weighting: str, interval: str) -> None:
    cal = _invented_fit(3, model, weighting)
    y0 = np.linspace(float(cal.response.min()), float(cal.response.max()), 40)
    given = y0.copy()
    q = cal.quantify(y0, replicates=2, interval=interval)
    arrays = [q.estimate, q.standard_error, q.lower, q.upper, q.flag_bits]
    assert all(not a.flags.writeable for a in arrays)
    assert not any(np.shares_memory(a, b) for i, a in enumerate(arrays) for b in arrays[i + 1:])
    assert not any(np.shares_memory(a, y0) for a in arrays)
    assert np.array_equal(y0, given)
    # a whole count given as a Python int, a numpy int or a float: the same counts
    for replicates in (np.int64(2), 2.0, [2] * y0.size):
        other = cal.quantify(y0, replicates=replicates, interval=interval)
        for name in ("estimate", "standard_error", "lower", "upper", "flag_bits", "replicates"):
            assert np.array_equal(getattr(other, name), getattr(q, name), equal_nan=True)


def test_the_halley_convergence_test_in_place_is_the_written_out_test() -> None:
    from curvewright.core.band_polynomial import _CONVERGED, _step_converged

    rng = np.random.default_rng(11)
    step = rng.standard_normal(4000) * 10.0 ** rng.uniform(-14, 2, 4000)
    h = rng.standard_normal(4000) * 10.0 ** rng.uniform(-6, 3, 4000)
    step[:6] = [np.nan, np.inf, -np.inf, 0.0, -0.0, 1e-300]
    h[6:9] = [np.nan, np.inf, 0.0]
    tolerance = _CONVERGED * np.abs(rng.uniform(-3, 3, 4000))
    expected = np.abs(step) <= tolerance + _CONVERGED * np.abs(h)
    assert np.array_equal(_step_converged(step.copy(), tolerance, h), expected)


@pytest.mark.parametrize("seed", range(30))
def test_the_convexity_bound_in_place_is_the_written_out_bound(seed: int) -> None:
    from curvewright.core.band_polynomial import _convex, _exactly_convex, _Start

    rng = np.random.default_rng(seed)
    k = 500
    first = _Start.__new__(_Start)
    c4 = float(rng.uniform(-2.0, 2.0))
    first.c = [rng.uniform(-2, -0.1, k), rng.standard_normal(k), rng.uniform(0.0, 3.0, k), rng.standard_normal(k), c4]
    first.twice_c2 = 2.0 * first.c[2]
    first.six_c3 = 6.0 * first.c[3]
    first.convex_margin = first.twice_c2 * (1.0 - 1e-6)
    first.abs_six_c3 = np.abs(first.six_c3)
    h = rng.standard_normal(k) * 10.0 ** rng.uniform(-3, 1, k)
    a = np.abs(h)
    bound = a * first.abs_six_c3
    if c4 < 0:
        bound += (-12.0 * c4) * a * a
    expected = bound <= first.convex_margin
    unsure = np.flatnonzero(~expected)
    expected[unsure] = _exactly_convex([ci[unsure] if np.ndim(ci) else ci for ci in first.c], h[unsure])
    assert np.array_equal(_convex(first, h), expected)


def test_models_and_weightings_read_by_name_as_before() -> None:
    from curvewright.core.model_kinds import Model
    from curvewright.core.weighting_kinds import Weighting

    # the number of parameters and the powers of z of each calibration function (see their docstrings)
    assert {m.value: (m.n_parameters, m.powers) for m in Model} == {
        "linear": (2, (0, 1)), "quadratic": (3, (0, 1, 2)), "proportional": (1, (1,)), "average-rf": (1, (1,)),
        "4pl": (4, ()), "5pl": (5, ()), "power": (2, ()),
    }
    for w in Weighting:
        assert Weighting.parse(w.value) is w and Weighting.parse(w) is w
        # the spellings an analyst types are read as before: the name is left as it is by them
        assert w.value.strip().replace("²", "^2").replace(" ", "").lower() == w.value
    assert Weighting.parse(" 1/X² ") is Weighting.INVERSE_X2 and Weighting.parse("1/s2") is Weighting.INVERSE_S2
    assert Weighting.parse("") is Weighting.NONE and Weighting.parse("Two component") is Weighting.TWO_COMPONENT


def _general_block(cal: cw.Calibration, y0: np.ndarray, replicates: object, level: float = 0.95) -> tuple:
    """The general block of a quantitation, as every unknown went before the straight line's own path."""
    checked, m, level = inverse.checked_request(cal, y0, replicates, level, "band")
    probability = 0.5 + level / 2.0
    t = inverse.t_quantile(probability, cal.df_residual)
    limits, _ = cal.flag_limits
    return inverse._quantify_block(cal, checked, m, probability, t, "band", limits, None)


@pytest.mark.parametrize("weighting", ["none", "1/y", "1/y^2"])
@pytest.mark.parametrize("seed", range(30))
def test_the_straight_lines_own_block_is_the_general_block(seed: int, weighting: str) -> None:
    cal = _invented_fit(seed, "linear", weighting)
    rng = np.random.default_rng(seed)
    low, high = float(cal.response.min()), float(cal.response.max())
    # responses below, inside and above the standards', the end standards' own and the intercept
    y0 = np.concatenate([rng.uniform(low - (high - low), high + (high - low), 500),
                         [low, high, float(cal.z_coefficients[0])]])
    for replicates in (1, 3, np.int64(2), rng.integers(1, 6, y0.size)):
        q = cal.quantify(y0, replicates=replicates)
        estimate, se, lower, upper, bits, bad, left = _general_block(cal, y0, replicates)
        assert left is None and not bad.any()
        for ours, general in ((q.estimate, estimate), (q.standard_error, se), (q.lower, lower), (q.upper, upper),
                              (q.flag_bits, bits)):
            assert ours.dtype == general.dtype and ours.tobytes() == general.tobytes()


def test_a_line_whose_band_never_closes_takes_the_general_block() -> None:
    # an invented line with a slope hardly above its noise: significant at the F-test, but the
    # band at a higher level never closes, so the ends are infinite and flagged
    x = np.repeat([1.0, 2.0, 3.0, 4.0], 2)
    y = np.array([0.10, 0.25, 0.30, 0.22, 0.52, 0.32, 0.59, 0.41])  # slope's t about 3.8
    cal = cw.fit(x, y, "linear", "none")
    q = cal.quantify([0.3, 0.4], level=0.999)
    estimate, se, lower, upper, bits, bad, left = _general_block(cal, np.array([0.3, 0.4]), 1, 0.999)
    assert np.array_equal(q.lower, lower) and np.array_equal(q.upper, upper) and np.array_equal(q.flag_bits, bits)
    assert np.isinf(q.lower).all() and all(inverse.QuantFlag.UNBOUNDED_INTERVAL in f for f in q.flags)


@pytest.mark.parametrize("model", ["linear", "proportional"])
@pytest.mark.parametrize("seed", range(40))
def test_one_slope_terms_regression_test_is_lapacks_solve(seed: int, model: str) -> None:
    cal = _invented_fit(seed, model, ("none", "1/x", "1/x^2", "1/y")[seed % 4])
    first = 1 if model == "linear" else 0
    a, c = cal.z_coefficients[first:], cal.z_covariance[first:, first:]
    assert cal.regression.f_statistic == float(a @ np.linalg.solve(c, a))


@pytest.mark.parametrize("model", ["linear", "quadratic", "proportional"])
@pytest.mark.parametrize("seed", range(20))
def test_unit_weights_give_the_weighted_formulas_numbers(seed: int, model: str) -> None:
    cal = _invented_fit(seed, model, "none")
    x, y, n = cal.concentration, cal.response, cal.concentration.size
    raw = np.ones(n)
    normaliser = n / float(np.add.reduce(raw))
    weights = cal.weight_model
    assert weights.weights.tobytes() == (raw * normaliser).tobytes() and weights.normaliser == normaliser
    assert weights.reference == float(np.minimum.reduce(raw)) and weights.power == 0
    assert weights.lowest_concentration == float(x.min()) and weights.lowest_response == float(y.min())
    assert np.isnan(weights.level_sd).all() and weights.level_sd.size == cal.levels.n_levels
    # R² from the weighted sums with w = 1, as the stacked fits of a model screen work it out
    together = cw.core.calibration.fit_weightings(x, y, model, ["none", "1/x"])[0]
    assert together.r_squared == cal.r_squared and together.adjusted_r_squared == cal.adjusted_r_squared
