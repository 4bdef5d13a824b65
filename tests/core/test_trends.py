"""Control limits and the multi-rule checks, against hand-made series where each rule must and must not fire.

The rules are those of Westgard JO, Barry PL, Hunt MR, Groth T, Clin Chem 1981;27:493–501 (from
memory of the paper, not re-read); every series below is made by hand so that the answer can be
read off it.
"""

from __future__ import annotations

import statistics
from datetime import date

import numpy as np
import pytest

from curvewright.core.trends import (RULE_SOURCES, RULES, Baseline, ControlLimits, TrendError, TrendPoint,
                                     check_rules, control_limits, failing_rules, select_baseline, trend)


def fired(z, rule):  # type: ignore[no-untyped-def]
    """(index, side) of every break of ``rule`` in the z-series."""
    return [(b.index, b.side) for b in check_rules(z, (rule,))]


def everything(z):  # type: ignore[no-untyped-def]
    return [(b.rule, b.index) for b in check_rules(z)]


# --- 1-3s: one value beyond ±3 s ------------------------------------------------------------------
def test_1_3s_fires_on_one_value_beyond_3s_on_either_side() -> None:
    assert fired([0.0, 3.01, 0.2], "1-3s") == [(1, "above")]
    assert fired([0.0, -0.5, -3.4], "1-3s") == [(2, "below")]


def test_1_3s_does_not_fire_on_the_limit_itself_or_inside() -> None:
    assert fired([3.0, -3.0, 2.99, -2.99], "1-3s") == []  # "beyond" is strict


# --- 2-2s: two consecutive beyond the same 2 s limit ----------------------------------------------
def test_2_2s_fires_on_two_consecutive_values_beyond_the_same_2s_limit() -> None:
    assert fired([0.0, 2.1, 2.5], "2-2s") == [(2, "above")]
    assert fired([-2.2, -2.01, 0.0], "2-2s") == [(1, "below")]


def test_2_2s_does_not_fire_when_not_consecutive_or_on_opposite_sides() -> None:
    assert fired([2.1, 1.9, 2.1], "2-2s") == []       # broken by a value inside
    assert fired([2.5, -2.5], "2-2s") == []           # opposite limits: that is R-4s
    assert fired([2.0, 2.0], "2-2s") == []            # on the limit, not beyond


# --- R-4s: consecutive values beyond opposite 2 s limits ------------------------------------------
def test_r_4s_fires_on_consecutive_values_beyond_opposite_2s_limits() -> None:
    assert fired([0.0, 2.3, -2.1], "R-4s") == [(2, "both")]
    assert fired([-2.6, 2.4], "R-4s") == [(1, "both")]


def test_r_4s_does_not_fire_on_a_wide_range_that_does_not_cross_both_limits() -> None:
    assert fired([2.5, -1.9], "R-4s") == []          # a range of 4.4 s, but the second is inside −2 s
    assert fired([2.5, 0.0, -2.5], "R-4s") == []     # not consecutive
    assert fired([2.1, 2.9], "R-4s") == []           # same side


# --- 4-1s: four consecutive beyond the same 1 s limit ---------------------------------------------
def test_4_1s_fires_on_four_consecutive_values_beyond_the_same_1s_limit() -> None:
    assert fired([0.0, 1.1, 1.5, 1.2, 1.01], "4-1s") == [(4, "above")]
    assert fired([-1.5, -1.2, -1.9, -1.3, -1.1], "4-1s") == [(3, "below"), (4, "below")]  # each run completing four


def test_4_1s_does_not_fire_on_three_or_with_a_break_or_a_side_change() -> None:
    assert fired([1.1, 1.1, 1.1], "4-1s") == []
    assert fired([1.1, 1.1, 0.9, 1.1, 1.1], "4-1s") == []
    assert fired([1.1, 1.1, -1.1, 1.1], "4-1s") == []
    assert fired([1.0, 1.0, 1.0, 1.0], "4-1s") == []  # on the limit


# --- 10-x: ten consecutive on the same side of the mean -------------------------------------------
def test_10_x_fires_on_ten_consecutive_values_on_one_side() -> None:
    assert fired([0.1] * 10, "10-x") == [(9, "above")]
    assert fired([0.5] + [-0.2] * 10, "10-x") == [(10, "below")]


def test_10_x_does_not_fire_on_nine_or_with_a_value_at_the_mean_or_across() -> None:
    assert fired([0.1] * 9, "10-x") == []
    assert fired([0.1] * 9 + [0.0], "10-x") == []     # exactly at the mean belongs to neither side
    assert fired([0.1] * 5 + [-0.1] + [0.1] * 5, "10-x") == []


def test_each_rule_fires_alone_on_the_series_made_for_it() -> None:
    assert everything([0.2, 3.5, 0.1]) == [("1-3s", 1)]
    assert everything([2.2, 2.4]) == [("2-2s", 1)]
    assert everything([2.2, -2.4]) == [("R-4s", 1)]
    assert everything([1.2, 1.3, 1.1, 1.4]) == [("4-1s", 3)]
    assert everything([0.3, 0.5, 0.2, 0.9, 0.1, 0.4, 0.6, 0.2, 0.3, 0.8]) == [("10-x", 9)]
    assert everything([0.5, -0.5, 1.5, -1.5, 0.2, -0.2, 1.9, -1.9, 0.0, 0.7, -0.7]) == []


def test_a_break_names_the_values_that_make_its_pattern() -> None:
    (b,) = check_rules([0.0, 1.2, 1.3, 1.1, 1.4], ("4-1s",))
    assert b.indices == (1, 2, 3, 4) and b.index == 4
    assert "four consecutive values beyond the same 1 s limit" in b.words and "above" in b.words


def test_an_unknown_rule_is_refused_with_the_rules_known() -> None:
    with pytest.raises(TrendError, match="'2-3s' is not one of 1-3s, 2-2s, R-4s, 4-1s, 10-x"):
        check_rules([0.0], ("2-3s",))


def test_every_rule_names_its_source() -> None:
    assert set(RULE_SOURCES) == set(RULES)
    assert all("Clin Chem 1981;27:493" in s for s in RULE_SOURCES.values())
    assert "consecutive runs" in RULE_SOURCES["R-4s"]


# --- control limits --------------------------------------------------------------------------------
def test_control_limits_are_the_mean_and_sample_sd_of_the_baseline() -> None:
    values = [9.0, 10.0, 11.0, 10.0]
    limits = control_limits(values)
    # by hand: mean 10, s = sqrt((1 + 0 + 1 + 0)/3) = 0.816496580927726; the same from the standard library
    assert limits.mean == pytest.approx(10.0, rel=1e-15)
    assert limits.sd == pytest.approx(0.816496580927726, rel=1e-14)
    assert limits.sd == pytest.approx(statistics.stdev(values), rel=1e-14)
    assert limits.limit(2) == pytest.approx((10 - 2 * 0.816496580927726, 10 + 2 * 0.816496580927726), rel=1e-14)
    assert limits.limit(3) == pytest.approx((10 - 3 * 0.816496580927726, 10 + 3 * 0.816496580927726), rel=1e-14)
    assert limits.provisional and limits.n == 4


def test_limits_need_two_values_that_differ() -> None:
    with pytest.raises(TrendError, match="at least 2 baseline values; the baseline has 1"):
        control_limits([1.0])
    with pytest.raises(TrendError, match="the 3 baseline values are all 2; with no scatter"):
        control_limits([2.0, 2.0, 2.0])


def points(values, accepted=None, start=1):  # type: ignore[no-untyped-def]
    accepted = accepted or [True] * len(values)
    return [TrendPoint(f"k{i}", f"run {i}", f"2026-01-{i + start:02d}T09:00:00Z", v, a)
            for i, (v, a) in enumerate(zip(values, accepted))]


def test_the_baseline_is_the_first_n_accepted_runs_or_a_date_range() -> None:
    pts = points([1.0, 2.0, 3.0, 4.0, 5.0, 6.0], accepted=[True, False, True, True, True, True])
    assert select_baseline(pts, Baseline(3)) == (0, 2, 3)       # the run not accepted is skipped
    assert select_baseline(pts, Baseline(start=date(2026, 1, 3), end=date(2026, 1, 5))) == (2, 3, 4)
    assert select_baseline(pts, Baseline(start=date(2026, 1, 5))) == (4, 5)
    assert select_baseline(pts, Baseline(end=date(2026, 1, 2))) == (0,)


def test_a_baseline_that_cannot_set_limits_is_refused_in_words() -> None:
    with pytest.raises(TrendError, match="the first 1 accepted run"):
        Baseline(1)
    with pytest.raises(TrendError, match="ends .2026-01-01. before it starts .2026-02-01."):
        Baseline(start=date(2026, 2, 1), end=date(2026, 1, 1))
    with pytest.raises(TrendError, match="the first 20 accepted runs give 1 .of 2 runs with a value, 1 accepted."):
        trend(points([1.0, 2.0], accepted=[True, False]))


def test_a_trend_judges_every_run_against_the_baseline_limits() -> None:
    # twenty accepted runs alternating 9 and 11: mean 10, s = sqrt(20/19) (by hand); then a run at 14
    base = [9.0, 11.0] * 10
    t = trend(points(base + [14.0]))
    s = (20 / 19) ** 0.5
    assert t.limits == ControlLimits(pytest.approx(10.0, rel=1e-15), pytest.approx(s, rel=1e-14), 20)
    assert t.baseline_indices == tuple(range(20)) and not t.limits.provisional
    assert t.z[-1] == pytest.approx(4 / s, rel=1e-14)
    assert [(b.rule, b.index) for b in t.breaks] == [("1-3s", 20)]
    assert t.breaks_at(20)[0].side == "above" and t.breaks_at(19) == ()
    assert not t.z.flags.writeable


def test_a_drift_is_caught_by_the_rules_for_systematic_error_before_1_3s() -> None:
    # baseline alternating 9/11 (mean 10, s = sqrt(20/19), by hand), then a fall of 0.7 s per run
    s = (20 / 19) ** 0.5
    drift = [10.0 - 0.7 * s * k for k in range(1, 8)]
    t = trend(points([9.0, 11.0] * 10 + drift))
    first: dict[str, int] = {}
    for b in t.breaks:
        first.setdefault(b.rule, b.index)
    # z = −0.7, −1.4, −2.1, −2.8, −3.5, −4.2, −4.9 at runs 20…26: 2-2s at the second beyond −2 s (run 23),
    # 4-1s at the fourth beyond −1 s (run 24), 1-3s at the first beyond −3 s (run 24); never R-4s or 10-x
    assert first == {"2-2s": 23, "4-1s": 24, "1-3s": 24}


def test_the_baseline_words_say_when_limits_are_provisional() -> None:
    t = trend(points([1.0, 2.0, 3.0]))
    assert t.baseline_words == ("the first 20 accepted runs (only 3 accepted runs with a value); provisional: "
                                "fewer than 20 values")


# --- what the profile makes a failure --------------------------------------------------------------
def test_a_profile_makes_the_rules_it_names_a_failure() -> None:
    assert failing_rules({"id": "lab"}) == frozenset()
    assert failing_rules(None) == frozenset()
    assert failing_rules({"trend_rules": {"fail_on": ["1-3s", "R-4s"]}}) == {"1-3s", "R-4s"}


def test_a_malformed_trend_rules_section_is_refused_with_the_field() -> None:
    with pytest.raises(TrendError, match="lab.json trend_rules: 'fail_on' names '3-1s'"):
        failing_rules({"trend_rules": {"fail_on": ["3-1s"]}}, "lab.json")
    with pytest.raises(TrendError, match="'fail_on' must be a list of rule names"):
        failing_rules({"trend_rules": {"fail_on": "1-3s"}})


def test_nan_is_never_a_baseline_value() -> None:
    with pytest.raises(TrendError, match="not a finite number"):
        control_limits([1.0, np.nan, 2.0])
