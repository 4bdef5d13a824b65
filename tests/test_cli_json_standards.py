"""The standards of the JSON results are written as rows as they are made (``results_json.Rows``),
without the walk over the whole result for numbers that are not finite: the text is the same as that
of the same rows walked first (``results_json.finite``) and written as a plain list."""

from __future__ import annotations

import io
import math
from pathlib import Path

import numpy as np
import pytest

from curvewright import cli
from curvewright.core.run_analysis import analyse_run
from curvewright.io.results_json import Rows, Written, finite, write_json
from curvewright.io.run_document import open_run

DEMOS = sorted((Path(__file__).resolve().parents[1] / "sample_runs").glob("*.json"))


def _text(data) -> str:  # type: ignore[no-untyped-def]
    out = io.StringIO()
    write_json(data, out)
    return out.getvalue()


def _walked(data: dict) -> dict:
    """The results with each analyte's standards as the plain list the whole walk made of them."""
    return {**data, "analytes": [{**a, "standards": finite(list(a["standards"]))} if "standards" in a else a
                                 for a in data["analytes"]]}


@pytest.mark.parametrize("path", DEMOS, ids=lambda p: p.stem)
def test_the_standards_written_as_rows_read_as_the_walked_list(path: Path) -> None:
    opened = open_run(path)
    data = cli.result_json(analyse_run(opened.run), path, [], chain=(opened.run, opened.chain_problems))
    standards = [a for a in data["analytes"] if "standards" in a]
    assert standards and all(isinstance(a["standards"], Rows) and len(a["standards"]) > 0 for a in standards)
    assert _text(data) == _text(_walked(data))
    # as an item of the list of many runs, the same
    assert Written(data, 1).text == Written(_walked(data), 1).text


def test_a_standard_with_a_number_that_is_not_finite_or_a_numpy_value() -> None:
    """Leverage 1 leaves a studentized residual undefined; an array's items are numpy values: such a row
    takes the long way and reads as the walked one (null for the number, plain numbers for numpy's)."""
    rows = [
        {"id": "S1", "concentration": 1.0, "response": 0.5, "leverage": 1.0, "cooks_distance": math.nan,
         "studentized_residual": math.inf, "influence_flags": ["high_leverage"], "within_limits": None},
        {"id": "S2", "concentration": np.float64(2.5), "response": np.float32(0.25), "leverage": np.int64(0),
         "cooks_distance": -math.inf, "studentized_residual": 0.1, "influence_flags": [], "within_limits": np.bool_(True)},
        {"id": "S3 «µg/L»", "concentration": 1e-300, "response": 1e300, "leverage": 0.2, "cooks_distance": 0.0,
         "studentized_residual": -0.0, "influence_flags": [], "within_limits": False},
    ]
    made = {"analytes": [{"name": "x", "standards": Rows(rows, lambda row: row)}]}
    text = _text(made)
    assert text == _text(_walked(made))
    assert '"cooks_distance": null' in text and '"studentized_residual": null' in text
    assert '"leverage": 0,' in text and '"within_limits": true}' in text
