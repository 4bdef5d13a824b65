"""A replicate's response corrected in a table, as a person does it (the cell clicked, F2, the new
value typed, Enter, the reason dialog answered), in a run whose samples and standards carry
internal-standard responses. The samples table has no cell for them: the internal-standard response
of the corrected replicate stays as imported, the cell's tooltip names it, and the audit entry
records the old and new values of the response only, saying the internal-standard response was
kept. The standards table (which has an IS column) keeps it the same way."""

from __future__ import annotations

from PySide6.QtCore import Qt

from curvewright.app import results_model as rm
from curvewright.app import samples_model as smp
from curvewright.app import standards_model as sm
from curvewright.io.audit_words import audit_rows
from curvewright.io.result_tables import display_number
from tests.app.conftest import DEMOS, open_cell_editor, settle, type_keys

VELTAPRINE = next(p for p in DEMOS if "veltaprine" in p.stem)  # samples and standards with IS responses


def retype(qtbot, window, view, index, text: str) -> None:  # type: ignore[no-untyped-def]
    """Click the cell, open its editor with F2, type ``text`` over it and press Enter."""
    editor = open_cell_editor(qtbot, window, view, index)
    editor.selectAll()
    qtbot.keyClicks(editor, text)
    type_keys(qtbot, editor, Qt.Key.Key_Return)
    settle(qtbot, window)


def test_a_corrected_sample_response_keeps_its_internal_standard_response(
        make_window, qtbot, tmp_path, answer_dialogs) -> None:
    window = make_window(VELTAPRINE)
    session = window.session
    window.left_tabs.setCurrentIndex(1)
    model = window.samples_model
    row = next(i for i, s in enumerate(session.run.samples) if s.id == "Subject 07 t2h")
    before = session.run.samples[row]
    (m,) = before.measurements
    assert (m.response.text, m.internal_standard_response.text) == ("304206", "179207")  # as the demo holds them
    index = model.index(row, smp.RESPONSES)
    tip = model.data(index, Qt.ItemDataRole.ToolTipRole)
    assert tip == "Internal-standard responses (kept when a response is corrected): replicate 1: 179207"
    trail = len(session.run.audit)

    retype(qtbot, window, window.samples_view, index, "304260")

    (after,) = session.run.samples[row].measurements
    assert after.response.value == 304260.0
    assert after.internal_standard_response == m.internal_standard_response  # kept, not dropped
    assert model.data(model.index(row, smp.RESPONSES), Qt.ItemDataRole.ToolTipRole) == tip
    assert len(session.run.audit) == trail + 1
    entry = session.run.audit[-1]
    assert entry.action == "samples_edited"
    assert entry.details["changes"] == [{
        "sample": "Subject 07 t2h", "field": "responses",
        "old": {"veltaprine/1": "304206"}, "new": {"veltaprine/1": "304260"},  # what changed only
        "internal_standard_kept": {"veltaprine/1": "179207"}}]
    words = audit_rows(session.run)[-1][3]
    assert words.startswith("changed responses of Subject 07 t2h from veltaprine/1: 304206 to veltaprine/1: 304260 "
                            "(internal-standard response kept: veltaprine/1: 179207).")
    # the results table still quantifies it: the new response over the kept internal-standard response
    results = window.results_model
    shown = next(r for r in range(results.rowCount()) if results.index(r, rm.SAMPLE).data() == "Subject 07 t2h")
    qtbot.waitUntil(lambda: results.index(shown, rm.MEAN).data() == display_number(304260 / 179207), timeout=5000)
    window.grab().save(str(tmp_path / "samples-is-kept.png"))


def test_a_corrected_standard_response_keeps_its_internal_standard_response(
        make_window, qtbot, tmp_path, answer_dialogs) -> None:
    window = make_window(VELTAPRINE)
    session = window.session
    model = window.standards_model
    before = model.standards[0]
    assert before.internal_standard_response is not None
    new_text = "1" + before.response.text.strip()  # a distinct reading
    trail = len(session.run.audit)

    retype(qtbot, window, window.standards_view, model.index(0, sm.RESP), new_text)

    after = session.run.analyte(model.analyte_name).standard(before.id)
    assert after.response.text == new_text
    assert after.internal_standard_response == before.internal_standard_response
    assert model.index(0, sm.IS).data() == before.internal_standard_response.text.strip()
    assert len(session.run.audit) == trail + 1
    assert session.run.audit[-1].details["changes"] == [
        {"standard": before.id, "field": "response", "old": before.response.text, "new": new_text}]
    window.grab().save(str(tmp_path / "standards-is-kept.png"))
