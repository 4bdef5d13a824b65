"""Acceptance profiles: shipped data with sources, exact fractions, verdicts with reasons."""

from __future__ import annotations

import json

import numpy as np
import pytest

import curvewright as cw
from tests.core.verdicts import judged_alike


def calibration_with_errors(level_errors: list[float]) -> cw.Calibration:
    """Invented duplicate standards at 8 levels whose back-calculated errors are exactly ±e.

    Each level holds a pair 2x(1 + e/100), 2x(1 − e/100); with weights equal within a level the
    fit follows the level means, which lie on y = 2x, so each standard reads back at ±e %.
    """
    x = np.repeat([1, 2, 5, 10, 20, 50, 100, 200.0], 2)
    e = np.repeat(level_errors, 2) * np.tile([1.0, -1.0], 8) / 100
    return cw.fit(x, 2.0 * x * (1 + e), weighting="1/x^2")


def test_shipped_profiles_name_their_source() -> None:
    ids = cw.available_profiles()
    assert {"ich-m10-chromatographic", "ich-m10-ligand-binding", "general"} <= set(ids)
    for profile_id in ids:
        profile = cw.load_profile(profile_id)
        assert profile.source and profile.name
    m10 = cw.load_profile("ich-m10-chromatographic")
    # ICH M10 (2022): ±15 %, ±20 % at the LLOQ, ≥ 75 % of standards and ≥ 6 levels passing.
    assert m10.standards.tolerance_percent == 15
    assert m10.standards.lowest_level_tolerance_percent == 20
    assert float(m10.standards.min_fraction_passing) == 0.75
    assert m10.standards.min_levels_passing == 6
    assert "ICH M10" in m10.source


def test_clean_calibration_passes_m10() -> None:
    verdict = calibration_with_errors([1, -1, 2, -2, 1, 0, -1, 1]).evaluate(cw.load_profile("ich-m10-chromatographic"))
    assert verdict.passed
    assert verdict.reasons[0].startswith("pass: 16 of 16 standards")


def test_lowest_level_gets_its_own_tolerance() -> None:
    cal = calibration_with_errors([18, 0, 0, 0, 0, 0, 0, 0])
    verdict = cal.evaluate(cw.load_profile("ich-m10-chromatographic"))
    assert abs(cal.relative_error[0]) == pytest.approx(18, rel=1e-9)
    assert verdict.passing[0] and verdict.passing[1]
    assert verdict.tolerance_percent[:2].tolist() == [20, 20] and verdict.tolerance_percent[2] == 15


def test_too_many_failures_fail_with_reasons() -> None:
    cal = calibration_with_errors([30, 0, 25, 0, 25, 0, 0, 0])
    verdict = cal.evaluate(cw.load_profile("ich-m10-chromatographic"))
    assert not verdict.passed
    assert any(r.startswith("FAIL") and "standards within limits" in r for r in verdict.reasons)
    assert any("lowest level" in r for r in verdict.reasons)


def test_exclusions_count_against_the_fraction_passing() -> None:
    cal = calibration_with_errors([0, 0, 0, 0, 0, 0, 0, 0])
    profile = cw.load_profile("ich-m10-chromatographic")
    assert cal.evaluate(profile, excluded=5).passed  # 16 of 21 = 76 %
    verdict = cal.evaluate(profile, excluded=6)  # 16 of 22 = 73 % < 75 %
    assert not verdict.passed
    assert "6 excluded standard(s) counted as not passing" in verdict.reasons[0]
    # the count every output gives is the verdict's own: 16 within limits of the 22 counted
    assert (verdict.n_within, verdict.n_counted, verdict.counted_excluded) == (16, 22, 6)
    assert verdict.count_words() == "16 of 22 (6 excluded counted as not passing)"
    assert "16 of 22 standards within limits" in verdict.reasons[0]


def test_the_count_leaves_out_exclusions_where_the_profile_does_not_count_them() -> None:
    cal = calibration_with_errors([0, 0, 0, 0, 0, 0, 0, 0])
    verdict = cal.evaluate(cw.load_profile("general"), excluded=3, unusable=1)
    # excluded standards not counted (count_excluded_as_failing: false); one without a usable value is
    assert (verdict.n_within, verdict.n_counted) == (16, 17)
    assert verdict.count_words() == "16 of 17 (1 without a usable value counted as not passing)"
    assert "16 of 17 standards within limits" in verdict.reasons[0]


def test_two_thirds_rule_is_exact_for_qc() -> None:
    profile = cw.load_profile("ich-m10-chromatographic")
    nominal = [3, 3, 40, 40, 160, 160.0]
    found = [3.1, 2.9, 41, 47, 150, 190.0]  # 4 of 6 within ±15 %, one pass at each level
    verdict = profile.evaluate_qc(nominal, found)
    assert verdict.passed, verdict.reasons
    assert verdict.reasons[0].startswith("pass: 4 of 6")
    failing = profile.evaluate_qc(nominal, [3.1, 2.9, 41, 47, 190, 190.0])
    assert not failing.passed
    assert any("QC level 160" in r and r.startswith("FAIL") for r in failing.reasons)


def test_a_qc_sample_not_judged_counts_as_not_passing_and_fails_the_verdict() -> None:
    profile = cw.load_profile("ich-m10-chromatographic")
    nominal, found = [3, 3, 40, 40, 160, 160.0], [3.0, 3.1, 40, 41, 160, 158.0]  # all six within ±15 %
    assert profile.evaluate_qc(nominal, found).passed
    # 6 of 7 passing would meet the two-thirds rule (ICH M10 QC acceptance as the profile holds it: at least
    # 2/3 of QC samples within ±15 %, from memory); the QC that could not be judged still fails the run
    verdict = profile.evaluate_qc(nominal, found, [("QC mid 2", "no nominal concentration")])
    assert not verdict.passed
    assert verdict.reasons[0].startswith("FAIL: 6 of 7 QC samples") and "1 QC sample(s) not judged" in verdict.reasons[0]
    assert verdict.reasons[-1].startswith("FAIL: QC sample 'QC mid 2' not judged: no nominal concentration")
    alone = profile.evaluate_qc([], [], [("QC mid 2", "no nominal concentration")])
    assert not alone.passed and alone.reasons[0].startswith("FAIL: 0 of 1 QC samples")
    noted = profile.evaluate_qc(nominal, found, notes=["a note"])
    assert noted.passed and noted.reasons[-1] == "note: a note"
    assert profile.evaluate_qc([], [], notes=["a note"]).reasons == ("note: no QC sample to judge", "note: a note")


def test_laboratory_limits_and_round_trip(tmp_path) -> None:
    general = cw.load_profile("general").with_limits(tolerance_percent=10, lowest_level_tolerance_percent=25)
    assert general.standards.tolerance_percent == 10
    assert "laboratory limits" in general.name
    path = tmp_path / "my-lab.json"
    path.write_text(json.dumps(general.to_mapping()), encoding="utf-8")
    assert cw.load_profile(path) == general


@pytest.mark.parametrize(
    "change, message",
    [
        ({"format": "other"}, "'format' must be"),
        ({"source": ""}, "'source' must be non-empty text"),
        ({"standards": {"tolerance_percent": -5}}, "'tolerance_percent' must be a percentage"),
        ({"standards": {"min_fraction_passing": "5/4"}}, "must lie between 0 and 1"),
        ({"standards": {"min_levels": 2.5}}, "'min_levels' must be a whole number"),
        ({"qc": {"min_fraction_passing": "two thirds"}}, "must be a fraction"),
    ],
)
def test_malformed_profiles_name_the_field(change, message) -> None:
    data = cw.load_profile("ich-m10-chromatographic").to_mapping()
    for key, value in change.items():
        if isinstance(value, dict):
            data[key] = {**data[key], **value}
        else:
            data[key] = value
    with pytest.raises(cw.ProfileError, match=message):
        cw.AcceptanceProfile.from_mapping(data, "my-lab.json")


def test_unknown_profile_lists_the_known_ones() -> None:
    with pytest.raises(cw.ProfileError, match="ich-m10-chromatographic"):
        cw.load_profile("strictest")


def test_the_m10_profiles_carry_the_caveat_that_their_limits_were_not_confirmed() -> None:
    # The ICH M10 limits (±15/±20 %, 75 %, six levels; ligand binding ±20/±25 %) were checked against
    # secondary sources quoting the guideline, not against its primary text: the profiles say so,
    # and every verdict under them carries the caveat.
    for pid in ("ich-m10-chromatographic", "ich-m10-ligand-binding"):
        profile = cw.load_profile(pid)
        assert "not confirmed against the primary text" in profile.caveat
        assert "must confirm" in profile.caveat
        assert profile.to_mapping()["caveat"] == profile.caveat
    assert "common practice" in cw.load_profile("general").caveat


def test_profiles_define_check_windows_or_say_they_set_none() -> None:
    general = cw.load_profile("general")
    # laboratory-set defaults, marked common practice in the profile's file
    assert (general.checks.icv_tolerance_percent, general.checks.ccv_tolerance_percent,
            general.checks.low_level_tolerance_percent) == (10.0, 10.0, 30.0)
    assert "Common practice" in general.checks.source
    m10 = cw.load_profile("ich-m10-chromatographic")
    assert m10.checks.window("ccv") is None and "sets no windows" in m10.checks.source


def test_a_screen_s_candidates_judged_together_get_the_verdicts_judged_one_by_one() -> None:
    # compare() judges its candidates together (errors stacked, counts taken for all at once): each
    # verdict must be the one evaluate() gives that fit alone, word for word and bit for bit, over
    # invented designs whose ends fail or pass and profiles with limits and fractions of their own.
    rng = np.random.default_rng(31)
    base = cw.load_profile("ich-m10-chromatographic")
    profiles = [cw.load_profile("general"), base, base.with_limits(tolerance_percent=4.0),
                base.with_limits(lowest_level_tolerance_percent=2.0, highest_level_tolerance_percent=3.0)]
    outcomes, notes = set(), 0
    for design in range(24):
        levels = np.array([0.0, 1, 2, 5, 10, 20, 50, 100, 200])[(design % 3 == 0):]
        x = np.repeat(levels, 1 + design % 3)
        y = (0.05 + 0.8 * x) * (1 + (0.01 + 0.02 * (design % 4)) * rng.standard_normal(x.size))
        y[0] += 0.3 * (design % 2)  # the lowest standard off the curve in half of them
        screen = cw.compare(x, y, weightings=("none", "1/x", "1/x^2", "1/y", "1/y^2"))
        cals = [c.calibration for c in screen.candidates]
        for profile in profiles:
            for verdict in judged_alike(profile, cals):
                outcomes.add(verdict.passed)
                notes += sum(r.startswith("note:") for r in verdict.reasons)
    assert outcomes == {True, False} and notes > 0  # verdicts both ways, and failing ends among them
