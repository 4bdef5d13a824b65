"""An edit typed in the table is recorded with the hash of the run's content after it: the same
hash a fresh reading of the saved document gives, whichever window made it."""

from __future__ import annotations

import json
import shutil

from curvewright.app import standards_model as sm
from curvewright.io.integrity import sha256_of_content
from curvewright.io.run_document import dumps_run, loads_run
from tests.app.conftest import ROOT, settle

NITRATE = ROOT / "sample_runs" / "nitrate_water_linear.json"


def document_hash(run) -> str:  # type: ignore[no-untyped-def]
    """The content hash of the run's document as written and read back (nothing kept from the run)."""
    text = dumps_run(run)
    return sha256_of_content(json.loads(text))


def close(window) -> None:  # type: ignore[no-untyped-def]
    window.session.wait_for_analysis()
    window.session.undo_stack.setClean()
    window.session._unsaved_records = False
    window.close()
    window.deleteLater()


def test_a_typed_edit_records_the_hash_of_the_saved_content(make_window, qtbot, tmp_path, answer_dialogs) -> None:  # type: ignore[no-untyped-def]
    first = make_window(shutil.copy(NITRATE, tmp_path / "first.json"))
    second = make_window(shutil.copy(NITRATE, tmp_path / "second.json"))
    untouched = second.session.run
    model = first.standards_model
    for text in ("0.1111", "0.1234"):
        model.setData(model.index(3, sm.RESP), text)
        settle(qtbot, first)
        run = first.session.run
        entry = run.audit[-1]
        assert entry.action == "value_edited"
        assert entry.content_sha256 == document_hash(run)
        reread = loads_run(dumps_run(run))
        assert reread.content_change is None and not reread.chain_problems  # the trail verifies as saved
    first.undo()
    settle(qtbot, first)
    assert first.session.run.audit[-1].action == "change_undone"
    assert first.session.run.audit[-1].content_sha256 == document_hash(first.session.run)
    # the other window's run is its own: not changed, and its recorded hash still that of its content
    assert second.session.run is untouched
    assert second.session.run.audit[-1].content_sha256 == document_hash(untouched)
    assert first.session.run.audit[-1].content_sha256 != document_hash(untouched)
    close(first)
    close(second)
