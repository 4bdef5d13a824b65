"""Signing a run whose record is not intact, in the app: a reviewer's signature cut out of the file by
hand while its audit entry stays. The sign dialog shows the record's problems first; OK stays disabled
until the signer confirms and gives a reason; the reason is kept in the signed meaning, the audit
entry records the problems, and the printed record shows both and still names the removed signature."""

from __future__ import annotations

import shutil

from PySide6.QtCore import Qt
from PySide6.QtTest import QTest
from PySide6.QtWidgets import QDialog, QDialogButtonBox

from curvewright.app import dialogs
from curvewright.io.audit import identity_from
from curvewright.io.run_document import open_run, save_run
from curvewright.io.signatures import sign
from tests.app.conftest import DEMOS
from tests.app.test_sign_dialog_verdict import record_text
from tests.signed_runs import cut_out_reviewer_signature

NITRATE = next(p for p in DEMOS if p.name.startswith("nitrate"))
REASON = "Reviewer signature lost in a file transfer; data re-checked against the raw printout"


def reviewer_cut_out(tmp_path) -> tuple:  # type: ignore[no-untyped-def]
    """The demo run signed by a reviewer and saved, then the signature cut out of the file as in a text
    editor; and the words the record check names the removed signature with."""
    path = tmp_path / "run.json"
    shutil.copy(NITRATE, path)
    run = sign(open_run(path).run, "reviewer", identity_from("Ines Varga", "QA-7"))
    save_run(run, path)
    return path, cut_out_reviewer_signature(path, "Ines Varga")


def test_the_sign_dialog_shows_the_problems_and_signing_needs_a_kept_reason(
        make_window, qtbot, tmp_path, monkeypatch, answer_dialogs) -> None:
    path, named = reviewer_cut_out(tmp_path)
    window = make_window(path)
    seen = []

    def answer(self) -> int:  # what the analyst sees, then does
        ok = self.buttons.button(QDialogButtonBox.StandardButton.Ok)
        self.resize(700, self.sizeHint().height())
        self.show()
        qtbot.waitExposed(self)
        self.grab().save(str(tmp_path / "sign-dialog.png"))
        seen.append((self.record_problems.isVisibleTo(self), self.record_problems.text(), ok.isEnabled()))
        QTest.mouseClick(ok, Qt.MouseButton.LeftButton)  # refused as it stands: OK is disabled
        seen.append(self.result())
        self.despite_record.setChecked(True)
        seen.append(ok.isEnabled())  # confirmed, but no reason yet
        QTest.keyClicks(self.despite_record_reason, REASON)
        seen.append(ok.isEnabled())
        self.hide()
        return QDialog.DialogCode.Accepted

    monkeypatch.setattr(dialogs.SignDialog, "exec", answer)
    window.actions_by_name["sign-analyst"].trigger()
    (shown, problems, ok_at_first), *after = seen
    assert shown and "The run's record is NOT intact." in problems and named in problems
    assert not ok_at_first and after == [QDialog.DialogCode.Rejected, False, True]
    signature = window.session.run.signatures[-1]
    assert signature.role == "analyst"
    assert signature.meaning.endswith(f"Signed although the run's record is NOT intact; reason: {REASON}")
    entry = window.session.run.audit[-1]
    assert entry.action == "signed" and entry.details["signed_although_record_not_intact"] == REASON
    assert any(named in p for p in entry.details["record_problems"])
    text = record_text(window, monkeypatch, tmp_path / "record.pdf")
    assert f"Signed although the run's record is NOT intact; reason: {REASON}" in text
    assert "NOT verified" in text and named in text  # the problem stays on record


def test_without_the_confirmation_nothing_is_signed(make_window, qtbot, tmp_path, monkeypatch, answer_dialogs) -> None:
    path, _ = reviewer_cut_out(tmp_path)
    window = make_window(path)
    before = window.session.run

    def accept_without_confirming(self) -> int:  # as if OK had been pressed: sign() refuses on its own
        return QDialog.DialogCode.Accepted

    monkeypatch.setattr(dialogs.SignDialog, "exec", accept_without_confirming)
    assert not window.sign_run("analyst")
    assert window.session.run is before
    assert answer_dialogs.last_title == "Not signed" and "record is NOT intact" in answer_dialogs.seen[-1][1]
