"""Interval ends solved on the polynomial band agree with the numeric inversion of the band.

Wherever the prediction band is a polynomial (a quadratic under any weighting but 1/s² and the
estimated variance functions; a straight line under 1/x-type weights), the interval's ends are
solved on that polynomial (core/band_polynomial.py). The numeric inversion that bracketed and
refined each end (core/inverse.py, still used where no polynomial exists) is the reference: the
same definition (the connected set of concentrations around x̂ whose band holds ȳ₀), solved
another way. The prediction band itself is checked against statsmodels in test_against_statsmodels.py.
"""

from __future__ import annotations

import numpy as np
import pytest

import curvewright as cw
from curvewright.core import inverse
from curvewright.core import band_polynomial as bp
from curvewright.core.band_polynomial import band_polynomial
from curvewright.core.distributions import t_quantile

RTOL = 1e-10


def numeric(cal, y0, m, monkeypatch, interval="band"):  # type: ignore[no-untyped-def]
    """The same quantitation with the band inverted numerically."""
    with monkeypatch.context() as patch:
        patch.setattr(inverse, "band_polynomial", lambda cal, t: None)
        return cal.quantify(y0, m, interval=interval)


def invented_design(seed: int) -> tuple[cw.Calibration, np.ndarray, np.ndarray]:
    """A random calibration (model, weighting, levels, replicates, scatter, curvature) and unknowns
    spread from well below the lowest to well above the highest response."""
    rng = np.random.default_rng(seed)
    model = ["quadratic", "linear", "proportional"][seed % 3]
    weightings = ["none", "1/x", "1/x^2", "1/y", "1/y^2"] if model == "quadratic" else ["1/x", "1/x^2"]
    weighting = weightings[(seed // 3) % len(weightings)]
    levels = np.sort(rng.uniform(0.5, 100.0, rng.integers(4, 8)))
    x = np.repeat(levels, rng.integers(1, 4))
    slope = rng.uniform(0.1, 3.0)
    curvature = rng.uniform(-0.01, 0.01) * slope if model == "quadratic" else 0.0
    y = 0.2 + slope * x + curvature * x * x
    y = y * (1 + rng.uniform(0.002, 0.08) * rng.standard_normal(x.size))
    cal = cw.fit(x, y, model, weighting)
    spread = np.ptp(y)
    y0 = rng.uniform(y.min() - spread, y.max() + spread, 300)
    m = rng.integers(1, 5, y0.size)
    return cal, y0, m


def band_excess(cal, y0: float, m: int, x: np.ndarray) -> np.ndarray:  # type: ignore[no-untyped-def]
    """(ȳ₀ − f̂(x))² − t²·(σ²/(m·w(x)) + var f̂(x)) at concentrations x, straight from the curve."""
    t = t_quantile(0.975, cal.df_residual)
    new = cal.residual_sd**2 / (m * cal.weight_model.weight_at(x, np.full_like(x, y0)))
    return (y0 - cal.predict(x)) ** 2 - t * t * (new + cal.curve_sd(x) ** 2)


def assert_first_exit(cal, y0: float, m: int, estimate: float, end: float, numeric_end: float) -> None:  # type: ignore[no-untyped-def]
    """Where the two disagree, the numeric end is the one that is wrong: its doubling search stepped
    over a narrow stretch where the band lets go of ȳ₀ and takes it back. The polynomial end is
    where the band first lets go, and the band holds ȳ₀ at no point between the two."""
    between = np.linspace(end, numeric_end, 20001)[1:-1]
    assert np.any(band_excess(cal, y0, m, between) > 0)
    inside = np.linspace(estimate, end, 20001)[:-1]
    assert np.all(band_excess(cal, y0, m, inside) <= 1e-9 * np.max(np.abs(band_excess(cal, y0, m, inside))))
    step = 1e-7 * max(abs(end), np.ptp(cal.concentration))
    beyond = end + np.sign(end - estimate) * step
    assert band_excess(cal, y0, m, np.array([beyond]))[0] > 0


@pytest.mark.parametrize("seed", range(120))
def test_ends_agree_with_the_numeric_inversion(seed: int, monkeypatch) -> None:
    cal, y0, m = invented_design(seed)
    if not cal.regression.significant:
        pytest.skip("this invented calibration does not separate its levels")
    assert band_polynomial(cal, 2.0) is not None
    ours = cal.quantify(y0, m)
    theirs = numeric(cal, y0, m, monkeypatch)
    assert np.array_equal(ours.estimate, theirs.estimate, equal_nan=True)
    assert np.array_equal(ours.standard_error, theirs.standard_error, equal_nan=True)
    span = np.ptp(cal.concentration)
    disagreements = 0
    for name in ("lower", "upper"):
        a, b = getattr(ours, name), getattr(theirs, name)
        same = (a == b) | (np.isnan(a) & np.isnan(b))
        finite = np.isfinite(a) & np.isfinite(b)
        with np.errstate(invalid="ignore"):
            close = finite & (np.abs(a - b) <= RTOL * np.maximum(np.abs(b), 1e-3 * span))
        for i in np.flatnonzero(~(same | close)):
            disagreements += 1
            assert np.isfinite(a[i])
            target = b[i] if np.isfinite(b[i]) else a[i] + np.sign(a[i] - ours.estimate[i]) * 200 * span
            assert_first_exit(cal, y0[i], m[i], ours.estimate[i], a[i], target)
            # the flags follow the interval: only "unbounded" and "turning point" can differ
            changed = int(ours.flag_bits[i]) ^ int(theirs.flag_bits[i])
            assert changed & ~int(inverse.QuantFlag.UNBOUNDED_INTERVAL | inverse.QuantFlag.TURNING_POINT) == 0
    assert np.sum(ours.flag_bits != theirs.flag_bits) <= disagreements


def test_every_end_is_where_the_band_passes_through_the_response() -> None:
    """At each finite end the band's edge passes through ȳ₀, to round-off."""
    for seed in range(0, 60, 7):
        cal, y0, m = invented_design(seed)
        if not cal.regression.significant:
            continue
        q = cal.quantify(y0, m)
        for name in ("lower", "upper"):
            end = getattr(q, name)
            ok = np.isfinite(end)
            t = t_quantile(0.975, cal.df_residual)
            x = end[ok]
            new = cal.residual_sd**2 / (m[ok] * cal.weight_model.weight_at(x, y0[ok]))
            half = t * np.sqrt(new + cal.curve_sd(x) ** 2)
            distance = np.minimum(np.abs(cal.predict(x) + half - y0[ok]), np.abs(cal.predict(x) - half - y0[ok]))
            assert np.all(distance <= 1e-9 * np.maximum(np.abs(y0[ok]), half))


def test_results_do_not_depend_on_the_other_unknowns_or_the_blocks() -> None:
    """An unknown quantified alone, or in a large call that is worked in blocks, gives the same bits."""
    cal, y0, m = invented_design(0)
    rng = np.random.default_rng(5)
    many = rng.uniform(y0.min(), y0.max(), inverse.CHUNK * 2 + 17)
    many[: y0.size] = y0
    big = cal.quantify(many)
    alone = [cal.quantify(many[i : i + 1]) for i in (0, 5, inverse.CHUNK - 1, inverse.CHUNK, many.size - 1)]
    for q, i in zip(alone, (0, 5, inverse.CHUNK - 1, inverse.CHUNK, many.size - 1)):
        for name in ("estimate", "lower", "upper", "standard_error", "flag_bits"):
            assert np.array_equal(getattr(q, name), getattr(big, name)[i : i + 1], equal_nan=True), (name, i)


# Standards for the edge cases: a curve that bends over, duplicates at seven levels.
X = np.repeat([1.0, 2.0, 5.0, 10.0, 20.0, 35.0, 50.0], 2)
Y = 0.5 + 3.0 * X - 0.025 * X**2 + np.tile([0.15, -0.15], 7) * np.sqrt(X)


@pytest.mark.parametrize("weighting", ["none", "1/x", "1/x^2", "1/y^2"])
def test_edge_cases_agree_with_the_numeric_inversion(weighting: str, monkeypatch) -> None:
    cal = cw.fit(X, Y, "quadratic", weighting)
    top = float(cal.predict(cal.vertex))  # the curve's highest response
    y0 = np.array([
        float(cal.predict(1.0)), float(cal.predict(50.0)),  # the end standards
        float(cal.predict(0.05)), -2.0,  # below the lowest standard, below the blank
        float(cal.predict(60.0)),  # above the highest standard
        top, top - 1e-9,  # at the turning point, a hair below it
        top + 0.05,  # beyond the curve's top, inside the band at the vertex
        top + 50.0,  # far beyond: no solution
    ])
    ours = cal.quantify(y0, 2)
    theirs = numeric(cal, y0, 2, monkeypatch)
    for name in ("estimate", "lower", "upper"):
        np.testing.assert_allclose(getattr(ours, name), getattr(theirs, name), rtol=RTOL, atol=1e-12)
    assert np.array_equal(ours.flag_bits, theirs.flag_bits)
    assert inverse.QuantFlag.TURNING_POINT in ours.flags[7]
    assert inverse.QuantFlag.NO_SOLUTION in ours.flags[8] and np.isnan(ours.lower[8])


@pytest.mark.parametrize("curvature", [0.0, -0.0], ids=["plus-zero", "minus-zero"])
def test_a_quadratic_without_curvature_agrees_with_the_numeric_inversion(curvature, monkeypatch) -> None:
    """A fitted curvature of exactly ±0.0 (standards on an exact straight line)."""
    from curvewright.core import calibration

    x = np.array([1, 1, 2, 2, 4, 4, 8, 8, 16, 16, 32, 32], dtype=float)
    y = 2.0 + 3.0 * x + np.tile([0.01, -0.01], 6)
    solve = calibration.solve_weighted

    def flattened(*args, **kwargs):  # type: ignore[no-untyped-def]
        solution = solve(*args, **kwargs)
        coefficients = np.array(solution.coefficients, dtype=float)
        if coefficients.size == 3:
            coefficients[2] = curvature
        return type(solution)(**{**solution.__dict__, "coefficients": coefficients})

    monkeypatch.setattr(calibration, "solve_weighted", flattened)
    cal = cw.fit(x, y, "quadratic")
    monkeypatch.undo()
    assert cal.z_coefficients[2] == 0.0 and np.signbit(cal.z_coefficients[2]) == np.signbit(curvature)
    y0 = np.array([5.0, 20.0, 50.0, 95.0, 150.0])
    ours = cal.quantify(y0, 2)
    theirs = numeric(cal, y0, 2, monkeypatch)
    for name in ("estimate", "lower", "upper"):
        np.testing.assert_allclose(getattr(ours, name), getattr(theirs, name), rtol=RTOL)
    assert np.all(ours.lower < ours.estimate) and np.all(ours.estimate < ours.upper)


@pytest.mark.parametrize("model", ["linear", "quadratic"])
def test_standards_on_an_exact_line_give_a_tight_interval(model: str, monkeypatch) -> None:
    """Responses exactly on y = 1 + 2x, weighted 1/x: the band is round-off wide, and so is the interval."""
    x = np.repeat([1.0, 2.0, 4.0, 8.0, 16.0], 2)
    cal = cw.fit(x, 1.0 + 2.0 * x + np.tile([1e-9, -1e-9], 5), model, "1/x")
    y0 = np.array([4.0, 11.0, 30.0])
    ours = cal.quantify(y0)
    theirs = numeric(cal, y0, 1, monkeypatch)
    np.testing.assert_allclose(ours.estimate, [1.5, 5.0, 14.5], rtol=1e-9)
    for name in ("lower", "upper"):
        np.testing.assert_allclose(getattr(ours, name), getattr(theirs, name), rtol=RTOL)
    assert np.all(ours.lower < ours.estimate) and np.all(ours.estimate < ours.upper)
    assert np.all(ours.upper - ours.lower < 1e-6 * ours.estimate)


def test_a_band_that_never_closes_is_unbounded_on_both_paths(monkeypatch) -> None:
    """Three scattered levels under 1/x²: the slope is barely significant and a high unknown's band
    never closes above it."""
    x = np.repeat([1.0, 10.0, 100.0], 2)
    y = np.array([1.0, 1.9, 8.0, 15.0, 60.0, 140.0])
    cal = cw.fit(x, y, "linear", "1/x^2")
    y0 = np.array([5.0, 100.0, 400.0])
    ours = cal.quantify(y0)
    theirs = numeric(cal, y0, 1, monkeypatch)
    assert np.array_equal(np.isinf(ours.upper), np.isinf(theirs.upper))
    assert np.array_equal(ours.flag_bits, theirs.flag_bits)
    finite = np.isfinite(theirs.upper)
    np.testing.assert_allclose(ours.upper[finite], theirs.upper[finite], rtol=RTOL)
    np.testing.assert_allclose(ours.lower, theirs.lower, rtol=RTOL)


def random_pieces(seed: int, size: int = 4000) -> "bp._Start":
    """Band coefficients of every sign and over many scales, as the direct ends see them."""
    rng = np.random.default_rng(seed)
    scale = lambda: 10.0 ** rng.uniform(-6, 6, size)  # noqa: E731
    c = [-scale(), rng.standard_normal(size) * scale(), rng.uniform(-0.2, 1.0, size) * scale(),
         rng.standard_normal(size) * scale(), float(rng.standard_normal() * 10.0 ** rng.uniform(-6, 6))]
    shifted = bp.ShiftedBand(np.zeros(size), c, None, None)
    return bp._Start(shifted)


@pytest.mark.parametrize("seed", range(8))
def test_the_quick_convexity_bound_gives_the_exact_tests_answer(seed: int) -> None:
    """g is convex on [0, h] when g″ = 2c2 + 6c3·v + 12c4·v² stays ≥ 0 there; the bound that decides
    most unknowns at once must never call convex what the exact test does not (nor the reverse,
    since the exact test decides the rest)."""
    first = random_pieces(seed)
    rng = np.random.default_rng(100 + seed)
    for h in (rng.standard_normal(first.c[0].size) * 10.0 ** rng.uniform(-6, 3, first.c[0].size),
              first.r1, first.r2):
        exact = bp._exactly_convex(first.c, h)
        assert np.array_equal(bp._convex(first, h), exact)
        quick = np.abs(h) * first.abs_six_c3 + max(-12.0 * first.c[4], 0.0) * h * h <= first.convex_margin
        assert quick.any() and (~quick).any()  # both ways of deciding are taken


@pytest.mark.parametrize("seed", range(4))
def test_the_halley_step_is_the_textbook_formula_to_the_bit(seed: int) -> None:
    """h − 2·g·g′/(2·g′² − g·g″) (Halley's method, e.g. Press et al., Numerical Recipes, 3rd ed., §9.4;
    section from memory), written with the twos cancelled: scaling by two is exact in binary floating
    point, so the step is the same to the last bit."""
    first = random_pieces(seed)
    c = first.c
    h = np.random.default_rng(seed).standard_normal(c[0].size)
    value = (((c[4] * h + c[3]) * h + c[2]) * h + c[1]) * h + c[0]
    slope = ((4.0 * c[4] * h + 3.0 * c[3]) * h + 2.0 * c[2]) * h + c[1]
    bend = (12.0 * c[4] * h + 6.0 * c[3]) * h + 2.0 * c[2]
    with np.errstate(all="ignore"):
        textbook = 2.0 * value * slope / (2.0 * slope * slope - value * bend)
        ours = bp._halley_step(first, h)
    assert np.array_equal(ours, textbook, equal_nan=True)


@pytest.mark.parametrize(("model", "weighting"), [("linear", "1/x^2"), ("quadratic", "1/x^2"), ("quadratic", "1/x")])
def test_ends_across_the_lowest_standard_and_ends_searched_in_full(model: str, weighting: str, monkeypatch) -> None:
    """Intervals that cross the lowest standard (where the 1/x-type band changes piece) end on the
    other piece; ends the direct method cannot vouch for (near the top of a quadratic) are searched
    in full after all blocks, together. Each must be what it is when its unknown is quantified
    alone, and agree with the numeric inversion like every other end."""
    rng = np.random.default_rng(11)
    x = np.repeat([0.5, 1.0, 2.0, 5.0, 10.0, 20.0, 40.0], 2)
    y = (0.05 + 1.2 * x - (0.004 * x * x if model == "quadratic" else 0.0)) * (1 + 0.05 * rng.standard_normal(x.size))
    cal = cw.fit(x, y, model, weighting)
    top = float(cal.predict(cal.vertex)) + 1.0 if cal.vertex is not None else float(cal.predict(80.0))
    low_response = float(cal.predict(0.5))
    many = np.concatenate([rng.uniform(low_response - 0.5, float(cal.predict(3.0)), inverse.CHUNK + 50),
                           rng.uniform(low_response, top, inverse.CHUNK + 51)])
    m = rng.integers(1, 4, many.size)
    searched = []
    search = inverse.searched_end
    monkeypatch.setattr(inverse, "searched_end", lambda *args: (searched.append(args[1].size), search(*args))[1])
    big = cal.quantify(many, m)
    monkeypatch.undo()
    crossing = np.flatnonzero((big.lower < 0.5) & (big.estimate > 0.5))
    assert crossing.size > 100
    if model == "quadratic":
        assert sum(searched) > 1000  # the blocks' ends searched together, in full
    picks = np.concatenate([crossing[:3], crossing[-3:], crossing[crossing > inverse.CHUNK][:3],
                            np.arange(many.size - 5, many.size)])
    for i in picks:
        alone = cal.quantify(many[i : i + 1], m[i : i + 1])
        for name in ("estimate", "lower", "upper", "standard_error", "flag_bits"):
            assert np.array_equal(getattr(alone, name), getattr(big, name)[i : i + 1], equal_nan=True), (name, i)
    theirs = numeric(cal, many[crossing], m[crossing], monkeypatch)
    for name in ("lower", "upper"):
        np.testing.assert_allclose(getattr(big, name)[crossing], getattr(theirs, name), rtol=RTOL, atol=1e-12)
    assert np.array_equal(big.flag_bits[crossing], theirs.flag_bits)
    # near the top of a quadratic the numeric inversion's doubling search can step over a narrow
    # stretch where the band lets go: there the end found here is checked to be the first exit
    some = np.arange(inverse.CHUNK, many.size, 37)
    ours, theirs = cal.quantify(many[some], m[some]), numeric(cal, many[some], m[some], monkeypatch)
    span = np.ptp(cal.concentration)
    for name in ("lower", "upper"):
        a, b = getattr(ours, name), getattr(theirs, name)
        with np.errstate(invalid="ignore"):
            close = (a == b) | (np.isfinite(a) & np.isfinite(b) & (np.abs(a - b) <= RTOL * np.maximum(np.abs(b), 1e-3 * span)))
        for i in np.flatnonzero(~close):
            target = b[i] if np.isfinite(b[i]) else a[i] + np.sign(a[i] - ours.estimate[i]) * 200 * span
            assert_first_exit(cal, many[some][i], m[some][i], ours.estimate[i], a[i], target)


@pytest.mark.parametrize(("model", "weighting"), [("linear", "1/x"), ("linear", "1/x^2"), ("quadratic", "1/x^2"),
                                                  ("quadratic", "1/x")])
def test_ends_across_the_lowest_standard_solved_after_the_blocks_are_those_of_one_block(
        model: str, weighting: str, monkeypatch) -> None:
    """A call of several blocks leaves the direct ends that cross the lowest standard and solves them
    together after the blocks (``crossing_end``); one block solves them itself. Both must give the
    same bits: the whole call against its pieces quantified one block at a time, at one, three and
    mixed replicate counts."""
    rng = np.random.default_rng(23)
    x = np.repeat([0.5, 1.0, 2.0, 5.0, 10.0, 20.0, 40.0], 3)
    y = (0.05 + 1.2 * x - (0.004 * x * x if model == "quadratic" else 0.0)) * (1 + 0.04 * rng.standard_normal(x.size))
    cal = cw.fit(x, y, model, weighting)
    low = float(cal.predict(0.5))
    many = rng.uniform(low - 1.0, float(cal.predict(6.0)), 2 * inverse.CHUNK + 999)
    solved = []
    crossing = inverse.crossing_end
    monkeypatch.setattr(inverse, "crossing_end", lambda *args: (solved.append(args[1].size), crossing(*args))[1])
    for m in (1, 3, rng.integers(1, 5, many.size)):
        solved.clear()
        whole = cal.quantify(many, m)
        assert len(solved) == 2 and sum(solved) > 500  # each side's crossing ends in one call
        pieces = [cal.quantify(many[i : i + inverse.CHUNK], m if np.ndim(m) == 0 else m[i : i + inverse.CHUNK])
                  for i in range(0, many.size, inverse.CHUNK)]
        assert len(solved) == 2  # one block solves its own
        for name in ("estimate", "standard_error", "lower", "upper", "flag_bits"):
            joined = np.concatenate([getattr(q, name) for q in pieces])
            assert np.array_equal(getattr(whole, name), joined, equal_nan=True), name


@pytest.mark.parametrize("share", [0.0, 0.003, 0.05, 0.2, 0.9, 1.0])
def test_the_piece_at_each_start_is_chosen_whole_from_its_piece(share: float) -> None:
    """Where ẑ lies below the lowest standard the lower piece's coefficients are taken, elsewhere the
    upper's: the same bits as choosing at every position, however few or many lie below, for pieces
    of arrays, of numbers, and of arrays shared by both."""
    rng = np.random.default_rng(int(share * 1000))
    n = 5000
    h_break = np.where(rng.random(n) < share, 1.0, -1.0) * rng.uniform(0.1, 2.0, n)
    shared = rng.standard_normal(n)
    upper = [rng.standard_normal(n), rng.standard_normal(n), rng.standard_normal(n), shared, 0.25]
    lower = [rng.standard_normal(n), upper[1], -0.5, shared, 0.25]
    piece = bp.ShiftedBand(np.zeros(n), upper, lower, h_break)
    chosen = piece.at_zero()
    below = h_break > 0
    for c, lo, up in zip(chosen, lower, upper):
        expected = np.where(below, lo, up) if (np.ndim(lo) or np.ndim(up)) and lo is not up else up
        assert np.array_equal(c, expected) and np.shape(c) == np.shape(expected)
    assert chosen[3] is shared and chosen[1] is upper[1]  # what both pieces share is not copied


@pytest.mark.parametrize(("model", "weighting"), [("linear", "1/x"), ("linear", "1/x^2"), ("quadratic", "none"),
                                                  ("quadratic", "1/x^2"), ("quadratic", "1/y")])
def test_one_count_for_every_unknown_gives_the_bits_of_a_count_for_each(model: str, weighting: str) -> None:
    """Where every unknown of a call has the same replicate count, the variance of the new mean is
    scaled by one number instead of an array of equal numbers. An unknown's result depends on its own
    response and count alone, so the same unknowns quantified beside one unknown of another count
    (which makes the counts differ within the call) give the same bits, for the single count given
    as a number and as an array; ends across the lowest standard included."""
    rng = np.random.default_rng(41)
    x = np.repeat([0.5, 1.0, 2.0, 5.0, 10.0, 20.0, 40.0], 3)
    y = (0.05 + 1.2 * x - (0.004 * x * x if model == "quadratic" else 0.0)) * (1 + 0.04 * rng.standard_normal(x.size))
    cal = cw.fit(x, y, model, weighting)
    y0 = rng.uniform(float(cal.predict(0.3)) - 0.5, float(cal.predict(45.0)), 3000)
    for count in (1, 3):
        alone = [cal.quantify(y0, count), cal.quantify(y0, np.full(y0.size, count))]
        counts = np.append(np.full(y0.size, count), count + 1)
        beside = cal.quantify(np.append(y0, y0[0]), counts)
        for q in alone:
            for name in ("estimate", "standard_error", "lower", "upper", "flag_bits"):
                assert np.array_equal(getattr(q, name), getattr(beside, name)[:-1], equal_nan=True), (count, name)


def test_the_test_for_no_stop_after_one_step_never_misses_a_stop() -> None:
    """The block's extremes may tell that no unknown stops after Halley's first step; they must never
    say so where the test at each position (``_step_converged``) finds one that stops, including one
    whose step equals its tolerance exactly, and they leave steps of both signs and numbers that are
    not finite to that test."""
    rng = np.random.default_rng(8)
    for trial in range(400):
        n = int(rng.integers(1, 50))
        h = rng.uniform(0.5, 2.0, n) * 10.0 ** rng.uniform(-3, 3) * (1 if trial % 2 else -1)
        tolerance = bp._CONVERGED * np.abs(rng.uniform(-5, 5, n))
        step = rng.uniform(0.1, 10.0, n) * 10.0 ** rng.uniform(-9, -3) * (1 if trial % 3 else -1)
        if trial % 4 == 0:
            # one step exactly at its limit: it stops
            i = int(rng.integers(n))
            step[i] = np.copysign(np.abs(h[i]) * bp._CONVERGED + tolerance[i], step[i])
        if trial % 7 == 0:
            step[int(rng.integers(n))] = np.nan
        if trial % 11 == 0:
            h[int(rng.integers(n))] = np.inf
        stops = bp._step_converged(step.copy(), tolerance, h)
        none = bp._none_converged(step, float(np.max(tolerance)), h)
        if none:
            assert not stops.any(), trial
        if trial % 4 == 0 and np.isfinite(step).all() and np.isfinite(h).all():
            assert stops.any() and not none, trial
    mixed = np.array([1e-3, -1e-3])
    assert not bp._none_converged(mixed, 0.0, np.ones(2))
    assert bp._none_converged(np.array([1e-3, 2e-3]), 1e-9, np.ones(2))  # both decide: far above the limit


def test_the_half_widths_used_as_guesses() -> None:
    """The symmetric half-width guides the search where it is finite and positive; 1e-3 stands in for
    any other value (the array itself is used when every value is fine)."""
    fine = np.array([0.5, 2.0, 1e-300])
    assert inverse._usable_guess(fine) is fine
    odd = np.array([0.5, np.nan, np.inf, 0.0, -1.0, -np.inf, 3.0])
    assert np.array_equal(inverse._usable_guess(odd), [0.5, 1e-3, 1e-3, 1e-3, 1e-3, 1e-3, 3.0])
    assert inverse._usable_guess(np.zeros(0)).size == 0


def test_the_tests_for_every_stop_and_a_convex_band_never_overrule_the_test_at_each_position() -> None:
    """The block's extremes may tell that every unknown stops after Halley's second step, and that
    the quick convexity bound holds at every position; where they say so, the tests at each position
    (``_step_converged``, ``_convex``) must agree, including a step and a bound exactly at their
    limits, and numbers that are not finite are left to those tests."""
    rng = np.random.default_rng(9)
    decided = {"stops": 0, "convex": 0}
    for trial in range(300):
        # pieces as a block's direct ends see them: negative at ẑ, curving up, small h³ and h⁴ terms
        # (of either sign, some large enough for the quick bound to fail somewhere)
        n = int(rng.integers(1, 60))
        size = 10.0 ** rng.uniform(-3, 3)
        c = [-rng.uniform(0.1, 1.0, n) * size, rng.standard_normal(n) * size, rng.uniform(0.5, 2.0, n) * size,
             rng.standard_normal(n) * size * 10.0 ** rng.uniform(-3, 1), float(rng.standard_normal() * size)]
        first = bp._Start(bp.ShiftedBand(np.zeros(n), c, None, None))
        start = rng.uniform(-3, 3, n)
        h = rng.uniform(0.5, 2.0, n) * 10.0 ** rng.uniform(-4, 0) * (1 if trial % 2 else -1)
        if trial % 5 == 0:
            h[0] = -h[0]  # h of both signs
        tolerance = first.tolerance(start)
        step = rng.uniform(-1.0, 1.0, n) * 10.0 ** rng.uniform(-12, -6)
        if trial % 3 == 0:
            # the largest step exactly at the least limit
            i = int(np.argmin(np.abs(h)))
            least = np.abs(h[i]) * bp._CONVERGED + float(np.min(tolerance))
            step[i] = least
        if trial % 13 == 0:
            step[int(rng.integers(n))] = np.nan
        low, high = float(np.min(h)), float(np.max(h))
        if bp._all_converged(step, first, start, low, high):
            decided["stops"] += 1
            assert bp._step_converged(step.copy(), tolerance, h).all(), trial
        if bp._surely_convex(first, low, high):
            decided["convex"] += 1
            assert bp._convex(first, h).all(), trial
    assert decided["stops"] > 30 and decided["convex"] > 30, decided  # both are exercised
    first = random_pieces(0)
    with np.errstate(invalid="ignore"):
        assert not bp._surely_convex(first, float("nan"), 1.0)
        assert not bp._all_converged(np.array([np.inf]), first, np.ones(1), 1.0, 1.0)
    # a piece of no unknowns gives no ends (the extremes of nothing decide nothing)
    empty = np.zeros(0)
    none = bp.ShiftedBand(empty, [empty - 1.0, empty, empty + 1.0, empty, 0.5], None, None)
    h, certain, _ = bp._convex_end(none, bp._Start(none), 1.0, 10.0, np.zeros(0), np.zeros(0))
    assert h.size == 0 and certain.size == 0


def _same_bits(a, b) -> bool:  # type: ignore[no-untyped-def]
    return np.asarray(a).tobytes() == np.asarray(b).tobytes() and np.shape(a) == np.shape(b)


@pytest.mark.parametrize(("model", "weighting"), [("linear", "1/x"), ("linear", "1/x^2"), ("quadratic", "1/x"),
                                                  ("quadratic", "1/x^2")])
def test_a_few_ends_across_the_lowest_standard_are_solved_alone_to_the_bits_of_the_arrays(
        model: str, weighting: str, monkeypatch) -> None:
    """In a call of a few thousand unknowns only a handful of direct ends cross the lowest standard;
    up to ``_FEW_ENDS`` of them are solved one by one in Python floats (core/band_few_ends.py), the
    others as arrays. Quantified as an analyst does (invented calibrations, unknowns around the
    lowest standard, one, three and mixed replicate counts), every number is the same to the bit
    whichever way its ends were solved, and the few path is taken on both sides."""
    alone = []
    solve = bp.other_piece_end
    monkeypatch.setattr(bp, "other_piece_end", lambda *args: (alone.append(args[2]), solve(*args))[1])
    for seed in range(20):
        rng = np.random.default_rng(seed)
        levels = np.sort(rng.uniform(0.5, 100.0, rng.integers(4, 8)))
        x = np.repeat(levels, rng.integers(1, 4))
        slope = rng.uniform(0.1, 3.0)
        curvature = rng.uniform(-0.01, 0.01) * slope if model == "quadratic" else 0.0
        y = (0.2 + slope * x + curvature * x * x) * (1 + rng.uniform(0.002, 0.08) * rng.standard_normal(x.size))
        cal = cw.fit(x, y, model, weighting)
        low = float(cal.predict(levels[0]))
        spread = float(np.ptp(y))
        for size in (3, 40, 2000):
            y0 = rng.uniform(low - 0.2 * spread, low + 0.2 * spread, size)
            for m in (1, 3, rng.integers(1, 5, size)):
                few = cal.quantify(y0, m)
                with monkeypatch.context() as patch:
                    patch.setattr(bp, "_FEW_ENDS", -1)  # every end across the standard solved as arrays
                    arrays = cal.quantify(y0, m)
                for name in ("estimate", "standard_error", "lower", "upper", "flag_bits"):
                    assert _same_bits(getattr(few, name), getattr(arrays, name)), (seed, size, name)
    assert -1.0 in alone and 1.0 in alone  # the few path was taken, on both sides


def test_the_few_ends_path_and_the_arrays_agree_on_odd_coefficients(monkeypatch) -> None:
    """The other piece's end for one unknown at a time against the arrays' path, on invented
    coefficients that reach every branch: quadratic parts with no real root, a zero leading term,
    zero divisors, NaN and infinite values, bands that are not convex, steps that do not settle,
    reaches finite and infinite, as numbers and arrays, and the two sides of the break."""
    rng = np.random.default_rng(5)
    compared = 0
    for trial in range(600):
        n = int(rng.integers(1, bp._FEW_ENDS + 1))
        scale = 10.0 ** rng.uniform(-3, 3)
        def term(k: int):  # type: ignore[no-untyped-def]
            values = rng.standard_normal(n) * scale ** (k % 3)
            if trial % 9 == 0:
                values[rng.random(n) < 0.2] = 0.0
            if trial % 13 == 0:
                values[rng.random(n) < 0.2] = [np.nan, np.inf, -np.inf][trial % 3]
            return values
        upper = [term(0), term(1), np.abs(term(2)) if trial % 5 else term(2),
                 term(3) if trial % 4 else 0.0, float(rng.standard_normal() * 0.01) if trial % 4 else 0.0]
        lower = [term(0), upper[1] if trial % 2 else term(1),
                 float(rng.standard_normal()) if trial % 3 == 0 else term(2), upper[3], upper[4]]
        if trial % 6 == 0:
            upper[0] = -np.abs(upper[0])
            lower[0] = -np.abs(lower[0])
        h_break = rng.uniform(-2.0, 2.0, n) * scale
        start = rng.uniform(-3.0, 3.0, n) * [1.0, 0.0][trial % 11 == 0]
        guess = np.abs(rng.standard_normal(n)) + 1e-3
        reach = [np.inf, 5.0 * scale, rng.uniform(0.1, 5.0, n) * scale][trial % 3]
        shifted = bp.ShiftedBand(start, upper, lower, h_break)
        index = np.arange(n)
        for direction in (-1.0, 1.0):
            with np.errstate(all="ignore"):
                few = bp._end_in_the_other_piece(shifted, index, direction, reach, guess, start)
                with monkeypatch.context() as patch:
                    patch.setattr(bp, "_FEW_ENDS", -1)
                    arrays = bp._end_in_the_other_piece(shifted, index, direction, reach, guess, start)
            assert _same_bits(few[0], arrays[0]), (trial, direction)
            assert _same_bits(few[1], arrays[1]), (trial, direction)
            compared += n
    assert compared > 5000


def test_a_weighted_quadratics_convex_band_is_decided_from_the_blocks_extremes(monkeypatch) -> None:
    """Under 1/x² the tolerances of Halley's steps (1e-6·|ẑ|) span orders of magnitude, so whether
    every step stops is tested at each position; whether the band is convex is still decided from the
    block's extremes where they tell (the quick bound holds for the largest |h| and |6c3| against the
    least margin), not at each position. Every number the same to the bit as with every test made at
    each position."""
    rng = np.random.default_rng(21)
    levels = np.repeat([1.0, 2.0, 5.0, 10.0, 20.0, 50.0, 100.0, 200.0], 3)
    response = (0.05 + 1.3 * levels - 0.002 * levels**2) * (1 + 0.03 * rng.standard_normal(levels.size))
    cal = cw.fit(levels, response, "quadratic", "1/x^2")
    y0 = rng.uniform(response.min(), 120.0, bp._EXTREMES_FROM + 5000)  # one block, tested by its extremes
    decided = {"stops": [], "convex": []}
    all_converged, surely_convex = bp._all_converged, bp._surely_convex
    monkeypatch.setattr(bp, "_all_converged", lambda *a: (decided["stops"].append(all_converged(*a)),
                                                             decided["stops"][-1])[1])
    monkeypatch.setattr(bp, "_surely_convex", lambda *a: (decided["convex"].append(surely_convex(*a)),
                                                           decided["convex"][-1])[1])
    at_each_position = []
    convex = bp._convex
    monkeypatch.setattr(bp, "_convex", lambda first, h: (at_each_position.append(h.size), convex(first, h))[1])
    ours = cal.quantify(y0)
    assert decided["stops"] == [False, False]  # the steps' test is made at each position on both sides
    # (the few ends across the lowest standard are worked apart, at each position)
    assert decided["convex"] == [True, True] and y0.size not in at_each_position
    monkeypatch.setattr(bp, "_EXTREMES_FROM", 1 << 62)
    theirs = cal.quantify(y0)
    assert at_each_position.count(y0.size) == 2
    for name in ("estimate", "standard_error", "lower", "upper", "flag_bits"):
        assert _same_bits(getattr(ours, name), getattr(theirs, name)), name


def test_the_margins_and_the_sizes_of_6c3_at_each_position_are_made_only_where_tested(monkeypatch) -> None:
    """A block decided from its extremes never makes the convexity margins, 6c3 or |6c3| at each
    position (three whole-array passes a block): their least and largest come from the least 2c2 and
    the largest |c3|, and Halley's step takes g″/2 from 3c3. The ends are the same to the bit as
    with them made at each position."""
    rng = np.random.default_rng(22)
    levels = np.repeat([1.0, 2.0, 5.0, 10.0, 20.0, 50.0, 100.0, 200.0], 3)
    response = (0.05 + 1.3 * levels - 0.002 * levels**2) * (1 + 0.03 * rng.standard_normal(levels.size))
    cal = cw.fit(levels, response, "quadratic", "1/x^2")
    y0 = rng.uniform(response.min(), 120.0, bp._EXTREMES_FROM + 5000)  # one block, tested by its extremes
    starts = []
    start = bp._Start.__init__

    def kept(first, shifted):  # type: ignore[no-untyped-def]
        start(first, shifted)
        starts.append(first)

    monkeypatch.setattr(bp._Start, "__init__", kept)
    ours = cal.quantify(y0)
    whole = [first for first in starts if first.c[0].size == y0.size]
    assert len(whole) == 1
    assert not {"convex_margin", "abs_six_c3", "six_c3"} & set(vars(whole[0]))
    monkeypatch.setattr(bp, "_EXTREMES_FROM", 1 << 62)
    theirs = cal.quantify(y0)
    for name in ("estimate", "standard_error", "lower", "upper", "flag_bits"):
        assert _same_bits(getattr(ours, name), getattr(theirs, name)), name


@pytest.mark.parametrize("seed", range(6))
def test_the_extremes_of_the_margins_and_of_6c3_are_those_at_each_position(seed: int) -> None:
    """fl(6·max|c3|) is the largest fl(|6c3|), and fl(min(2c2)·(1 − 1e-6)) the least margin, to the
    bit: rounding is monotone and symmetric about zero (IEEE 754 round to nearest). Checked over
    many scales, with zeros of both signs, subnormal numbers, infinities and NaN."""
    first = random_pieces(seed)
    rng = np.random.default_rng(200 + seed)
    c3 = first.c[3]
    c3[:6] = [0.0, -0.0, 5e-324, -3e-310, 1e300, -1e300]
    first.six_c3 = 6.0 * c3
    first.twice_c2 = 2.0 * first.c[2]
    assert first.largest_abs_six_c3() == float(np.max(np.abs(6.0 * c3)))
    assert first.least_convex_margin() == float(np.min(2.0 * first.c[2] * (1.0 - 1e-6)))
    for bad in (np.nan, np.inf, -np.inf):
        other = random_pieces(seed)
        other.c[3][rng.integers(0, other.c[3].size)] = bad
        other.c[2][rng.integers(0, other.c[2].size)] = bad
        other.twice_c2 = 2.0 * other.c[2]
        expected_c3 = float(np.max(np.abs(6.0 * other.c[3])))
        expected_margin = float(np.min(2.0 * other.c[2] * (1.0 - 1e-6)))
        assert _same_bits(np.float64(other.largest_abs_six_c3()), np.float64(expected_c3))
        assert _same_bits(np.float64(other.least_convex_margin()), np.float64(expected_margin))
    empty = bp._Start.__new__(bp._Start)
    empty.c = [np.zeros(0)] * 4 + [1.0]
    empty.twice_c2 = np.zeros(0)
    empty._largest_abs_six_c3 = empty._least_convex_margin = None
    assert np.isnan(empty.largest_abs_six_c3()) and np.isnan(empty.least_convex_margin())


@pytest.mark.parametrize("direction", [-1.0, 1.0])
def test_the_tests_of_a_whole_side_decided_from_the_extremes_are_those_at_each_position(direction: float) -> None:
    """Whether every start lies finite on its side, and whether every reach is finite, decided from
    the least and largest: the same answer as the test at each position, NaN and infinities included."""
    rng = np.random.default_rng(23)
    for _ in range(300):
        h = direction * rng.uniform(1e-9, 1e3, rng.integers(0, 6))
        if h.size and rng.random() < 0.6:
            h[rng.integers(0, h.size)] = rng.choice([np.nan, np.inf, -np.inf, 0.0, -0.0, -h[0]])
        expected = bool((np.isfinite(h) & (h > 0 if direction > 0 else h < 0)).all())
        assert bp._all_on_the_side(h, direction) == expected
        reach = rng.uniform(0.0, 1e3, h.size)
        if reach.size and rng.random() < 0.5:
            reach[rng.integers(0, reach.size)] = rng.choice([np.nan, np.inf, -np.inf])
        bounded = bp._reach_bounded(reach)
        assert bounded == bool((reach < np.inf).all())
        if bounded:
            # within a bounded reach the test of h for finiteness changes nothing
            within = (h > 0) & (h <= reach) if direction > 0 else (h < 0) & (h >= -reach)
            assert np.array_equal(within, within & np.isfinite(h))
    for number in (2.0, -np.inf, np.inf, np.nan):
        assert bp._reach_bounded(number) == bool(number < np.inf)


@pytest.mark.parametrize("seed", range(40))
def test_the_expansion_about_each_start_is_the_written_out_expansion_to_the_bit(seed: int) -> None:
    """g about each unknown's ẑ, worked in place, holds the bits of the expansion written out term by
    term (the class's formulas: r = ȳ₀ − f̂(z0), s1 = f̂′(z0), the curve variance's Taylor terms), and
    leaves the caller's arrays as they were."""
    cal, y0, m = invented_design(seed)
    band = band_polynomial(cal, t_quantile(0.975, cal.df_residual))
    if band is None:
        pytest.skip("no polynomial band for this weighting")
    z0 = np.random.default_rng(seed).uniform(-3.0, 3.0, y0.size)
    f, c, w = band.fitted, band.curve_variance, band.new_variance
    each_count = band.multiplier(y0, m)
    for v, given in ((each_count, None), (0.5, bp.horner(z0, c)), (each_count, bp.horner(z0, c))):
        inputs = [y0.copy(), z0.copy(), None if given is None else given.copy()]
        shifted = band.about(y0, v, z0, given)
        assert _same_bits(y0, inputs[0]) and _same_bits(z0, inputs[1])
        assert given is None or _same_bits(given, inputs[2])
        r = y0 - bp.horner(z0, f)
        s1 = f[1] + 2.0 * f[2] * z0
        c0 = bp.horner(z0, c)
        c1 = bp.horner(z0, np.array([c[1], 2.0 * c[2], 3.0 * c[3], 4.0 * c[4]]))
        c2 = bp.horner(z0, np.array([c[2], 3.0 * c[3], 6.0 * c[4]]))
        t2 = band.t2
        curved = f[2] != 0.0
        base = [r * r - t2 * c0, -2.0 * r * s1 - t2 * c1,
                s1 * s1 + (-2.0 * r) * f[2] - t2 * c2 if curved else s1 * s1 - t2 * c2,
                2.0 * s1 * f[2] - t2 * (c[3] + 4.0 * c[4] * z0), f[2] * f[2] - t2 * c[4]]
        tv = t2 * v
        upper = list(base)
        upper[0] = base[0] - tv * bp.horner(z0, w)
        if w[1] != 0.0 or w[2] != 0.0:
            upper[1] = base[1] - tv * (w[1] + 2.0 * w[2] * z0)
            upper[2] = base[2] - tv * w[2]
        for ours, written in zip(shifted.upper, upper):
            if np.ndim(ours) or np.ndim(written):
                assert _same_bits(np.broadcast_to(ours, z0.shape), np.broadcast_to(written, z0.shape))
            else:
                assert ours == written
        if shifted.lower is not None:
            assert _same_bits(shifted.lower[0], base[0] - tv * band.new_variance_below)
            for ours, written in zip(shifted.lower[1:3], base[1:3]):
                assert _same_bits(np.broadcast_to(ours, z0.shape), np.broadcast_to(written, z0.shape))
