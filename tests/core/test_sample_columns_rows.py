"""A block of samples' results made from the analysis's columns (as the results table makes the rows
it shows) equals the same samples among all the results, and each sample's result made alone."""

from __future__ import annotations

from pathlib import Path

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
