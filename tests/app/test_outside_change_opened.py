"""A run whose data were changed outside the program (a response typed over in a text editor, the
trail left as saved), opened in the app through the window as an analyst opens a file: the warning
names the change, and the trail records it at once, so that no later edit or export can make it vanish."""

from __future__ import annotations

from curvewright.io.run_document import open_run
from tests.app.conftest import ROOT, settle
from tests.io.helpers import HAND_EDITED_NAMED as NAMED, hand_edited_nitrate

NITRATE = ROOT / "sample_runs" / "nitrate_water_linear.json"


def test_opening_a_hand_edited_run_records_the_change_in_its_trail(make_window, qtbot, tmp_path, answer_dialogs) -> None:
    path = hand_edited_nitrate(tmp_path)
    entries_before = len(open_run(path).run.audit)
    window = make_window(NITRATE)
    assert window.open_path(path)
    settle(qtbot, window)

    warnings = [text for title, text in answer_dialogs.seen if title == "Not as Curvewright left it"]
    assert len(warnings) == 1 and NAMED in warnings[0], answer_dialogs.seen
    assert "The change is now recorded in the audit trail" in warnings[0]

    trail = window.session.run.audit
    assert len(trail) == entries_before + 1
    assert trail[-1].action == "data_changed_outside"
    assert trail[-1].details["changes"] == [NAMED]
    assert window.isWindowModified()
    assert window.session.undo_stack.count() == 0  # the record of the change cannot be undone

    assert window._save_to(path)
    saved = open_run(path)
    assert not saved.integrity_problems  # the trail now accounts for the data as they are
    assert [e.action for e in saved.run.audit][-1] == "data_changed_outside"
