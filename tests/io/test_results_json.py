"""The results' JSON text, written piece by piece: the same data as the json module writes, rows on one line."""

from __future__ import annotations

import io
import json
import math
import pickle

import numpy as np
import pytest

from curvewright.io.results_json import Rows, finite, write_json


def _text(value: object) -> str:
    out = io.StringIO()
    write_json(value, out)
    return out.getvalue()


def test_nested_objects_are_written_as_the_json_module_writes_them_with_indent_1() -> None:
    # Python's json module (standard library) is the reference for the layout of everything that is not a row.
    value = {"run": "batch 7 — ü", "accepted": True, "nested": {"levels": [], "empty": {}, "deep": {"a": [1, [2, 3]]}},
             "reasons": ["one", "two"], "none": None, "n": 3}
    assert _text(value) == json.dumps(value, indent=1, ensure_ascii=False) + "\n"


def test_rows_are_one_line_each_and_read_back_equal() -> None:
    rows = [{"id": f"S{i}", "estimate": i / 3, "flags": ["in_range"], "nominal": None} for i in range(5)]
    value = {"analytes": [{"name": "lead", "samples": rows}]}
    text = _text(value)
    assert json.loads(text) == value
    lines = text.splitlines()
    assert sum(1 for line in lines if line.lstrip().startswith('{"id": "S')) == 5


def test_non_finite_numbers_become_null_at_any_depth() -> None:
    value = {"a": math.nan, "b": [math.inf, 1.0], "c": {"d": -math.inf}, "e": np.array([1.0, np.nan]),
             "rows": [{"x": math.nan, "y": [math.nan]}]}
    assert json.loads(_text(value)) == {"a": None, "b": [None, 1.0], "c": {"d": None}, "e": [1.0, None],
                                        "rows": [{"x": None, "y": [None]}]}
    assert finite((np.float64(2.5), np.int64(3))) == [2.5, 3]


def test_rows_are_made_only_while_written_and_pickle_as_the_plain_list() -> None:
    made: list[int] = []

    def make(i: int) -> dict[str, object]:
        made.append(i)
        return {"id": i, "value": i * 0.5}

    rows = Rows(range(2000), make)
    assert len(rows) == 2000 and made == []
    out = io.StringIO()
    write_json({"samples": rows}, out)
    assert made == list(range(2000))
    assert json.loads(out.getvalue())["samples"][1999] == {"id": 1999, "value": 999.5}
    assert pickle.loads(pickle.dumps(Rows(range(3), make))) == [{"id": i, "value": i * 0.5} for i in range(3)]


def test_a_long_list_reaches_the_stream_in_several_writes() -> None:
    class Counting(io.StringIO):
        writes = 0

        def write(self, s: str) -> int:
            Counting.writes += 1
            return super().write(s)

    out = Counting()
    write_json({"samples": Rows(range(10_000), lambda i: {"id": i})}, out)
    assert Counting.writes > 10
    assert len(json.loads(out.getvalue())["samples"]) == 10_000


def test_a_number_json_cannot_hold_is_refused_not_written() -> None:
    with pytest.raises(TypeError):
        _text({"a": object()})


def test_rows_holding_numpy_scalars_or_non_finite_numbers_are_written_as_json_numbers_and_null() -> None:
    rows = Rows([0, 1], lambda i: {"id": i, "passed": np.bool_(i == 1), "n": np.int64(i), "value": math.nan})
    assert json.loads(_text({"samples": rows})) == {"samples": [{"id": 0, "passed": False, "n": 0, "value": None},
                                                                {"id": 1, "passed": True, "n": 1, "value": None}]}
