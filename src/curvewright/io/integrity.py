"""The identity of a run's content, and what changed when the file was edited outside Curvewright.

The content hash is a SHA-256 over everything the analysis reads — analytes, standards, samples,
settings, name and description — in canonical JSON (keys sorted, no insignificant white space,
UTF-8). It leaves out the audit trail (which records the hash after every change), the signatures
(which sign it) and the digest below. Two runs with the same hash hold the same data.

Every saved document also carries a digest of its parts: for each standard, sample and analyte a
short hash of each of its fields. When the data no longer match the last audit entry's content hash,
comparing the parts names what was changed ("the response of standard N-L2-1 of nitrate-N"). The
parts only serve to name a change; detecting it rests on the full hash in the hash-chained trail.
"""

from __future__ import annotations

import hashlib
import json
import math
from json.encoder import encode_basestring
from dataclasses import replace
from typing import Any, Iterator, Mapping, Sequence

from ..core.values import frozen_value
from ..core.run import Run, Sample

LEFT_OUT = ("audit", "signatures", "content")
"""Parts of the run document that are not content: they record, sign and digest the content."""
STANDARD_FIELDS = ("id", "level", "replicate", "concentration", "concentration_text", "response",
                   "internal_standard_response", "included", "exclusion_reason")
SAMPLE_FIELDS = ("kind", "run_order", "dilution_factor", "nominal", "measurements")
ANALYTE_FIELDS = ("concentration_unit", "response_unit", "model", "weighting", "choice_reason",
                  "uses_internal_standard")
FIELD_WORDS = {"concentration": "nominal concentration", "concentration_text": "nominal concentration (as typed)",
               "internal_standard_response": "internal-standard response", "exclusion_reason": "exclusion reason",
               "included": "inclusion", "run_order": "run order", "dilution_factor": "dilution factor",
               "measurements": "responses", "nominal": "nominal value", "concentration_unit": "concentration unit",
               "response_unit": "response unit", "choice_reason": "reason for the model",
               "uses_internal_standard": "use of an internal standard"}
SHORT = 8
"""Hex digits of each field's hash in the parts digest (enough to name a change, not to prove one)."""


def _canonical(value: Any) -> bytes:
    """The value in canonical JSON (keys sorted, no insignificant white space, UTF-8). A plain text,
    whole number or finite float is written directly, as the encoder writes it (its string escape,
    ``int.__repr__``, ``float.__repr__``), an empty object or list as ``{}`` or ``[]``; anything else goes
    through the encoder."""
    kind = type(value)
    if kind is str:
        return encode_basestring(value).encode("utf-8")
    if kind is float and math.isfinite(value):
        return float.__repr__(value).encode("ascii")
    if kind is int:
        return int.__repr__(value).encode("ascii")
    if (kind is dict or kind is list) and not value:  # a sample's nominal values are mostly none
        return b"{}" if kind is dict else b"[]"
    return _CANONICAL_ENCODER.encode(value).encode("utf-8")


_CANONICAL_ENCODER = json.JSONEncoder(sort_keys=True, ensure_ascii=False, separators=(",", ":"), allow_nan=False)
"""The encoder ``json.dumps(value, sort_keys=True, ensure_ascii=False, separators=(",", ":"),
allow_nan=False)`` would make for each call, made once (it keeps no state between calls)."""


def content_of(mapping: Mapping[str, Any]) -> dict[str, Any]:
    """The content part of a run document's mapping (see :data:`LEFT_OUT`)."""
    return {k: v for k, v in mapping.items() if k not in LEFT_OUT}


def sha256_of_content(mapping: Mapping[str, Any]) -> str:
    """SHA-256 (hex) of a run document mapping's content in canonical JSON."""
    return hashlib.sha256(_canonical(content_of(mapping))).hexdigest()


_RUN_MEMO = "_content_sha256"
_SAMPLE_MEMO = "_kept_text"
"""Where a run keeps its content hash, and a sample its canonical JSON, once worked out: in the
value's own attribute (a sample's room for it: :class:`~curvewright.core.run.KeepsText`), as :func:`functools.cached_property` keeps what it works out. A run and its
samples are immutable, so what is kept is never stale; it lives and dies with the value (no table
in this module, no identity that could be given to another value), and the runs made one from
another by edits share their unchanged samples, so an edit works out the text of the samples it
changed only. The document text is joined from the parts and hashed once per run."""


def content_sha256(run: Run) -> str:
    """SHA-256 (hex) of the run's content in canonical JSON: the same digest as
    :func:`sha256_of_content` of the run's document mapping, worked out once per run value and, for
    its samples, once per sample value. The text is hashed piece by piece as it is made (the samples
    a chunk at a time), never joined into one text."""
    known = vars(run).get(_RUN_MEMO)
    if known is not None:
        return known
    hasher = hashlib.sha256()
    for piece in content_pieces(run):
        hasher.update(piece)
    digest = hasher.hexdigest()
    object.__setattr__(run, _RUN_MEMO, digest)
    return digest


def content_text(run: Run) -> bytes:
    """The run's content in canonical JSON, as :func:`_canonical` writes :func:`content_of` of its
    document mapping (the canonical JSON of an object is its members' texts, keys sorted, joined;
    of a list, its items' texts joined), with each sample's text kept with the sample."""
    return b"".join(content_pieces(run))


SAMPLE_CHUNK = 4096
"""Samples turned into plain data and canonical text at a time (the plain data of all the samples of
a large run at once would be several times their text)."""


def content_pieces(run: Run) -> Iterator[bytes]:
    """The pieces of :func:`content_text`, in order: the text made and handed on a part at a time."""
    from .run_document import run_to_mapping

    content = content_of(run_to_mapping(replace(run, samples=(), audit=(), signatures=())))
    yield b"{"
    for number, (k, v) in enumerate(sorted(content.items())):
        yield (b"," if number else b"") + _canonical(k) + b":"
        if k != "samples":
            yield _canonical(v)
            continue
        yield b"["
        samples = run.samples
        for start in range(0, len(samples), SAMPLE_CHUNK):
            texts = sample_texts(samples[start:start + SAMPLE_CHUNK])
            yield (b"," if start else b"") + b",".join(texts)
        yield b"]"
    yield b"}"


def sample_texts(samples: Sequence[Sample]) -> list[bytes]:
    """Each sample's canonical JSON (as within the run's content), worked out only for samples that
    have not been written before."""
    texts: list[bytes | None] = [getattr(s, _SAMPLE_MEMO, None) for s in samples]
    new = [i for i, t in enumerate(texts) if t is None]
    if new:
        for i, text in zip(new, write_samples([samples[i] for i in new])):
            object.__setattr__(samples[i], _SAMPLE_MEMO, text)
            texts[i] = text
    return texts  # type: ignore[return-value]


def let_go_of_sample_texts(run: Run) -> None:
    """Let go of the canonical text each sample of ``run`` keeps (:func:`sample_texts`), for a run of
    many samples that will not be edited again, once the run's own content hash is kept with it (it is
    worked out here first when the audit trail records a content hash, which the results check the run
    against). The texts are the largest part of a large run's memory; one asked for again afterwards
    is written again, the same text."""
    if any(e.content_sha256 for e in run.audit):
        content_sha256(run)
    for s in run.samples:
        if getattr(s, _SAMPLE_MEMO, None) is not None:
            object.__delattr__(s, _SAMPLE_MEMO)


def write_samples(samples: Sequence[Sample]) -> list[bytes]:
    """The samples' canonical JSON, as :func:`_canonical` writes each sample's data of
    :func:`~.run_document.samples_out`. A sample of plain values (texts, whole numbers, finite floats,
    none) with at most one nominal value and no standard additions, which is almost every sample, is
    written directly, its keys in the order the encoder sorts them; any other through its plain data
    and the encoder."""
    out: list[bytes | None] = []
    other: list[int] = []
    for s in samples:
        text = _plain_sample(s)
        if text is None:
            other.append(len(out))
        out.append(text)
    if other:
        from .run_document import samples_out

        for i, data in zip(other, samples_out(samples[i] for i in other)):
            out[i] = _canonical(data)
    return out  # type: ignore[return-value]


def _plain(value: Any) -> str | None:
    """A text, whole number, finite float or none as the encoder writes it (its string escape,
    ``int.__repr__``, ``float.__repr__``, ``null``); None for anything else (a bool, a subclass, a
    value that is not finite), which is left to the encoder."""
    kind = type(value)
    if kind is str:
        return encode_basestring(value)
    if kind is float:
        return float.__repr__(value) if value - value == 0.0 else None  # NaN and the infinities make NaN
    if kind is int:
        return int.__repr__(value)
    if value is None:
        return "null"
    return None


def _plain_reading(reading: Any) -> str | None:
    """A reading as :func:`~.run_document._reading_out` gives it, in canonical JSON (None: not plain)."""
    if reading is None:
        return "null"
    text, value = _plain(reading.text), _plain(reading.value)
    if text is None or value is None:
        return None
    if reading.limit is None and reading.qualifier is None:
        return '{"text":' + text + ',"value":' + value + "}"
    limit = None if reading.limit is None else _plain(reading.limit)
    qualifier = None if reading.qualifier is None else _plain(reading.qualifier)
    if (reading.limit is not None and limit is None) or (reading.qualifier is not None and qualifier is None):
        return None
    return ("{" + ("" if limit is None else '"limit":' + limit + ",")
            + ("" if qualifier is None else '"qualifier":' + qualifier + ",") + '"text":' + text + ',"value":' + value + "}")


def _plain_sample(s: Sample) -> bytes | None:
    """One sample's canonical JSON written directly, or None to leave it to the encoder (see
    :func:`write_samples`)."""
    if s.additions or len(s.nominal) > 1:
        return None
    pieces = []
    for m in s.measurements:
        analyte, replicate = _plain(m.analyte), _plain(m.replicate)
        response, internal = _plain_reading(m.response), _plain_reading(m.internal_standard_response)
        if analyte is None or replicate is None or response is None or internal is None:
            return None
        pieces.append('{"analyte":' + analyte + ',"internal_standard_response":' + internal + ',"replicate":'
                      + replicate + ',"response":' + response + "}")
    if s.nominal:
        (name, value), = s.nominal
        name_text, value_text = _plain(name), _plain(value)
        if name_text is None or value_text is None:
            return None
        nominal = "{" + name_text + ":" + value_text + "}"
    else:
        nominal = "{}"
    dilution, sid, kind, order = _plain(s.dilution_factor), _plain(s.id), _plain(s.kind.value), _plain(s.run_order)
    if dilution is None or sid is None or kind is None or order is None:
        return None
    return ('{"dilution_factor":' + dilution + ',"id":' + sid + ',"kind":' + kind + ',"measurements":['
            + ",".join(pieces) + '],"nominal":' + nominal + ',"run_order":' + order + "}").encode("utf-8")


def _short(value: Any) -> str:
    return hashlib.sha256(_canonical(value)).hexdigest()[:SHORT]


def parts_of(mapping: Mapping[str, Any]) -> dict[str, str]:
    """Each part of the content with the short hashes of its fields, joined by "." in field order."""
    parts: dict[str, str] = {"run": ".".join(_short(mapping.get(k)) for k in ("name", "description")),
                             "settings": _short(mapping.get("settings"))}
    for a in mapping.get("analytes", []):
        name = a.get("name")
        parts[f"analyte\x1f{name}"] = ".".join(_short(a.get(k)) for k in ANALYTE_FIELDS)
        for s in a.get("standards", []):
            parts[f"standard\x1f{name}\x1f{s.get('id')}"] = ".".join(_short(s.get(k)) for k in STANDARD_FIELDS)
    for s in mapping.get("samples", []):
        parts[f"sample\x1f{s.get('id')}"] = ".".join(_short(s.get(k)) for k in SAMPLE_FIELDS)
    return parts


def digest_of(mapping: Mapping[str, Any]) -> dict[str, Any]:
    """The digest a saved document carries: the content hash and the parts."""
    return {"sha256": sha256_of_content(mapping), "parts": parts_of(mapping)}


@frozen_value
class ContentChange:
    """The data no longer match the last audit entry that recorded their hash."""

    entry_number: int
    entry_time: str
    entry_user: str
    changes: tuple[str, ...]

    def __str__(self) -> str:
        named = "; ".join(self.changes) if self.changes else "which values cannot be said (the digest is missing or altered too)"
        return (f"data changed outside Curvewright after entry {self.entry_number} ({self.entry_time}, "
                f"{self.entry_user}): {named}")


_DIGEST_MEMO = "_stored_digest"
"""Where a run read from a document keeps the digest the document carried (:func:`keep_stored_digest`),
as it keeps its content hash: in its own attribute, never copied to a run made from it by an edit."""


def keep_stored_digest(run: Run, stored: Any) -> None:
    """Keep with ``run`` the digest its document carried, so that every later :func:`content_change`
    of it (the record's, the workbook's and the JSON's statement of the chain) names what changed as
    the reader did."""
    object.__setattr__(run, _DIGEST_MEMO, stored)


def content_change(run: Run, stored: Any = None) -> ContentChange | None:
    """Whether the run's content differs from the hash its audit trail recorded last, naming what
    changed from the digest ``stored`` with the document (when that digest itself is intact); without
    ``stored``, from the digest kept with the run when it was read (:func:`keep_stored_digest`)."""
    from .run_document import run_to_mapping

    if stored is None:
        stored = vars(run).get(_DIGEST_MEMO)
    numbered = [(i + 1, e) for i, e in enumerate(run.audit) if e.content_sha256]
    if not numbered:
        return None
    number, entry = numbered[-1]
    if content_sha256(run) == entry.content_sha256:
        return None
    mapping = run_to_mapping(run)
    changes: list[str] = []
    if (isinstance(stored, Mapping) and stored.get("sha256") == entry.content_sha256
            and isinstance(stored.get("parts"), Mapping)):
        changes = _named_changes(_text_parts(stored["parts"]), parts_of(mapping))
    who = entry.analyst or entry.user
    return ContentChange(number, entry.time_utc, who, tuple(changes))


def _text_parts(parts: Mapping[object, object]) -> dict[str, str]:
    """The stored part digests that can be compared; anything else was damaged and counts as changed."""
    return {key: value for key, value in parts.items() if isinstance(key, str) and isinstance(value, str)}


def _part_words(kind: str, names: list[str]) -> str:
    """Words for one part of the run digest, e.g. "standard N-L2-1 of nitrate-N"."""
    if kind == "standard" and len(names) == 2:
        return f"standard {names[1]} of {names[0]}"
    if kind in ("sample", "analyte") and len(names) == 1:
        return f"{kind} {names[0]}"
    if kind == "run" and not names:
        return "the run's name or description"
    if kind == "settings" and not names:
        return "the run's settings"
    return "an unrecognised part of the run"


def _named_changes(before: Mapping[str, str], after: Mapping[str, str]) -> list[str]:
    out = []
    for key in sorted(set(before) | set(after)):
        old, new = before.get(key), after.get(key)
        if old == new:
            continue
        kind, *names = key.split("\x1f")
        what = _part_words(kind, names)
        if old is None:
            out.append(f"{what} was added")
            continue
        if new is None:
            out.append(f"{what} was removed")
            continue
        fields = {"standard": STANDARD_FIELDS, "sample": SAMPLE_FIELDS, "analyte": ANALYTE_FIELDS}.get(kind)
        if fields is None:
            out.append(f"{what} changed")
            continue
        changed = [FIELD_WORDS.get(f, f) for f, o, n in zip(fields, old.split("."), new.split(".")) if o != n]
        out.append(f"the {', '.join(changed)} of {what}" if changed else f"{what} changed")
    return out
