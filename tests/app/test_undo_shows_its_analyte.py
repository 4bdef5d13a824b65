"""Edit → Undo and Edit → Redo show the analyte they act on: after undoing a rename the analyte box
shows the analyte by its restored name (not the run's first analyte), and the next undo, of a change
to that analyte, acts on the analyte on screen; an undo or redo made while another analyte is shown
switches to the one it changes. The run is the invented one of ``test_record_attribution``."""

from __future__ import annotations

from tests.app.conftest import settle
from tests.app.test_record_attribution import SAMPLES, STANDARDS, _analyte, _exclude, _rename


def _edit(w, qtbot, which: str) -> None:
    w.actions_by_name[which].trigger()
    settle(qtbot, w)


def _shown(w) -> tuple[str, list[str], list[str]]:
    """The analyte in the box, the standard ids in the standards table, and those shown as excluded."""
    model = w.standards_model
    run = w.session.run.analyte(w.analyte_box.currentText())
    ids = [model.index(r, 0).data() for r in range(model.rowCount())]
    return w.analyte_box.currentText(), ids, [s.id for s in run.standards if not s.included]


def test_undo_and_redo_show_the_analyte_they_act_on(make_window, qtbot, answer_dialogs, import_csv, monkeypatch):
    w = make_window(None)
    import_csv(w, standards=STANDARDS, samples=SAMPLES)
    assert w.analyte_box.itemText(0) == "velmorin"  # the first analyte is another one
    _analyte(w, qtbot, "ostarin")
    _exclude(w, qtbot, answer_dialogs, "OST-L4-2", "injection problem noted in the run log")
    _rename(w, qtbot, monkeypatch, "ostarin-M1")

    _edit(w, qtbot, "undo")  # the rename
    name, ids, excluded = _shown(w)
    assert name == "ostarin" and ids[0].startswith("OST-") and excluded == ["OST-L4-2"]
    assert w.undo_action.text() == "&Undo Exclude OST-L4-2"
    _edit(w, qtbot, "undo")  # the exclusion, of the analyte shown
    assert _shown(w)[0] == "ostarin" and _shown(w)[2] == []

    _analyte(w, qtbot, "velmorin")
    _edit(w, qtbot, "redo")  # the exclusion again: ostarin is shown
    name, ids, excluded = _shown(w)
    assert name == "ostarin" and ids[0].startswith("OST-") and excluded == ["OST-L4-2"]
    _analyte(w, qtbot, "velmorin")
    _edit(w, qtbot, "redo")  # the rename again: shown by its new name
    assert _shown(w)[0] == "ostarin-M1"
    _analyte(w, qtbot, "velmorin")
    _edit(w, qtbot, "undo")
    assert _shown(w)[0] == "ostarin"
