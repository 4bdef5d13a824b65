"""Internal-standard responses pasted from a spreadsheet into the samples table's IS column (Edit → Paste).

Invented scenario: the veltaprine demo run (samples with internal-standard responses). The analyst copies
a column of corrected IS peak areas from the lab's worksheet, one of them mistyped with a letter O for a
zero, and pastes it with the IS cell of Subject 07 t2h selected; later two replicates of one sample, each
with its IS response, as a block of two columns. Pasted cells are entered as typed cells are: replicates
separated by ";", a cell that is not a number kept as typed, marked, and named with its row and field,
the whole paste one audited step that Undo takes back.
"""

from __future__ import annotations

from curvewright.app import samples_model as smp
from tests.app.conftest import paste_from_menu, settle
from tests.app.test_internal_standard_kept import VELTAPRINE


def _is_texts(run, ids):  # type: ignore[no-untyped-def]
    by_id = {s.id: s for s in run.samples}
    return [[m.internal_standard_response.text if m.internal_standard_response else None
             for m in by_id[i].measurements] for i in ids]


def test_a_pasted_column_fills_the_internal_standard_responses(make_window, qtbot, answer_dialogs) -> None:
    window = make_window(VELTAPRINE)
    session = window.session
    window.left_tabs.setCurrentIndex(1)
    model, view = window.samples_model, window.samples_view
    ids = ["Subject 07 t2h", "Subject 07 t6h", "Subject 09 t1h"]
    row = next(i for i, s in enumerate(session.run.samples) if s.id == ids[0])
    assert _is_texts(session.run, ids) == [["179207"], ["184050"], ["175420"]]
    responses_before = [model.index(row + i, smp.RESPONSES).data() for i in range(3)]
    view.setCurrentIndex(model.index(row, smp.IS))
    trail = len(session.run.audit)
    answer_dialogs["reason"] = "copying error: IS areas re-read from the instrument printout"

    paste_from_menu(qtbot, window, view, "179270\r\n184005\r\n17542O\r\n")  # as a spreadsheet copies a column

    assert _is_texts(session.run, ids) == [["179270"], ["184005"], ["17542O"]]  # the mistyped cell kept as typed
    assert [model.index(row + i, smp.RESPONSES).data() for i in range(3)] == responses_before
    assert model.index(row + 2, smp.IS).data() == "17542O"
    message = window.statusBar().currentMessage()
    assert "Pasted 3 row(s) into the samples table" in message, message
    assert f"samples row {row + 3}, internal-standard responses: replicate 1:" in message, message
    assert len(session.run.audit) == trail + 1  # one step, with the reason the analyst gave
    entry = session.run.audit[-1]
    assert entry.details["reason"] == "copying error: IS areas re-read from the instrument printout"
    changed = {c["sample"]: (c["old"], c["new"]) for c in entry.details["changes"]
               if c["field"] == "internal_standard_responses"}
    assert changed == {ids[0]: ({"veltaprine/1": "179207"}, {"veltaprine/1": "179270"}),
                       ids[1]: ({"veltaprine/1": "184050"}, {"veltaprine/1": "184005"}),
                       ids[2]: ({"veltaprine/1": "175420"}, {"veltaprine/1": "17542O"})}

    window.actions_by_name["undo"].trigger()
    settle(qtbot, window)
    assert _is_texts(session.run, ids) == [["179207"], ["184050"], ["175420"]]


def test_pasted_replicates_take_their_internal_standard_responses_in_order(make_window, qtbot, answer_dialogs) -> None:
    window = make_window(VELTAPRINE)
    session = window.session
    window.left_tabs.setCurrentIndex(1)
    model, view = window.samples_model, window.samples_view
    row = next(i for i, s in enumerate(session.run.samples) if s.id == "Subject 09 t24h")
    view.setCurrentIndex(model.index(row, smp.RESPONSES))
    answer_dialogs["reason"] = "re-injection: both injections reported"

    paste_from_menu(qtbot, window, view, "523; 531\t167301; 166950\r\n")

    (sample,) = [s for s in session.run.samples if s.id == "Subject 09 t24h"]
    assert [(m.replicate, m.response.text, m.internal_standard_response.text) for m in sample.measurements] == [
        (1, "523", "167301"), (2, "531", "166950")]
    assert model.index(row, smp.IS).data() == "167301; 166950"


def test_rows_of_one_sample_pasted_with_a_header_keep_each_replicates_internal_standard(
        make_window, qtbot, answer_dialogs) -> None:
    from PySide6.QtCore import QModelIndex

    window = make_window(VELTAPRINE)
    session = window.session
    window.left_tabs.setCurrentIndex(1)
    view = window.samples_view
    count = len(session.run.samples)
    view.setCurrentIndex(QModelIndex())  # no cell selected: the rows are added below the last
    block = ("Sample id\tResponse\tIS response\r\n"
             "Subject 11 t4h\t88012\t181200\r\n"
             "Subject 11 t4h\t87650\t\r\n"  # the second injection's IS area not read
             "Subject 11 t4h\t88233\t180950\r\n")

    paste_from_menu(qtbot, window, view, block)

    assert len(session.run.samples) == count + 1
    added = session.run.samples[-1]
    assert added.id == "Subject 11 t4h"
    assert [(m.replicate, m.response.text, m.internal_standard_response.text if m.internal_standard_response else None)
            for m in added.measurements] == [(1, "88012", "181200"), (2, "87650", None), (3, "88233", "180950")]
