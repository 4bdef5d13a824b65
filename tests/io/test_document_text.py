"""The document and recovery text, laid out without the pure-Python JSON encoder, is the text that
``json.dumps(..., indent=1, ensure_ascii=False, allow_nan=False)`` writes, byte for byte (the
reference is the standard library's own ``json`` module, Python documentation, "json — JSON encoder
and decoder"), for every demo run, for runs holding unusual text and for generated values."""

from __future__ import annotations

import json
from dataclasses import replace
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from curvewright.core.run import Reading, Sample, SampleKind, Measurement
from curvewright.io import run_document as doc
from curvewright.io.integrity import digest_of
from tests.io.helpers import DEMO_RUNS, many_element_run, small_run


def reference(value, level: int = 0) -> str:
    """The standard library's indented text (its pure-Python encoder), moved ``level`` spaces in."""
    return json.dumps(value, indent=1, ensure_ascii=False, allow_nan=False).replace("\n", "\n" + " " * level)


def reference_document(run) -> str:
    mapping = doc.run_to_mapping(run)
    mapping["content"] = digest_of(mapping)
    return reference(mapping) + "\n"


def reference_recovery(run, source) -> str:
    wrapper = {"format": doc.RECOVERY_FORMAT, "schema_version": doc.RECOVERY_VERSION,
               "source": "" if source is None else str(source), "run": doc.run_to_mapping(run)}
    return reference(wrapper) + "\n"


UNUSUAL_TEXT = ["", "µg/L", "Blei – Probe №5", "日本語のテキスト", "tab\there", "line\nbreak\r\n", "\x00\x01\x1f\x7f",
                'quote " and \\ backslash', "slash / and \u2028\u2029 separators", "emoji 🧪 and combining e\u0301",
                "\ufeffBOM", "{not: [json]}", " " * 5]
NUMBERS = [0, -0.0, 1e-30, 5e-324, 1.7976931348623157e308, -2.5e-7, 0.1 + 0.2, 123456789012345678901234567890,
           -(10**299), 2**53 - 1, 1e22, 1e16, 3.0]


def scalars():
    return st.one_of(st.none(), st.booleans(), st.integers(), st.integers(min_value=-10**400, max_value=10**400),
                     st.floats(allow_nan=False, allow_infinity=False), st.text(), st.sampled_from(UNUSUAL_TEXT),
                     st.sampled_from(NUMBERS))


json_values = st.recursive(
    scalars(),
    lambda inner: st.one_of(st.lists(inner, max_size=5), st.dictionaries(st.text(max_size=8), inner, max_size=5),
                            st.just([]), st.just({}), st.just([[], {}, [{}], {"": []}])),
    max_leaves=40,
)


@settings(max_examples=400, deadline=None)
@given(json_values, st.integers(min_value=0, max_value=6))
def test_generated_values_are_laid_out_as_the_standard_encoder_lays_them_out(value, level) -> None:
    assert doc.indented_json(value, level) == reference(value, level)


@pytest.mark.parametrize("value", [
    {"a": (1, 2, [3, {}])}, {1: "whole-number name", 2.5: [], None: {}, True: 0}, [{"x": ()}],
    {"deep": [[[[[[[[[[{"k": []}]]]]]]]]]]}, [True, False, None, 0, -0.0, "", [], {}],
], ids=["tuple", "names-not-text", "empty-tuple", "deep", "mixed"])
def test_values_the_layout_hands_to_the_encoder_keep_its_text(value) -> None:
    for level in (0, 1, 3):
        assert doc.indented_json(value, level) == reference(value, level)


@pytest.mark.parametrize("bad", [float("nan"), float("inf"), -float("inf")])
def test_a_value_that_is_not_finite_raises_the_encoders_error(bad) -> None:
    with pytest.raises(ValueError) as ours:
        doc.indented_json({"a": [1, {"b": bad}]})
    with pytest.raises(ValueError) as theirs:
        reference({"a": [1, {"b": bad}]})
    assert str(ours.value) == str(theirs.value)


def unusual_run():
    """A run whose names, units, ids and typed text hold non-ASCII text, control characters and
    escapes, and whose numbers are very long or very small (invented)."""
    run = small_run()
    analyte = run.analytes[0]
    standards = tuple(replace(s, id=f"{UNUSUAL_TEXT[i % len(UNUSUAL_TEXT)]}#{i}",
                              exclusion_reason=UNUSUAL_TEXT[(i + 3) % len(UNUSUAL_TEXT)])
                      for i, s in enumerate(analyte.standards))
    analyte = replace(analyte, concentration_unit="µg/L \"as Pb\"", response_unit="counts\t(Σ)", standards=standards,
                      choice_reason="line\nbreak and \\ backslash")
    samples = tuple(
        Sample(f"U{i} {text}", SampleKind.UNKNOWN, i, 1.0 if i % 2 else 123456.78901234567,
               (Measurement(analyte.name, 1, Reading(value, text)),))
        for i, (text, value) in enumerate(zip(UNUSUAL_TEXT, [1e-30, 1e30, 0.1 + 0.2, 5e-7, 12345678901234.567] * 3))
    ) + (Sample("no measurements", SampleKind.BLANK, None, 1.0, ()),)
    return replace(run, name="Ξ run \x1f \u2028", description="«invented» data\n\ttwo lines",
                   analytes=(analyte,), samples=samples)


def runs():
    loaded = [(p.stem, doc.open_run(p).run) for p in DEMO_RUNS]
    return loaded + [("small", small_run()), ("many elements", many_element_run()), ("unusual text", unusual_run())]


@pytest.mark.parametrize("name_run", runs(), ids=lambda nr: nr[0])
def test_documents_and_recovery_files_are_the_standard_encoders_text(name_run, tmp_path: Path) -> None:
    _name, run = name_run
    assert doc.dumps_run(run) == reference_document(run)
    for source in (None, tmp_path / "run één.json", "C:\\runs\\\"quoted\".json"):
        assert doc.dumps_recovery(run, source) == reference_recovery(run, source)
    doc.save_run(run, tmp_path / "saved.json")
    assert (tmp_path / "saved.json").read_bytes() == reference_document(run).encode("utf-8")
    doc.save_recovery(run, tmp_path / "recovery.json", tmp_path / "run één.json")
    written = (tmp_path / "recovery.json").read_bytes()
    assert written == reference_recovery(run, tmp_path / "run één.json").encode("utf-8")
    opened, source = doc.open_recovery(tmp_path / "recovery.json")
    assert opened.run == run and source == str(tmp_path / "run één.json")


def test_demo_documents_on_disk_are_written_again_byte_for_byte(tmp_path: Path) -> None:
    for path in DEMO_RUNS:
        doc.save_run(doc.open_run(path).run, tmp_path / path.name)
        assert (tmp_path / path.name).read_bytes() == path.read_bytes(), path.name


def test_a_recovery_of_a_run_no_document_may_hold_is_refused_and_nothing_is_written(tmp_path: Path) -> None:
    run = small_run()
    analyte = run.analytes[0]
    bad = replace(analyte, standards=(replace(analyte.standards[0], concentration=1e40),) + analyte.standards[1:])
    with pytest.raises(doc.DocumentError, match="not saved"):
        doc.save_recovery(replace(run, analytes=(bad,)), tmp_path / "recovery.json", None)
    assert not (tmp_path / "recovery.json").exists()


@settings(max_examples=300, deadline=None)
@given(json_values)
def test_the_digests_canonical_json_is_the_standard_encoders_compact_sorted_text(value) -> None:
    from curvewright.io.integrity import _canonical

    expected = json.dumps(value, sort_keys=True, ensure_ascii=False, separators=(",", ":"), allow_nan=False)
    assert _canonical(value) == expected.encode("utf-8")
