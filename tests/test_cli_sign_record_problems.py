"""``curvewright sign`` on a run document whose record is not intact, as subprocesses on the files: a
reviewer's signature cut out of the "signatures" list in a text editor while its audit entry stays.
Signing it again is refused until the signer gives --despite-record-problems REASON; the reason is
then part of the signed meaning, the audit entry records the problems and the reason, the printed
record shows both, and ``check`` goes on naming the removed signature."""

from __future__ import annotations

import json
from pathlib import Path

from tests.cli_runs import run_cli
from tests.printed import printed_text
from tests.signed_runs import cut_out_reviewer_signature
from tests.io.helpers import ROOT

DEMO = ROOT / "sample_runs" / "nitrate_water_linear.json"
REASON = "Reviewer signature lost in a file transfer; data re-checked against the raw printout"


def reviewer_cut_out(tmp_path: Path) -> tuple[Path, str]:
    """The demo run signed by a reviewer, then that signature object cut out of the file by hand; and
    the words ``check`` names the removed signature with."""
    path = tmp_path / "run.json"
    path.write_bytes(DEMO.read_bytes())
    done = run_cli("sign", str(path), "--role", "reviewer", "--analyst", "Ines Varga")
    assert done.returncode == 0, done.stdout + done.stderr
    return path, cut_out_reviewer_signature(path, "Ines Varga")


def test_signing_over_a_removed_signature_needs_a_reason_and_the_problem_stays(tmp_path) -> None:
    path, named = reviewer_cut_out(tmp_path)
    checked = run_cli("check", str(path))
    assert checked.returncode == 1 and named in checked.stdout, checked.stdout
    before = path.read_bytes()

    refused = run_cli("sign", str(path), "--role", "analyst", "--analyst", "Robin Example")
    assert refused.returncode != 0
    assert "record is NOT intact" in refused.stderr and named in refused.stderr
    assert "--despite-record-problems" in refused.stderr
    assert path.read_bytes() == before  # nothing signed

    done = run_cli("sign", str(path), "--role", "analyst", "--analyst", "Robin Example",
                   "--despite-record-problems", REASON)
    assert done.returncode == 0, done.stdout + done.stderr
    assert "warning: the run's record is NOT intact" in done.stderr and named in done.stderr
    document = json.loads(path.read_text(encoding="utf-8"))
    meaning = document["signatures"][-1]["meaning"]
    assert meaning.endswith(f"Signed although the run's record is NOT intact; reason: {REASON}")
    entry = document["audit"][-1]
    assert entry["action"] == "signed" and entry["details"]["signed_although_record_not_intact"] == REASON
    assert any(named in p for p in entry["details"]["record_problems"])

    # the problem stays: check still names the removed signature; the new signature holds
    checked = run_cli("check", str(path))
    assert checked.returncode == 1 and named in checked.stdout, checked.stdout
    assert "signature: analyst Robin Example" in checked.stdout

    record = tmp_path / "record.pdf"
    printed = run_cli("quantify", str(path), "--report", str(record))
    assert printed.returncode == 1, printed.stdout + printed.stderr  # the record is not intact
    text = printed_text(record)
    assert f"Signed although the run's record is NOT intact; reason: {REASON}" in text
    assert "NOT verified" in text and "The record was NOT intact when signed" in text


def test_an_intact_record_refuses_the_option(tmp_path) -> None:
    path = tmp_path / "run.json"
    path.write_bytes(DEMO.read_bytes())
    done = run_cli("sign", str(path), "--role", "analyst", "--analyst", "Robin Example",
                   "--despite-record-problems", REASON)
    assert done.returncode != 0 and "record is intact" in done.stderr, done.stderr
    assert path.read_bytes() == DEMO.read_bytes()
