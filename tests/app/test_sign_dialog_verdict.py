"""Signing shows the run's verdict and the signatures already given. Approving a NOT ACCEPTED run
needs an explicit confirmation and a reason, kept in the trail and printed beside the approval; one
person signing in a second role is told so before signing, and the record says so."""

from __future__ import annotations

import shutil

from PySide6.QtCore import Qt
from PySide6.QtTest import QTest
from PySide6.QtWidgets import QDialog, QDialogButtonBox, QFileDialog

from curvewright.app import dialogs
from curvewright.app import standards_model as sm
from tests.app.conftest import DEMOS, settle
from tests.printed import printed_text

NITRATE = next(p for p in DEMOS if p.name.startswith("nitrate"))


def record_text(window, monkeypatch, path) -> str:  # type: ignore[no-untyped-def]
    """File → Export calibration record, read back as a reader's PDF software gives its text."""
    monkeypatch.setattr(QFileDialog, "getSaveFileName", lambda *a, **k: (str(path), ""))
    window.actions_by_name["export-record"].trigger()
    return printed_text(path)


def window_on_a_demo_copy(make_window, tmp_path):  # type: ignore[no-untyped-def]
    """A window on a copy of the nitrate demo run, ``tmp_path/run.json``."""
    path = tmp_path / "run.json"
    shutil.copy(NITRATE, path)
    return make_window(path)


def misread_standard_4(window, qtbot) -> None:  # type: ignore[no-untyped-def]
    """Standard 4's response typed over with three times its value (a wrong reading), and the run analysed."""
    model = window.standards_model
    assert model.setData(model.index(3, sm.RESP), str(float(model.index(3, sm.RESP).data()) * 3))
    settle(qtbot, window)


def test_approving_a_not_accepted_run_needs_a_reason_that_the_record_prints(
        make_window, qtbot, tmp_path, monkeypatch, answer_dialogs) -> None:
    window = window_on_a_demo_copy(make_window, tmp_path)
    misread_standard_4(window, qtbot)
    assert not window.session.result.accepted
    shown = []

    def answer(self) -> int:  # what the approver sees, then does
        ok = self.buttons.button(QDialogButtonBox.StandardButton.Ok)
        shown.append((self.verdict.text(), self.given.text(), ok.isEnabled()))
        self.despite.setChecked(True)
        shown.append(ok.isEnabled())  # confirmed, but no reason yet
        QTest.keyClicks(self.despite_reason, "Standard 4 misread; samples re-run in batch 12 agree")
        shown.append(ok.isEnabled())
        return QDialog.DialogCode.Accepted

    monkeypatch.setattr(dialogs.SignDialog, "exec", answer)
    window.actions_by_name["sign-approver"].trigger()
    verdict, given, ok_at_first = shown[0]
    assert verdict.startswith("Run verdict: NOT ACCEPTED — ") and "FAIL" in verdict
    assert given == "No signatures yet." and not ok_at_first and shown[1:] == [False, True]
    approval = window.session.run.approval
    assert approval is not None and "Standard 4 misread; samples re-run in batch 12 agree" in approval.meaning
    entry = window.session.run.audit[-1]
    assert entry.action == "signed" and entry.details["run_verdict"] == "NOT ACCEPTED"
    assert entry.details["approved_although_not_accepted"] == "Standard 4 misread; samples re-run in batch 12 agree"
    text = record_text(window, monkeypatch, tmp_path / "record.pdf")
    assert "Run verdict: NOT ACCEPTED" in text
    assert ("I approve these results for release. Approved although the run verdict is NOT ACCEPTED; reason: "
            "Standard 4 misread; samples re-run in batch 12 agree") in text


def test_a_not_accepted_run_is_not_approved_without_the_confirmation(
        make_window, qtbot, tmp_path, monkeypatch, answer_dialogs) -> None:
    window = window_on_a_demo_copy(make_window, tmp_path)
    misread_standard_4(window, qtbot)

    def press_ok(self) -> int:  # OK pressed as the dialog stands: refused, nothing signed
        ok = self.buttons.button(QDialogButtonBox.StandardButton.Ok)
        QTest.mouseClick(ok, Qt.MouseButton.LeftButton)
        return self.result()

    monkeypatch.setattr(dialogs.SignDialog, "exec", press_ok)
    assert not window.actions_by_name["sign-approver"].trigger() and window.session.run.approval is None
    assert not window.session.run.signatures


def test_one_person_in_a_second_role_is_told_and_the_record_says_so(
        make_window, qtbot, tmp_path, monkeypatch, answer_dialogs) -> None:
    window = window_on_a_demo_copy(make_window, tmp_path)
    assert window.session.result.accepted
    seen = []

    def answer(self) -> int:
        seen.append((self.role, self.verdict.text(), self.given.text(),
                     self.same_person.text() if self.same_person.isVisibleTo(self) else ""))
        return QDialog.DialogCode.Accepted

    monkeypatch.setattr(dialogs.SignDialog, "exec", answer)
    window.actions_by_name["sign-analyst"].trigger()
    window.actions_by_name["sign-reviewer"].trigger()
    assert seen[0][1].startswith("Run verdict: ACCEPTED") and seen[0][3] == ""
    role, _verdict, given, warning = seen[1]
    assert role == "reviewer" and given.startswith("Signatures already given:\nanalyst: Robin Example (ID QA-0042), ")
    assert warning.startswith("You have already signed this run as analyst.")
    assert [s.role for s in window.session.run.signatures] == ["analyst", "reviewer"]  # allowed: labs differ
    assert window.session.run.audit[-1].details["also_signed_as"] == ["analyst"]
    text = record_text(window, monkeypatch, tmp_path / "record.pdf")
    assert "One person signed in several roles: Robin Example as analyst, reviewer." in text
