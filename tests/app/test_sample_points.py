"""The unknowns and QC samples as plotted (``figures.sample_points``): read over arrays, they are the
same points and interval ends as chosen one sample at a time from the samples' results, on linear
and log axes."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from curvewright.app import figures
from curvewright.core.run import SampleKind
from curvewright.core.run_analysis import SampleColumns, analyse_run
from curvewright.io.run_document import open_run
from tests.app.conftest import ROOT


def one_at_a_time(a, kind, tx, ty, log_x, log_y):  # type: ignore[no-untyped-def]
    """The rule written out sample by sample: an end that is missing, open or off a log axis is
    drawn at the estimate."""
    chosen = [s for s in a.samples if s.kind is kind and s.estimate is not None
              and (s.estimate > 0 or not log_x) and (s.mean_response > 0 or not log_y)]
    if not chosen:
        return None
    lo = [s.lower if s.lower is not None and np.isfinite(s.lower) and (s.lower > 0 or not log_x) else s.estimate
          for s in chosen]
    hi = [s.upper if s.upper is not None and np.isfinite(s.upper) else s.estimate for s in chosen]
    return tx([s.estimate for s in chosen]), ty([s.mean_response for s in chosen]), tx(lo), tx(hi)


def with_odd_ends(a):  # type: ignore[no-untyped-def]
    """The analyte's samples with missing, open, negative and zero ends and estimates mixed in."""
    odd = []
    for i, s in enumerate(a.samples):
        change = i % 6
        if change == 1:
            s = replace(s, lower=None)
        elif change == 2:
            s = replace(s, upper=float("inf"))
        elif change == 3 and s.estimate is not None:
            s = replace(s, lower=-abs(s.estimate))
        elif change == 4:
            s = replace(s, estimate=None)
        elif change == 5 and s.estimate is not None:
            s = replace(s, estimate=-1.0, lower=-2.0)
        odd.append(s)
    return replace(a, sample_columns=SampleColumns.of(a.sample_columns.analyte, tuple(odd)))


@pytest.mark.parametrize("name", ["nitrate_water_linear", "zinc_emission_quadratic", "cytokine_serum_4pl",
                                  "veltaprine_plasma_weighted"])
def test_points_read_over_arrays_are_those_chosen_one_by_one(name: str) -> None:
    result = analyse_run(open_run(ROOT / "sample_runs" / f"{name}.json").run)
    log10 = lambda v: np.log10(np.asarray(v, dtype=float))  # noqa: E731 - the log axes' transform
    linear = lambda v: np.asarray(v, dtype=float)  # noqa: E731
    compared = 0
    for a in result.analytes:
        for analyte in (a, with_odd_ends(a)):
            for kind in (SampleKind.UNKNOWN, SampleKind.QC):
                for log_x, log_y in ((False, False), (True, False), (True, True)):
                    tx, ty = (log10 if log_x else linear), (log10 if log_y else linear)
                    with np.errstate(divide="ignore", invalid="ignore"):
                        got = figures.sample_points(analyte, kind, tx, ty, log_x, log_y)
                        expected = one_at_a_time(analyte, kind, tx, ty, log_x, log_y)
                    if expected is None:
                        assert got is None
                        continue
                    compared += 1
                    for g, e in zip(got, expected):
                        assert g.dtype == np.float64
                        np.testing.assert_array_equal(g, e)
    assert compared > 0
