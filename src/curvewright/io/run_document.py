"""Run documents: versioned, human-readable JSON with validation, migrations and atomic saving.

Format ``curvewright-run``, ``schema_version`` 1 (JSON Schema: ``resources/run-document.schema.json``).
Opening validates everything the analysis relies on and reports every problem with its path in the
document (``analytes[0].standards[3].concentration: expected a number, found "abc"``); it refuses
files over :data:`MAX_DOCUMENT_BYTES`, nesting deeper than :data:`MAX_NESTING`, whole numbers of
more than :data:`MAX_DIGITS` digits and text that is not Unicode characters (unpaired surrogates),
and only ever parses JSON, never executes anything. Older versions are brought up to date by one
migration function per format change (:data:`MIGRATIONS`).

Saving is atomic and keeps the previous version as ``NAME.bak`` (:mod:`.atomic`; a symbolic link is
written through to the file it points to). Every write of a document holds the operating system's
lock on ``.NAME.lock`` beside it, so that :func:`append_to_run_document` (the command line's
``--record``) re-reads and replaces the file while no other writer can come in between: two
processes recording at once both keep their entries. A program that holds a document open can pass
the :attr:`OpenedRun.sha256` it read to :func:`save_run` (``expected_sha256``), which then refuses
with :class:`DocumentChanged` if the file on disk changed meanwhile; :func:`document_unchanged` asks
the same question without saving. A save never drops what the file on disk records and the run does
not (signatures, an approval, audit entries written elsewhere since it was read): that is checked
under the lock, just before the write, and refused with :class:`RecordsWouldBeLost`, even when the
caller chose to overwrite.

Recovery files (the app's autosave) are a small wrapper, format ``curvewright-recovery``, holding
the run and the path of the document it belongs to (:func:`save_recovery`, :func:`open_recovery`).
"""

from __future__ import annotations

import json
import math
import re
import sys
from dataclasses import replace
from json.encoder import encode_basestring
from pathlib import Path
from typing import Any, Callable, Iterable, Mapping

from ..core.values import frozen_value
from .._version import __version__
from ..core.acceptance import AcceptanceProfile, available_profiles
from ..core.errors import CurvewrightError
from ..core.limits import LIMIT_METHODS, limit_methods_words
from ..core.models import Model
from ..core.rounding import RoundingRule
from ..core.run import (
    SIGNATURE_ROLES,
    Addition,
    Analyte,
    AuditEntry,
    Measurement,
    Reading,
    Run,
    RunSettings,
    Sample,
    SampleKind,
    Signature,
    Standard,
)
from ..core.weighting import Weighting
from .atomic import exclusive_lock, write_atomically
from .audit import (Clock, Identity, append_entry, file_sha256, file_sha256_streamed, unheld_signatures, utc_now,
                    verify_chain)
from .errors import DocumentError, ExportError
from .integrity import ContentChange, content_change, content_sha256, digest_of, keep_stored_digest

FORMAT = "curvewright-run"
SCHEMA_VERSION = 1
MAX_DOCUMENT_BYTES = 64 * 1024 * 1024
MAX_NESTING = 64
"""Levels of lists and objects a document may nest (a run document uses fewer than ten)."""
MAX_DIGITS = 300
"""Digits a whole number in a document may have (a double's range ends at about 1.8e308)."""
MAX_WHOLE = 2**53 - 1
"""Largest whole number a counting field (replicate, run order) may hold: exact in every JSON reader."""
MEASURE_RANGE = (1e-30, 1e30)
"""Sizes a measured value (concentration, response, dilution factor, nominal value) may have, zero
apart: wider than any measurement, and narrow enough that no step of a fit (squares, weights such as
1/x², their products) overflows or underflows a double."""
_MEASURE_WORDS = "a finite number, zero or from 1e-30 to 1e30 in size"
_APPEND_ATTEMPTS = 20
RECOVERY_FORMAT = "curvewright-recovery"
RECOVERY_VERSION = 1

Migration = Callable[[dict[str, Any]], dict[str, Any]]
MIGRATIONS: dict[int, Migration] = {}
"""``MIGRATIONS[v]`` turns a version-v document into version v + 1. None yet: version 1 is the first."""


@frozen_value
class OpenedRun:
    """A run read from disk, with what the reader must be told about it."""

    run: Run
    path: Path | None
    chain_problems: tuple[str, ...]
    migrated_from: int | None
    sha256: str | None = None
    """SHA-256 of the bytes read (None when parsed from text): compare with :func:`document_unchanged`."""
    content_change: ContentChange | None = None
    """The data differ from the content hash the audit trail recorded last (edited outside Curvewright)."""

    @property
    def integrity_problems(self) -> tuple[str, ...]:
        """Everything that is not as Curvewright left it: the chain's problems, changed data and
        signatures the trail records but the document no longer holds."""
        return (self.chain_problems + ((str(self.content_change),) if self.content_change else ())
                + unheld_signatures(self.run))

    @property
    def chain_verified(self) -> bool:
        return not self.chain_problems


# --- writing ---------------------------------------------------------------------------------------
def run_to_mapping(run: Run) -> dict[str, Any]:
    """The run as JSON-ready data (floats kept exactly: JSON carries their shortest repr)."""
    s = run.settings
    return {
        "format": FORMAT,
        "schema_version": SCHEMA_VERSION,
        "software_version": __version__,
        "name": run.name,
        "description": run.description,
        "settings": {
            "confidence_level": s.confidence_level,
            "interval": s.interval,
            "limits_method": s.limits_method,
            "acceptance_profile": s.acceptance_profile,
            "custom_profile": None if s.custom_profile is None else dict(s.custom_profile),
            "rounding": {"kind": s.rounding.kind, "digits": s.rounding.digits, "tie": s.rounding.tie},
            "level_tolerance": s.level_tolerance,
            **({"method": dict(s.method)} if s.method is not None else {}),
        },
        "analytes": [
            {
                "name": a.name,
                "concentration_unit": a.concentration_unit,
                "response_unit": a.response_unit,
                "model": a.model,
                "weighting": a.weighting,
                "choice_reason": a.choice_reason,
                "uses_internal_standard": a.uses_internal_standard,
                "standards": [
                    {
                        "id": st.id,
                        "level": st.level,
                        "concentration": st.concentration if st.has_concentration else None,
                        **({"concentration_text": st.concentration_text} if st.concentration_text else {}),
                        "response": _reading_out(st.response),
                        "replicate": st.replicate,
                        "included": st.included,
                        "exclusion_reason": st.exclusion_reason,
                        "internal_standard_response": _reading_out(st.internal_standard_response),
                        **({"anchor": True} if st.anchor else {}),
                    }
                    for st in a.standards
                ],
            }
            for a in run.analytes
        ],
        "samples": samples_out(run.samples),
        "audit": [
            {
                "time_utc": e.time_utc,
                "user": e.user,
                "action": e.action,
                "details": dict(e.details),
                "previous_hash": e.previous_hash,
                "hash": e.hash,
                **({"analyst": e.analyst} if e.analyst else {}),
                **({"analyst_id": e.analyst_id} if e.analyst_id else {}),
                **({"content_sha256": e.content_sha256} if e.content_sha256 else {}),
            }
            for e in run.audit
        ],
        **({"signatures": [dict(vars(sig)) for sig in run.signatures]} if run.signatures else {}),
        **({"instrument": run.instrument} if run.instrument else {}),
    }


def dumps_run(run: Run) -> str:
    """The run document's text: the run, and the digest of its content (:mod:`.integrity`)."""
    return _run_texts(run)[1]


def _run_texts(run: Run) -> tuple[str, str]:
    """The run's mapping as indented JSON (without the digest), and the run document's text: the
    same members with the digest of the content (:mod:`.integrity`) as the last, written once. The
    document is the text ``json.dumps(mapping, indent=1, ensure_ascii=False, allow_nan=False)``
    writes (:func:`indented_json`); the digest is added by replacing the run's closing brace."""
    try:
        mapping = run_to_mapping(run)
        text = indented_json(mapping)
        content = indented_json(digest_of(mapping), 1)
    except ValueError as exc:
        raise DocumentError(f"run {run.name!r} holds a value JSON cannot store ({exc}).") from None
    return text, f'{text[:-2]},\n "content": {content}\n}}\n'


_PADS = ["\n" + " " * level for level in range(MAX_NESTING + 2)]
_WORDS = {None: "null", True: "true", False: "false"}


def indented_json(value: Any, level: int = 0) -> str:
    """``value`` as ``json.dumps(value, indent=1, ensure_ascii=False, allow_nan=False)`` writes it, with
    every line after the first indented by ``level`` more spaces (as it stands ``level`` deep in an
    indented document), byte for byte; but written by the standard library's compiled parts (its
    string escape, ``float.__repr__``, ``int.__repr__``) instead of its pure-Python encoder, which
    the encoder uses whenever it indents. Objects and lists are laid out here, one member a line;
    anything else than plain texts, numbers, true, false, null, lists and objects with text names
    (a subclass, a tuple, another kind of name) goes through the encoder itself, its lines moved
    ``level`` spaces in: text in JSON holds no line break (it is escaped), so every line break in
    the encoder's text begins a line of its layout. A float that is not finite raises the encoder's
    own ``ValueError``."""
    out: list[str] = []
    _lay_out(value, level, out)
    return "".join(out)


def _lay_out(value: Any, level: int, out: list[str]) -> None:
    kind = type(value)
    if kind is dict and all(type(k) is str for k in value):
        if not value:
            out.append("{}")
            return
        pad = _PADS[level + 1] if level + 1 < len(_PADS) else "\n" + " " * (level + 1)
        lead = "{" + pad
        for k, v in value.items():
            inner = type(v)
            # a member holding plain text or a number is written here, one piece (the common case)
            if inner is str:
                out.append(f"{lead}{encode_basestring(k)}: {encode_basestring(v)}")
            elif inner is int:
                out.append(f"{lead}{encode_basestring(k)}: {int.__repr__(v)}")
            elif inner is float and v - v == 0.0:
                out.append(f"{lead}{encode_basestring(k)}: {float.__repr__(v)}")
            elif v is None or inner is bool:
                out.append(f"{lead}{encode_basestring(k)}: {_WORDS[v]}")
            else:
                out.append(f"{lead}{encode_basestring(k)}: ")
                _lay_out(v, level + 1, out)
            lead = "," + pad
        out.append(pad[:-1] + "}")
    elif kind is list:
        if not value:
            out.append("[]")
            return
        pad = _PADS[level + 1] if level + 1 < len(_PADS) else "\n" + " " * (level + 1)
        lead = "[" + pad
        for v in value:
            out.append(lead)
            _lay_out(v, level + 1, out)
            lead = "," + pad
        out.append(pad[:-1] + "]")
    elif kind is str:
        out.append(encode_basestring(value))
    elif kind is float:
        # not finite: the encoder raises its own error, as it would within the document
        out.append(float.__repr__(value) if value - value == 0.0 else json.dumps(value, indent=1, allow_nan=False))
    elif kind is int:
        out.append(int.__repr__(value))
    elif value is None or kind is bool:
        out.append(_WORDS[value])
    else:
        text = json.dumps(value, indent=1, ensure_ascii=False, allow_nan=False)
        out.append(text.replace("\n", "\n" + " " * level) if level else text)


class DocumentChanged(ExportError):
    """The document on disk is no longer the one that was opened; nothing was written."""


class RecordsWouldBeLost(DocumentChanged):
    """The document on disk records what the run being saved does not (audit entries, signatures,
    an approval added since it was read); overwriting it would drop them, so nothing was written.
    ``records`` says what, one line each."""

    def __init__(self, message: str, records: tuple[str, ...]) -> None:
        super().__init__(message)
        self.records = records


def records_not_kept(on_disk: Run, run: Run) -> tuple[str, ...]:
    """What the run ``on_disk`` records that ``run`` does not, one line each: its signatures
    (approvals and withdrawals among them) and its audit entries absent from ``run``'s trail
    (compared by their chain hashes). Only for two versions of one run (their trails start with
    the same entry); for anything else, nothing is compared and () is returned."""
    if on_disk.audit and run.audit and on_disk.audit[0].hash != run.audit[0].hash:
        return ()
    kept = {(s.role, s.name, s.person_id, s.time_utc, s.content_sha256) for s in run.signatures}
    lines = [
        f"the {s.role} signature of {s.name or s.login} ({s.time_utc})" if s.role in SIGNATURE_ROLES
        else f"a record that {s.name or s.login} withdrew an approval ({s.time_utc})"
        for s in on_disk.signatures if (s.role, s.name, s.person_id, s.time_utc, s.content_sha256) not in kept
    ]
    held = {e.hash for e in run.audit}
    missing = [e for e in on_disk.audit if e.hash not in held]
    if missing:
        actions = ", ".join(dict.fromkeys(e.action for e in missing))
        lines.append(f"{len(missing)} audit trail entr{'y' if len(missing) == 1 else 'ies'} ({actions}), "
                     f"the last by {missing[-1].analyst or missing[-1].user} at {missing[-1].time_utc}")
    return tuple(lines)


def _refuse_losing_records(run: Run, path: Path) -> None:
    """Raise :class:`RecordsWouldBeLost` when the run document now at ``path`` records what ``run``
    does not (a file that is not a readable run document is not compared: it holds no trail)."""
    if not path.is_file():
        return
    try:
        on_disk = open_run(path).run
    except (CurvewrightError, OSError):
        return
    lost = records_not_kept(on_disk, run)
    if lost:
        raise RecordsWouldBeLost(
            f"{path}: not saved, because the file now records what this run does not, and saving over it "
            "would drop it:\n" + "\n".join(f"- {line}" for line in lost)
            + "\nNothing was written. Open the file again to see it, or save this run under another name.",
            lost,
        )


def save_run(run: Run, path: str | Path, *, expected_sha256: str | None = None) -> str:
    """Save atomically under the document's lock, keeping the previous file as ``NAME.bak``;
    return the SHA-256 of what was written. With ``expected_sha256`` (the :attr:`OpenedRun.sha256`
    read when the document was opened, or returned by the last save) the save is refused with
    :class:`DocumentChanged` when the file on disk is no longer that one.

    Whenever the file on disk is not that one (or none was expected), it is read under the lock,
    just before it would be replaced: when it is a version of the same run that records audit
    entries or signatures this run lacks (another window or command signed, approved or recorded
    in it since this run was read), the save is refused with :class:`RecordsWouldBeLost`, even
    when the caller chose to overwrite changes: nothing recorded is ever dropped by a save."""
    path = Path(path)
    data = _readable_document(run, path)
    with exclusive_lock(path):
        on_disk = document_sha256(path) if path.exists() else None
        if on_disk is not None and on_disk != expected_sha256:
            _refuse_losing_records(run, path)
            if expected_sha256 is not None:
                raise DocumentChanged(
                    f"{path}: not saved, because the file was changed on disk after it was opened (by another "
                    "program, or by a command that recorded an export in it); nothing was written. Open it again "
                    "to see the changes, or save this run under another name."
                )
        write_atomically(path, data, keep_backup=True)
    return file_sha256(data)


def append_to_run_document(
    path: str | Path,
    entries: Iterable[tuple[str, Mapping[str, Any]]],
    *,
    user: "Identity | str | None" = None,
    clock: Clock = utc_now,
) -> Run:
    """Append audit entries ``(action, details)`` to the document at ``path`` and save it: the
    document is re-read and replaced while its lock is held, so entries appended by another
    process at the same time are kept. Only the trail grows; nothing else in the document changes.
    Where the file system has no locks, the document is checked to be unchanged just before it is
    replaced, and read again if it was. Returns the run as saved."""
    path = Path(path)
    entries = list(entries)
    for _ in range(_APPEND_ATTEMPTS):
        with exclusive_lock(path) as locked:
            opened = open_run(path)
            from .run_edits import note_outside_change

            noted = note_outside_change(opened.run, user=user, clock=clock)
            trail = noted.audit
            unchanged = content_sha256(opened.run)
            for action, details in entries:
                trail = append_entry(trail, action, details, user=user, clock=clock, content_sha256=unchanged)
            run = replace(noted, audit=trail)
            data = _readable_document(run, path)
            if not locked and not document_unchanged(path, opened.sha256):
                continue  # another writer came in between: read its version and append to that
            write_atomically(path, data, keep_backup=True)
            return run
    raise ExportError(
        f"{path}: the audit entries were not added, because other programs kept changing the file "
        f"({_APPEND_ATTEMPTS} attempts); nothing was written. Try again."
    )


def update_run_document(path: str | Path, change: Callable[[Run], Run]) -> Run:
    """Apply ``change`` to the run in the document at ``path`` and save it, read and replaced under the
    document's lock (as :func:`append_to_run_document`), so that no other writer's entries are lost.
    Returns the run as saved; whatever ``change`` raises reaches the caller, with nothing written."""
    path = Path(path)
    for _ in range(_APPEND_ATTEMPTS):
        with exclusive_lock(path) as locked:
            opened = open_run(path)
            run = change(opened.run)
            data = _readable_document(run, path)
            if not locked and not document_unchanged(path, opened.sha256):
                continue  # another writer came in between: read its version and change that
            write_atomically(path, data, keep_backup=True)
            return run
    raise ExportError(f"{path}: not changed, because other programs kept changing the file "
                      f"({_APPEND_ATTEMPTS} attempts); nothing was written. Try again.")


def _readable_document(run: Run, path: Path) -> bytes:
    """The document's bytes, once it is certain that they open again: a run holding what no run
    document may (a value out of range, text that is not characters) is not written, so that no
    save ever produces a file that cannot be opened."""
    return _readable_texts(run, path)[1]


def _readable_texts(run: Run, path: Path) -> tuple[str, bytes]:
    """The run's indented text (:func:`_run_texts`) and the document's bytes, once the document has
    been read back in full (:func:`loads_run`) and opens."""
    run_text, text = _run_texts(run)
    try:
        loads_run(text, origin=str(path))
    except DocumentError as exc:
        raise DocumentError(
            f"{path}: not saved, because the run holds values a run document cannot hold (the file could not be "
            "opened again); nothing was written. Correct them and save again",
            exc.problems or (str(exc).split(": ", 1)[-1],),
        ) from None
    return run_text, text.encode("utf-8")


def document_sha256(path: str | Path) -> str | None:
    """SHA-256 of the file at ``path`` as it is now; None when it cannot be read."""
    try:
        return file_sha256_streamed(Path(path))
    except OSError:
        return None


def document_unchanged(path: str | Path, sha256: str | None) -> bool:
    """True when the file at ``path`` still holds exactly the bytes whose SHA-256 is ``sha256``
    (for a program that opened it and wants to know whether someone else has written it since)."""
    return sha256 is not None and document_sha256(path) == sha256


def dumps_recovery(run: Run, source: str | Path | None) -> str:
    """A recovery file: the run and the document it belongs to ("" for a run never saved)."""
    try:
        run_text = indented_json(run_to_mapping(run))  # the run alone: a recovery file holds no digest
    except ValueError as exc:
        raise DocumentError(f"run {run.name!r} holds a value JSON cannot store ({exc}).") from None
    return _recovery_text(run_text, source)


def _recovery_text(run_text: str, source: str | Path | None) -> str:
    """The recovery file around the run's indented text (:func:`_run_texts`): the text
    ``json.dumps(wrapper, indent=1, ensure_ascii=False, allow_nan=False)`` writes for the wrapper
    object, whose last member is the run, one level in."""
    head = indented_json({"format": RECOVERY_FORMAT, "schema_version": RECOVERY_VERSION,
                          "source": "" if source is None else str(source)})
    return f'{head[:-2]},\n "run": {run_text.replace(chr(10), chr(10) + " ")}\n}}\n'


def save_recovery(run: Run, path: str | Path, source: str | Path | None) -> None:
    """Write a recovery file atomically (the previous one kept as ``NAME.bak``): one file holds
    both the run and where it came from, so a crash can never separate them. The run's text is
    written once: the run document made of it is read back in full first (as :func:`save_run`
    does), and the recovery file wraps the same text, so nothing is written that does not open."""
    run_text, _document = _readable_texts(run, Path(path))
    write_atomically(Path(path), _recovery_text(run_text, source).encode("utf-8"), keep_backup=True)


def open_recovery(path: str | Path) -> tuple[OpenedRun, str]:
    """Read a recovery file: the run and the path of its document ("" when it was never saved).
    A recovery file of an earlier version (a plain run document with the path in a ``.source``
    file beside it) is read too."""
    path = Path(path)
    raw = _read_document(path)
    mapping = _parse(raw, str(path))
    if isinstance(mapping, dict) and mapping.get("format") == RECOVERY_FORMAT:
        source = mapping.get("source")
        opened = run_from_mapping(mapping.get("run"), str(path))
        source = source if isinstance(source, str) else ""
    else:
        opened = run_from_mapping(mapping, str(path))
        companion = path.with_suffix(".source")
        try:
            source = companion.read_text(encoding="utf-8") if companion.exists() else ""
        except (OSError, UnicodeDecodeError):
            source = ""
    return replace(opened, path=path, sha256=file_sha256(raw)), source


def samples_out(samples: Iterable[Sample]) -> list[dict[str, Any]]:
    """The samples as JSON-ready data (the "samples" of :func:`run_to_mapping`)."""
    return [
        {
            "id": sm.id,
            "kind": sm.kind.value,
            "run_order": sm.run_order,
            "dilution_factor": sm.dilution_factor,
            "nominal": {name: value for name, value in sm.nominal},
            "measurements": [
                {
                    "analyte": m.analyte,
                    "replicate": m.replicate,
                    "response": _reading_out(m.response),
                    "internal_standard_response": _reading_out(m.internal_standard_response),
                }
                for m in sm.measurements
            ],
            # only when measured, so that documents without standard additions keep their content digest
            **({"additions": [
                {
                    "analyte": ad.analyte,
                    "added": ad.added,
                    "replicate": ad.replicate,
                    "response": _reading_out(ad.response),
                    "internal_standard_response": _reading_out(ad.internal_standard_response),
                }
                for ad in sm.additions
            ]} if sm.additions else {}),
        }
        for sm in samples
    ]


def _reading_out(reading: Reading | None) -> dict[str, Any] | None:
    if reading is None:
        return None
    out: dict[str, Any] = {"value": reading.value, "text": reading.text}
    if reading.qualifier is not None:
        out["qualifier"] = reading.qualifier
    if reading.limit is not None:
        out["limit"] = reading.limit
    return out


# --- reading ---------------------------------------------------------------------------------------
def open_run(path: str | Path) -> OpenedRun:
    """Read, validate and (if older) migrate a run document."""
    path = Path(path)
    raw = _read_document(path)
    opened = loads_run(raw, origin=str(path))
    return replace(opened, path=path, sha256=file_sha256(raw))


def _read_document(path: Path) -> bytes:
    try:
        size = path.stat().st_size
    except OSError as exc:
        raise DocumentError(f"{path}: cannot open ({exc.strerror or exc}).") from None
    if size > MAX_DOCUMENT_BYTES:
        raise DocumentError(
            f"{path}: {size / 1e6:.1f} MB is larger than a run document can be "
            f"({MAX_DOCUMENT_BYTES / 1e6:.0f} MB); it is not opened."
        )
    try:
        return path.read_bytes()
    except OSError as exc:
        raise DocumentError(f"{path}: cannot read ({exc.strerror or exc}).") from None


def loads_run(data: str | bytes, origin: str = "run document") -> OpenedRun:
    """Parse a run document from its text."""
    return run_from_mapping(_parse(data, origin), origin)


def _parse(data: str | bytes, origin: str) -> Any:
    """JSON text to plain data, refusing what no run document holds (see the module docstring)."""
    if isinstance(data, bytes):
        if len(data) > MAX_DOCUMENT_BYTES:
            raise DocumentError(f"{origin}: larger than a run document can be; it is not opened.")
        try:
            data = data.decode("utf-8")
        except UnicodeDecodeError as exc:
            raise DocumentError(f"{origin}: not UTF-8 text (byte {exc.start}); a run document is JSON text.") from None
    oversized: list[_Oversized] = []

    def whole_number(digits: str) -> int | _Oversized:
        value = _whole_number(digits)
        if type(value) is _Oversized:
            oversized.append(value)
        return value

    try:
        mapping = json.loads(data, parse_constant=_refuse_constant, parse_int=whole_number)
    except json.JSONDecodeError as exc:
        raise DocumentError(
            f"{origin}: not valid JSON at line {exc.lineno}, column {exc.colno} ({exc.msg}); the file may be "
            "truncated or edited by hand."
        ) from None
    except RecursionError:
        raise DocumentError(
            f"{origin}: lists and objects nested more than {MAX_NESTING} levels deep{_too_deep_at(data)}; no run "
            "document is built like this, so it is not opened."
        ) from None
    except ValueError as exc:  # a constant JSON does not have (NaN, Infinity), refused by _refuse_constant
        raise DocumentError(f"{origin}: {exc}{_constant_at(data)} is not a number a run document may hold "
                            "(every number must be finite).") from None
    problems = _structure_problems(mapping) if _may_have_structure_problems(data, mapping, bool(oversized)) else []
    if problems:
        raise DocumentError(f"{origin}: the document has {len(problems)} problem(s)", tuple(problems))
    return mapping


_TOKENS = re.compile(r'"(?:[^"\\]|\\.)*"|[\[\]{}]')


_CONSTANTS = re.compile(r'"(?:[^"\\]|\\.)*"|(-?Infinity|NaN)')


def _line_column(text: str, at: int) -> str:
    line = text.count("\n", 0, at) + 1
    return f" at line {line}, column {at - (text.rfind(chr(10), 0, at) + 1) + 1}"


def _constant_at(text: str) -> str:
    """Where the first NaN or Infinity outside strings stands (" at line L, column C")."""
    for token in _CONSTANTS.finditer(text):
        if token.group(1):
            return _line_column(text, token.start())
    return ""


def _too_deep_at(text: str) -> str:
    """Where the nesting first goes past :data:`MAX_NESTING` (" at line L, column C"), found by
    scanning brackets outside strings without recursion."""
    depth = 0
    for token in _TOKENS.finditer(text):
        mark = token.group()
        if mark in "[{":
            depth += 1
            if depth > MAX_NESTING:
                return _line_column(text, token.start())
        elif mark in "]}":
            depth -= 1
    return ""


class _Oversized:
    """A whole number with too many digits, kept as its digit count until it is reported."""

    def __init__(self, digits: int) -> None:
        self.digits = digits


def _whole_number(text: str) -> int | _Oversized:
    digits = len(text.lstrip("-"))
    return _Oversized(digits) if digits > MAX_DIGITS else int(text)


_SURROGATE = re.compile("[\ud800-\udfff]")
_MAX_LISTED = 20


_SURROGATE_ESCAPE = re.compile(r"\\u[dD][89a-fA-F]")


def _may_be_oversized(text: str, document: Any, oversized: bool) -> bool:
    """The parser met a whole number of too many digits (it says so in ``oversized``)."""
    return oversized


def _may_hold_surrogate(text: str, document: Any, oversized: bool) -> bool:
    """An unpaired surrogate can only come from a surrogate in the text (which UTF-8 cannot encode)
    or a ``\\uD800``–``\\uDFFF`` escape in it."""
    if _SURROGATE_ESCAPE.search(text) is not None:
        return True
    try:
        text.encode("utf-8")
    except UnicodeEncodeError:
        return True
    return False


def _may_nest_too_deep(text: str, document: Any, oversized: bool) -> bool:
    """The nesting counted on the lists and objects alone, one level at a time, without paths."""
    level = [document] if type(document) in (dict, list) else []
    depth = 0
    while level:
        depth += 1
        if depth > MAX_NESTING:
            return True
        inner: list[Any] = []
        for value in level:
            inner.extend([item for item in (value.values() if type(value) is dict else value)
                          if type(item) is dict or type(item) is list])
        level = inner
    return False


_STRUCTURE_KINDS: dict[str, Callable[[str, Any, bool], bool]] = {
    "oversized": _may_be_oversized,
    "surrogate": _may_hold_surrogate,
    "nesting": _may_nest_too_deep,
}
"""Every kind of problem :func:`_structure_problems` reports, with its cheap sign that the kind may be
there. The walk names the kind of each problem it notes and looks it up here, so a kind without a sign
cannot be reported; :func:`_may_have_structure_problems` asks every sign."""


def _may_have_structure_problems(text: str, document: Any, oversized: bool) -> bool:
    """Whether :func:`_structure_problems` could find anything, found without naming paths: any kind
    of :data:`_STRUCTURE_KINDS` whose sign is there. ``oversized`` says whether the parser met a whole
    number of too many digits. The full walk, which names the paths, runs only when this finds a
    reason (it is then the judge)."""
    return any(sign(text, document, oversized) for sign in _STRUCTURE_KINDS.values())


def _structure_problems(document: Any) -> list[str]:
    """Nesting deeper than :data:`MAX_NESTING`, oversized whole numbers and unpaired surrogates,
    each with its path (iteratively: a deep document cannot exhaust the stack here). Each problem is
    of a kind of :data:`_STRUCTURE_KINDS`."""
    problems: list[str] = []
    count = 0

    def note(kind: str, path: str, message: str) -> None:
        nonlocal count
        if kind not in _STRUCTURE_KINDS:  # a kind the pre-check cannot see is an error here, not a missed problem
            raise KeyError(f"structure problem kind {kind!r} has no sign in _STRUCTURE_KINDS")
        count += 1
        if count <= _MAX_LISTED:
            problems.append(f"{path or '(the document)'}: {message}")

    def text(value: str, path: str, what: str) -> None:
        if (found := _SURROGATE.search(value)) is not None:
            note("surrogate", path, f"{what} holds U+{ord(found.group()):04X}, an unpaired surrogate that is not a "
                                    "character; the file was damaged or written by a faulty program")

    stack: list[tuple[Any, str, int]] = [(document, "", 0)]
    while stack:
        value, path, depth = stack.pop()
        if isinstance(value, str):
            text(value, path, "the text")
        elif isinstance(value, _Oversized):
            note("oversized", path, f"a whole number of {value.digits} digits is larger than any a run document holds")
        elif isinstance(value, (dict, list)):
            if depth >= MAX_NESTING:
                note("nesting", path, f"nested more than {MAX_NESTING} levels deep; no run document is built like this")
                continue
            if isinstance(value, dict):
                for key, item in value.items():
                    shown = _SURROGATE.sub(lambda m: f"\\u{ord(m.group()):04x}", key)
                    where = f"{path}.{shown}" if path else shown
                    text(key, where, "the name")
                    stack.append((item, where, depth + 1))
            else:
                stack.extend((item, f"{path}[{i}]", depth + 1) for i, item in enumerate(value))
    if count > _MAX_LISTED:
        problems.append(f"… and {count - _MAX_LISTED} more problem(s) of these kinds")
    return problems


def _finite_number(value: Any) -> bool:
    """A JSON number that a double holds as a finite value (whole numbers of any size included)."""
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return False
    if isinstance(value, int):
        return abs(value) <= sys.float_info.max
    return math.isfinite(value)


def _measure(value: Any) -> bool:
    """A finite number that is zero or lies within :data:`MEASURE_RANGE` in size."""
    return _finite_number(value) and (value == 0 or MEASURE_RANGE[0] <= abs(value) <= MEASURE_RANGE[1])


def _whole(value: Any) -> bool:
    return isinstance(value, int) and not isinstance(value, bool) and abs(value) <= MAX_WHOLE


def run_from_mapping(mapping: Any, origin: str = "run document") -> OpenedRun:
    if not isinstance(mapping, dict):
        raise DocumentError(f"{origin}: a run document is a JSON object, found {type(mapping).__name__}.")
    if mapping.get("format") != FORMAT:
        raise DocumentError(f"{origin}: not a Curvewright run document ('format' is {mapping.get('format')!r}).")
    version = mapping.get("schema_version")
    if isinstance(version, bool) or not isinstance(version, int) or version < 1:
        raise DocumentError(f"{origin}: 'schema_version' must be a whole number ≥ 1, found {version!r}.")
    if version > SCHEMA_VERSION:
        raise DocumentError(
            f"{origin}: written with schema version {version}, newer than this Curvewright ({__version__}) "
            f"reads (up to {SCHEMA_VERSION}); open it with a newer version."
        )
    migrated_from = version if version < SCHEMA_VERSION else None
    while version < SCHEMA_VERSION:
        mapping = MIGRATIONS[version](mapping)
        version += 1
        mapping["schema_version"] = version
    reader = _Reader()
    run = reader.run(mapping)
    if reader.problems:
        raise DocumentError(f"{origin}: the document has {len(reader.problems)} problem(s)", tuple(reader.problems))
    assert run is not None
    keep_stored_digest(run, mapping.get("content"))
    return OpenedRun(run, None, verify_chain(run.audit), migrated_from, content_change=content_change(run))


def _plain_measure(value: Any) -> bool:
    """A float that :func:`_measure` accepts (zero, or within :data:`MEASURE_RANGE` in size)."""
    return type(value) is float and (value == 0 or MEASURE_RANGE[0] <= abs(value) <= MEASURE_RANGE[1])


def _plain_reading(m: Any) -> Reading | None:
    """The common reading, an object of a number (or null) and its text and nothing else, read as
    its fields are: the reading :meth:`_Reader.reading` gives for it with no problem. None for any
    other value (absent, censored, a number of another type or outside the range…), which is left
    to the field-by-field checks."""
    if type(m) is dict and len(m) == 2:
        value, text = m.get("value", m), m.get("text")
        if type(text) is str and (value is None or _plain_measure(value)):
            return Reading(value, text, None, None)
    return None


def _plain_standard(s: Any) -> Standard | None:
    """The common standard, every field of its plain kind and within its limits, read as its fields
    are: the standard :meth:`_Reader.analyte` builds for it with no problem. None for anything else
    (a field missing or of another type, a number outside its range, an excluded standard without a
    reason, a reading that is not plain…), which is left to the field-by-field checks: they build the
    standard and name every problem with its path."""
    if type(s) is not dict:
        return None
    get = s.get
    sid, included, reason, replicate = get("id"), get("included"), get("exclusion_reason"), get("replicate")
    if not (type(sid) is str and type(included) is bool and type(reason) is str and type(replicate) is int
            and 1 <= replicate <= MAX_WHOLE and (included or reason.strip())):
        return None
    concentration = get("concentration", s)
    if concentration is None:
        concentration = math.nan  # not entered, or typed text that is not a number (in concentration_text)
    elif not _plain_measure(concentration):
        return None
    typed, level, anchor = get("concentration_text", ""), get("level", ""), get("anchor", False)
    if not (type(typed) is str and type(level) is str and type(anchor) is bool):
        return None
    response = _plain_reading(get("response"))
    internal = get("internal_standard_response")
    if response is None or (internal is not None and (internal := _plain_reading(internal)) is None):
        return None
    return Standard(id=sid, concentration=concentration, concentration_text=typed, response=response,
                    replicate=replicate, level=level, included=included, exclusion_reason=reason,
                    internal_standard_response=internal, anchor=anchor)


def _plain_measurement(m: Any, analytes: set[str]) -> Measurement | None:
    """The common measurement of a sample, of an analyte of the run, a whole replicate number and
    plain readings, read as its fields are: the measurement :meth:`_Reader.sample` builds for it with
    no problem. None for anything else, which is left to the field-by-field checks."""
    if type(m) is not dict:
        return None
    get = m.get
    analyte, replicate = get("analyte"), get("replicate")
    if not (type(analyte) is str and analyte in analytes and type(replicate) is int
            and -MAX_WHOLE <= replicate <= MAX_WHOLE):
        return None
    response = _plain_reading(get("response"))
    internal = get("internal_standard_response")
    if response is None or (internal is not None and (internal := _plain_reading(internal)) is None):
        return None
    return Measurement(analyte=analyte, replicate=replicate, response=response, internal_standard_response=internal)


_SAMPLE_KINDS = {kind.value: kind for kind in SampleKind}


def _plain_sample(m: Any, analytes: set[str]) -> Sample | None:
    """The common sample, every field of its plain kind and within its limits, each measurement
    plain (:func:`_plain_measurement`), no two of them of the same analyte and replicate, and no
    standard additions, read as its fields are: the sample :meth:`_Reader.sample` builds for it with
    no problem. None for anything else, which is left to the field-by-field checks."""
    if type(m) is not dict:
        return None
    get = m.get
    sid, kind_text, dilution, order = get("id"), get("kind"), get("dilution_factor"), get("run_order")
    if not (type(sid) is str and type(kind_text) is str and _plain_measure(dilution) and dilution > 0
            and (order is None or (type(order) is int and -MAX_WHOLE <= order <= MAX_WHOLE))):
        return None
    kind = _SAMPLE_KINDS.get(kind_text)
    listed, nominal_map, additions = get("measurements"), get("nominal", _NO_NOMINAL), get("additions", _NO_ADDITIONS)
    if kind is None or type(listed) is not list or type(nominal_map) is not dict or not (
            type(additions) is list and not additions):
        return None
    nominal = []
    for name, value in nominal_map.items():
        if name not in analytes or not _plain_measure(value) or (kind is SampleKind.QC and value <= 0):
            return None
        nominal.append((name, value))
    measurements = []
    for item in listed:
        measurement = _plain_measurement(item, analytes)
        if measurement is None:
            return None
        measurements.append(measurement)
    if len({f"{x.analyte}/{x.replicate}" for x in measurements}) != len(measurements):
        return None
    return Sample(id=sid, kind=kind, run_order=order, dilution_factor=dilution, measurements=tuple(measurements),
                  nominal=tuple(nominal), additions=())


_NO_NOMINAL: dict[str, Any] = {}
_NO_ADDITIONS: list[Any] = []
"""What a sample without the optional ``nominal`` or ``additions`` field reads as (never changed)."""

_ENTRY_TEXTS = ("time_utc", "user", "action", "previous_hash", "hash")
_ENTRY_OPTIONAL = ("analyst", "analyst_id", "content_sha256")


def _plain_entry(m: Any) -> AuditEntry | None:
    """The common audit entry, its fields texts and its details an object, read as its fields are:
    the entry :meth:`_Reader.entry` builds for it with no problem. None for anything else, which is
    left to the field-by-field checks."""
    if type(m) is not dict:
        return None
    get = m.get
    time_utc, user, action, previous, hashed = (get(k) for k in _ENTRY_TEXTS)
    analyst, analyst_id, content = (get(k, "") for k in _ENTRY_OPTIONAL)
    details = get("details")
    if not (type(time_utc) is str and type(user) is str and type(action) is str and type(previous) is str
            and type(hashed) is str and type(analyst) is str and type(analyst_id) is str and type(content) is str
            and type(details) is dict):
        return None
    return AuditEntry(time_utc=time_utc, user=user, action=action, details=details, previous_hash=previous,
                      hash=hashed, analyst=analyst, analyst_id=analyst_id, content_sha256=content)


def _refuse_constant(name: str) -> None:
    raise ValueError(name)


_CHECKS: dict[str, Callable[[Any], bool]] = {
    "text": lambda v: isinstance(v, str),
    "number": _finite_number,
    "number?": lambda v: v is None or _finite_number(v),
    "measure": _measure,
    "measure?": lambda v: v is None or _measure(v),
    "int": _whole,
    "int?": lambda v: v is None or _whole(v),
    "bool": lambda v: isinstance(v, bool),
    "list": lambda v: isinstance(v, list),
    "object": lambda v: isinstance(v, dict),
    "object?": lambda v: v is None or isinstance(v, dict),
}
"""What each kind of field read by :meth:`_Reader.get` must hold."""


class _Reader:
    """Builds the run while collecting every problem with its path."""

    def __init__(self) -> None:
        self.problems: list[str] = []

    def fail(self, path: str, message: str) -> None:
        self.problems.append(f"{path}: {message}")

    # typed getters: they record a problem and return a safe default
    def get(self, obj: Mapping[str, Any], key: str, path: str, kind: str, default: Any = None, required: bool = True) -> Any:
        if key not in obj:
            if required:
                self.fail(f"{path}.{key}" if path else key, "missing")
            return default
        value = obj[key]
        if not _CHECKS[kind](value):
            where = f"{path}.{key}" if path else key
            whole = f"a whole number within ±{MAX_WHOLE}"
            measure = _MEASURE_WORDS
            words = {"text": "text", "number": "a finite number", "number?": "a finite number or null",
                     "measure": measure, "measure?": measure + ", or null",
                     "int": whole, "int?": whole + " or null", "bool": "true or false",
                     "list": "a list", "object": "an object", "object?": "an object or null"}[kind]
            self.fail(where, f"expected {words}, found {json.dumps(value, ensure_ascii=False)[:60]}")
            return default
        return float(value) if kind in ("number", "measure") else value

    def run(self, m: Mapping[str, Any]) -> Run | None:
        name = self.get(m, "name", "", "text", "")
        if isinstance(name, str) and not name.strip():
            self.fail("name", "the run needs a name")
        settings = self.settings(self.get(m, "settings", "", "object", {}))
        analytes = tuple(
            built for i, item in enumerate(self.get(m, "analytes", "", "list", []))
            if (built := self.analyte(item, f"analytes[{i}]")) is not None
        )
        if not analytes and "analytes" in m and isinstance(m["analytes"], list):
            self.fail("analytes", "the run needs at least one analyte")
        self.unique([a.name for a in analytes], "analytes", "analyte name")
        names = {a.name for a in analytes}
        samples = tuple(
            built for i, item in enumerate(self.get(m, "samples", "", "list", []))
            if (built := _plain_sample(item, names) or self.sample(item, f"samples[{i}]", names)) is not None
        )
        self.unique([s.id for s in samples], "samples", "sample id")
        audit = tuple(
            built for i, item in enumerate(self.get(m, "audit", "", "list", []))
            if (built := _plain_entry(item) or self.entry(item, f"audit[{i}]")) is not None
        )
        signatures = tuple(
            built for i, item in enumerate(self.get(m, "signatures", "", "list", [], required=False))
            if (built := self.signature(item, f"signatures[{i}]")) is not None
        )
        return Run(
            name=name,
            analytes=analytes,
            samples=samples,
            settings=settings,
            description=self.get(m, "description", "", "text", "", required=False),
            audit=audit,
            signatures=signatures,
            instrument=self.get(m, "instrument", "", "text", "", required=False),
        )

    def signature(self, m: Any, path: str) -> Signature | None:
        if not isinstance(m, dict):
            self.fail(path, "expected a signature object")
            return None
        fields = {name: self.get(m, name, path, "text", "", required=name not in ("public_key", "signature"))
                  for name in Signature.__dataclass_fields__}
        if fields["role"] not in (*SIGNATURE_ROLES, "approval withdrawn"):
            self.fail(f"{path}.role", f"{fields['role']!r} is not one of {', '.join(SIGNATURE_ROLES)} or 'approval withdrawn'")
        return Signature(**fields)

    def unique(self, values: list[str], path: str, what: str) -> None:
        seen: set[str] = set()
        for i, v in enumerate(values):
            if v in seen:
                self.fail(f"{path}[{i}]", f"duplicate {what} {v!r}")
            seen.add(v)

    def settings(self, m: Mapping[str, Any]) -> RunSettings:
        p = "settings"
        level = self.get(m, "confidence_level", p, "number", 0.95)
        if not (0 < level < 1):
            self.fail(f"{p}.confidence_level", f"{level!r} must lie between 0 and 1 (e.g. 0.95)")
            level = 0.95
        interval = self.get(m, "interval", p, "text", "band")
        if interval not in ("band", "symmetric"):
            self.fail(f"{p}.interval", f"{interval!r} is not 'band' or 'symmetric'")
        limits = self.get(m, "limits_method", p, "text", "residual_sd")
        if limits not in LIMIT_METHODS:
            self.fail(f"{p}.limits_method", f"{limits!r} is not {limit_methods_words()}")
        profile = self.get(m, "acceptance_profile", p, "text", "general")
        custom = self.get(m, "custom_profile", p, "object?", None, required=False)
        stored = None
        if custom is not None:
            try:
                stored = AcceptanceProfile.from_mapping(custom, f"{p}.custom_profile")
                if profile != stored.id:
                    self.fail(f"{p}.acceptance_profile", f"{profile!r} is not one of the id of the profile the run stores "
                              f"({stored.id!r}); the two must agree")
            except CurvewrightError as exc:
                self.problems.append(str(exc))
        elif profile not in available_profiles():
            self.fail(f"{p}.acceptance_profile", f"{profile!r} is not one of {', '.join(available_profiles())}")
        rounding_map = self.get(m, "rounding", p, "object", {})
        rounding = RoundingRule()
        if rounding_map:
            rp = f"{p}.rounding"
            before = len(self.problems)
            kind = self.get(rounding_map, "kind", rp, "text", "significant", required=False)
            digits = self.get(rounding_map, "digits", rp, "int", 3, required=False)
            tie = self.get(rounding_map, "tie", rp, "text", "half_up", required=False)
            if len(self.problems) == before:
                try:
                    rounding = RoundingRule(kind, digits, tie)
                except CurvewrightError as exc:
                    self.fail(rp, str(exc))
        tolerance = None
        if m.get("level_tolerance") is not None:
            tolerance = self.get(m, "level_tolerance", p, "number", 0.0, required=False)
            if not (0 <= tolerance < 0.5):
                self.fail(f"{p}.level_tolerance", f"{tolerance!r} must lie from 0 to 0.5")
                tolerance = None
        method = self.get(m, "method", p, "object?", None, required=False)
        if method is not None:
            from ..core.method import method_from_mapping

            try:
                method_from_mapping(method, f"{p}.method")
            except CurvewrightError as exc:
                self.problems.append(str(exc))
        settings = RunSettings(confidence_level=level, interval=interval, limits_method=limits,
                               acceptance_profile=profile, custom_profile=custom, rounding=rounding,
                               level_tolerance=tolerance, method=method)
        if stored is not None:
            settings.keep_profile(stored)
        return settings

    def reading(self, m: Any, path: str, required: bool = True) -> Reading | None:
        plain = _plain_reading(m)  # the common reading, a number and its text: read as the fields are
        if plain is not None:
            return plain
        if m is None:
            if required:
                self.fail(path, "missing reading")
            return None
        if not isinstance(m, dict):
            self.fail(path, f"expected a reading object, found {json.dumps(m)[:40]}")
            return None
        value = self.get(m, "value", path, "measure?", None)
        text = self.get(m, "text", path, "text", "")
        qualifier = self.get(m, "qualifier", path, "text", None, required=False)
        limit = self.get(m, "limit", path, "measure?", None, required=False)
        return Reading(None if value is None else float(value), text, qualifier, None if limit is None else float(limit))

    def analyte(self, m: Any, path: str) -> Analyte | None:
        if not isinstance(m, dict):
            self.fail(path, "expected an analyte object")
            return None
        name = self.get(m, "name", path, "text", "")
        if isinstance(name, str) and not name.strip():
            self.fail(f"{path}.name", "an analyte needs a name")
        model = self.get(m, "model", path, "text", "linear")
        if model not in [x.value for x in Model]:
            self.fail(f"{path}.model", f"{model!r} is not one of {', '.join(x.value for x in Model)}")
        weighting = self.get(m, "weighting", path, "text", "none")
        if weighting not in [x.value for x in Weighting]:
            self.fail(f"{path}.weighting", f"{weighting!r} is not one of {', '.join(x.value for x in Weighting)}")
        standards = []
        for i, s in enumerate(self.get(m, "standards", path, "list", [])):
            standard = _plain_standard(s)  # the common standard: read as its fields are
            if standard is not None:
                standards.append(standard)
                continue
            sp = f"{path}.standards[{i}]"
            if not isinstance(s, dict):
                self.fail(sp, "expected a standard object")
                continue
            included = self.get(s, "included", sp, "bool", True)
            reason = self.get(s, "exclusion_reason", sp, "text", "")
            if not included and not reason.strip():
                self.fail(f"{sp}.exclusion_reason", "an excluded standard needs its reason")
            replicate = self.get(s, "replicate", sp, "int", 1)
            if replicate < 1:
                self.fail(f"{sp}.replicate", f"{replicate} must be 1 or more")
            standards.append(
                Standard(
                    id=self.get(s, "id", sp, "text", f"#{i + 1}"),
                    concentration=self._concentration(s, sp),
                    concentration_text=self.get(s, "concentration_text", sp, "text", "", required=False),
                    response=self.reading(s.get("response"), f"{sp}.response") or Reading(None, ""),
                    replicate=replicate,
                    level=self.get(s, "level", sp, "text", "", required=False),
                    included=included,
                    exclusion_reason=reason,
                    internal_standard_response=self.reading(s.get("internal_standard_response"), f"{sp}.internal_standard_response", required=False),
                    anchor=self.get(s, "anchor", sp, "bool", False, required=False),
                )
            )
        self.unique([s.id for s in standards], f"{path}.standards", "standard id")
        return Analyte(
            name=name,
            concentration_unit=self.get(m, "concentration_unit", path, "text", ""),
            response_unit=self.get(m, "response_unit", path, "text", ""),
            standards=tuple(standards),
            model=model,
            weighting=weighting,
            choice_reason=self.get(m, "choice_reason", path, "text", "", required=False),
            uses_internal_standard=self.get(m, "uses_internal_standard", path, "bool", False, required=False),
        )

    def _concentration(self, s: Mapping[str, Any], path: str) -> float:
        """A number, or null with the text that was typed instead (kept, never dropped)."""
        if "concentration" in s and s["concentration"] is None:
            return math.nan  # not entered, or typed text that is not a number (in concentration_text)
        return self.get(s, "concentration", path, "measure", 0.0)

    def sample(self, m: Any, path: str, analytes: set[str]) -> Sample | None:
        if not isinstance(m, dict):
            self.fail(path, "expected a sample object")
            return None
        kind_text = self.get(m, "kind", path, "text", "unknown")
        try:
            kind = SampleKind(kind_text)
        except ValueError:
            self.fail(f"{path}.kind", f"{kind_text!r} is not one of {', '.join(k.value for k in SampleKind)}")
            kind = SampleKind.UNKNOWN
        dilution = self.get(m, "dilution_factor", path, "measure", 1.0)
        if dilution <= 0:
            self.fail(f"{path}.dilution_factor", f"{dilution!r} must be above zero")
        nominal_map = self.get(m, "nominal", path, "object", {}, required=False)
        nominal = []
        for name, value in nominal_map.items():
            np_ = f"{path}.nominal.{name}"
            if name not in analytes:
                self.fail(np_, f"names analyte {name!r}, which the run does not have")
            if not _measure(value):
                self.fail(np_, f"expected {_MEASURE_WORDS}, found {json.dumps(value)[:40]}")
                continue
            if kind is SampleKind.QC and float(value) <= 0:  # a recovery against it is not defined
                self.fail(np_, f"a QC sample's nominal concentration must be above zero, found {json.dumps(value)}")
                continue
            nominal.append((name, float(value)))
        measurements = []
        for i, mm in enumerate(self.get(m, "measurements", path, "list", [])):
            measurement = _plain_measurement(mm, analytes)  # the common measurement: read as its fields are
            if measurement is not None:
                measurements.append(measurement)
                continue
            mp = f"{path}.measurements[{i}]"
            if not isinstance(mm, dict):
                self.fail(mp, "expected a measurement object")
                continue
            analyte = self.get(mm, "analyte", mp, "text", "")
            if analyte not in analytes:
                self.fail(f"{mp}.analyte", f"{analyte!r} is not an analyte of this run")
            measurements.append(
                Measurement(
                    analyte=analyte,
                    replicate=self.get(mm, "replicate", mp, "int", 1),
                    response=self.reading(mm.get("response"), f"{mp}.response") or Reading(None, ""),
                    internal_standard_response=self.reading(mm.get("internal_standard_response"), f"{mp}.internal_standard_response", required=False),
                )
            )
        keys = [f"{x.analyte}/{x.replicate}" for x in measurements]
        self.unique(keys, f"{path}.measurements", "analyte/replicate")
        additions = []
        for i, ad in enumerate(self.get(m, "additions", path, "list", [], required=False)):
            ap = f"{path}.additions[{i}]"
            if not isinstance(ad, dict):
                self.fail(ap, "expected an addition object")
                continue
            analyte = self.get(ad, "analyte", ap, "text", "")
            if analyte not in analytes:
                self.fail(f"{ap}.analyte", f"{analyte!r} is not an analyte of this run")
            added = self.get(ad, "added", ap, "measure", 0.0)
            if added < 0:
                self.fail(f"{ap}.added", f"{added!r}: an added concentration cannot be below zero")
            additions.append(Addition(
                analyte=analyte,
                added=added,
                replicate=self.get(ad, "replicate", ap, "int", 1),
                response=self.reading(ad.get("response"), f"{ap}.response") or Reading(None, ""),
                internal_standard_response=self.reading(ad.get("internal_standard_response"), f"{ap}.internal_standard_response", required=False),
            ))
        self.unique([f"{x.analyte}/{x.added!r}/{x.replicate}" for x in additions], f"{path}.additions", "analyte/added/replicate")
        return Sample(
            id=self.get(m, "id", path, "text", ""),
            kind=kind,
            run_order=self.get(m, "run_order", path, "int?", None, required=False),
            dilution_factor=dilution if dilution > 0 else 1.0,
            measurements=tuple(measurements),
            nominal=tuple(nominal),
            additions=tuple(additions),
        )

    def entry(self, m: Any, path: str) -> AuditEntry | None:
        if not isinstance(m, dict):
            self.fail(path, "expected an audit entry object")
            return None
        return AuditEntry(
            time_utc=self.get(m, "time_utc", path, "text", ""),
            user=self.get(m, "user", path, "text", ""),
            action=self.get(m, "action", path, "text", ""),
            details=self.get(m, "details", path, "object", {}),
            previous_hash=self.get(m, "previous_hash", path, "text", ""),
            hash=self.get(m, "hash", path, "text", ""),
            analyst=self.get(m, "analyst", path, "text", "", required=False),
            analyst_id=self.get(m, "analyst_id", path, "text", "", required=False),
            content_sha256=self.get(m, "content_sha256", path, "text", "", required=False),
        )
