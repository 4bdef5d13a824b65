"""A table behind the other tab fits its columns when its tab is opened: an edit made while it is
hidden (here, pasted into the samples through the model while the standards are shown) widens its
column once the analyst opens it, as wide as fitting it at once would have made it (pytest-qt,
offscreen)."""

from __future__ import annotations

from curvewright.app import samples_model as smp
from curvewright.app.table_view import fit_columns
from tests.app.conftest import DEMOS, settle


def test_a_hidden_table_is_fitted_when_its_tab_opens(make_window, qtbot, answer_dialogs) -> None:
    window = make_window(DEMOS[0])
    window.left_tabs.setCurrentIndex(0)  # the standards shown, the samples behind their tab
    samples = window.samples_view
    model = window.samples_model
    assert not samples.isVisible()
    narrow = samples.columnWidth(smp.RESPONSES)
    long_text = "; ".join(["0.123456789012"] * 6)
    model.setData(model.index(0, smp.RESPONSES), long_text)
    settle(qtbot, window)
    assert model.index(0, smp.RESPONSES).data().count("0.123456789012") == 6
    assert window.left_tabs.currentIndex() == 0
    window.left_tabs.setCurrentIndex(1)
    qtbot.waitUntil(samples.isVisible)
    widths = [samples.columnWidth(c) for c in range(model.columnCount())]
    assert widths[smp.RESPONSES] > narrow
    fit_columns(samples)  # fitting again changes nothing: it was fitted when the tab opened
    assert [samples.columnWidth(c) for c in range(model.columnCount())] == widths
