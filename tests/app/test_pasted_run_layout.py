"""A run begun empty and pasted into shows the standards' key columns whole at common desktop sizes:
the panes are arranged again when the first fitted curve's answers (back-calculated value, %RE,
within limits) give their columns widths, so that "Within limits" is neither scrolled half out of
view nor cut ("Witl", "not judgec").

The block is an invented manganese calibration with decimal commas, as a spreadsheet copies it."""

from __future__ import annotations

import pytest
from PySide6.QtCore import Qt

from curvewright.app import standards_model as sm
from curvewright.app.main_window import standards_key_columns
from tests.app.conftest import settle
from tests.app.test_paste import type_paste
from tests.app.test_screen_layout import SIZES, cut_cells, shoot, text_width_needed

BLOCK = "Concentration (µg/L)\tResponse (counts)\n" + "".join(
    f"{c}\t{r}\n" for c, r in ((0, "12,4"), (0, "11,9"), (2, "215,3"), (2, "209,8"), (5, "528,1"), (5, "519,7"),
                               (10, "1041,6"), (10, "1052,2"), (25, "2611,5"), (25, "2216,1"), (50, "5203,9"),
                               (50, "5187,4"), (100, "10355,2"), (100, "10421,8")))


@pytest.mark.parametrize("size", SIZES, ids=[f"{w}x{h}" for w, h in SIZES])
def test_the_standards_key_columns_are_whole_after_a_paste_into_a_new_run(size, make_window, qtbot,
                                                                          answer_dialogs) -> None:
    window = make_window()
    window.resize(*size)
    settle(qtbot, window)
    window.left_tabs.setCurrentIndex(0)
    type_paste(window, qtbot, window.standards_view, BLOCK)
    qtbot.waitUntil(lambda: window.session.result is not None
                    and window.session.result.analytes[0].calibration is not None)
    settle(qtbot, window)
    view, model = window.standards_view, window.standards_model
    assert len(model.standards) == 14 and view.horizontalScrollBar().value() == 0
    visible = view.viewport().width()
    for column in standards_key_columns():
        if view.isColumnHidden(column):
            continue
        title = str(model.headerData(column, Qt.Orientation.Horizontal))
        left, width = view.columnViewportPosition(column), view.columnWidth(column)
        # in view without scrolling sideways
        assert 0 <= left and left + width <= visible, f"{title} ends at {left + width} px, the table shows {visible} px"
        # at least as wide as its heading and its longest text
        longest = max((str(model.index(r, column).data() or "") for r in range(model.rowCount())), key=len)
        assert width >= view.horizontalHeader().sectionSizeFromContents(column).width(), title
        assert width >= text_width_needed(view, longest), (title, longest)
    assert model.index(0, sm.LIMITS).data() == "not judged (blank)"
    assert cut_cells(view) == []
    shoot(window, f"pasted-new-run-{size[0]}x{size[1]}")
