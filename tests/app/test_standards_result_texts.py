"""The standards table answers its result cells (back-calculated, %RE, within limits, influence) from
the texts it works out once when a result arrives. Every cell must read what the result gives it,
after a typed edit, after an exclusion (the standards change, then the result) and after an undo:
each is checked against the text worked out afresh from the shown result, cell by cell."""

from __future__ import annotations

from PySide6.QtCore import Qt

from curvewright.app import standards_model as sm
from curvewright.io.run_edits import exclude_standard, remove_standard
from tests.app.conftest import DEMOS, settle

NITRATE = next(p for p in DEMOS if "nitrate" in p.stem)


def _check_every_result_cell(model: sm.StandardsModel) -> int:
    checked = 0
    for row, s in enumerate(model.standards):
        for col in sm.RESULT_COLUMNS:
            index = model.index(row, col)
            for role in (Qt.ItemDataRole.DisplayRole, Qt.ItemDataRole.EditRole):
                assert index.data(role) == model._text(s, col), (row, col, role)
                checked += 1
    return checked


def test_result_cells_read_what_the_shown_result_gives(make_window, qtbot) -> None:
    window = make_window(NITRATE)
    model, session = window.standards_model, window.session
    assert _check_every_result_cell(model) > 0
    assert model._result_texts is None or model._result_texts[0] is model.result
    model.reason_provider = lambda _what: "re-read from the printout"
    value = float(model.standards[2].response.value) * 1.07
    assert model.setData(model.index(2, sm.RESP), f"{value:.6f}")
    settle(qtbot, window)
    assert model._result_texts is not None and model._result_texts[3] is model.standards  # the kept path is used
    texts_after_edit = [model.index(r, sm.BACK).data() for r in range(model.rowCount())]
    _check_every_result_cell(model)
    # an exclusion changes the standards (and what the limits column says) before the result follows
    name = window.current_analyte()
    s = model.standards[4]
    session.apply(exclude_standard(session.run, name, s.id, "bubble in the line"), "exclude")
    _check_every_result_cell(model)
    settle(qtbot, window)
    _check_every_result_cell(model)
    assert model.index(4, sm.LIMITS).data() == "excluded"
    session.undo_stack.undo()
    settle(qtbot, window)
    _check_every_result_cell(model)
    assert [model.index(r, sm.BACK).data() for r in range(model.rowCount())] == texts_after_edit
    # a standard removed: the rows below it move up, and each reads its own standard's result
    first = model.standards[0]
    session.apply(remove_standard(session.run, name, first.id, "entered twice"), "remove")
    _check_every_result_cell(model)
    settle(qtbot, window)
    assert first.id not in [s.id for s in model.standards]
    _check_every_result_cell(model)


def test_fitted_widths_depend_on_the_texts_shown(make_window, qtbot) -> None:
    """What a result column's width is measured from is the texts its cells show (kept or worked out)."""
    window = make_window(NITRATE)
    model = window.standards_model
    rows = range(model.rowCount())
    for col in sm.RESULT_COLUMNS:
        expected = tuple(model._text(s, col) if s.included else (model._text(s, col), "italic") for s in model.standards)
        assert model.fit_key(col, rows) == expected
        assert tuple(k if isinstance(k, str) else k[0] for k in expected) == tuple(
            model.index(r, col).data() for r in rows)
