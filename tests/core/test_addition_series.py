"""Standard-addition series in a run: analysis, the run document, and its schema."""

from __future__ import annotations

import json
from dataclasses import replace

import jsonschema
import numpy as np
import pytest

import curvewright as cw
from curvewright.core.run import Addition, Analyte, Measurement, Reading, Run, RunSettings, Sample, SampleKind, Standard
from curvewright.core.run_analysis import analyse_run
from curvewright.io import run_document as doc
from curvewright.io.errors import DocumentError
from tests.io.helpers import ROOT


def invented_run(uses_internal_standard: bool = False) -> Run:
    """Invented: lead by ICP-MS, a straight-line calibration and one river water measured by additions."""
    xs = [1.0, 2.0, 5.0, 10.0, 20.0]
    is_area = 1000.0 if uses_internal_standard else None
    standards = tuple(
        Standard(f"S{i}", x, Reading.of(0.5 + 3.0 * x * (1 + 0.01 * (-1) ** i) * (is_area or 1)), 1,
                 internal_standard_response=Reading.of(is_area) if is_area else None)
        for i, x in enumerate(xs)
    )
    analyte = Analyte("lead", "µg/L", "counts", standards, uses_internal_standard=uses_internal_standard)
    readings = {0.0: (8.1, 8.3), 2.0: (12.0, 12.4), 4.0: (16.3, 16.1), 8.0: (24.2, "n/a")}
    additions = tuple(
        Addition("lead", added, r + 1, Reading.of(v * (is_area or 1)) if isinstance(v, float) else Reading(None, v),
                 internal_standard_response=Reading.of(is_area) if is_area else None)
        for added, values in readings.items() for r, v in enumerate(values)
    )
    samples = (
        Sample("River 4", SampleKind.UNKNOWN, 1, 2.5, (), (), additions),
        Sample("Well 1", SampleKind.UNKNOWN, 2, 1.0, (Measurement("lead", 1, Reading.of(15.0)),)),
        Sample("Flat", SampleKind.UNKNOWN, 3, 1.0, (), (),
               (Addition("lead", 0.0, 1, Reading.of(5.0)), Addition("lead", 1.0, 1, Reading.of(5.0)),
                Addition("lead", 2.0, 1, Reading.of(5.0)))),
    )
    return Run("invented", (analyte,), samples, RunSettings(confidence_level=0.95))


def test_each_series_is_extrapolated_from_its_mean_responses_and_diluted() -> None:
    a = analyse_run(invented_run()).analytes[0]
    assert [s.sample_id for s in a.additions] == ["River 4", "Flat"]
    river = a.additions[0]
    # means of the numeric replicates; the reading "n/a" is named and left out
    assert river.added == (0.0, 2.0, 4.0, 8.0)
    np.testing.assert_allclose(river.mean_response, [8.2, 12.2, 16.2, 24.2], rtol=1e-15)
    assert river.replicates == (2, 2, 2, 1)
    assert "addition 8, replicate 2: response 'n/a' is not a number" in river.note
    direct = cw.standard_additions([0, 2, 4, 8], [8.2, 12.2, 16.2, 24.2], replicates=[2, 2, 2, 1])
    assert river.result.concentration == pytest.approx(direct.concentration, rel=1e-14)
    assert river.reported == pytest.approx(2.5 * direct.concentration, rel=1e-14)
    assert river.reported_lower == pytest.approx(2.5 * direct.lower, rel=1e-14)
    assert river.reported_standard_error == pytest.approx(2.5 * direct.standard_error, rel=1e-14)
    # the ordinary sample is read through the calibration as before
    assert [s.sample_id for s in a.samples] == ["Well 1"]


def test_a_series_that_cannot_be_extrapolated_says_why() -> None:
    flat = analyse_run(invented_run()).analytes[0].additions[1]
    assert flat.result is None and flat.reported is None
    assert flat.note.startswith("not extrapolated: response: the line through the additions has slope 0")


def test_with_an_internal_standard_the_ratio_is_used() -> None:
    plain = analyse_run(invented_run()).analytes[0].additions[0]
    ratio = analyse_run(invented_run(uses_internal_standard=True)).analytes[0].additions[0]
    assert ratio.result.concentration == pytest.approx(plain.result.concentration, rel=1e-12)


def test_the_run_document_keeps_the_additions_and_matches_its_schema() -> None:
    run = invented_run()
    text = doc.dumps_run(run)
    again = doc.loads_run(text).run
    assert again.samples == run.samples
    schema = json.loads((ROOT / "resources" / "run-document.schema.json").read_text(encoding="utf-8"))
    jsonschema.validate(json.loads(text), schema)
    # a sample without additions is written as before (its content digest does not change)
    assert "additions" not in json.loads(text)["samples"][1]


def test_a_negative_addition_in_a_document_is_named() -> None:
    data = json.loads(doc.dumps_run(invented_run()))
    data["samples"][0]["additions"][2]["added"] = -1
    data.pop("content", None)
    with pytest.raises(DocumentError, match=r"samples\[0\]\.additions\[2\]\.added: -1.0: an added concentration cannot be below zero"):
        doc.loads_run(json.dumps(data))


def test_additions_of_an_analyte_the_run_lacks_are_named() -> None:
    run = invented_run()
    sample = replace(run.samples[0], additions=(Addition("cadmium", 0.0, 1, Reading.of(1.0)),))
    data = json.loads(doc.dumps_run(replace(run, samples=(sample,))))
    data.pop("content", None)
    with pytest.raises(DocumentError, match=r"additions\[0\]\.analyte: 'cadmium' is not an analyte of this run"):
        doc.loads_run(json.dumps(data))


def _additions_only_run(with_flat: bool) -> Run:
    """The invented run with a second analyte, cadmium, that has no calibration standards and is measured
    only by standard additions on River 4 (and on Flat, whose responses do not change, when asked)."""
    run = invented_run()
    cadmium = Analyte("cadmium", "µg/L", "counts", ())
    river = run.samples[0]
    extra = tuple(replace(a, analyte="cadmium", response=Reading.of(a.response.value / 4))
                  for a in river.additions if a.response.value is not None)
    samples = (replace(river, additions=river.additions + extra), *run.samples[1:])
    if with_flat:
        flat = samples[2]
        samples = (*samples[:2], replace(flat, additions=flat.additions + tuple(
            replace(a, analyte="cadmium") for a in flat.additions if a.analyte == "lead")))
    return replace(run, analytes=(*run.analytes, cadmium), samples=samples)


def test_an_analyte_measured_by_standard_additions_only_is_judged_by_its_series_not_failed_for_lacking_standards() -> None:
    result = analyse_run(_additions_only_run(with_flat=False))
    lead, cadmium = result.analytes
    assert cadmium.calibration is None and cadmium.by_additions_only and not lead.by_additions_only
    assert [s.sample_id for s in cadmium.additions] == ["River 4"] and cadmium.additions[0].result is not None
    assert cadmium.accepted
    assert ("cadmium: standard additions: no calibration standards: measured by standard additions only, so the "
            "standards' acceptance does not apply; 1 of 1 series extrapolated") in result.reasons
    # the run's verdict is the lead calibration's alone
    assert result.accepted == lead.accepted


def test_a_series_that_cannot_be_extrapolated_fails_an_analyte_measured_by_additions_only() -> None:
    result = analyse_run(_additions_only_run(with_flat=True))
    cadmium = result.analytes[1]
    assert not cadmium.accepted and not result.accepted
    assert cadmium.additions_words.endswith("1 of 2 series extrapolated; FAIL: not extrapolated: Flat")


def test_an_analyte_without_standards_or_additions_still_fails() -> None:
    run = invented_run()
    run = replace(run, analytes=(*run.analytes, Analyte("cadmium", "µg/L", "counts", ())))
    cadmium = analyse_run(run).analytes[1]
    assert not cadmium.by_additions_only and not cadmium.accepted and cadmium.error
