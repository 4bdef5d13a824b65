"""A run signed by an analyst and a reviewer, whose reviewer signature is then deleted from the file
in a text editor (the audit trail still records it). Every output that lists signers says the same
true thing: the trail records a reviewer's signature the file no longer holds (name, time), and the
reviewer's signature line is open again. The record (written by ``quantify --report`` run as a
subprocess) does not list the reviewer as having signed while offering the reviewer's line; the
workbook's Run information and Signatures sheets, the Audit trail tab and the sign dialog's list of
earlier signatures (which does not say "No signatures yet.") say it in the same words."""

from __future__ import annotations

import json
from pathlib import Path

import openpyxl
from PySide6.QtWidgets import QDialog

from curvewright.app import dialogs
from tests.app.conftest import DEMOS
from tests.cli_runs import run_cli
from tests.printed import printed_pages

NITRATE = next(p for p in DEMOS if p.name.startswith("nitrate"))
REVIEWER = "Kim Quillfeather"  # an invented person
ANALYST = "Ola Brightwater"  # an invented person


def signed_then_reviewer_removed(tmp_path: Path) -> tuple[Path, str, int]:
    """The demo signed by the analyst and the reviewer on the command line, then the reviewer's
    signature deleted from the file's "signatures" in an editor. Returns the file, the time the
    trail records for the reviewer's signature, and that entry's number."""
    path = tmp_path / "nitrate reviewer removed.json"
    path.write_bytes(NITRATE.read_bytes())
    for role, name in (("analyst", ANALYST), ("reviewer", REVIEWER)):
        done = run_cli("sign", str(path), "--role", role, "--analyst", name)
        assert done.returncode == 0, done.stdout + done.stderr
    document = json.loads(path.read_text(encoding="utf-8"))
    assert [s["role"] for s in document["signatures"]] == ["analyst", "reviewer"]
    document["signatures"] = [s for s in document["signatures"] if s["role"] != "reviewer"]
    path.write_text(json.dumps(document, indent=1, ensure_ascii=False), encoding="utf-8")
    number, entry = next((i, e) for i, e in enumerate(document["audit"], start=1)
                         if e["action"] == "signed" and e["details"]["role"] == "reviewer")
    return path, entry["time_utc"], number


def test_a_removed_reviewer_signature_is_told_alike_everywhere(
        make_window, qtbot, tmp_path, monkeypatch, answer_dialogs) -> None:
    path, time_utc, number = signed_then_reviewer_removed(tmp_path)
    removed = (f"audit entry {number} records a reviewer's signature by {REVIEWER}, {time_utc}, that the file no "
               "longer holds: it was removed from the file, so the reviewer's signature line is open again")

    # the record and the workbook, written by the command
    record, book = tmp_path / "record.pdf", tmp_path / "book.xlsx"
    done = run_cli("quantify", str(path), "--report", str(record), "--export", str(book))
    assert done.returncode == 1, done.stdout + done.stderr  # the record is not intact
    first = printed_pages(record)[0]
    reviewer_row = first.split(" Reviewer ", 1)[1].split(" Approver ", 1)[0]  # the Run table's row
    assert reviewer_row.startswith(REVIEWER) and reviewer_row.endswith(f": NOT signed — {removed}")
    assert ", signed " not in reviewer_row  # never listed as having signed
    assert first.count(removed) == 2  # the Run table and the Signatures table
    assert "To be signed" in first and "Reviewer — I reviewed the data" in first  # the line is open again

    sheets = openpyxl.load_workbook(book, read_only=True)
    info = {r[0]: r[1] for r in sheets["Run information"].iter_rows(values_only=True) if len(r) > 1 and r[0]}
    assert info["Reviewer"].endswith(f": NOT signed — {removed}") and ", signed " not in info["Reviewer"]
    signatures = [r for r in sheets["Signatures"].iter_rows(values_only=True) if r and r[0] in ("analyst", "reviewer")]
    assert [(r[0], r[1], r[6]) for r in signatures] == [("analyst", ANALYST, "holds"),
                                                        ("reviewer", REVIEWER, "NOT in the file")]
    assert signatures[1][7] == removed
    sheets.close()

    # the Audit trail tab and the sign dialog
    window = make_window(path)
    window.bottom_tabs.setCurrentWidget(window.audit_view)
    qtbot.waitUntil(lambda: window.audit_view.signatures.rowCount() == 2)
    rows = window.audit_view.rows(window.audit_view.signatures)
    assert [r[0] for r in rows] == ["analyst", "reviewer"]
    assert rows[1][4] == f"NOT in the file: {removed}"
    assert window.audit_view.signatures_title.text() == "Signatures (2, 1 of them NOT in the file):"
    window.grab().save(str(tmp_path / "audit-tab.png"))

    given = []

    def look(self) -> int:  # the reviewer reads the dialog, then cancels
        given.append(self.given.text())
        self.grab().save(str(tmp_path / "sign-dialog.png"))
        return QDialog.DialogCode.Rejected

    monkeypatch.setattr(dialogs.SignDialog, "exec", look)
    window.actions_by_name["sign-reviewer"].trigger()
    (text,) = given
    assert text != "No signatures yet."
    lines = text.splitlines()
    assert lines[0] == "Signatures already given:" and lines[1].startswith(f"analyst: {ANALYST}, ")
    assert lines[2] == "Signatures the audit trail records that the file no longer holds:"
    assert lines[3] == f"reviewer: {REVIEWER}, {time_utc.replace('T', ' ')[:19]} UTC — NOT in the file: {removed}"
