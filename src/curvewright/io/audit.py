"""The audit trail: append-only, hash-chained entries inside the run document.

Each entry records the UTC time, the operating-system user, the action and its details (old and new
values, the reason, the source file's SHA-256…), and the SHA-256 of the entry before it. Its own
hash is the SHA-256 of its canonical JSON (sorted keys, no spaces, UTF-8) without the hash field,
so any later change to any entry, or a removed or reordered entry, breaks the chain.
"""

from __future__ import annotations

import getpass
import hashlib
import json
from datetime import datetime, timezone
from typing import Any, Callable, Mapping, Sequence

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
)

Clock = Callable[[], datetime]


def current_user() -> str:
    """The operating-system user name (``"unknown"`` when the system cannot say)."""
    try:
        return getpass.getuser()
    except Exception:  # noqa: BLE001 - getuser raises several types depending on platform
        return "unknown"


def utc_now() -> datetime:
    return datetime.now(timezone.utc)


def entry_hash(time_utc: str, user: str, action: str, details: Mapping[str, Any], previous_hash: str) -> str:
    payload = {"time_utc": time_utc, "user": user, "action": action, "details": details, "previous_hash": previous_hash}
    canonical = json.dumps(payload, sort_keys=True, separators=(",", ":"), ensure_ascii=False, allow_nan=False)
    return hashlib.sha256(canonical.encode("utf-8")).hexdigest()


def append_entry(
    trail: Sequence[AuditEntry],
    action: str,
    details: Mapping[str, Any],
    *,
    user: str | None = None,
    clock: Clock = utc_now,
) -> tuple[AuditEntry, ...]:
    """The trail with one new entry at its end."""
    if action not in ACTIONS:
        raise ValueError(f"audit action {action!r} is not one of {', '.join(ACTIONS)}")
    previous = trail[-1].hash if trail else GENESIS
    time_utc = clock().astimezone(timezone.utc).isoformat(timespec="milliseconds").replace("+00:00", "Z")
    who = user or current_user()
    plain = json.loads(json.dumps(dict(details), allow_nan=False))
    entry = AuditEntry(time_utc, who, action, plain, previous, entry_hash(time_utc, who, action, plain, previous))
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
            expected = entry_hash(e.time_utc, e.user, e.action, e.details, e.previous_hash)
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
