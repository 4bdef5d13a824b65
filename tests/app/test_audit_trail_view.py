"""The Audit trail tab shows a reviewer, on screen, what their signature covers: every entry in order
with time, person, action and reason, the chain check, and the signatures with whether each holds.
Driven as a person does it: a standard's response typed over (the reason dialog answered), a standard
excluded with a reason by clicking its row and the Exclude button, the run signed from the Review
menu, Undo chosen; the tab's rows are read after each step and compared with the record's rows."""

from __future__ import annotations

from PySide6.QtWidgets import QDialog

from curvewright.app import dialogs
from curvewright.app import standards_model as sm
from curvewright.io.audit import chain_claim
from curvewright.io.audit_words import audit_rows
from curvewright.io.signatures import check_signatures, signature_rows
from tests.app.conftest import DEMOS, settle
from tests.app.test_anchor_points import click_rows

NITRATE = next(p for p in DEMOS if "nitrate" in p.stem)


def test_the_audit_trail_tab_shows_entries_chain_and_signatures(make_window, qtbot, answer_dialogs,
                                                                 monkeypatch, tmp_path) -> None:
    monkeypatch.setattr(dialogs.SignDialog, "exec", lambda self: QDialog.DialogCode.Accepted)
    window = make_window(NITRATE)
    view = window.audit_view
    window.bottom_tabs.setCurrentWidget(view)
    settle(qtbot, window)
    start = len(window.session.run.audit)
    assert len(view.rows(view.entries)) == start and view.chain.text().startswith("Chain check: verified")
    assert view.signatures_title.text() == "Signatures: none yet."

    # a response typed over, with a reason
    answer_dialogs["reason"] = "integration corrected (bench note 7)"
    model = window.standards_model
    assert model.setData(model.index(2, sm.RESP), "0.2045")
    settle(qtbot, window)
    rows = view.rows(view.entries)
    assert len(rows) == start + 1 and "integration corrected (bench note 7)" in rows[-1][3]
    assert rows[-1][2] == "Robin Example (QA-0042)" or "Robin Example" in rows[-1][2]

    # a standard excluded with a reason: click its row, then the Exclude button
    answer_dialogs["reason"] = "vial cracked (bench note 9)"
    click_rows(window, [4])
    excluded = model.standards[4].id
    window.exclude_button.click()
    settle(qtbot, window)
    rows = view.rows(view.entries)
    assert len(rows) == start + 2 and excluded in rows[-1][3] and "vial cracked (bench note 9)" in rows[-1][3]

    # Undo is recorded too: the trail only grows, and the tab follows
    before = len(window.session.run.audit)
    window.undo_action.trigger()
    settle(qtbot, window)
    assert len(view.rows(view.entries)) == len(window.session.run.audit) == before + 1
    assert "undid" in view.rows(view.entries)[-1][3]

    # signed as reviewer from the Review menu
    window.actions_by_name["sign-reviewer"].trigger()
    settle(qtbot, window)
    run = window.session.run
    assert view.signatures_title.text() == "Signatures (1):"
    signatures = view.rows(view.signatures)
    assert signatures[0][0] == "reviewer" and "Robin Example" in signatures[0][1] and "NOT" not in signatures[0][4]
    # the same rows, in the same words, as the record's pages
    assert view.rows(view.entries) == list(audit_rows(run))
    assert signatures == list(signature_rows(check_signatures(run), run))
    assert view.chain.text() == f"Chain check: {chain_claim(run)[1]}"
    # numbered in order, one row per entry
    assert [r[0] for r in view.rows(view.entries)] == [str(i) for i in range(1, len(run.audit) + 1)]

    assert view.chain.text().startswith("Chain check: verified")
    window.grab().save(str(tmp_path / "audit_tab.png"))
