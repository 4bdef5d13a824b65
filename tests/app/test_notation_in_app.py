"""The app's Results and Standards tabs write numbers in the one notation (core/notation.py): tiny
concentrations as "9.95 × 10⁻⁶", never "1e-06" (offscreen; the invented trace tables of
tests/test_cli_notation.py imported from CSV files as an analyst imports them)."""

from __future__ import annotations

import re
from pathlib import Path

from tests.test_cli_notation import PYTHON_EXPONENT, TRACE_SAMPLES, TRACE_STANDARDS

NBSP = "\u00a0"


def test_results_and_standards_tabs_write_tiny_values_with_an_exponent(make_window, import_csv, answer_dialogs) -> None:
    from PySide6.QtCore import Qt

    from curvewright.app import results_model, standards_model

    window = make_window(None)
    import_csv(window, standards=TRACE_STANDARDS, samples=TRACE_SAMPLES)
    display = Qt.ItemDataRole.DisplayRole

    results = window.results_view.table.model()
    cells = [[results.data(results.index(r, c), display) or "" for c in range(results.columnCount())]
             for r in range(results.rowCount())]
    rows = {row[0]: row for row in cells}
    assert rows["U1"][results_model.REPORTED] == f"9.95{NBSP}×{NBSP}10⁻⁶"
    assert rows["U2"][results_model.REPORTED] == f"1.50{NBSP}×{NBSP}10⁻⁵"
    # both ends of the interval in one notation, to the place of its half-width's second figure
    assert re.fullmatch(rf"\d\.\d+{NBSP}×{NBSP}10⁻⁶ – \d\.\d+{NBSP}×{NBSP}10⁻⁵", rows["U1"][results_model.INTERVAL])
    tip = results.data(results.index(next(i for i, row in enumerate(cells) if row[0] == "QC low"), 0),
                       Qt.ItemDataRole.ToolTipRole)
    assert f"of nominal 3{NBSP}×{NBSP}10⁻⁶ mg/L" in tip
    assert not any(PYTHON_EXPONENT.search(cell) for row in cells for cell in row)

    standards = window.standards_view.model()
    shown = [[standards.data(standards.index(r, c), display) or "" for c in range(standards.columnCount())]
             for r in range(standards.rowCount())]
    assert [row[standards_model.CONC] for row in shown] == [
        f"{m}{NBSP}×{NBSP}10⁻{p}" for m, p in (("1", "⁶"), ("2", "⁶"), ("4", "⁶"), ("8", "⁶"), ("1.6", "⁵"), ("3.2", "⁵"))]
    assert all(re.fullmatch(rf"\d\.\d+{NBSP}×{NBSP}10⁻[⁵⁶]", row[standards_model.BACK]) for row in shown), shown
    assert not any(PYTHON_EXPONENT.search(cell) for row in shown for cell in row)


def test_import_preview_says_how_a_tiny_value_was_read(qtbot, tmp_path: Path) -> None:
    from curvewright.app.dialogs import ImportDialog

    path = tmp_path / "standards.csv"
    path.write_text("Concentration;Response\n0,0000025;10,5\n0,000005;21,0\n", encoding="utf-8")
    dialog = ImportDialog("standards", path)
    qtbot.addWidget(dialog)
    texts = [dialog.preview.item(r, 0).text() for r in range(dialog.preview.rowCount())]
    assert f"0,0000025 → 2.5{NBSP}×{NBSP}10⁻⁶" in texts and f"0,000005 → 5{NBSP}×{NBSP}10⁻⁶" in texts, texts
