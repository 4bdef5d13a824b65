"""An edit typed in the table is recorded with the hash of the run's content after it: the same
hash a fresh reading of the saved document gives, whichever window made it."""

from __future__ import annotations

import json
import shutil

import numpy as np

from curvewright.app import standards_model as sm
from curvewright.io.integrity import sha256_of_content
from curvewright.io.run_document import dumps_run, loads_run
from tests.app.conftest import ROOT, close_unasked, settle

NITRATE = ROOT / "sample_runs" / "nitrate_water_linear.json"


def document_hash(run) -> str:  # type: ignore[no-untyped-def]
    """The content hash of the run's document as written and read back (nothing kept from the run)."""
    text = dumps_run(run)
    return sha256_of_content(json.loads(text))


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
    close_unasked(first)
    close_unasked(second)


def test_a_typed_sample_response_moves_its_point_and_its_result(make_window, qtbot, tmp_path, answer_dialogs) -> None:  # type: ignore[no-untyped-def]
    """Typing a sample's responses in the table: its point on the curve moves to the new estimate (drawn
    with the unknowns' one style, placed in the symbol atlas as pyqtgraph places each point), the
    results table shows the new estimate, and the audit entry records the saved content's hash."""
    import pyqtgraph as pg

    from curvewright.app import results_model, samples_model
    from curvewright.core.run import SampleKind

    window = make_window(shutil.copy(NITRATE, tmp_path / "nitrate.json"))
    model = window.samples_model
    row = next(r for r, s in enumerate(window.session.run.samples) if s.kind is SampleKind.UNKNOWN)
    sample_id = window.session.run.samples[row].id
    before = next(s for s in window.session.result.analytes[0].samples if s.sample_id == sample_id)
    assert model.setData(model.index(row, samples_model.RESPONSES), "0.31; 0.33")
    settle(qtbot, window)
    after = next(s for s in window.session.result.analytes[0].samples if s.sample_id == sample_id)
    assert after.replicate_responses == (0.31, 0.33) and after.estimate != before.estimate
    _bars, points = window.curve_view.curve_items.samples[SampleKind.UNKNOWN]
    assert points.isVisible()
    x, _y = points.getData()
    assert np.any(np.isclose(x, after.estimate, rtol=0, atol=1e-12 * abs(after.estimate)))
    assert not np.any(np.isclose(x, before.estimate, rtol=0, atol=1e-12 * abs(before.estimate)))
    # the atlas places the general way (each point's style looked up one by one) are the same
    placed = points.scatter.data["sourceRect"].copy()
    points.scatter.data["sourceRect"] = 0
    pg.ScatterPlotItem.updateSpots(points.scatter)
    assert np.array_equal(points.scatter.data["sourceRect"], placed)
    # a pyqtgraph without the atlas parts the quick way uses is given the general way: the same places
    from curvewright.app import curve_view

    points.scatter.data["sourceRect"] = 0
    curve_view._ATLAS_PARTS, kept = (*curve_view._ATLAS_PARTS, "a part this release lacks"), curve_view._ATLAS_PARTS
    try:
        points.scatter.updateSpots()
    finally:
        curve_view._ATLAS_PARTS = kept
    assert np.array_equal(points.scatter.data["sourceRect"], placed)
    table = window.results_view.table.model()
    shown = [r for r in range(table.rowCount()) if table.data(table.index(r, results_model.SAMPLE)) == sample_id]
    assert shown
    assert table.data(table.index(shown[0], results_model.ESTIMATE)) == table.text(after, results_model.ESTIMATE)
    assert table.rows[shown[0]] is after
    entry = window.session.run.audit[-1]
    assert entry.action == "samples_edited" and entry.content_sha256 == document_hash(window.session.run)
    close_unasked(window)


def test_the_curve_is_painted_once_after_an_edit(make_window, qtbot, tmp_path, answer_dialogs) -> None:  # type: ignore[no-untyped-def]
    """After a typed edit the curve is redrawn and painted once: nothing the first paint works out
    (the view's range and transform, the bounds of the lines across it) asks for a second paint."""
    from PySide6.QtCore import QEvent, QObject

    window = make_window(shutil.copy(NITRATE, tmp_path / "nitrate.json"))
    viewport = window.curve_view.graphics.viewport()
    paints = []

    class Count(QObject):
        def eventFilter(self, obj, event):  # type: ignore[no-untyped-def]  # noqa: N802 - Qt override
            if obj is viewport and event.type() == QEvent.Type.Paint:
                paints.append(event.region().boundingRect())
            return False

    counter = Count()
    viewport.installEventFilter(counter)
    model = window.standards_model
    for text in ("0.1111", "0.1122", "0.1133"):
        model.setData(model.index(3, sm.RESP), text)
        settle(qtbot, window)
        qtbot.wait(50)  # let every posted layout and paint run
        paints.clear()
        model.setData(model.index(3, sm.RESP), text[:-1] + "9")
        settle(qtbot, window)
        qtbot.wait(100)
        assert len(paints) == 1, paints
    viewport.removeEventFilter(counter)
    close_unasked(window)
