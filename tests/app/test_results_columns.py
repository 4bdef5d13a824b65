"""The results table reads the analysis's sample columns: every cell, tooltip and attention shading
is what the sample's result object gives, on runs with every kind of sample (QC samples, calibration
checks, blanks, dilutions, censored and unreadable replicates, results above and below the range),
and an edit typed into the standards table shows its new results and curve."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QApplication, QLineEdit

from curvewright.app.results_model import COLUMNS
from curvewright.app.standards_model import RESP
from curvewright.core.run import Measurement, Reading, Sample, SampleKind
from curvewright.io.run_document import open_run
from tests.app.conftest import DEMOS, settle

WEIGHTED = next(p for p in DEMOS if "weighted" in p.stem)
_DISPLAY, _TOOLTIP, _BACKGROUND = (Qt.ItemDataRole.DisplayRole, Qt.ItemDataRole.ToolTipRole,
                                   Qt.ItemDataRole.BackgroundRole)


def varied_run(path):  # type: ignore[no-untyped-def]
    """A demo run with invented samples added of every sort the results table must show."""
    run = open_run(path).run
    name = run.analytes[0].name
    top = max(s.concentration for s in run.analytes[0].standards if s.has_concentration)
    responses = sorted(float(s.response.value) for s in run.analytes[0].standards if s.response.is_number)
    low, mid, high = responses[0], responses[len(responses) // 2], responses[-1]

    def sample(sid, kind, readings, dilution=1.0, nominal=()):  # type: ignore[no-untyped-def]
        return Sample(sid, kind, None, dilution, tuple(Measurement(name, r + 1, reading)
                                                        for r, reading in enumerate(readings)), nominal)

    added = (
        sample("X-mid", SampleKind.UNKNOWN, [Reading.of(mid), Reading.of(mid * 1.01)]),
        sample("X-diluted", SampleKind.UNKNOWN, [Reading.of(mid)], dilution=25.0),
        sample("X-above", SampleKind.UNKNOWN, [Reading.of(high * 3.0)], dilution=2.0),
        sample("X-below", SampleKind.UNKNOWN, [Reading.of(low * 0.2)]),
        sample("X-censored", SampleKind.UNKNOWN, [Reading(None, "<0.5", "<", 0.5), Reading.of(mid)]),
        sample("X-text", SampleKind.UNKNOWN, [Reading(None, "re-run"), Reading.of(mid)]),
        sample("X-no-number", SampleKind.UNKNOWN, [Reading(None, "n/a")]),
        sample("X-qc", SampleKind.QC, [Reading.of(mid)], nominal=((name, top / 2),)),
    )
    return replace(run, samples=run.samples + added)


def cells(model, rows):  # type: ignore[no-untyped-def]
    return [[model.index(r, c).data(_DISPLAY) for c in range(len(COLUMNS))] for r in rows]


def check_cells_equal_result_objects(window, statuses: set) -> int:  # type: ignore[no-untyped-def, type-arg]
    """Every cell, tooltip and shading of the results table against the texts of the result objects."""
    model = window.results_model
    n = model.rowCount()
    shown = cells(model, range(n))  # read first: the table itself makes no result object per row
    tips = [model.index(r, 0).data(_TOOLTIP) for r in range(n)]
    shading = [model.index(r, 0).data(_BACKGROUND) is not None for r in range(n)]
    samples = model.analyte.samples if model.analyte is not None else ()
    assert len(samples) == n
    for r, s in enumerate(samples):
        assert shown[r] == [model.text(s, c) for c in range(len(COLUMNS))], s.sample_id
        assert tips[r] == model.description(s)
        assert shading[r] == model._needs_attention(s)
        statuses.add(s.status.value)
    return n


def test_every_results_cell_is_the_result_objects_text(qtbot, make_window) -> None:
    checked, statuses = 0, set()
    for path in DEMOS:
        window = make_window(path)
        for run in (None, varied_run(path)):
            if run is not None:
                window.session.apply(run, "Add samples")
                settle(qtbot, window)
            for i in range(window.analyte_box.count()):
                window.analyte_box.setCurrentIndex(i)
                QApplication.processEvents()
                checked += check_cells_equal_result_objects(window, statuses)
            text = window.results_model.as_text().splitlines()
            assert len(text) == window.results_model.rowCount() + 1
        window.session.undo_stack.setClean()  # nothing left for the next window to offer to restore
        window.session.discard_recovery()
    assert checked > 100
    assert {"in_range", "above_range", "below_reporting_limit", "not_quantified"} <= statuses, statuses


def type_into_cell(qtbot, view, row: int, column: int, text: str) -> None:
    """Type ``text`` into a cell as a person does: select it, start editing, type, press Enter."""
    index = view.model().index(row, column)
    view.setCurrentIndex(index)
    view.edit(index)
    editors = [e for e in view.findChildren(QLineEdit) if e.isVisible()]
    assert editors, "the cell did not open for editing"
    editor = editors[0]
    editor.selectAll()
    qtbot.keyClicks(editor, text)
    qtbot.keyClick(editor, Qt.Key.Key_Return)


def test_a_response_typed_into_the_standards_table_shows_new_results_and_curve(qtbot, make_window) -> None:
    from curvewright.app import figures
    from curvewright.core.run_analysis import analyse_run

    window = make_window(WEIGHTED)
    window.standards_model.reason_provider = lambda _what: "re-read from the instrument"
    before = cells(window.results_model, range(window.results_model.rowCount()))
    before_standards = window.curve_view.curve_items.standards.getData()[1].copy()
    row = 3
    old = float(window.session.run.analytes[0].standards[row].response.value)
    type_into_cell(qtbot, window.standards_view, row, RESP, f"{old * 1.2:.6g}")
    settle(qtbot, window)
    standard = window.session.run.analytes[0].standards[row]
    assert standard.response.text == f"{old * 1.2:.6g}"
    after = cells(window.results_model, range(window.results_model.rowCount()))
    assert after != before
    # what a fresh analysis of the edited run reports, through its result objects
    fresh = analyse_run(window.session.run).analytes[0]
    assert after == [[window.results_model.text(s, c) for c in range(len(COLUMNS))] for s in fresh.samples]
    # the curve's unknowns are where the new results put them
    bars, points = window.curve_view.curve_items.samples[SampleKind.UNKNOWN]
    x, y = points.getData()
    log_x = window.curve_view.log_axis.isChecked()
    log_y = log_x and bool(np.all(fresh.calibration.response > 0))
    expected = figures.sample_points(fresh, SampleKind.UNKNOWN, np.log10 if log_x else np.asarray,
                                     np.log10 if log_y else np.asarray, log_x, log_y)
    np.testing.assert_array_equal(x, expected[0])
    np.testing.assert_array_equal(y, expected[1])
    # the standards' points show the fitted responses of the edited run (the typed response among them)
    cal = fresh.calibration
    shown = cal.concentration > 0 if log_x else np.ones(cal.n_standards, bool)
    _sx, sy = window.curve_view.curve_items.standards.getData()
    np.testing.assert_array_equal(sy, np.log10(cal.response[shown]) if log_y else cal.response[shown])
    assert not np.array_equal(sy, before_standards)


def person(value: float) -> str:
    """A number to five significant figures as a person reads it: a negative one with the minus sign U+2212."""
    text = f"{value:.5g}"
    return "\u2212" + text[1:] if text.startswith("-") else text


def test_the_curves_hover_texts_are_the_result_objects(qtbot, make_window) -> None:
    """Hovering a sample's point names it from the analysis's columns, as its result object says it."""
    checked = 0
    for path in DEMOS:
        window = make_window(path)
        window.session.apply(varied_run(path), "Add samples")
        settle(qtbot, window)
        view = window.curve_view
        for log_x in (False, True):
            view.log_axis.setChecked(log_x)
            a = view.analyte
            shown = view._hover_points
            log_y = log_x and bool(np.all(a.calibration.response > 0))
            unit = a.analyte.concentration_unit
            expected = []
            for s in a.samples:  # the result objects, read as the hover texts were made from them
                if s.estimate is None or (log_x and s.estimate <= 0) or (log_y and (s.mean_response or 0) <= 0):
                    continue
                expected.append((float(np.log10(s.estimate)) if log_x else s.estimate,
                                 float(np.log10(s.mean_response)) if log_y else s.mean_response,
                                 f"{s.kind.named(s.sample_id)}: {person(s.estimate)} {unit} "
                                 f"({person(s.lower)} to {person(s.upper)}); {s.flag_words}"))
            assert expected and shown[len(shown) - len(expected):] == expected
            assert all(text.startswith("standard ") for _x, _y, text in shown[:len(shown) - len(expected)])
            checked += len(expected)
        window.session.undo_stack.setClean()
        window.session.discard_recovery()
    assert checked > 50
