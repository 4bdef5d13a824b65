"""The demo runs: reproducible from their builder, invented and said to be, and each shows its case."""

from __future__ import annotations

import importlib.util

import numpy as np
import pytest

import curvewright as cw
from curvewright.core.run import SampleKind
from curvewright.core.run_analysis import analyse_run
from curvewright.io.run_document import dumps_run, open_run
from tests.io.helpers import DEMO_RUNS, ROOT


def builder():
    spec = importlib.util.spec_from_file_location("build_demo_runs", ROOT / "sample_runs" / "build_demo_runs.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)  # type: ignore[union-attr]
    return module


def test_committed_demo_runs_match_their_builder() -> None:
    module = builder()
    assert sorted(module.DEMOS) == [p.name for p in DEMO_RUNS]
    for path in DEMO_RUNS:
        assert dumps_run(module.DEMOS[path.name]()) == path.read_text(encoding="utf-8"), path.name


@pytest.mark.parametrize("path", DEMO_RUNS, ids=[p.stem for p in DEMO_RUNS])
def test_each_demo_says_it_is_invented_and_opens_cleanly(path) -> None:
    opened = open_run(path)
    assert "invented for demonstration" in opened.run.description
    assert opened.chain_verified
    result = analyse_run(opened.run)
    assert all(a.calibration is not None for a in result.analytes)


def test_straight_line_demo() -> None:
    result = analyse_run(open_run(ROOT / "sample_runs" / "nitrate_water_linear.json").run)
    a = result.analytes[0]
    assert a.calibration.model is cw.Model.LINEAR and a.calibration.weighting is cw.Weighting.NONE
    assert a.calibration.levels.count.min() == 3
    assert a.calibration.lack_of_fit.available and not a.calibration.lack_of_fit.significant()
    assert result.accepted


def test_weighted_demo_spans_three_decades_with_qc_and_an_unknown_above_the_top() -> None:
    result = analyse_run(open_run(ROOT / "sample_runs" / "veltaprine_plasma_weighted.json").run)
    a = result.analytes[0]
    low, high = a.calibration.calibrated_range
    assert high / low >= 1000
    assert a.analyte.uses_internal_standard and a.calibration.weighting is cw.Weighting.INVERSE_X2
    assert sum(1 for s in a.samples if s.kind is SampleKind.QC) >= 6
    assert any(cw.QuantFlag.ABOVE_RANGE in s.flags for s in a.samples if s.flags is not None)
    evidence = cw.compare(a.calibration.concentration, a.calibration.response)
    assert evidence.variance.heteroscedastic is True


def test_quadratic_demo_has_an_influential_standard_and_an_exclusion() -> None:
    result = analyse_run(open_run(ROOT / "sample_runs" / "zinc_emission_quadratic.json").run)
    a = result.analytes[0]
    cal = a.calibration
    assert cal.model is cw.Model.QUADRATIC and cal.lack_of_fit.available
    top = int(np.argmax(cal.concentration))
    # the top standard stands alone: the largest Cook's distance, and a note that the curve rests on it
    assert cal.cooks_distance[top] == np.nanmax(cal.cooks_distance) > 1
    assert any(f"standard {top + 1} has leverage" in note for note in cal.notes)
    assert [s.id for s in a.excluded_standards] == ["Zn-5b"] and a.excluded_standards[0].exclusion_reason
    assert cal.vertex > cal.calibrated_range[1]


def test_environmental_demo_is_calibrated_by_average_relative_response_factors_with_continuing_checks() -> None:
    run = open_run(ROOT / "sample_runs" / "volatiles_water_average_rf.json").run
    result = analyse_run(run)
    assert result.profile.id == "environmental" and result.accepted
    assert [a.analyte.name for a in result.analytes] == ["benzene", "toluene", "ethylbenzene"]
    for a in result.analytes:
        cal = a.calibration
        assert cal.model is cw.Model.AVERAGE_RF and a.analyte.uses_internal_standard
        assert cal.rf_rsd_percent <= 20
        # the recommendation under the environmental profile is the average RF, as chosen
        evidence = cw.compare(cal.concentration, cal.response, profile="environmental")
        assert evidence.recommended.model is cw.Model.AVERAGE_RF
        kinds = [c.kind for c in a.checks.checks]
        assert SampleKind.ICV in kinds and kinds.count(SampleKind.CCV) == 2 and kinds.count(SampleKind.CALIBRATION_BLANK) == 3
        assert a.checks.passed
        assert all(s.status.value != "not_reportable" for s in a.samples)
    benzene = result.analytes[0]
    (leachate,) = benzene.additions
    assert leachate.result is not None and "matrix-matched linearity" in leachate.result.warnings[0]
    # the leachate's invented content is 8.0 µg/L; its interval holds it
    assert leachate.reported_lower < 8.0 < leachate.reported_upper
    assert any(e.action == "samples_edited" and "additions" in str(e.details) for e in run.audit)
