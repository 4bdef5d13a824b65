"""``quantify`` on a run whose record is not intact (its data changed in a text editor after the last
audit entry, a signature removed from the file, an approval that no longer covers the data) ends with
exit code 1, as ``check`` does, and its verdict line says both facts: what the acceptance rules say,
and that the record is NOT intact. The JSON says each (``accepted``, ``record_intact``) and names the
problems ``check`` names. An intact run still ends with exit code 0. The commands run as subprocesses
on files edited as a person edits them."""

from __future__ import annotations

import json
from pathlib import Path

from tests.io.helpers import ROOT
from tests.cli_runs import run_cli

DEMO = ROOT / "sample_runs" / "nitrate_water_linear.json"
VERDICT_PREFIX = "Profile: "


def edit_response(path: Path) -> None:
    """One response typed over in a text editor (value and text alike); nothing else touched."""
    text = path.read_text(encoding="utf-8")
    edited = text.replace('"value": 0.1008,', '"value": 0.1108,', 1).replace('"text": "0.1008"', '"text": "0.1108"', 1)
    assert edited != text
    path.write_text(edited, encoding="utf-8")


def verdict_line(stdout: str) -> str:
    return next(line for line in stdout.splitlines() if line.startswith(VERDICT_PREFIX))


def checked_problems(path: Path) -> list[str]:
    """What ``check`` names against the record, each problem as it words it."""
    checked = run_cli("check", str(path))
    assert checked.returncode == 1, checked.stdout + checked.stderr
    lines = checked.stdout.splitlines()
    return ([line[4:] for line in lines if line.startswith("  - ")]
            + [line[2:] for line in lines if line.startswith("  signature does NOT hold: ")])


def test_an_intact_run_still_ends_accepted_with_exit_code_0(tmp_path: Path) -> None:
    done = run_cli("quantify", str(DEMO))
    assert done.returncode == 0, done.stdout + done.stderr
    assert verdict_line(done.stdout).endswith("; verdict: ACCEPTED")
    data = run_cli("quantify", str(DEMO), "--json")
    assert data.returncode == 0
    parsed = json.loads(data.stdout)
    assert parsed["accepted"] is True and parsed["record_intact"] is True and parsed["record_problems"] == []


def test_a_run_edited_outside_the_program_ends_with_exit_code_1_saying_both_facts(tmp_path: Path) -> None:
    path = tmp_path / "nitrate edited.json"
    path.write_bytes(DEMO.read_bytes())
    edit_response(path)
    named = checked_problems(path)
    assert len(named) == 1 and named[0].startswith("data changed outside Curvewright after entry ")

    done = run_cli("quantify", str(path))
    assert done.returncode == 1, done.stdout + done.stderr
    assert verdict_line(done.stdout).endswith(
        "; verdict: the acceptance rules are met, but the run's record is NOT intact (1 problem in the warnings "
        "above; curvewright check names them): exit code 1")
    assert f"warning: {named[0]}" in done.stdout

    data = run_cli("quantify", str(path), "--json")
    assert data.returncode == 1
    parsed = json.loads(data.stdout)
    assert parsed["accepted"] is True  # the acceptance rules' verdict alone
    assert parsed["record_intact"] is False and parsed["record_problems"] == named
    assert parsed["chain_check"].startswith("NOT verified: ")


def test_a_lost_signature_and_an_approval_that_does_not_hold_end_with_exit_code_1(tmp_path: Path) -> None:
    approved = tmp_path / "nitrate approved.json"
    approved.write_bytes(DEMO.read_bytes())
    signed = run_cli("sign", str(approved), "--role", "approver", "--analyst", "Sam Approver")  # an invented person
    assert signed.returncode == 0, signed.stderr
    assert run_cli("quantify", str(approved)).returncode == 0  # approved and intact

    # the approval removed from the file in an editor (the trail still records it)
    lost = tmp_path / "nitrate signature removed.json"
    document = json.loads(approved.read_text(encoding="utf-8"))
    assert document["signatures"]
    document["signatures"] = []
    lost.write_text(json.dumps(document, indent=1, ensure_ascii=False), encoding="utf-8")
    named = checked_problems(lost)
    assert named and "no longer holds" in named[0]
    done = run_cli("quantify", str(lost), "--json")
    assert done.returncode == 1
    parsed = json.loads(done.stdout)
    assert parsed["accepted"] is True and parsed["record_intact"] is False and parsed["record_problems"] == named

    # a value changed after approval: the data changed, and the approval does not cover them
    changed = tmp_path / "nitrate changed after approval.json"
    changed.write_bytes(approved.read_bytes())
    edit_response(changed)
    named = checked_problems(changed)
    assert any(p.startswith("signature does NOT hold: approver Sam Approver") for p in named), named
    done = run_cli("quantify", str(changed))
    assert done.returncode == 1
    assert f"the run's record is NOT intact ({len(named)} problems in the warnings above" in verdict_line(done.stdout)
    assert all(f"warning: {p}" in done.stdout for p in named)
