"""A block of samples' results made from the analysis's columns (as the results table makes the rows
it shows) equals the same samples among all the results, and each sample's result made alone."""

from __future__ import annotations

from dataclasses import fields
from pathlib import Path

import numpy as np

import pytest

from curvewright.core.run_analysis import analyse_run
from curvewright.io.run_document import open_run

DEMOS = sorted((Path(__file__).resolve().parents[2] / "sample_runs").glob("*.json"))


@pytest.mark.parametrize("path", DEMOS, ids=lambda p: p.stem)
def test_a_block_of_results_is_those_samples_results(path: Path) -> None:
    result = analyse_run(open_run(path).run)
    checked = 0
    for a in result.analytes:
        columns = a.sample_columns
        if columns is None:
            continue
        every = columns.results()
        n = len(columns)
        for start, stop in ((0, n), (0, 1), (1, 4), (n - 1, n), (2, n + 5), (n, n + 3), (3, 2), (0, 0)):
            assert columns.results(start, stop) == every[start:stop], (start, stop)
        assert [columns.result(i) for i in range(n)] == list(every)
        checked += n
    assert checked > 0


@pytest.mark.parametrize("path", DEMOS, ids=lambda p: p.stem)
def test_qc_samples_judged_over_the_columns_as_one_at_a_time(path: Path) -> None:
    """Each QC sample's verdict and the analyte's QC verdict, judged over the columns, are what the
    definition gives sample by sample: within the profile's QC tolerance of 100 % recovery (the
    boundary counted in, as the profile's rules do), and the QC rules over the QC samples with a
    nominal value and a reported number."""
    from curvewright.core.run import SampleKind

    result = analyse_run(open_run(path).run)
    tolerance = result.profile.qc.tolerance_percent
    for a in result.analytes:
        if a.sample_columns is None or a.checks is not None:
            continue
        samples = a.samples
        for s in samples:
            if s.kind is SampleKind.QC and s.recovery_percent is not None:
                assert s.within_limits == (abs(s.recovery_percent - 100.0) <= tolerance + 1e-9), s.sample_id
            elif s.kind is SampleKind.QC:
                assert s.within_limits is None
        qc = [s for s in samples if s.kind is SampleKind.QC and s.nominal is not None and s.reported is not None]
        expected = result.profile.evaluate_qc([s.nominal for s in qc], [s.reported for s in qc]) if qc else None
        assert (a.qc_verdict is None) == (expected is None)
        if expected is not None:
            for field in fields(expected):  # arrays compared element for element
                got, want = getattr(a.qc_verdict, field.name), getattr(expected, field.name)
                assert np.array_equal(got, want) if isinstance(want, np.ndarray) else got == want, field.name
