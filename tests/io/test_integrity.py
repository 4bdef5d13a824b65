"""The content digest kept with a saved run: changes are named, and a damaged digest never stops a check."""

from __future__ import annotations

import json

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from curvewright.io.run_document import loads_run
from tests.io.helpers import ROOT

DEMO = ROOT / "sample_runs" / "nitrate_water_linear.json"


def edited_demo(edit) -> str:  # type: ignore[no-untyped-def]
    data = json.loads(DEMO.read_text(encoding="utf-8"))
    edit(data)
    return json.dumps(data)


def test_an_edited_response_is_named_with_its_standard() -> None:
    def edit(data: dict) -> None:
        data["analytes"][0]["standards"][4]["response"] = {"value": 0.1531, "text": "0.1531"}

    change = loads_run(edited_demo(edit)).content_change
    assert change is not None
    assert any("response" in c and "standard N-L2-2 of nitrate-N" in c for c in change.changes), change.changes


def test_a_damaged_digest_still_reports_the_change_without_naming_garbage() -> None:
    def edit(data: dict) -> None:
        data["analytes"][0]["standards"][4]["response"] = {"value": 0.1531, "text": "0.1531"}
        parts = data["content"]["parts"]
        parts["analyte\x1fnitrate-N"] = False       # not a digest
        parts["standard\x1fonly-one-name"] = "abc"  # a key of the wrong shape
        parts["weather\x1fsunny"] = "abc"           # a kind the program does not write

    change = loads_run(edited_demo(edit)).content_change
    assert change is not None and change.entry_number >= 1
    assert str(change).startswith("data changed outside Curvewright after entry")
    assert "an unrecognised part of the run was removed" in change.changes
    assert any("standard N-L2-2 of nitrate-N" in c for c in change.changes)


def test_the_content_hash_is_that_of_the_content_however_often_asked() -> None:
    """The hash of a run is worked out once per run value; it is always the SHA-256 of the run's
    canonical content, and a changed run (a new value) has its own."""
    import gc
    import hashlib
    import weakref
    from dataclasses import replace

    from curvewright.io import integrity
    from curvewright.io.run_document import run_to_mapping

    run = loads_run(DEMO.read_text(encoding="utf-8")).run
    canonical = json.dumps(integrity.content_of(run_to_mapping(run)), sort_keys=True, ensure_ascii=False,
                           separators=(",", ":"), allow_nan=False).encode("utf-8")
    assert integrity.content_sha256(run) == hashlib.sha256(canonical).hexdigest() == integrity.content_sha256(run)
    renamed = replace(run, name=run.name + " (copy)")
    assert integrity.content_sha256(renamed) != integrity.content_sha256(run)
    assert integrity.content_sha256(renamed) == integrity.sha256_of_content(run_to_mapping(renamed))
    gone = weakref.ref(renamed)
    del renamed
    gc.collect()
    assert gone() is None  # nothing outside the run keeps it (or its hash) alive


def test_the_integrity_module_keeps_no_state_of_its_own() -> None:
    """Hashing runs changes nothing in the module: what is worked out is kept with each value, so two
    runs (or two sessions, two processes' runs) never share hash state."""
    import copy
    from dataclasses import replace

    from curvewright.io import integrity

    def module_state() -> dict[str, object]:
        return {k: copy.deepcopy(v) for k, v in vars(integrity).items()
                if not k.startswith("__") and isinstance(v, (dict, list, set, tuple, bytes, str, int, float))}

    before = module_state()
    run = loads_run(DEMO.read_text(encoding="utf-8")).run
    other = replace(run, samples=run.samples[1:])
    assert integrity.content_sha256(run) != integrity.content_sha256(other)
    assert module_state() == before
    assert not [k for k, v in vars(integrity).items() if isinstance(v, (dict, list, set)) and k.startswith("_")
                and not k.startswith("__")]


def test_runs_that_share_their_samples_hash_their_own_content() -> None:
    """Runs made one from another by edits share their samples' text; each hash is still that of the
    run's whole content (the samples' canonical text sits in the content's as the encoder writes it)."""
    from dataclasses import replace

    from curvewright.io import integrity
    from curvewright.io.run_document import run_to_mapping

    run = loads_run(DEMO.read_text(encoding="utf-8")).run
    others = [replace(run, description="edited"), replace(run, samples=run.samples[1:]), replace(run, samples=()),
              replace(run, analytes=run.analytes[:1], name="ä ∑ \"quoted\"")]
    for value in [run, *others, run, others[1]]:
        expected = integrity.sha256_of_content(run_to_mapping(value))
        assert integrity.content_sha256(replace(value)) == expected  # a fresh value: worked out, not remembered
    assert len({integrity.content_sha256(v) for v in [run, *others]}) == 5


def test_an_edit_writes_out_only_the_samples_it_changed(monkeypatch) -> None:  # type: ignore[no-untyped-def]
    """Runs made one from another by edits share their unchanged samples: hashing the edited run
    writes the canonical text of the changed sample only, and the hash is that of the whole content."""
    from dataclasses import replace

    from curvewright.io import integrity, run_document

    run = loads_run(DEMO.read_text(encoding="utf-8")).run
    assert len(run.samples) >= 3
    integrity.content_sha256(run)
    written: list[str] = []
    write_samples = integrity.write_samples

    def counted(samples):  # type: ignore[no-untyped-def]
        written.extend(s.id for s in samples)
        return write_samples(samples)

    monkeypatch.setattr(integrity, "write_samples", counted)
    changed = replace(run.samples[1], dilution_factor=run.samples[1].dilution_factor * 2)
    edited = replace(run, samples=(run.samples[0], changed, *run.samples[2:]))
    digest = integrity.content_sha256(edited)
    assert written == [changed.id]
    monkeypatch.setattr(integrity, "write_samples", write_samples)
    assert digest == integrity.sha256_of_content(run_document.run_to_mapping(edited)) != integrity.content_sha256(run)


def test_plain_values_are_written_as_the_json_encoder_writes_them() -> None:
    """Texts, whole numbers and finite floats are written directly; the bytes are the encoder's
    (Python's json module with the canonical options), and what it refuses is still refused."""
    import math

    import pytest

    from curvewright.io import integrity

    def encoder(value):  # type: ignore[no-untyped-def]
        return json.dumps(value, sort_keys=True, ensure_ascii=False, separators=(",", ":"),
                          allow_nan=False).encode("utf-8")

    values = ["", "plain", "µg/L", 'ä ∑ "quoted" \\ back', "tab\tnew\nline\r\x00\x1f\x7f", "\u2028\u2029",
              "😀 emoji", 0, 1, -7, 10**30, -(10**30), 0.0, -0.0, 1.5, 0.1 + 0.2, 1e-300, 5e-324, 1.7976931348623157e308,
              1e16, 123456789.0, None, True, False, [1, "a"], {"b": 1, "a": [0.5]}]
    for value in values:
        assert integrity._canonical(value) == encoder(value), value
    for bad in (math.nan, math.inf, -math.inf):
        with pytest.raises(ValueError):
            integrity._canonical(bad)


def test_a_samples_kept_text_is_left_out_of_equality_copies_and_pickles() -> None:
    """The text the content hash keeps with a sample never travels to a changed or copied value."""
    import dataclasses
    import pickle

    from curvewright.core.run import Run, Sample
    from curvewright.io.integrity import content_sha256

    sample = Sample("U-1", dilution_factor=2.0)
    first = content_sha256(Run(name="r", analytes=(), samples=(sample,)))
    assert getattr(sample, "_kept_text", None) is not None
    changed = dataclasses.replace(sample, dilution_factor=5.0)
    assert getattr(changed, "_kept_text", None) is None
    assert getattr(pickle.loads(pickle.dumps(sample)), "_kept_text", None) is None
    assert pickle.loads(pickle.dumps(sample)) == sample
    assert content_sha256(Run(name="r", analytes=(), samples=(changed,))) != first


def test_a_run_of_many_samples_is_hashed_a_chunk_at_a_time(monkeypatch) -> None:  # type: ignore[no-untyped-def]
    """The samples are written out a chunk at a time and the text hashed as it is made: the hash is the
    SHA-256 of the one canonical text (the encoder's, as ``json.dumps`` writes it), across chunk
    boundaries, and no more than a chunk of samples is written at once."""
    import hashlib
    from dataclasses import replace

    from curvewright.io import integrity, run_document

    run = loads_run(DEMO.read_text(encoding="utf-8")).run
    many = tuple(replace(run.samples[i % len(run.samples)], id=f"S-{i:05d}", run_order=i)
                 for i in range(2 * integrity.SAMPLE_CHUNK + 3))
    big = replace(run, samples=many)
    canonical = json.dumps(integrity.content_of(run_document.run_to_mapping(big)), sort_keys=True,
                           ensure_ascii=False, separators=(",", ":"), allow_nan=False).encode("utf-8")
    sizes: list[int] = []
    write_samples = integrity.write_samples

    def counted(samples):  # type: ignore[no-untyped-def]
        sizes.append(len(samples))
        return write_samples(samples)

    monkeypatch.setattr(integrity, "write_samples", counted)
    assert integrity.content_sha256(big) == hashlib.sha256(canonical).hexdigest()
    assert sizes == [integrity.SAMPLE_CHUNK, integrity.SAMPLE_CHUNK, 3]
    assert integrity.content_text(replace(big)) == canonical
    assert integrity.content_text(replace(big, samples=())) == json.dumps(
        integrity.content_of(run_document.run_to_mapping(replace(big, samples=()))), sort_keys=True,
        ensure_ascii=False, separators=(",", ":"), allow_nan=False).encode("utf-8")


_TEXTS = st.text(st.characters(codec="utf-8"), max_size=6) | st.sampled_from(["", "a\"b", "\\", "\x00\x1f\x7f", "µg/L", "\u2028"])
_NUMBERS = (st.floats(allow_nan=True, allow_infinity=True) | st.sampled_from([0.0, -0.0, 5e-324, 1e300, 1.0, 0.1])
            | st.integers(-3, 10**20) | st.booleans() | st.none())


@st.composite
def _readings(draw):  # type: ignore[no-untyped-def]
    from curvewright.core.run import Reading

    return Reading(draw(_NUMBERS), draw(_TEXTS), draw(st.none() | st.sampled_from(["<", ">", "ND"]) | _TEXTS),
                   draw(st.none() | _NUMBERS))


@st.composite
def _samples(draw):  # type: ignore[no-untyped-def]
    from curvewright.core.run import Addition, Measurement, Sample, SampleKind

    measurements = tuple(Measurement(draw(_TEXTS), draw(st.integers(0, 4) | st.booleans()), draw(_readings()),
                                     draw(st.none() | _readings())) for _ in range(draw(st.integers(0, 3))))
    additions = tuple(Addition(draw(_TEXTS), draw(_NUMBERS), 1, draw(_readings()))
                      for _ in range(draw(st.sampled_from([0, 0, 0, 1]))))
    nominal = tuple((draw(_TEXTS), draw(_NUMBERS)) for _ in range(draw(st.integers(0, 2))))
    return Sample(draw(_TEXTS), draw(st.sampled_from(list(SampleKind))), draw(st.none() | st.integers(-2, 10**6)),
                  draw(_NUMBERS), measurements, nominal, additions)


@settings(max_examples=400, deadline=None)
@given(st.lists(_samples(), max_size=4))
def test_samples_written_directly_are_what_the_encoder_writes(samples) -> None:  # type: ignore[no-untyped-def]
    """Each sample's canonical text is that of its plain data through the encoder, byte for byte
    (``json.dumps`` with sorted keys, no spaces, UTF-8, no NaN), whatever its values: a value the
    encoder refuses (NaN, an infinity) is refused as the encoder refuses it."""
    from curvewright.io import integrity
    from curvewright.io.run_document import samples_out

    expected: list[bytes | type] = []
    for data in samples_out(samples):
        try:
            expected.append(json.dumps(data, sort_keys=True, ensure_ascii=False, separators=(",", ":"),
                                       allow_nan=False).encode("utf-8"))
        except ValueError:
            expected.append(ValueError)
    if ValueError in expected:
        with pytest.raises(ValueError):
            integrity.write_samples(samples)
    else:
        assert integrity.write_samples(samples) == expected


def test_texts_let_go_of_leave_the_hashes_as_they_were() -> None:
    """A run that lets go of its samples' kept texts keeps its content hash, and a run made from it
    afterwards (its samples written again) has the hash it would have had with the texts kept."""
    from dataclasses import replace

    from curvewright.io.integrity import content_sha256, let_go_of_sample_texts, sha256_of_content
    from curvewright.io.run_document import run_to_mapping

    path = ROOT / "sample_runs" / "veltaprine_plasma_weighted.json"
    run = loads_run(path.read_text(encoding="utf-8")).run
    assert any(e.content_sha256 for e in run.audit) and run.samples
    kept = content_sha256(run)
    assert all(getattr(s, "_kept_text", None) is not None for s in run.samples)
    let_go_of_sample_texts(run)
    assert all(getattr(s, "_kept_text", None) is None for s in run.samples)
    assert content_sha256(run) == kept == sha256_of_content(run_to_mapping(run))
    renamed = replace(run, name=run.name + " (copy)")
    assert content_sha256(renamed) == sha256_of_content(run_to_mapping(renamed)) != kept
