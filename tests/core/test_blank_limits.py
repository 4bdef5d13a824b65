"""LOD and LOQ from the run's blanks, checked against an independent computation.

ICH Q2(R1) §6.3.2 / §7.3.2 ("based on the standard deviation of the blank"): LOD = 3.3·σ_b/S and
LOQ = 10·σ_b/S, σ_b the SD of the blank responses, S the calibration slope. Common practice (not an
ICH formula): the responses mean blank + 3 SD and + 10 SD read back through the fitted curve. The
references below are computed here with numpy (``np.polyfit``, ``np.std(ddof=1)``, ``np.roots``).

Invented scenario: a nickel line in counts against µg/L, six blank readings of a reagent blank.
"""

from __future__ import annotations

import numpy as np
import pytest

import curvewright as cw
from curvewright.core.errors import LimitsError
from curvewright.core.limits import LIMIT_METHOD_NAMES, LIMIT_METHODS, BlankReadings

X = np.array([0.5, 0.5, 1, 1, 2, 2, 5, 5, 10, 10, 20, 20])
Y = np.array([7.1, 7.6, 11.8, 12.5, 22.4, 21.3, 53.0, 51.8, 103.3, 101.9, 204.1, 207.5])
BLANKS = (2.31, 2.05, 2.66, 2.48, 2.12, 2.40)


def test_blank_sd_limits_follow_ich_q2_with_the_lines_slope() -> None:
    cal = cw.fit(X, Y)
    limits = cal.limits("blank_sd", blanks=BlankReadings(BLANKS, 6))
    slope, _ = np.polyfit(X, Y, 1)
    sd = np.std(BLANKS, ddof=1)
    # ICH Q2(R1) §6.3.2: LOD = 3.3·σ/S, LOQ = 10·σ/S
    assert limits.lod == pytest.approx(3.3 * sd / slope, rel=1e-12)
    assert limits.loq == pytest.approx(10 * sd / slope, rel=1e-12)
    assert (limits.blank_readings, limits.sigma) == (6, pytest.approx(sd, rel=1e-14))
    assert limits.blank_mean == pytest.approx(np.mean(BLANKS), rel=1e-14)
    assert "S = slope b1" in limits.description and "SD of 6 blank readings" in limits.description
    assert limits.blank_words("counts") == "from 6 blank readings: mean ȳ_b 2.337 counts, SD σ_b 0.2276 counts"


def test_mean_blank_plus_sds_read_through_a_line_and_a_quadratic() -> None:
    mean, sd = np.mean(BLANKS), np.std(BLANKS, ddof=1)
    line = cw.fit(X, Y).limits("blank_mean", blanks=BlankReadings(BLANKS, 3))
    b, a = np.polyfit(X, Y, 1)
    # common practice: x = (ȳ_b + k·σ_b − a)/b on the straight line
    assert line.lod == pytest.approx((mean + 3 * sd - a) / b, rel=1e-10)
    assert line.loq == pytest.approx((mean + 10 * sd - a) / b, rel=1e-10)
    quad = cw.fit(X, Y, "quadratic").limits("blank_mean", blanks=BlankReadings(BLANKS, 3))
    c2, c1, c0 = np.polyfit(X, Y, 2)
    for k, got in ((3, quad.lod), (10, quad.loq)):
        roots = np.roots([c2, c1, c0 - (mean + k * sd)])
        root = roots[np.argmin(np.abs(roots - got))].real  # the root on the calibrated branch, near zero
        assert 0 < root < X.max() and got == pytest.approx(root, rel=1e-8)
    # ICH on the quadratic: the slope at zero concentration, b1
    quad_sd = cw.fit(X, Y, "quadratic").limits("blank_sd", blanks=BlankReadings(BLANKS, 3))
    assert quad_sd.lod == pytest.approx(3.3 * sd / c1, rel=1e-9)
    assert "slope at zero concentration b1" in quad_sd.description


@pytest.mark.parametrize("blanks, words", [
    (None, "this run has no blank sample for this analyte"),
    (BlankReadings((2.3,), 2, ("B-2: response is censored (ND)",)),
     "need at least 2 numeric blank readings for an SD; this run has 1 numeric reading from 2 blank samples "
     "(1 not numeric: B-2: response is censored (ND))"),
    (BlankReadings((), 2, ("B-1: response is censored (ND)", "B-2: response is censored (<LOD)")),
     "this run has 0 numeric readings from 2 blank samples (2 not numeric: B-1: response is censored (ND); "
     "B-2: response is censored (<LOD))"),
    (BlankReadings((2.3, 2.3, 2.3), 3), "the 3 numeric blank readings are all 2.3, so their SD is 0 and gives no limit"),
])
def test_too_few_or_identical_blank_readings_say_how_many_and_why(blanks, words) -> None:
    for method in ("blank_sd", "blank_mean"):
        with pytest.raises(LimitsError) as caught:
            cw.fit(X, Y).limits(method, blanks=blanks)
        assert words in str(caught.value)


def test_blanks_below_the_intercept_give_no_common_practice_limit() -> None:
    with pytest.raises(LimitsError, match="lies at or below the curve's response at zero concentration"):
        cw.fit(X, Y).limits("blank_mean", blanks=BlankReadings((0.31, 0.40, 0.28), 3))


def test_every_method_has_one_name() -> None:
    assert set(LIMIT_METHOD_NAMES) == set(LIMIT_METHODS)
    assert len(set(LIMIT_METHOD_NAMES.values())) == len(LIMIT_METHODS)
    assert "common practice" in LIMIT_METHOD_NAMES["blank_mean"]


def test_a_power_curve_refuses_the_blank_limits_and_says_for_which_curves_they_are_made() -> None:
    with pytest.raises(LimitsError, match="LOD and LOQ from blanks are computed here for straight lines and quadratics"):
        cw.fit(X, Y, "power").limits("blank_sd", blanks=BlankReadings(BLANKS, 6))
