"""A signature, an approval and the withdrawal of an approval are boundaries the undo history cannot
cross. The analyst types over a standard's response (the reason dialog answered), types over another
and takes that back with Undo, then signs from the Review menu (the signing dialog answered) and presses
Ctrl+Z, chooses Edit → Undo, presses the Redo shortcut and chooses Edit → Redo: the run still holds
its signature and the edit it covers, the chain check on the Audit trail tab stays verified, and the
status line says why nothing was undone. The same for an approval, and for its withdrawal, which Undo
must not take back (an approval without its signature). A new edit after the signature is undone as
usual, back to the signature and no further (pytest-qt, offscreen)."""

from __future__ import annotations

from PySide6.QtCore import Qt
from PySide6.QtWidgets import QApplication, QDialog

from curvewright.app import dialogs
from curvewright.app import standards_model as sm
from curvewright.io.audit import chain_claim
from tests.app.conftest import DEMOS, settle, type_keys

NITRATE = next(p for p in DEMOS if "nitrate" in p.stem)


def type_response(qtbot, window, row: int, text: str) -> None:  # type: ignore[no-untyped-def]
    """Click the standard's Response cell, type the value and press Enter (the reason is asked and answered)."""
    window.activateWindow()
    qtbot.waitUntil(lambda: QApplication.activeWindow() is window)
    window.left_tabs.setCurrentIndex(0)
    model, table = window.standards_model, window.standards_view
    index = model.index(row, sm.RESP)
    table.scrollTo(index)
    qtbot.mouseClick(table.viewport(), Qt.MouseButton.LeftButton, pos=table.visualRect(index).center())
    qtbot.keyClicks(table, text[0])
    editor = QApplication.focusWidget()
    assert editor is not table and editor.parent() is table.viewport(), "typing did not open the cell's editor"
    qtbot.keyClicks(editor, text[1:])
    qtbot.keyClick(editor, Qt.Key.Key_Return)
    qtbot.waitUntil(lambda: response(window, row) == text)  # entered once its reason is given
    settle(qtbot, window)


def response(window, row: int) -> str:  # type: ignore[no-untyped-def]
    return window.standards_model.standards[row].response.text


def press(qtbot, window, name: str) -> None:  # type: ignore[no-untyped-def]
    """Press the shortcut of the menu action ``name`` in the window, as the analyst does."""
    window.activateWindow()
    qtbot.waitUntil(lambda: QApplication.activeWindow() is window)
    combination = window.actions_by_name[name].shortcut()[0]
    type_keys(qtbot, window.focusWidget() or window, combination.key(), combination.keyboardModifiers())
    settle(qtbot, window)


def menu(qtbot, window, name: str) -> None:  # type: ignore[no-untyped-def]
    window.actions_by_name[name].trigger()
    settle(qtbot, window)


def refused_everywhere(qtbot, window, expected_words: tuple[str, ...], kept,  # type: ignore[no-untyped-def]
                       names: tuple[str, ...] = ("undo", "redo")) -> None:
    """Ctrl+Z, Edit → Undo, the Redo shortcut and Edit → Redo (those of ``names``) each leave the run as
    it is, with its signatures and a verified chain, and each tells why in the status line."""
    run = window.session.run
    for how, name in ((how, name) for name in names for how in (press, menu)):
        window.statusBar().clearMessage()
        how(qtbot, window, name)
        now = window.session.run
        assert now.signatures == run.signatures, (how.__name__, name, "a signature was dropped")
        assert now.approval == run.approval, (how.__name__, name)
        assert kept(window), (how.__name__, name, "the signed content was changed")
        verified, words = chain_claim(now)
        assert verified, (how.__name__, name, words)
        # the Audit trail tab, shown, says the same
        assert window.audit_view.chain.text().startswith("Chain check: verified"), window.audit_view.chain.text()
        told = window.statusBar().currentMessage()
        for word in expected_words:
            assert word in told, (how.__name__, name, word, told)


def test_undo_and_redo_stop_at_a_signature(make_window, qtbot, answer_dialogs, monkeypatch) -> None:
    monkeypatch.setattr(dialogs.SignDialog, "exec", lambda self: QDialog.DialogCode.Accepted)
    window = make_window(NITRATE)
    window.bottom_tabs.setCurrentWidget(window.audit_view)
    first, second = response(window, 2), response(window, 3)
    answer_dialogs["reason"] = "integration corrected (bench note 7)"
    type_response(qtbot, window, 2, "0.2045")
    type_response(qtbot, window, 3, "0.3051")
    assert (response(window, 2), response(window, 3)) == ("0.2045", "0.3051")
    menu(qtbot, window, "undo")  # the second edit taken back: Redo would bring it again
    assert response(window, 3) == second and window.redo_action.isEnabled()

    menu(qtbot, window, "sign-analyst")
    signature = window.session.run.signatures[-1]
    assert signature.role == "analyst" and window.session.run.audit[-1].action == "signed"

    refused_everywhere(qtbot, window, ("analyst signature by Robin Example", "new edit", "reason"),
                       lambda w: (response(w, 2), response(w, 3)) == ("0.2045", second))
    assert response(window, 2) != first

    # signed work is changed by a new edit, with its reason; that edit is undone as usual, and no further
    type_response(qtbot, window, 4, "0.4107")
    assert window.undo_action.text().startswith("&Undo ") and window.undo_action.text() != "&Undo"
    press(qtbot, window, "undo")
    assert window.session.run.audit[-1].action == "change_undone" and response(window, 4) != "0.4107"
    assert window.session.run.signatures[-1] == signature
    refused_everywhere(qtbot, window, ("analyst signature",), lambda w: response(w, 2) == "0.2045", ("undo",))
    # the undone new edit is still there to redo: Redo is refused only past the signature
    window.statusBar().clearMessage()
    press(qtbot, window, "redo")
    assert response(window, 4) == "0.4107" and window.session.run.audit[-1].action == "change_redone"
    assert chain_claim(window.session.run)[0]


def test_undo_and_redo_stop_at_an_approval_and_at_its_withdrawal(make_window, qtbot, answer_dialogs,
                                                                 monkeypatch) -> None:
    def sign_exec(self) -> int:  # the edits leave the run NOT ACCEPTED: approved with a reason, as a person would
        if self.needs_reason:
            self.despite.setChecked(True)
            self.despite_reason.setPlainText("released under deviation DV-17 (invented)")
        return QDialog.DialogCode.Accepted

    monkeypatch.setattr(dialogs.SignDialog, "exec", sign_exec)
    window = make_window(NITRATE)
    window.bottom_tabs.setCurrentWidget(window.audit_view)
    second = response(window, 3)
    answer_dialogs["reason"] = "integration corrected (bench note 7)"
    type_response(qtbot, window, 2, "0.2045")
    type_response(qtbot, window, 3, "0.3051")
    menu(qtbot, window, "undo")
    assert window.redo_action.isEnabled()

    menu(qtbot, window, "sign-approver")
    approval = window.session.run.approval
    assert approval is not None and approval.role == "approver"
    refused_everywhere(qtbot, window, ("approval by Robin Example", "Withdraw approval", "reason"),
                       lambda w: (response(w, 2), response(w, 3)) == ("0.2045", second))
    assert window.session.run.approval == approval

    answer_dialogs["reason"] = "standard 3 to be re-read (bench note 8)"
    menu(qtbot, window, "withdraw-approval")
    assert window.session.run.approval is None and window.session.run.audit[-1].action == "approval_withdrawn"
    # Undo must not bring the approval back, nor Redo
    refused_everywhere(qtbot, window, ("withdrawal of the approval", "sign as approver"),
                       lambda w: w.session.run.approval is None and response(w, 2) == "0.2045")

    # the run can be edited again; the new edit is undone back to the withdrawal, and no further
    answer_dialogs["reason"] = "re-read from the printout (bench note 8)"
    type_response(qtbot, window, 3, "0.3049")
    press(qtbot, window, "undo")
    assert response(window, 3) == second and window.session.run.approval is None
    refused_everywhere(qtbot, window, ("withdrawal of the approval",),
                       lambda w: w.session.run.approval is None and response(w, 3) == second, ("undo",))
    press(qtbot, window, "redo")
    assert response(window, 3) == "0.3049" and chain_claim(window.session.run)[0]
