"""Whole-run analysis: replicates, dilution, censored readings, ratio calibration, QC recovery."""

from __future__ import annotations

import pytest

import curvewright as cw
from curvewright.core.rounding import RoundingRule
from curvewright.core.run import Analyte, Measurement, Reading, Run, RunSettings, Sample, SampleKind, Standard
from curvewright.core.run_analysis import analyse_run


def invented_run(**analyte_options) -> Run:
    """Exact line y = 2 + 3x (invented), so every expected number can be written down."""
    xs = [1.0, 2.0, 4.0, 8.0, 16.0, 32.0]
    standards = tuple(
        Standard(f"S{i}{r}", x, Reading.of(2 + 3 * x + (0.01 if r == 1 else -0.01)), r)
        for i, x in enumerate(xs) for r in (1, 2)
    )
    analyte = Analyte("copper", "µg/L", "counts", standards, **analyte_options)
    samples = (
        Sample("U1", SampleKind.UNKNOWN, 1, 5.0, (Measurement("copper", 1, Reading.of(32.0)), Measurement("copper", 2, Reading.of(32.2)))),
        Sample("QC", SampleKind.QC, 2, 1.0, (Measurement("copper", 1, Reading.of(26.0)),), (("copper", 8.0),)),
        Sample("ND", SampleKind.UNKNOWN, 3, 1.0, (Measurement("copper", 1, Reading(None, "ND", "ND")),)),
        Sample("Gap", SampleKind.UNKNOWN, 4, 1.0, (Measurement("copper", 1, Reading.of(14.0)), Measurement("copper", 2, Reading(None, "")))),
    )
    return Run("invented", (analyte,), samples, RunSettings(acceptance_profile="general"))


def test_replicates_are_averaged_and_dilution_applied() -> None:
    result = analyse_run(invented_run()).analytes[0]
    u1 = result.samples[0]
    cal = result.calibration
    direct = cal.quantify([32.1], replicates=2)
    assert u1.mean_response == pytest.approx(32.1)
    assert u1.estimate == pytest.approx(direct.estimate[0], rel=1e-15)
    assert u1.reported == pytest.approx(5 * direct.estimate[0], rel=1e-15)
    assert u1.reported_lower == pytest.approx(5 * direct.lower[0], rel=1e-15)
    assert u1.reported_upper == pytest.approx(5 * direct.upper[0], rel=1e-15)


def test_qc_recovery_and_verdict() -> None:
    result = analyse_run(invented_run()).analytes[0]
    qc = result.samples[1]
    assert qc.recovery_percent == pytest.approx(100.0, abs=0.1)
    assert result.qc_verdict is not None and result.qc_verdict.passed
    assert result.accepted


def test_censored_replicate_gives_no_number_and_says_so() -> None:
    nd = analyse_run(invented_run()).analytes[0].samples[2]
    assert nd.reported is None and nd.flags is None
    assert "censored: ND" in nd.flag_words


def test_missing_replicate_is_named_and_the_rest_used() -> None:
    gap = analyse_run(invented_run()).analytes[0].samples[3]
    assert gap.replicate_responses == (14.0,)
    assert "replicate 2: no response recorded" in gap.note
    assert gap.estimate == pytest.approx(4.0, abs=0.01)


def test_ratio_calibration_divides_by_the_internal_standard() -> None:
    run = invented_run(uses_internal_standard=True)
    standards = tuple(
        Standard(s.id, s.concentration, Reading.of(s.response.value * 1000), s.replicate,
                 internal_standard_response=Reading.of(1000.0))
        for s in run.analytes[0].standards
    )
    from dataclasses import replace

    run = replace(run, analytes=(replace(run.analytes[0], standards=standards),))
    result = analyse_run(run).analytes[0]
    assert result.calibration.coefficients[1] == pytest.approx(3.0, rel=1e-3)
    # the samples carry no IS response, so they are reported as not quantified, with the reason
    assert "no internal-standard response" in result.samples[0].note


def test_model_override_is_marked() -> None:
    result = analyse_run(invented_run(), model="quadratic").analytes[0]
    assert result.model_overridden and result.calibration.model is cw.Model.QUADRATIC


def test_a_curve_that_cannot_be_fitted_says_why() -> None:
    run = invented_run()
    from dataclasses import replace

    few = replace(run.analytes[0], standards=run.analytes[0].standards[:2])
    result = analyse_run(replace(run, analytes=(few,))).analytes[0]
    assert result.calibration is None and "all 2 standards are at 1" in result.error
    assert not result.accepted


@pytest.mark.parametrize(
    "rule, value, text",
    [
        # Ph. Eur. example: 0.145 to two significant figures is 0.15 (round half up on the printed digits)
        (RoundingRule("significant", 2, "half_up"), 0.145, "0.15"),
        (RoundingRule("significant", 2, "half_even"), 0.145, "0.14"),
        (RoundingRule("significant", 3), 9.996, "10.0"),
        (RoundingRule("significant", 3), 12.0, "12.0"),
        (RoundingRule("decimals", 2), 2.675, "2.68"),
        (RoundingRule("decimals", 1), -0.04, "0.0"),
        (RoundingRule("significant", 2), 123456.0, "120000"),
    ],
)
def test_rounding_rules(rule, value, text) -> None:
    assert rule.text(value) == text
    assert rule.value(value) == float(text)


def test_rounding_rule_refuses_nonsense() -> None:
    from curvewright.core.rounding import RoundingError

    with pytest.raises(RoundingError, match="at least 1 significant figure"):
        RoundingRule("significant", 0)
    with pytest.raises(RoundingError, match="tie-break"):
        RoundingRule("decimals", 2, "bankers")


def test_standards_are_grouped_by_their_level_labels() -> None:
    # Invented standards made up by mass: the replicates of each level differ by about 1 %, more than
    # any tolerance would join, but the analyst's labels say which standards belong together.
    xs = [(1.0, 1.01), (2.0, 2.02), (5.0, 4.95), (10.0, 10.1), (20.0, 19.8)]
    standards = tuple(
        Standard(f"S{i}{r}", x, Reading.of(2 + 3 * x + (0.02 if r else -0.02)), r + 1, level=f"L{i + 1}")
        for i, pair in enumerate(xs) for r, x in enumerate(pair)
    )
    run = Run("invented", (Analyte("copper", "µg/L", "counts", standards),), (), RunSettings())
    cal = analyse_run(run).analytes[0].calibration
    assert cal.levels.n_levels == 5 and cal.levels.count.tolist() == [2] * 5
    assert cal.lack_of_fit.available and cal.lack_of_fit.df_pure_error == 5


def test_a_flat_calibration_reports_every_sample_as_not_quantified_with_the_reason() -> None:
    # Invented standards whose response does not change with concentration (a detector left off).
    standards = tuple(
        Standard(f"S{i}", x, Reading.of(r)) for i, (x, r) in enumerate(zip([1.0, 2.0, 4.0, 8.0, 16.0], [5.1, 4.9, 5.0, 5.2, 4.8]))
    )
    samples = (Sample("U1", SampleKind.UNKNOWN, 1, 1.0, (Measurement("copper", 1, Reading.of(5.0)),)),)
    result = analyse_run(Run("invented", (Analyte("copper", "µg/L", "counts", standards),), samples, RunSettings()))
    a = result.analytes[0]
    assert a.calibration is not None and not a.calibration.regression.significant
    (u1,) = a.samples
    assert u1.reported is None and u1.flags is None
    assert u1.note.startswith("not quantified: calibration: the response does not change significantly")
    assert a.limits is None and "no limit can be computed" in a.limits_note


def test_a_sample_with_no_response_at_all_is_listed_and_says_so() -> None:
    """A sample entered without a response (a row added, or pasted with its response cell empty) is one
    of the analyte's results, "no response recorded", as an empty cell read from a file is; a sample
    measured for another analyte only is not among this analyte's."""
    from dataclasses import replace

    run = invented_run()
    run = replace(run, samples=run.samples + (
        Sample("Blank row"),
        Sample("Empty cell", measurements=(Measurement("copper", 1, Reading(None, "")),)),
        Sample("Zinc only", measurements=(Measurement("zinc", 1, Reading.of(3.0)),)),
    ))
    listed = {s.sample_id: s for s in analyse_run(run).analytes[0].samples}
    assert "Zinc only" not in listed
    for name in ("Blank row", "Empty cell"):
        s = listed[name]
        assert s.reported is None and s.estimate is None
        assert s.reported_text == "no response recorded" and s.short_flags == "no response"
        assert "no response recorded" in s.flag_words
