"""Signatures and approval against the data they signed, on run documents edited in a text editor after
keyed signing: a signature the audit trail records but the document no longer holds, and an approval whose
data were changed afterwards (with or without a later ``quantify --record``). The commands as subprocesses,
the key made by ``curvewright keys new``."""

from __future__ import annotations

import json
import re
from pathlib import Path

import openpyxl
from pypdf import PdfReader

from tests.io.helpers import ROOT
from tests.cli_runs import run_cli, flat

DEMO = ROOT / "sample_runs" / "nitrate_water_linear.json"
REVIEWER, APPROVER = "Ines Varga", "Tomas Reyes"
CHANGED = "the approved data were changed after approval"


def signed_run(tmp_path: Path) -> Path:
    """The demo run reviewed and approved with a laboratory key; ``lab.pub`` beside it."""
    path = tmp_path / "run.json"
    path.write_text(DEMO.read_text(encoding="utf-8"), encoding="utf-8")
    made = run_cli("keys", "new", "--private", str(tmp_path / "lab.key"), "--public", str(tmp_path / "lab.pub"))
    assert made.returncode == 0, made.stderr
    for role, name in (("reviewer", REVIEWER), ("approver", APPROVER)):
        done = run_cli("sign", str(path), "--role", role, "--analyst", name, "--key", str(tmp_path / "lab.key"))
        assert done.returncode == 0, done.stdout + done.stderr
    return path


def without_approval(path: Path) -> tuple[Path, dict]:
    """The approver's signature object cut out of the "signatures" list, as in a text editor; and the
    audit entry that recorded it."""
    text = path.read_text(encoding="utf-8")
    cut, n = re.subn(r',\n\s*\{\n\s*"role": "approver",.*?\n\s*\}(?=\n)', "", text, count=1, flags=re.S)
    assert n == 1
    out = path.with_name("cut.json")
    out.write_text(cut, encoding="utf-8")
    entries = json.loads(text)["audit"]
    number = next(i for i, e in enumerate(entries, start=1) if e["action"] == "signed" and e["details"]["role"] == "approver")
    return out, {"number": number, "time": entries[number - 1]["time_utc"]}


def response_typed_over(path: Path) -> Path:
    """One standard's response typed over (value and text alike), everything else as saved."""
    text = path.read_text(encoding="utf-8")
    edited = text.replace('"value": 0.1008,', '"value": 0.1108,', 1).replace('"text": "0.1008"', '"text": "0.1108"', 1)
    assert edited != text
    out = path.with_name("edited.json")
    out.write_text(edited, encoding="utf-8")
    return out


def test_intact_keyed_approval_holds(tmp_path: Path) -> None:
    path = signed_run(tmp_path)
    checked = run_cli("check", str(path), "--lab-key", str(tmp_path / "lab.pub"))
    assert checked.returncode == 0, checked.stdout
    assert f"approved by {APPROVER}" in checked.stdout and "the run is locked" in checked.stdout
    assert "NOT" not in checked.stdout
    # a withdrawn approval stays as its own record beside the signature it withdrew
    done = run_cli("withdraw-approval", str(path), "--reason", "recalculation requested", "--analyst", APPROVER)
    assert done.returncode == 0, done.stdout + done.stderr
    assert run_cli("check", str(path)).returncode == 0


def test_a_removed_approval_is_named_by_check_and_every_output(tmp_path: Path) -> None:
    path, entry = without_approval(signed_run(tmp_path))
    named = f"audit entry {entry['number']} records a signature (approver {APPROVER}, {entry['time']})"

    checked = run_cli("check", str(path), "--lab-key", str(tmp_path / "lab.pub"))
    assert checked.returncode == 1, checked.stdout
    assert named in checked.stdout and "no longer holds" in checked.stdout, checked.stdout

    book, record = tmp_path / "cut.xlsx", tmp_path / "cut.pdf"
    done = run_cli("quantify", str(path), "--export", str(book), "--report", str(record))
    assert named in done.stdout + done.stderr  # the warning, as for other integrity problems

    data = json.loads(run_cli("quantify", str(path), "--json").stdout)
    assert data["chain_check"].startswith("NOT verified") and named in data["chain_check"], data["chain_check"]

    sheet = openpyxl.load_workbook(book)["Run information"]
    trail = [str(r[1]) for r in sheet.iter_rows(values_only=True) if r and r[0] == "Audit trail"]
    assert trail and named in trail[0], trail
    assert flat(named) in flat(PdfReader(record).pages[0].extract_text())

    # another approval is refused over the removed one, unless the approver confirms it with a reason;
    # it then does not hide the removed one
    refused = run_cli("sign", str(path), "--role", "approver", "--analyst", "Noor Haddad")
    assert refused.returncode != 0 and "record is NOT intact" in refused.stderr and named in refused.stderr
    again = run_cli("sign", str(path), "--role", "approver", "--analyst", "Noor Haddad",
                    "--despite-record-problems", "approval lost when the file was copied; re-approved after review")
    assert again.returncode == 0, again.stdout + again.stderr
    checked = run_cli("check", str(path))
    assert checked.returncode == 1 and named in checked.stdout, checked.stdout


def _approval_does_not_hold(path: Path, tmp_path: Path) -> None:
    checked = run_cli("check", str(path), "--lab-key", str(tmp_path / "lab.pub"))
    assert checked.returncode == 1, checked.stdout
    said = checked.stdout
    assert f"signature does NOT hold: approver {APPROVER}" in said and CHANGED in said, said
    assert "does NOT cover the current data" in said and "locks the run until it is withdrawn" in said
    assert ": the run is locked" not in said

    book, record = tmp_path / "q.xlsx", tmp_path / "q.pdf"
    data = json.loads(run_cli("quantify", str(path), "--json", "--export", str(book), "--report", str(record)).stdout)
    approval = [s for s in data["signatures"] if s["role"] == "approver"]
    assert len(approval) == 1 and approval[0]["holds"] is False, approval
    assert CHANGED in approval[0]["check"] and "the signature is genuine" in approval[0]["check"]
    assert [s["holds"] for s in data["signatures"] if s["role"] == "reviewer"] == [True]

    rows = list(openpyxl.load_workbook(book)["Signatures"].iter_rows(values_only=True))
    approver_row = next(r for r in rows if r[0] == "approver")
    assert approver_row[6] == "does NOT hold" and CHANGED in approver_row[7], approver_row
    first = flat(PdfReader(record).pages[0].extract_text())
    assert flat("does NOT hold: " + CHANGED) in first


def test_an_approval_over_data_edited_afterwards_does_not_hold(tmp_path: Path) -> None:
    path = response_typed_over(signed_run(tmp_path))
    _approval_does_not_hold(path, tmp_path)


def test_recording_exports_does_not_make_the_changed_approval_hold(tmp_path: Path) -> None:
    path = response_typed_over(signed_run(tmp_path))
    done = run_cli("quantify", str(path), "--record", "--export", str(tmp_path / "r.csv"), "--analyst", "Ana Lopes")
    assert done.returncode in (0, 1), done.stdout + done.stderr
    assert run_cli("check", str(path)).stdout.count("data changed outside Curvewright") >= 1
    _approval_does_not_hold(path, tmp_path)
