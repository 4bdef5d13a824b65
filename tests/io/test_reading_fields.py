"""A reading of a number and its text (the common one) is read by a short path: it gives the reading
the field-by-field checks give, and every other reading, right or wrong, goes through those checks."""

from __future__ import annotations

import math

import numpy as np
import pytest

from curvewright.core.run import Reading
from curvewright.io import run_document
from curvewright.io.run_document import _Reader


def _long_way(m, required: bool = True):  # type: ignore[no-untyped-def]
    """The field-by-field checks alone (a reading given as a copy that is not a plain dict)."""

    class Mapping(dict):
        pass

    reader = _Reader()
    got = reader.reading(None if m is None else (Mapping(m) if isinstance(m, dict) else m), "r", required)
    return got, reader.problems


def _short_way(m, required: bool = True):  # type: ignore[no-untyped-def]
    reader = _Reader()
    return reader.reading(m, "r", required), reader.problems


VALUES = [0.0, -0.0, 1e-30, -1e-30, 1e30, -1e30, 9.999e-31, 1.0001e30, 0.0014, -0.0014, 123.456, math.nan, math.inf,
          -math.inf, None, 0, 1, -3, 10**40, True, False, "0.5", [], {}, np.float64(0.25)]
TEXTS = ["0.0014", "", "ND", "<0.5", None, 5, ["x"]]


@pytest.mark.parametrize("value", VALUES, ids=repr)
def test_the_short_path_reads_as_the_checks(value) -> None:  # type: ignore[no-untyped-def]
    for text in TEXTS:
        m = {"value": value, "text": text}
        short, short_problems = _short_way(m)
        long, long_problems = _long_way(m)
        assert short == long and short_problems == long_problems, (value, text)
        if short is not None and short.value is not None:
            assert type(short.value) is float and math.copysign(1, short.value) == math.copysign(1, long.value)


def test_other_readings_take_the_checks() -> None:
    for m in ({"value": 0.5}, {"text": "0.5"}, {"value": 0.5, "qualifier": "<"}, {"value": 0.5, "text": "x", "limit": 1.0},
              {"value": None, "text": "<0.5", "qualifier": "<", "limit": 0.5}, {"valeur": 0.5, "text": "0.5"}, None, [], "0.5"):
        for required in (True, False):
            assert _short_way(m, required) == _long_way(m, required)
    assert _short_way({"value": 0.0014, "text": "0.0014"})[0] == Reading(0.0014, "0.0014", None, None)
    assert run_document.MEASURE_RANGE == (1e-30, 1e30)
