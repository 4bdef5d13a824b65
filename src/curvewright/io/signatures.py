"""Signatures on a run: who signed, in which role, meaning what, on which content; approval locks it.

A signature records the person (full name, laboratory ID, login), the role (analyst, reviewer,
approver), the meaning the person gives it, the UTC time, the SHA-256 of the run's content and the
hash of the last audit entry when signing. It is added to the run's signatures and to its audit
trail, so that the chain also covers it. After an approval the run is locked: every change of its
content is refused (:class:`~curvewright.io.run_edits.RunLocked`) until the approval is withdrawn,
with a reason.

With a laboratory key (an Ed25519 private key, made by :func:`new_key_pair`), the signature is keyed:
the person, role, meaning, time, content hash and trail hash are signed (RFC 8032 Ed25519 through the
``cryptography`` package), and the public half travels with the signature. Anyone can then check that
nothing signed was changed since; someone without the private key cannot rebuild the data and the
chain and sign them again. Whether the public key is the laboratory's own is checked by comparing its
fingerprint with the laboratory's public key file (``curvewright check --lab-key``).

Without a key, a signature shows who signed what and when, and the chain detects accidental or
casual edits; it cannot show that nobody edited the data and rebuilt the whole chain deliberately.
"""

from __future__ import annotations

import hashlib
import json
from dataclasses import dataclass, replace
from typing import Sequence
from datetime import datetime, timezone
from pathlib import Path

from ..core.run import SIGNATURE_ROLES, Run, RunError, Signature
from .atomic import write_atomically
from .audit import Clock, Identity, RecordedSignature, append_entry, recorded_signatures, utc_now
from .errors import DocumentError
from .integrity import content_sha256

DEFAULT_MEANINGS = {
    "analyst": "I performed this analysis; the data and the results are complete and correct to my knowledge.",
    "reviewer": "I reviewed the data, the calibration, the results and the audit trail of this run.",
    "approver": "I approve these results for release.",
}
WITHDRAWN = "approval withdrawn"


class SigningError(RunError):
    """A run cannot be signed as asked (no name, a key that cannot be read, an approval to withdraw…)."""


def _time_text(moment: datetime) -> str:
    """UTC time as the audit trail writes it."""
    return moment.isoformat(timespec="milliseconds").replace("+00:00", "Z")


def fingerprint(public_key_hex: str) -> str:
    """The key's fingerprint: the first 16 hex digits of the SHA-256 of its 32 bytes."""
    return hashlib.sha256(bytes.fromhex(public_key_hex)).hexdigest()[:16]


def _payload(s: Signature) -> bytes:
    fields = {k: v for k, v in vars(s).items() if k != "signature"}
    return json.dumps(fields, sort_keys=True, ensure_ascii=False, separators=(",", ":")).encode("utf-8")


def new_key_pair(private_path: str | Path, public_path: str | Path) -> str:
    """Make a laboratory signing key: the private key (PKCS #8 PEM; keep it where only signers can read
    it) and its public half (PEM, to hand to whoever checks). Returns the fingerprint."""
    from cryptography.hazmat.primitives import serialization
    from cryptography.hazmat.primitives.asymmetric.ed25519 import Ed25519PrivateKey

    key = Ed25519PrivateKey.generate()
    private = key.private_bytes(serialization.Encoding.PEM, serialization.PrivateFormat.PKCS8,
                                serialization.NoEncryption())
    public = key.public_key().public_bytes(serialization.Encoding.PEM, serialization.PublicFormat.SubjectPublicKeyInfo)
    write_atomically(Path(private_path), private)
    Path(private_path).chmod(0o600)
    write_atomically(Path(public_path), public)
    raw = key.public_key().public_bytes(serialization.Encoding.Raw, serialization.PublicFormat.Raw)
    return fingerprint(raw.hex())


def _private_key(path: str | Path):  # type: ignore[no-untyped-def]
    from cryptography.hazmat.primitives import serialization
    from cryptography.hazmat.primitives.asymmetric.ed25519 import Ed25519PrivateKey

    try:
        key = serialization.load_pem_private_key(Path(path).read_bytes(), password=None)
    except (OSError, ValueError, TypeError) as exc:
        raise SigningError(f"{path}: cannot read the signing key ({exc}).") from None
    if not isinstance(key, Ed25519PrivateKey):
        raise SigningError(f"{path}: not an Ed25519 signing key (make one with 'curvewright keys new').")
    return key


def public_key_hex(path: str | Path) -> str:
    """The 32-byte public key (hex) in a PEM public-key file (the laboratory's key, to check against)."""
    from cryptography.hazmat.primitives import serialization
    from cryptography.hazmat.primitives.asymmetric.ed25519 import Ed25519PublicKey

    try:
        key = serialization.load_pem_public_key(Path(path).read_bytes())
    except (OSError, ValueError, TypeError) as exc:
        raise DocumentError(f"{path}: cannot read the laboratory's public key ({exc}).") from None
    if not isinstance(key, Ed25519PublicKey):
        raise DocumentError(f"{path}: not an Ed25519 public key.")
    return key.public_bytes(serialization.Encoding.Raw, serialization.PublicFormat.Raw).hex()


NOT_ACCEPTED_WORDS = "Approved although the run verdict is NOT ACCEPTED; reason:"
"""Begins what an approval of a NOT ACCEPTED run adds to its meaning (printed beside it, and signed)."""
RECORD_PROBLEMS_WORDS = "Signed although the run's record is NOT intact; reason:"
"""Begins what a signature given over a record that is not intact (:func:`.record_check.record_problems`)
adds to its meaning (printed beside it, and signed); the problems are listed in its audit entry."""


def _same_person(s: Signature, person: Identity) -> bool:
    """One person: the same laboratory ID where both have one, else the same full name (case ignored)."""
    if s.person_id.strip() and person.id.strip():
        return s.person_id.strip() == person.id.strip()
    return s.name.strip().casefold() == person.name.strip().casefold()


def roles_signed_by(run: Run, person: Identity, *, besides: str = "") -> tuple[str, ...]:
    """The roles (analyst, reviewer, approver) in which ``person`` has already signed the run, other
    than ``besides``, in signing order without repeats. Labs differ on whether one person may sign in
    several roles: Curvewright warns and records it, and never forbids it."""
    return tuple(dict.fromkeys(s.role for s in run.signatures
                               if s.role in SIGNATURE_ROLES and s.role != besides and _same_person(s, person)))


def people_in_several_roles(run: Run) -> tuple[str, ...]:
    """One line for each person who signed the run in more than one role: "NAME as analyst, approver"."""
    roles: dict[tuple[str, str], list[str]] = {}
    for s in run.signatures:
        if s.role in SIGNATURE_ROLES:
            key = (s.person_id.strip(), "") if s.person_id.strip() else ("", s.name.strip().casefold())
            names = roles.setdefault(key, [s.name])
            if s.role not in names[1:]:
                names.append(s.role)
    return tuple(f"{v[0]} as {', '.join(v[1:])}" for v in roles.values() if len(v) > 2)


def sign(run: Run, role: str, person: Identity, *, meaning: str = "", key_file: str | Path | None = None,
         clock: Clock = utc_now, verdict_accepted: bool | None = None, not_accepted_reason: str = "",
         record_problems_reason: str = "") -> Run:
    """The run signed by ``person`` in ``role`` (the role's usual meaning unless one is given), keyed
    when ``key_file`` is given. An approver's signature locks the run.

    ``verdict_accepted`` is the run's verdict as analysed now (None: not known to the caller). An
    approval of a run whose verdict is NOT ACCEPTED is refused unless ``not_accepted_reason`` gives
    the reason; the reason is then part of the approval's meaning (signed, and printed beside it
    in the record) and recorded in the audit entry. A person who already signed in another role
    may sign: the audit entry records the other roles (``also_signed_as``).

    A run whose record is not intact (:func:`.record_check.record_problems`: a signature the trail
    records was removed from the document, the trail does not verify, a signature does not hold) is
    signed only with ``record_problems_reason``, the signer's explicit reason: it is then part of the
    meaning (signed, and printed beside the signature in the record), and the audit entry records the
    problems as they stood and the reason. The problems stay: ``check`` and the record go on naming
    them. A reason given for a run whose record is intact is refused (nothing is signed)."""
    if role not in SIGNATURE_ROLES:
        raise SigningError(f"role: {role!r} is not one of {', '.join(SIGNATURE_ROLES)}.")
    if not person.name.strip():
        raise SigningError("a signature needs the signer's full name (set it in the app's settings, or give "
                           "--analyst NAME on the command line).")
    if role == "approver" and run.approval is not None:
        raise SigningError(f"the run is already approved by {run.approval.name} ({run.approval.time_utc}).")
    despite = not_accepted_reason.strip() if role == "approver" and verdict_accepted is False else ""
    if role == "approver" and verdict_accepted is False and not despite:
        raise SigningError("the run's verdict is NOT ACCEPTED: approving it needs your explicit confirmation and a "
                           "reason, which are recorded in the audit trail and printed beside the approval (on the "
                           "command line: --approve-not-accepted REASON).")
    from .integrity import content_change

    change = content_change(run)
    if change is not None:
        raise SigningError(f"{change}. A signature would cover data its audit trail does not account for: open the "
                           "run in Curvewright, which records the change in the trail, review it and save, then sign.")
    from .record_check import record_problems

    problems = record_problems(run)
    despite_record = record_problems_reason.strip()
    if problems and not despite_record:
        raise SigningError("the run's record is NOT intact: " + "; ".join(problems) + ". Signing it needs your "
                           "explicit confirmation and a reason, which are recorded in the audit trail and printed "
                           "beside the signature; the problems stay on record (on the command line: "
                           "--despite-record-problems REASON).")
    if despite_record and not problems:
        raise SigningError("the run's record is intact: signing it needs no reason for record problems; "
                           "nothing was signed.")
    meaning = (meaning or DEFAULT_MEANINGS[role]).strip()
    if despite:
        meaning = f"{meaning} {NOT_ACCEPTED_WORDS} {despite}"
    if despite_record:
        meaning = f"{meaning} {RECORD_PROBLEMS_WORDS} {despite_record}"
    also = roles_signed_by(run, person, besides=role)
    moment = clock().astimezone(timezone.utc)
    time_utc = _time_text(moment)
    head = run.audit[-1].hash if run.audit else ""
    signature = Signature(role, person.name.strip(), person.id.strip(), person.login, meaning, time_utc,
                          content_sha256(run), head)
    if key_file is not None:
        from cryptography.hazmat.primitives import serialization

        key = _private_key(key_file)
        raw = key.public_key().public_bytes(serialization.Encoding.Raw, serialization.PublicFormat.Raw)
        signature = replace(signature, public_key=raw.hex())
        signature = replace(signature, signature=key.sign(_payload(signature)).hex())
    details = {"role": role, "name": signature.name, "person_id": signature.person_id, "meaning": meaning,
               "signed_content_sha256": signature.content_sha256, "signed_trail_sha256": head,
               "key_fingerprint": fingerprint(signature.public_key) if signature.public_key else None,
               "signature": signature.signature or None}
    if verdict_accepted is not None:
        details["run_verdict"] = "ACCEPTED" if verdict_accepted else "NOT ACCEPTED"
    if despite:
        details["approved_although_not_accepted"] = despite
    if despite_record:
        details["record_problems"] = list(problems)
        details["signed_although_record_not_intact"] = despite_record
    if also:
        details["also_signed_as"] = list(also)
    trail = append_entry(run.audit, "signed", details, user=person, clock=lambda: moment,
                         content_sha256=signature.content_sha256)
    return replace(run, signatures=run.signatures + (signature,), audit=trail)


def withdraw_approval(run: Run, person: Identity, reason: str, *, clock: Clock = utc_now) -> Run:
    """The run with its approval withdrawn (the reason recorded), so that it can be edited again."""
    if run.approval is None:
        raise SigningError("the run is not approved; there is no approval to withdraw.")
    if not reason.strip():
        raise SigningError("withdrawing an approval needs a reason.")
    if not person.name.strip():
        raise SigningError("withdrawing an approval needs your full name (set it in the app's settings, or give "
                           "--analyst NAME on the command line).")
    from .run_edits import note_outside_change

    run = note_outside_change(run, user=person, clock=clock)
    moment = clock().astimezone(timezone.utc)
    time_utc = _time_text(moment)
    head = run.audit[-1].hash if run.audit else ""
    record = Signature(WITHDRAWN, person.name.strip(), person.id.strip(), person.login, reason.strip(), time_utc,
                       content_sha256(run), head)
    trail = append_entry(run.audit, "approval_withdrawn",
                         {"approval_by": run.approval.name, "approved_at": run.approval.time_utc, "reason": reason.strip()},
                         user=person, clock=lambda: moment, content_sha256=record.content_sha256)
    return replace(run, signatures=run.signatures + (record,), audit=trail)


@dataclass(frozen=True)
class SignatureCheck:
    """What checking one signature showed, in words, and whether it holds (``problem``: why not, briefly)."""

    signature: Signature
    holds: bool
    words: str
    problem: str = ""


APPROVAL_CHANGED = "the approved data were changed after approval"
LOCK_WORDS = "the approval still locks the run until it is withdrawn with a reason"


def approval_problem(run: Run) -> str | None:
    """Why the approval in force (``run.approval``) does not cover the run's current data (they differ from the content it
    signed: edited outside Curvewright after approval), in words; None when it covers them or there is
    no approval. The approval still locks the run until it is withdrawn: the safe side."""
    approval = run.approval
    if approval is None or approval.content_sha256 == content_sha256(run):
        return None
    return f"{APPROVAL_CHANGED}: it does NOT cover the current data; {LOCK_WORDS}"


def check_signatures(run: Run, lab_key_hex: str | None = None) -> tuple[SignatureCheck, ...]:
    """Check every signature: it is recorded in the audit trail, the trail it signed is still there,
    and (keyed) its Ed25519 signature verifies — against the laboratory's key when ``lab_key_hex`` is
    given. A signature on content that has since changed (through edits after a withdrawn approval)
    holds for that earlier content, and says so. The approval in force must cover the current data: where
    they differ from the content it signed (changed after approval, outside Curvewright), it does not hold."""
    hashes = {e.hash for e in run.audit}
    approval = run.approval
    signed_entries = [e for e in run.audit if e.action in ("signed", "approval_withdrawn")]
    current = content_sha256(run)
    out = []
    for s in run.signatures:
        label = f"{s.role} {s.name}" + (f" (ID {s.person_id})" if s.person_id else "") + f", {s.time_utc}"
        recorded = any(e.time_utc == s.time_utc for e in signed_entries)
        problems = []
        if not recorded:
            problems.append("not recorded in the audit trail")
        if s.trail_sha256 and s.trail_sha256 not in hashes:
            problems.append("the audit trail it signed is no longer in the document (the chain was rebuilt)")
        keyed = ""
        if s.signature:
            if not _verifies(s):
                problems.append("its keyed signature does NOT verify: what it signed was changed")
            elif lab_key_hex is not None and s.public_key != lab_key_hex:
                problems.append(f"signed with key {fingerprint(s.public_key)}, which is NOT the laboratory's key "
                                f"{fingerprint(lab_key_hex)}")
            else:
                keyed = (f"; keyed signature verified with the laboratory's key {fingerprint(s.public_key)}"
                         if lab_key_hex is not None else
                         f"; keyed signature valid for key {fingerprint(s.public_key)} (compare it with the "
                         "laboratory's key: --lab-key)")
        elif s.role != WITHDRAWN:
            keyed = "; not keyed: it shows who signed, not that nobody rebuilt the data and the chain since"
        if s.role == WITHDRAWN:
            meaning = f"withdrew the approval: {s.meaning}"
        else:
            meaning = f"“{s.meaning}”"
        later = "" if s.content_sha256 == current or s.role == WITHDRAWN else "; the data have changed since it was signed"
        if s is approval and s.content_sha256 != current:
            # an approval covers the data it signed, and nothing may change them while it stands: the
            # current data were changed after approval, outside Curvewright
            genuine = ("" if problems else
                       f" is genuine — {keyed[2:]} —" if s.signature else " is recorded in the audit trail (not keyed)")
            problems.append(f"{APPROVAL_CHANGED}: the signature{genuine} but does NOT cover the current data; "
                            f"{LOCK_WORDS}" if genuine else
                            f"{APPROVAL_CHANGED}: it does NOT cover the current data; {LOCK_WORDS}")
        words = f"{label}: {meaning}" + ("; " + "; ".join(problems) if problems else keyed + later)
        out.append(SignatureCheck(s, not problems, words, "; ".join(problems)))
    return tuple(out)


def _verifies(s: Signature) -> bool:
    from cryptography.exceptions import InvalidSignature
    from cryptography.hazmat.primitives.asymmetric.ed25519 import Ed25519PublicKey

    try:
        Ed25519PublicKey.from_public_bytes(bytes.fromhex(s.public_key)).verify(bytes.fromhex(s.signature), _payload(s))
    except (InvalidSignature, ValueError):
        return False
    return True


SIGNATURE_COLUMNS = ("Role", "Name", "Time (UTC)", "Meaning", "Check")
"""The columns of the signatures table, as the record prints it and the app shows it."""


def signature_rows(checks: Sequence[SignatureCheck], run: Run | None = None) -> tuple[tuple[str, ...], ...]:
    """One row per checked signature (:data:`SIGNATURE_COLUMNS`): role, name with ID, time (UTC),
    what it means, and whether it is keyed and holds; then, given the ``run``, one row per signature
    its audit trail records that the file no longer holds (:func:`.audit.recorded_signatures`)."""
    held = tuple((c.signature.role, c.signature.name + (f" (ID {c.signature.person_id})" if c.signature.person_id else ""),
                  c.signature.time_utc.replace("T", " ")[:19], c.signature.meaning,
                  ("keyed " + fingerprint(c.signature.public_key) if c.signature.signature else "not keyed")
                  + ("" if c.holds else "; does NOT hold" + (
                      f": {APPROVAL_CHANGED}, so it does not cover the current data"
                      if APPROVAL_CHANGED in c.problem else "")))
                 for c in checks)
    return held + tuple((r.role, r.name + (f" (ID {r.person_id})" if r.person_id else ""),
                         r.time_utc.replace("T", " ")[:19], r.meaning, f"NOT in the file: {r.removed_words}")
                        for r in removed_signatures(run))


def removed_signatures(run: Run | None) -> tuple[RecordedSignature, ...]:
    """The signatures and withdrawals ``run``'s audit trail records that its file no longer holds."""
    return () if run is None else tuple(r for r in recorded_signatures(run) if not r.held)


def signature_list(run: Run) -> str:
    """The signatures already given, one line each, as the sign dialog lists them: those the file holds
    (role, person, time; a withdrawal with its reason), then those the audit trail records that the file
    no longer holds. "No signatures yet." only when the trail records none either."""
    lines = [(f"{s.role}: {s.name}" + (f" (ID {s.person_id})" if s.person_id else "")
              + f", {s.time_utc.replace('T', ' ')[:19]} UTC"
              + (f" — {s.meaning}" if s.role == WITHDRAWN else "")) for s in run.signatures]
    removed = [f"{r.role}: {r.name}" + (f" (ID {r.person_id})" if r.person_id else "")
               + f", {r.time_utc.replace('T', ' ')[:19]} UTC — NOT in the file: {r.removed_words}"
               for r in removed_signatures(run)]
    if not lines and not removed:
        return "No signatures yet."
    return (("Signatures already given:\n" + "\n".join(lines)) if lines else "No signature is held in the file.") + (
        "\nSignatures the audit trail records that the file no longer holds:\n" + "\n".join(removed) if removed else "")
