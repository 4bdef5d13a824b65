"""The common standard, measurement, sample and audit entry are read by short paths: each gives the
value the field-by-field checks give, and every other record, right or wrong, goes through those
checks, which name its problems."""

from __future__ import annotations

import copy
import json
import math
from pathlib import Path
from typing import Any

import pytest

from curvewright.io import run_document
from curvewright.io.run_document import _Reader

DEMOS = sorted((Path(__file__).resolve().parents[2] / "sample_runs").glob("*.json"))


class _Mapping(dict):  # type: ignore[type-arg]
    """A copy of a record that is not a plain dict: the short paths leave it to the checks."""


def _demo(name: str) -> dict[str, Any]:
    return json.loads(next(p for p in DEMOS if p.stem == name).read_text(encoding="utf-8"))


def _analyte(standard: Any, long_way: bool) -> tuple[Any, list[str]]:
    reader = _Reader()
    given = _Mapping(standard) if long_way and type(standard) is dict else standard
    built = reader.analyte({"name": "lead", "concentration_unit": "µg/L", "response_unit": "counts",
                            "model": "linear", "weighting": "none", "standards": [given]}, "analytes[0]")
    return built, reader.problems


def _sample(sample: Any, long_way: bool) -> tuple[Any, list[str]]:
    reader = _Reader()
    if long_way and type(sample) is dict:
        sample = _Mapping(sample)
        if type(sample.get("measurements")) is list:
            sample["measurements"] = [_Mapping(m) if type(m) is dict else m for m in sample["measurements"]]
    built = run_document._plain_sample(sample, {"lead", "zinc"}) if not long_way else None
    return built or reader.sample(sample, "samples[0]", {"lead", "zinc"}), reader.problems


def _entry(entry: Any, long_way: bool) -> tuple[Any, list[str]]:
    reader = _Reader()
    built = run_document._plain_entry(entry) if not long_way else None
    return built or reader.entry(_Mapping(entry) if long_way and type(entry) is dict else entry, "audit[0]"), reader.problems


def _same(a: Any, b: Any) -> bool:
    """Equal values, NaN equal to NaN and the sign of a zero kept."""
    if type(a) is not type(b):
        return False
    if isinstance(a, float):
        return (math.isnan(a) and math.isnan(b)) or (a == b and math.copysign(1, a) == math.copysign(1, b))
    if isinstance(a, (tuple, list)):
        return len(a) == len(b) and all(_same(x, y) for x, y in zip(a, b))
    if hasattr(a, "__dataclass_fields__"):
        return all(_same(getattr(a, f), getattr(b, f)) for f in a.__dataclass_fields__)
    return a == b


ODD = [None, True, False, 0, 1, -1, 0.0, -0.0, 2.5, -2.5, 1e-31, 1e31, 2**53, 2**53 - 1, "", " ", "x", "qc",
       [], {}, [1], {"value": 1.0, "text": "1.0"}]


def _variants(record: dict[str, Any]) -> list[Any]:
    """The record, each of its fields dropped or given each odd value, and values that are no record."""
    out: list[Any] = [record, None, [], "x", 1]
    for key in record:
        dropped = dict(record)
        del dropped[key]
        out.append(dropped)
        out += [{**record, key: value} for value in ODD]
    return out


STANDARD = _demo("nitrate_water_linear")["analytes"][0]["standards"][3]


@pytest.mark.parametrize("standard", _variants({**STANDARD, "level": "L2", "concentration_text": "0.5", "anchor": False,
                                                "internal_standard_response": {"value": 2.0, "text": "2.0"}}), ids=repr)
def test_a_standard_is_read_by_the_short_path_as_by_the_checks(standard: Any) -> None:
    short, short_problems = _analyte(standard, long_way=False)
    long, long_problems = _analyte(standard, long_way=True)
    assert short_problems == long_problems
    assert _same(short.standards, long.standards)


@pytest.mark.parametrize("excluded", [{"included": False, "exclusion_reason": ""}, {"included": False, "exclusion_reason": "  "},
                                      {"included": False, "exclusion_reason": "bubble"}, {"replicate": 0},
                                      {"concentration": None, "concentration_text": "abc"}, {"concentration": 5}],
                         ids=repr)
def test_the_standards_left_to_the_checks_are_read_as_before(excluded: dict[str, Any]) -> None:
    standard = {**STANDARD, **excluded}
    assert _analyte(standard, long_way=False)[1] == _analyte(standard, long_way=True)[1]
    assert _same(_analyte(standard, long_way=False)[0].standards, _analyte(standard, long_way=True)[0].standards)


def _measurement(**fields: Any) -> dict[str, Any]:
    return {"analyte": "lead", "replicate": 1, "response": {"value": 1500.0, "text": "1500"},
            "internal_standard_response": None, **fields}


SAMPLE = {"id": "S-1", "kind": "qc", "run_order": 3, "dilution_factor": 2.0, "nominal": {"lead": 5.0},
          "measurements": [_measurement(), _measurement(replicate=2)]}


@pytest.mark.parametrize("sample", _variants(SAMPLE) + [
    {**SAMPLE, "measurements": [_measurement(), _measurement()]},  # the same analyte and replicate twice
    {**SAMPLE, "measurements": [_measurement(analyte="copper")]},
    {**SAMPLE, "measurements": [_measurement(response={"value": "x", "text": "x"})]},
    {**SAMPLE, "measurements": [_measurement(replicate=-3), _measurement(analyte="zinc", replicate=0)]},
    {**SAMPLE, "measurements": [_measurement(internal_standard_response={"value": 9.0, "text": "9"})]},
    {**SAMPLE, "measurements": [_measurement(), "x"]},
    {**SAMPLE, "nominal": {"lead": 0.0}}, {**SAMPLE, "kind": "unknown", "nominal": {"lead": -1.0}},
    {**SAMPLE, "nominal": {"copper": 1.0}}, {**SAMPLE, "nominal": {"lead": 5}}, {**SAMPLE, "nominal": {}},
    {**SAMPLE, "additions": []}, {**SAMPLE, "additions": None},
    {**SAMPLE, "additions": [{"analyte": "lead", "added": 1.0, "replicate": 1, "response": {"value": 2.0, "text": "2"}}]},
], ids=repr)
def test_a_sample_is_read_by_the_short_path_as_by_the_checks(sample: Any) -> None:
    short, short_problems = _sample(copy.deepcopy(sample), long_way=False)
    long, long_problems = _sample(copy.deepcopy(sample), long_way=True)
    assert short_problems == long_problems
    assert _same(short, long)


ENTRY = _demo("zinc_emission_quadratic")["audit"][1]


@pytest.mark.parametrize("entry", _variants({**ENTRY, "analyst": "A. Analyst", "analyst_id": "A-1"}), ids=repr)
def test_an_audit_entry_is_read_by_the_short_path_as_by_the_checks(entry: Any) -> None:
    short, short_problems = _entry(entry, long_way=False)
    long, long_problems = _entry(entry, long_way=True)
    assert short_problems == long_problems
    assert _same(short, long)


@pytest.mark.parametrize("path", DEMOS, ids=lambda p: p.stem)
def test_the_demo_runs_are_read_by_the_short_paths(path: Path) -> None:
    document = json.loads(path.read_text(encoding="utf-8"))
    names = {a["name"] for a in document["analytes"]}
    plain_samples = [s for s in document["samples"] if not s.get("additions")]
    assert all(run_document._plain_standard(s) is not None for a in document["analytes"] for s in a["standards"])
    assert all(run_document._plain_sample(s, names) is not None for s in plain_samples)
    assert all(run_document._plain_entry(e) is not None for e in document["audit"])
    # and the run read from the document is the run the checks alone build
    short = run_document.loads_run(path.read_bytes()).run
    long = _Reader().run({**document, "analytes": [{**a, "standards": [_Mapping(s) for s in a["standards"]]}
                                                   for a in document["analytes"]],
                          "samples": [_Mapping(s) for s in document["samples"]],
                          "audit": [_Mapping(e) for e in document["audit"]]})
    assert _same(short.analytes, long.analytes) and _same(short.samples, long.samples) and short.audit == long.audit
