"""Reporting follows the calibrated range; calibration checks count, and bracket the samples.

The runs here are invented: an exact line y = 2 + 3x with duplicate standards, so that every
concentration a response stands for can be written down (x = (y − 2)/3).
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from curvewright.core.acceptance import load_profile
from curvewright.core.reporting import ReportStatus, reporting_range
from curvewright.core.rounding import RoundingRule
from curvewright.core.run import Analyte, Measurement, Reading, Run, RunSettings, Sample, SampleKind, Standard
from curvewright.core.run_analysis import analyse_run

LEVELS = (0.0, 0.5, 1.0, 2.0, 4.0, 6.0, 8.0)


def response(x: float) -> float:
    return 2.0 + 3.0 * x


def run_with(samples: tuple[Sample, ...], *, profile: str = "general", levels=LEVELS, custom=None) -> Run:
    standards = tuple(Standard(f"S{i}{r}", x, Reading.of(response(x) + (0.004 if r == 1 else -0.004)), r)
                      for i, x in enumerate(levels) for r in (1, 2))
    analyte = Analyte("nickel", "mg/L", "counts", standards)
    settings = RunSettings(acceptance_profile=profile, custom_profile=custom, rounding=RoundingRule("significant", 3))
    return Run("invented nickel batch", (analyte,), samples, settings)


def sample(sid: str, x: float, *, kind=SampleKind.UNKNOWN, order=None, nominal=None, dilution=1.0) -> Sample:
    return Sample(sid, kind, order, dilution, (Measurement("nickel", 1, Reading.of(response(x))),),
                  () if nominal is None else (("nickel", nominal),))


def result_of(run: Run):
    return analyse_run(run).analytes[0]


# --- the calibrated range --------------------------------------------------------------------------
def test_a_zero_standard_does_not_stretch_the_calibrated_range() -> None:
    a = result_of(run_with((sample("Well 14", 0.43),)))
    assert (a.reporting.lloq, a.reporting.uloq) == (0.5, 8.0)
    well = a.samples[0]
    assert well.status is ReportStatus.BELOW_REPORTING_LIMIT
    assert well.reported_text == "< 0.500 mg/L (LLOQ)"
    assert "inside the calibrated range" not in well.flag_words
    assert well.estimate == pytest.approx(0.43, abs=0.01)  # the estimate stays, for the reviewer


def test_below_the_lloq_under_ich_m10_is_reported_as_below_it() -> None:
    a = result_of(run_with((sample("Subject 3 t24h", 0.626 / 2),), profile="ich-m10-chromatographic",
                           levels=(0.5, 1.0, 2.0, 4.0, 6.0, 8.0, 10.0)))
    s = a.samples[0]
    assert s.reported_text == "< 0.500 mg/L (LLOQ)" and not s.reportable
    assert s.reported == pytest.approx(0.313, abs=0.01)


def test_above_the_uloq_is_reported_as_above_with_the_dilution_for_mid_range() -> None:
    a = result_of(run_with((sample("Spring 3", 9.1), sample("Spring 3 ×5", 9.1 / 5, dilution=5.0))))
    above, diluted = a.samples
    assert above.status is ReportStatus.ABOVE_RANGE and above.reported_text == "> 8.00 mg/L (ULOQ)"
    # mid-range is (0.5 + 8)/2 = 4.25; 9.1/4.25 = 2.14, so the 1-2-5 series suggests ×5
    assert above.suggested_dilution == 5.0
    assert "dilution of ×5" in above.flag_words
    assert diluted.status is ReportStatus.IN_RANGE and diluted.reported_text == "9.10"


def test_the_profile_says_whether_values_below_the_reporting_limit_are_estimated() -> None:
    profile = load_profile("general").to_mapping()
    profile["reporting"] = {"between_lod_and_reporting_limit": "estimate"}
    a = result_of(run_with((sample("Low", 0.3), sample("Trace", 0.0005)), custom=profile))
    low, trace = a.samples
    assert a.limits.lod < 0.3 < a.reporting.reporting_limit
    assert low.reported_text == "0.300 mg/L (estimated, below LLOQ)" and low.reportable
    assert trace.status is ReportStatus.BELOW_LOD and trace.reported_text.startswith("< ") and "(LOD)" in trace.reported_text


def test_a_computed_loq_above_the_lloq_becomes_the_reporting_limit() -> None:
    rng = reporting_range([0.0, 0.5, 1.0, 8.0], lod=0.3, loq=0.9, unit="mg/L")
    assert (rng.reporting_limit, rng.basis) == (0.9, "LOQ") and "lies above the lowest standard" in rng.note
    rng = reporting_range([0.0, 0.5, 1.0, 8.0], lod=0.03, loq=0.1, unit="mg/L")
    assert (rng.reporting_limit, rng.basis) == (0.5, "LLOQ") and "lies below the lowest standard" in rng.note


@pytest.mark.parametrize("x", np.linspace(-0.2, 9.5, 40))
def test_the_words_for_one_sample_never_contradict_each_other(x) -> None:
    s = result_of(run_with((sample("S", float(x)),))).samples[0]
    inside = "inside the calibrated range" in s.flag_words
    assert inside == (s.status is ReportStatus.IN_RANGE)
    if inside:
        assert "below" not in s.flag_words and "above" not in s.flag_words
    from curvewright.core.inverse import QuantFlag

    assert not (QuantFlag.IN_RANGE in s.flags and (QuantFlag.BELOW_LOQ in s.flags or QuantFlag.BELOW_RANGE in s.flags))


# --- calibration checks ------------------------------------------------------------------------------
def test_a_check_at_135_percent_fails_the_run_and_is_named() -> None:
    a = analyse_run(run_with((sample("CCV-2", 6.75, kind=SampleKind.CCV, nominal=5.0),)))
    assert not a.accepted
    reasons = [r for r in a.reasons if "CCV-2" in r]
    assert reasons and "FAIL" in reasons[0] and "recovery 135.0 %" in reasons[0] and "90–110 %" in reasons[0]
    check = a.analytes[0].samples[0]
    assert check.recovery_percent == pytest.approx(135.0) and check.within_limits is False


def test_each_check_kind_has_its_own_window_not_the_qc_tolerance() -> None:
    # 115 % recovery passes a QC sample (±20 % in the general profile) but fails a CCV (±10 %)
    # and passes a low-level check at the reporting limit (±30 %), all common practice defaults
    a = result_of(run_with((
        sample("QC", 4.6, kind=SampleKind.QC, nominal=4.0, order=2),
        sample("CCV", 4.6, kind=SampleKind.CCV, nominal=4.0, order=3),
        sample("LLC", 0.575, kind=SampleKind.LOW_LEVEL_CHECK, nominal=0.5, order=4),
    )))
    by_id = {s.sample_id: s for s in a.samples}
    assert by_id["QC"].within_limits is True
    assert by_id["CCV"].within_limits is False
    assert by_id["LLC"].within_limits is True


def test_a_calibration_blank_passes_below_the_reporting_limit_only() -> None:
    a = result_of(run_with((sample("CCB-1", 0.05, kind=SampleKind.CALIBRATION_BLANK, order=1),
                            sample("CCB-2", 0.8, kind=SampleKind.CALIBRATION_BLANK, order=3))))
    assert [c.passed for c in a.checks.checks] == [True, False]
    assert "not below the reporting limit" in a.checks.checks[1].reason


def test_a_check_the_profile_sets_no_window_for_cannot_pass_unjudged() -> None:
    run = run_with((sample("CCV-1", 5.0, kind=SampleKind.CCV, nominal=5.0),), profile="ich-m10-chromatographic",
                   levels=(0.5, 1.0, 2.0, 4.0, 6.0, 8.0, 10.0))
    result = analyse_run(run)
    assert not result.accepted
    assert any("sets no window" in r for r in result.reasons)


def test_only_samples_bracketed_by_passing_checks_are_reportable() -> None:
    run = run_with((
        sample("ICV", 5.0, kind=SampleKind.ICV, nominal=5.0, order=1),
        sample("A", 3.0, order=2),
        sample("B", 3.0, order=3),
        sample("CCV-1", 6.0, kind=SampleKind.CCV, nominal=5.0, order=4),  # 120 %: fails
        sample("C", 3.0, order=5),
        sample("CCV-2", 5.0, kind=SampleKind.CCV, nominal=5.0, order=6),
        sample("D", 3.0, order=7),
        sample("CCV-3", 5.05, kind=SampleKind.CCV, nominal=5.0, order=8),
        sample("E", 3.0, order=9),
        sample("F", 3.0),
    ))
    by_id = {s.sample_id: s for s in result_of(run).samples}
    assert [by_id[k].reportable for k in "ABCDEF"] == [False, False, False, True, False, False]
    assert "the check after it, CCV-1 (run order 4), failed" in by_id["A"].flag_words
    assert "follows the failed CCV-1" in by_id["C"].flag_words
    assert "no calibration check follows it" in by_id["E"].flag_words
    assert "no run order" in by_id["F"].flag_words
    assert by_id["D"].reported_text == "3.00" and by_id["C"].reported_text == "not reportable"
    assert by_id["C"].reported == pytest.approx(3.0, abs=0.01)  # the number stays for the reviewer


def test_a_run_without_checks_is_not_bracketed() -> None:
    a = result_of(run_with((sample("A", 3.0, order=1), sample("B", 2.0))))
    assert a.checks is None and all(s.reportable for s in a.samples)


def test_a_check_without_a_nominal_or_a_result_fails_with_the_reason() -> None:
    run = run_with((sample("CCV", 5.0, kind=SampleKind.CCV, order=1),
                    replace(sample("ICV", 5.0, kind=SampleKind.ICV, nominal=5.0, order=2),
                            measurements=(Measurement("nickel", 1, Reading(None, "lost vial")),))))
    checks = result_of(run).checks.checks
    assert "no nominal concentration" in checks[0].reason
    assert "no usable result" in checks[1].reason and "lost vial" in checks[1].reason
