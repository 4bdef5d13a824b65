"""The audit trail: append-only, hash-chained entries inside the run document.

Each entry records the UTC time, the person (full name and laboratory ID, with the operating-system
login beside them), the action and its details (old and new values, the reason, the source file's
SHA-256…), the SHA-256 of the run's content after the change (:mod:`.integrity`), and the SHA-256 of
the entry before it. Its own hash is the SHA-256 of its canonical JSON (sorted keys, no spaces,
UTF-8) without the hash field, so any later change to any entry, or a removed or reordered entry,
breaks the chain; and data changed after the last entry no longer match its content hash.

What the chain can show: an accidental or casual edit of the file (a value typed over, an entry
deleted) is detected. What it cannot show on its own: someone who edits the data and rebuilds the
whole chain with this program's published rules leaves a chain that verifies. Signatures made with a
laboratory key (:mod:`.signatures`) close that gap for everything they sign.
"""

from __future__ import annotations

import getpass
import hashlib
import json
import os
from datetime import datetime, timezone
from typing import Any, Callable, Mapping, Sequence

from ..core.values import frozen_value
from ..core.run import AuditEntry

GENESIS = "0" * 64
"""The previous-hash of the first entry."""

ACTIONS = (
    "run_created",
    "imported",
    "value_edited",
    "standard_added",
    "standard_removed_before_review",
    "standard_excluded",
    "standard_included",
    "anchor_points_marked",
    "anchor_points_cleared",
    "model_chosen",
    "profile_changed",
    "settings_changed",
    "analyte_edited",
    "samples_edited",
    "export_written",
    "report_written",
    "document_migrated",
    "change_undone",
    "change_redone",
    "recovered_after_crash",
    "signed",
    "approval_withdrawn",
    "method_applied",
    "data_changed_outside",
)

Clock = Callable[[], datetime]


@frozen_value
class Identity:
    """Who acts: full name and laboratory ID (as set by the person), and the operating-system login."""

    name: str = ""
    id: str = ""
    login: str = ""

    @property
    def words(self) -> str:
        """The person as a record shows them: "Name (ID 123; login abc)", or the login alone."""
        login = self.login or current_user()
        if not self.name:
            return f"{login} (login; full name not set)"
        return f"{self.name} ({'ID ' + self.id + '; ' if self.id else ''}login {login})"


ANALYST_ENV, ANALYST_ID_ENV = "CURVEWRIGHT_ANALYST", "CURVEWRIGHT_ANALYST_ID"
"""Environment variables that name the person for the command line when ``--analyst`` is not given."""


def identity_from(name: str | None = None, analyst_id: str | None = None,
                  environ: Mapping[str, str] | None = None) -> Identity:
    """The person acting: the given name and ID, else the environment's, with the login."""
    env = os.environ if environ is None else environ
    return Identity((name if name is not None else env.get(ANALYST_ENV, "")).strip(),
                    (analyst_id if analyst_id is not None else env.get(ANALYST_ID_ENV, "")).strip(),
                    current_user())


def current_user() -> str:
    """The operating-system user name (``"unknown"`` when the system cannot say)."""
    try:
        return getpass.getuser()
    except Exception:  # noqa: BLE001 - getuser raises several types depending on platform
        return "unknown"


def utc_now() -> datetime:
    return datetime.now(timezone.utc)


def entry_hash(time_utc: str, user: str, action: str, details: Mapping[str, Any], previous_hash: str,
               analyst: str = "", analyst_id: str = "", content_sha256: str = "") -> str:
    """SHA-256 of the entry's canonical JSON. The person and the content hash are part of it when
    recorded (entries of earlier versions, without them, keep their hashes)."""
    payload: dict[str, Any] = {"time_utc": time_utc, "user": user, "action": action, "details": details,
                               "previous_hash": previous_hash}
    for key, value in (("analyst", analyst), ("analyst_id", analyst_id), ("content_sha256", content_sha256)):
        if value:
            payload[key] = value
    canonical = _ENTRY_ENCODER.encode(payload)
    return hashlib.sha256(canonical.encode("utf-8")).hexdigest()


_ENTRY_ENCODER = json.JSONEncoder(sort_keys=True, separators=(",", ":"), ensure_ascii=False, allow_nan=False)
"""The encoder ``json.dumps(payload, sort_keys=True, separators=(",", ":"), ensure_ascii=False,
allow_nan=False)`` would make for each entry, made once (it keeps no state between calls)."""


def hash_of(e: AuditEntry) -> str:
    """The hash an entry must carry."""
    return entry_hash(e.time_utc, e.user, e.action, e.details, e.previous_hash, e.analyst, e.analyst_id,
                      e.content_sha256)


def append_entry(
    trail: Sequence[AuditEntry],
    action: str,
    details: Mapping[str, Any],
    *,
    user: "Identity | str | None" = None,
    clock: Clock = utc_now,
    content_sha256: str = "",
) -> tuple[AuditEntry, ...]:
    """The trail with one new entry at its end. ``user`` is the person acting (an :class:`Identity`,
    or a login name); ``content_sha256`` the hash of the run's content after the change."""
    if action not in ACTIONS:
        raise ValueError(f"audit action {action!r} is not one of {', '.join(ACTIONS)}")
    previous = trail[-1].hash if trail else GENESIS
    time_utc = clock().astimezone(timezone.utc).isoformat(timespec="milliseconds").replace("+00:00", "Z")
    person = user if isinstance(user, Identity) else Identity(login=user or "")
    who = person.login or current_user()
    plain = json.loads(json.dumps(dict(details), allow_nan=False))
    entry = AuditEntry(time_utc, who, action, plain, previous,
                       entry_hash(time_utc, who, action, plain, previous, person.name, person.id, content_sha256),
                       person.name, person.id, content_sha256)
    return (*trail, entry)


def verify_chain(trail: Sequence[AuditEntry]) -> tuple[str, ...]:
    """Problems with the chain, in words; empty when every entry verifies."""
    problems = []
    previous = GENESIS
    for i, e in enumerate(trail):
        if e.previous_hash != previous:
            problems.append(
                f"audit entry {i + 1} ({e.action}, {e.time_utc}) does not follow entry {i}: an entry was "
                "removed, inserted or reordered"
            )
        try:
            expected = hash_of(e)
        except (TypeError, ValueError):
            expected = ""
        if e.hash != expected:
            problems.append(f"audit entry {i + 1} ({e.action}, {e.time_utc}) was altered after it was written")
        previous = e.hash
    return tuple(problems)


def file_sha256(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def file_sha256_streamed(path) -> str:  # type: ignore[no-untyped-def]
    """SHA-256 of a file read in 1 MiB pieces (memory stays flat for large exports)."""
    digest = hashlib.sha256()
    with open(path, "rb") as stream:
        for block in iter(lambda: stream.read(1 << 20), b""):
            digest.update(block)
    return digest.hexdigest()


@frozen_value
class RecordedSignature:
    """A signature (or the withdrawal of an approval) as the audit trail records it, and whether the
    document still holds it. Every output that lists signers (the Audit trail tab, the sign dialog, the
    workbook, the record) reads these from :func:`recorded_signatures`, so that none can say a person
    signed while another offers that signature line as open."""

    entry: int
    """The audit entry's number (1-based, as the trail lists it)."""
    role: str
    name: str
    person_id: str
    time_utc: str
    meaning: str
    held: bool
    """Whether the document still holds the signature (the same role, person, time and signed content)."""
    key_fingerprint: str = ""
    """The fingerprint of the key the signature was made with, as the trail records it ("" when not keyed,
    and for a withdrawal)."""

    @property
    def removed_words(self) -> str:
        """What a signature the document no longer holds means, for a reader: the trail records it,
        the file lost it, and its line is open again."""
        if self.role == "approval withdrawn":
            return (f"audit entry {self.entry} records the withdrawal of an approval by {self.name}, "
                    f"{self.time_utc}, that the file no longer holds")
        article = "an" if self.role[:1] in ("a", "e", "i", "o", "u") else "a"  # an analyst's, an approver's
        return (f"audit entry {self.entry} records {article} {self.role}'s signature by {self.name}, {self.time_utc}, that the "
                f"file no longer holds: it was removed from the file, so the {self.role}'s signature line is open again")


def recorded_signatures(run) -> tuple[RecordedSignature, ...]:  # type: ignore[no-untyped-def]
    """Every signature and withdrawal the audit trail records, in order, each with whether the document
    still holds it: a "signed" entry's signature must be in the run's signatures with the same role,
    person, time and signed content hash, and an "approval_withdrawn" entry its withdrawal record."""
    held = [(s.role, s.name, s.time_utc, s.content_sha256) for s in run.signatures]
    out = []
    for number, e in enumerate(run.audit, start=1):
        if e.action == "signed":
            role, name = e.details.get("role", ""), e.details.get("name", "") or e.analyst
            wanted = (role, name, e.time_utc, e.details.get("signed_content_sha256", "") or e.content_sha256)
            person_id, meaning = e.details.get("person_id", "") or e.analyst_id, e.details.get("meaning", "")
            key = e.details.get("key_fingerprint") or ""
        elif e.action == "approval_withdrawn":
            wanted = ("approval withdrawn", e.analyst, e.time_utc, e.content_sha256)
            name, person_id, meaning = e.analyst or e.user, e.analyst_id, e.details.get("reason", "")
            key = ""
        else:
            continue
        kept = any(all(not w or w == h for w, h in zip(wanted, row)) and row[2] == e.time_utc for row in held)
        out.append(RecordedSignature(number, wanted[0], str(name), str(person_id or ""), e.time_utc, str(meaning or ""),
                                     kept, str(key)))
    return tuple(out)


def unheld_signatures(run) -> tuple[str, ...]:  # type: ignore[no-untyped-def]
    """Signatures the audit trail records but the document no longer holds, in words
    (:func:`recorded_signatures`). A removed signature (an approval deleted from the file, say) is an
    integrity problem like an altered entry."""
    problems = []
    for r in recorded_signatures(run):
        if r.held:
            continue
        what = (f"the withdrawal of an approval (by {r.name}, {r.time_utc})" if r.role == "approval withdrawn"
                else f"a signature ({r.role} {r.name}, {r.time_utc})")
        problems.append(f"audit entry {r.entry} records {what} that the document no longer holds: it was removed "
                        "from the document's signatures after it was made")
    return tuple(problems)


def chain_claim(run, chain_problems: tuple[str, ...] | None = None) -> tuple[bool, str]:  # type: ignore[no-untyped-def]
    """What checking the run's audit trail showed, in words exactly as strong as the check;
    ``chain_problems`` is what :func:`verify_chain` gave for this run's trail, when the caller
    has checked it already."""
    from .integrity import content_change

    problems = list(verify_chain(run.audit) if chain_problems is None else chain_problems)
    change = content_change(run)
    if change is not None:
        problems.append(str(change))
    problems.extend(unheld_signatures(run))
    if problems:
        return False, "NOT verified: " + "; ".join(problems)
    recorded = any(e.content_sha256 for e in run.audit)
    outside = [i + 1 for i, e in enumerate(run.audit) if e.action == "data_changed_outside"]
    data = ("and the data match the content hash of the last entry" if recorded else
            "but no entry records a content hash (written by an earlier version), so edits of the data cannot be seen")
    keyed = any(s.signature for s in run.signatures)
    return True, (f"verified: every entry follows the one before and is unaltered, {data}. This detects accidental or "
                  "casual edits of the file; it does not detect someone who edits the data and rebuilds the whole chain"
                  + (" — the keyed signatures below do" if keyed else " (only signatures with a laboratory key would)")
                  + "." + (f" The trail records data changed outside Curvewright (entry {', '.join(map(str, outside))}): "
                           "see the audit trail." if outside else ""))
