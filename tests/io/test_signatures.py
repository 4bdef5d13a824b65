"""Signatures: who signed what, approval locks the run, and what a keyed signature proves that the
chain alone cannot (RFC 8032 Ed25519 through the cryptography package)."""

from __future__ import annotations

import json
import subprocess
from dataclasses import replace

import pytest

from curvewright.core.run import Reading
from curvewright.io import run_edits
from curvewright.io.audit import Identity, entry_hash
from curvewright.io.integrity import content_sha256, digest_of
from curvewright.io.run_document import loads_run, run_to_mapping, save_run
from curvewright.io.run_edits import RunLocked
from curvewright.io.signatures import SigningError, check_signatures, new_key_pair, sign, withdraw_approval
from tests.cli_runs import run_cli
from tests.io.helpers import small_run

ANALYST = Identity("Robin Example", "QA-0042", "robin")
APPROVER = Identity("Sam Approver", "QA-0007", "sam")


def test_an_approved_run_refuses_edits_until_the_approval_is_withdrawn() -> None:
    run = sign(sign(small_run(), "analyst", ANALYST), "approver", APPROVER, meaning="released to the client")
    assert run.approval is not None and run.approval.meaning == "released to the client"
    sid = run.analytes[0].standards[0].id
    with pytest.raises(RunLocked, match="approved by Sam Approver .* locked; withdraw the approval"):
        run_edits.exclude_standard(run, "cobalt", sid, "broken vial")
    with pytest.raises(RunLocked):
        run_edits.update_samples(run, run.samples[1:], "removed", removed_reason="entered twice")
    # what records without changing content is still allowed: an export written from the approved run
    assert run_edits.record(run, "export_written", {"path": "r.xlsx"}).audit[-1].action == "export_written"
    with pytest.raises(SigningError, match="needs a reason"):
        withdraw_approval(run, APPROVER, "  ")
    unlocked = withdraw_approval(run, APPROVER, "re-integration of S3 requested by QA")
    assert unlocked.approval is None and unlocked.audit[-1].details["reason"] == "re-integration of S3 requested by QA"
    edited = run_edits.exclude_standard(unlocked, "cobalt", sid, "broken vial")
    assert not edited.analytes[0].standard(sid).included
    # the signatures stay on record, and say that the data changed after they were signed
    words = [c.words for c in check_signatures(edited)]
    assert "the data have changed since it was signed" in words[0]


def test_a_signature_needs_a_name_and_a_role() -> None:
    with pytest.raises(SigningError, match="full name"):
        sign(small_run(), "analyst", Identity("", "", "robin"))
    with pytest.raises(SigningError, match="role"):
        sign(small_run(), "witness", ANALYST)


def test_a_keyed_signature_detects_a_chain_rebuilt_without_the_key(tmp_path) -> None:
    new_key_pair(tmp_path / "lab.key", tmp_path / "lab.pub")
    signed = sign(small_run(), "approver", APPROVER, key_file=tmp_path / "lab.key")
    from curvewright.io.signatures import public_key_hex

    lab = public_key_hex(tmp_path / "lab.pub")
    assert all(c.holds for c in check_signatures(signed, lab))
    forged = rebuild_with_an_edit(signed)
    checks = check_signatures(forged, lab)
    assert not checks[0].holds and "keyed signature does NOT verify" in checks[0].words
    # the same forgery of an unkeyed signature is not detected: the record says so
    plain = rebuild_with_an_edit(sign(small_run(), "approver", APPROVER))
    unkeyed = check_signatures(plain)
    assert unkeyed[0].holds and "not keyed: it shows who signed, not that nobody rebuilt" in unkeyed[0].words


def test_a_signature_by_another_key_is_not_the_laboratorys(tmp_path) -> None:
    new_key_pair(tmp_path / "lab.key", tmp_path / "lab.pub")
    new_key_pair(tmp_path / "own.key", tmp_path / "own.pub")
    from curvewright.io.signatures import public_key_hex

    signed = sign(small_run(), "reviewer", ANALYST, key_file=tmp_path / "own.key")
    check = check_signatures(signed, public_key_hex(tmp_path / "lab.pub"))[0]
    assert not check.holds and "NOT the laboratory's key" in check.words


def rebuild_with_an_edit(run):  # type: ignore[no-untyped-def]
    """What a forger without the key can do: change a response, recompute every hash of the chain and the
    content digest, and point the signature at the new chain and content."""
    a = run.analytes[0]
    first = replace(a.standards[0], response=Reading(12345.0, "12345"))
    tampered = replace(run, analytes=(replace(a, standards=(first,) + a.standards[1:]),))
    content = content_sha256(tampered)
    trail, previous = [], "0" * 64
    for e in tampered.audit:
        e = replace(e, previous_hash=previous, content_sha256=content if e.content_sha256 else "")
        e = replace(e, hash=entry_hash(e.time_utc, e.user, e.action, e.details, e.previous_hash, e.analyst,
                                       e.analyst_id, e.content_sha256))
        trail.append(e)
        previous = e.hash
    signatures = tuple(replace(s, content_sha256=content, trail_sha256=trail[-2].hash) for s in tampered.signatures)
    rebuilt = replace(tampered, audit=tuple(trail), signatures=signatures)
    mapping = run_to_mapping(rebuilt)
    mapping["content"] = digest_of(mapping)
    opened = loads_run(json.dumps(mapping))
    assert opened.chain_verified and opened.content_change is None  # the chain alone cannot tell
    return opened.run


def test_sign_and_check_from_the_command_line(tmp_path) -> None:
    path = tmp_path / "run.json"
    save_run(small_run(), path)

    def cli(*args: str) -> subprocess.CompletedProcess:
        return run_cli(*args)

    assert cli("keys", "new", "--private", str(tmp_path / "lab.key"), "--public", str(tmp_path / "lab.pub")).returncode == 0
    done = cli("sign", str(path), "--role", "approver", "--key", str(tmp_path / "lab.key"), "--analyst", "Sam Approver",
               "--analyst-id", "QA-0007", "--meaning", "released to the client")
    assert done.returncode == 0 and "approved and locked" in done.stdout, done.stderr
    checked = cli("check", str(path), "--lab-key", str(tmp_path / "lab.pub"))
    assert checked.returncode == 0 and "keyed signature verified with the laboratory's key" in checked.stdout
    assert "approved by Sam Approver" in checked.stdout
    refused = cli("sign", str(path), "--role", "approver", "--analyst", "Another Person")
    assert refused.returncode == 2 and "already approved" in refused.stderr
    withdrawn = cli("withdraw-approval", str(path), "--reason", "wrong client", "--analyst", "Sam Approver")
    assert withdrawn.returncode == 0 and "can be edited again" in withdrawn.stdout
    anonymous = cli("sign", str(path), "--role", "reviewer", "--analyst", "")
    assert anonymous.returncode == 2 and "full name" in anonymous.stderr
