"""The samples table shows the internal-standard responses in a column of their own, corrected as a
response is: the cell clicked, F2, the new value typed, Enter, the reason dialog answered; the audit
trail records who, when, why, and the old and new value. A run without internal-standard responses
shows no such column.

Invented scenario: the veltaprine demo run (samples and standards with IS responses); the IS response
of Subject 07 t2h was transcribed 179207 where the instrument printed 179270.
"""

from __future__ import annotations

from PySide6.QtCore import Qt

from curvewright.app import results_model as rm
from curvewright.app import samples_model as smp
from curvewright.io.audit_words import audit_rows
from curvewright.io.result_tables import display_number
from tests.app.conftest import DEMOS
from tests.app.test_internal_standard_kept import VELTAPRINE, retype


def test_an_internal_standard_response_is_shown_and_corrected_with_a_reason(
        make_window, qtbot, answer_dialogs) -> None:
    window = make_window(VELTAPRINE)
    session = window.session
    window.left_tabs.setCurrentIndex(1)
    model, view = window.samples_model, window.samples_view
    assert not view.isColumnHidden(smp.IS)
    assert model.headerData(smp.IS, Qt.Orientation.Horizontal) == "IS responses (replicates: a; b)"
    row = next(i for i, s in enumerate(session.run.samples) if s.id == "Subject 07 t2h")
    index = model.index(row, smp.IS)
    assert index.data() == "179207"
    trail = len(session.run.audit)
    answer_dialogs["reason"] = "copying error: the instrument printout reads 179270"

    retype(qtbot, window, view, index, "179270")

    (after,) = session.run.samples[row].measurements
    assert after.internal_standard_response.value == 179270.0 and after.response.text == "304206"
    assert model.index(row, smp.IS).data() == "179270"
    assert len(session.run.audit) == trail + 1
    entry = session.run.audit[-1]
    assert entry.action == "samples_edited" and entry.user and entry.time_utc
    assert entry.details["reason"] == "copying error: the instrument printout reads 179270"
    assert entry.details["changes"] == [{"sample": "Subject 07 t2h", "field": "internal_standard_responses",
                                         "old": {"veltaprine/1": "179207"}, "new": {"veltaprine/1": "179270"}}]
    words = audit_rows(session.run)[-1][3]
    assert "Subject 07 t2h" in words and "179207" in words and "179270" in words, words
    results = window.results_model
    shown = next(r for r in range(results.rowCount()) if results.index(r, rm.SAMPLE).data() == "Subject 07 t2h")
    qtbot.waitUntil(lambda: results.index(shown, rm.MEAN).data() == display_number(304206 / 179270), timeout=5000)


def test_a_run_without_internal_standard_responses_shows_no_column(make_window, qtbot, answer_dialogs) -> None:
    plain = next(p for p in DEMOS if "veltaprine" not in p.stem)
    window = make_window(plain)
    window.left_tabs.setCurrentIndex(1)
    assert not window.samples_model.has_internal_standard()
    assert window.samples_view.isColumnHidden(smp.IS)
