"""The desktop app, driven as an analyst would drive it (offscreen)."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import openpyxl
import pytest
from PySide6.QtCore import Qt

import curvewright as cw
from curvewright.app import standards_model as sm
from curvewright.io.run_document import open_run
from tests.app.conftest import DEMOS, ROOT, settle

NITRATE = ROOT / "sample_runs" / "nitrate_water_linear.json"
ZINC = ROOT / "sample_runs" / "zinc_emission_quadratic.json"


def slope(window) -> float:
    return float(window.session.result.analyte(window.current_analyte()).calibration.coefficients[1])


def test_window_shows_the_run_the_caution_and_the_verdict(make_window) -> None:
    window = make_window(NITRATE)
    assert window.windowTitle().startswith("Demo Water Lab (invented)")
    assert "qualified laboratory personnel" in window.caution.text()
    assert window.caution.isVisible()
    assert "ACCEPTED" in window.verdict.text()
    assert window.standards_model.rowCount() == 21
    assert window.results_model.rowCount() == 8


def test_paste_a_block_and_see_the_curve_update(make_window, qtbot, answer_dialogs) -> None:
    window = make_window()  # a new, empty run
    assert window.session.result.analytes[0].calibration is None
    block = "1\t0.101\n2\t0.199\n4\t0.405\n8\t0.796\n16\t1.610\n"
    view = window.standards_view
    assert window.standards_model.rowCount() == 0  # nothing selected: the block fills concentration, response
    assert view.paste(block) == 5
    settle(qtbot, window)
    cal = window.session.result.analytes[0].calibration
    assert cal is not None and cal.n_standards == 5
    assert cal.coefficients[1] == pytest.approx(cw.fit([1, 2, 4, 8, 16], [0.101, 0.199, 0.405, 0.796, 1.610]).coefficients[1], rel=1e-14)
    items = window.curve_view.curve_plot.listDataItems()
    drawn = [i for i in items if i.name() == "standard in the fit"][0]
    assert np.allclose(drawn.getData()[0], [1, 2, 4, 8, 16])
    assert window.session.run.audit[-1].action == "standard_added"


def test_malformed_paste_marks_cells_and_loses_nothing(make_window, qtbot, answer_dialogs) -> None:
    window = make_window()
    window.standards_view.paste("1\t0.10\nabc\t0.20\n4\t1,000\n8\tND\n16\t1.6\n")
    settle(qtbot, window)
    model = window.standards_model
    standards = window.session.run.analyte("analyte 1").standards
    assert len(standards) == 5
    assert standards[1].concentration_text == "abc" and not standards[1].has_concentration
    assert standards[2].response.text == "1,000" and standards[2].response.value is None
    assert standards[3].response.qualifier == "ND"
    bad = model.index(1, sm.CONC)
    assert model.data(bad) == "abc"
    assert model.data(bad, Qt.ItemDataRole.BackgroundRole) is not None
    assert "not a number" in model.data(bad, Qt.ItemDataRole.ToolTipRole)
    assert "decimal mark is '.'" in model.data(model.index(2, sm.RESP), Qt.ItemDataRole.ToolTipRole)
    assert "need attention" in window.statusBar().currentMessage()
    result = window.session.result.analytes[0]
    assert {u.standard_id for u in result.unusable_standards} == {standards[i].id for i in (1, 2, 3)}


def test_exclude_a_standard_with_a_reason_records_it(make_window, qtbot, answer_dialogs) -> None:
    window = make_window(NITRATE)
    before = slope(window)
    answer_dialogs["reason"] = "spilled vial (bench note 7)"
    window.standards_view.selectRow(20)
    qtbot.mouseClick(window.exclude_button, Qt.MouseButton.LeftButton)
    settle(qtbot, window)
    entry = window.session.run.audit[-1]
    assert entry.action == "standard_excluded" and entry.details["reason"] == "spilled vial (bench note 7)"
    assert entry.details["standard"] == window.session.run.analyte("nitrate-N").standards[20].id
    assert window.standards_model.data(window.standards_model.index(20, sm.IN_FIT)) == "excluded"
    assert slope(window) != before
    assert window.isWindowModified()
    drawn = [i for i in window.curve_view.curve_plot.listDataItems() if i.name() == "standard excluded"]
    assert drawn, "the excluded standard is drawn with its own marker"


def test_exclusion_dialog_previews_the_refit(qtbot) -> None:
    from curvewright.app.dialogs import refit_preview
    from curvewright.io import run_edits

    run = open_run(NITRATE).run
    after = run_edits.exclude_standard(run, "nitrate-N", "N-L7-3", "preview")
    label = refit_preview(run, after, "nitrate-N")
    qtbot.addWidget(label)
    assert "after the change" in label.text() and "Residual SD" in label.text()


def test_switch_model_with_a_reason(make_window, qtbot, answer_dialogs) -> None:
    window = make_window(NITRATE)
    answer_dialogs["reason"] = "method SOP 12 specifies a quadratic for this analyte"
    assert window.choose_model("quadratic", "none", ("linear", "none"))
    settle(qtbot, window)
    analyte = window.session.run.analyte("nitrate-N")
    assert (analyte.model, analyte.choice_reason) == ("quadratic", "method SOP 12 specifies a quadratic for this analyte")
    assert window.session.result.analytes[0].calibration.model is cw.Model.QUADRATIC
    entry = window.session.run.audit[-1]
    assert entry.action == "model_chosen" and entry.details["recommended"] == ["linear", "none"]
    window.bottom_tabs.setCurrentWidget(window.evidence_panel)
    panel = window.evidence_panel
    chosen = [panel.table.item(r, 10).text() for r in range(panel.table.rowCount())]
    assert "● chosen" in chosen and any("recommended" in panel.table.item(r, 9).text() for r in range(panel.table.rowCount()))


def test_undo_and_redo(make_window, qtbot, answer_dialogs) -> None:
    window = make_window(NITRATE)
    model = window.standards_model
    original = window.session.run.analyte("nitrate-N").standards[5].response.text
    assert model.setData(model.index(5, sm.RESP), "0.2500")
    settle(qtbot, window)
    edited = slope(window)
    assert window.session.run.analyte("nitrate-N").standards[5].response.text == "0.2500"
    window.undo_action.trigger()
    settle(qtbot, window)
    assert window.session.run.analyte("nitrate-N").standards[5].response.text == original
    assert window.session.run.audit[-1].action == "change_undone"
    window.redo_action.trigger()
    settle(qtbot, window)
    assert slope(window) == edited
    assert [e.action for e in window.session.run.audit[-3:]] == ["value_edited", "change_undone", "change_redone"]


def test_export_and_read_the_workbook_back(make_window, qtbot, tmp_path) -> None:
    window = make_window(ZINC)
    path = tmp_path / "zinc.xlsx"
    assert window.export_results("xlsx", path=str(path))
    book = openpyxl.load_workbook(path)
    assert "Calibration – zinc" in book.sheetnames
    rows = list(book["Samples"].iter_rows(min_row=4, values_only=True))
    column = next(book["Samples"].iter_rows(min_row=3, max_row=3, values_only=True)).index("Concentration × dilution")
    shown = [window.results_model.rows[i].reported for i in range(window.results_model.rowCount())]
    assert [r[column] for r in rows] == shown
    assert window.session.run.audit[-1].action == "export_written"
    assert window.export_plot(path=str(tmp_path / "curve.png")) and (tmp_path / "curve.png").stat().st_size > 1000
    assert window.export_plot(path=str(tmp_path / "curve.svg")) and "<svg" in (tmp_path / "curve.svg").read_text()[:500]


def test_report_from_the_app(make_window, tmp_path) -> None:
    window = make_window(ZINC)
    assert window.export_report(path=str(tmp_path / "zinc.pdf"))
    assert (tmp_path / "zinc.pdf").read_bytes()[:4] == b"%PDF"


def test_reopen_after_a_crash_and_restore(make_window, qtbot, tmp_path, settings, answer_dialogs) -> None:
    from curvewright.app.main import build_window

    window = make_window(NITRATE)
    model = window.standards_model
    model.setData(model.index(3, sm.RESP), "0.1111")
    settle(qtbot, window)
    window.session.flush_recovery()
    recovery = window.session.recovery_path()
    assert recovery.exists()
    # simulate the crash: the window is gone without closing, the recovery file stays
    window.session.undo_stack.setClean()
    recovered = build_window(None, settings=settings, recovery_folder=tmp_path / "recovery")
    settle(qtbot, recovered)
    assert recovered.session.run.analyte("nitrate-N").standards[3].response.text == "0.1111"
    assert recovered.session.path == NITRATE
    assert recovered.session.run.audit[-1].action == "recovered_after_crash"
    assert recovered.isWindowModified()
    recovered.session.undo_stack.setClean()
    recovered.close()


def test_closing_with_unsaved_changes_asks(make_window, qtbot, answer_dialogs, monkeypatch) -> None:
    from PySide6.QtWidgets import QMessageBox

    window = make_window(NITRATE)
    window.standards_model.setData(window.standards_model.index(2, sm.RESP), "0.3")
    settle(qtbot, window)
    asked = []
    monkeypatch.setattr(QMessageBox, "question", lambda *a, **k: asked.append(a) or QMessageBox.StandardButton.Cancel)
    assert not window.close()
    assert asked and window.isVisible()


def test_save_keeps_every_value_and_title_mark(make_window, qtbot, tmp_path, answer_dialogs) -> None:
    window = make_window(NITRATE)
    window.standards_model.setData(window.standards_model.index(2, sm.RESP), "0.19876")
    settle(qtbot, window)
    assert window.isWindowModified()
    target = tmp_path / "saved.json"
    assert window._save_to(target)
    assert not window.isWindowModified()
    assert open_run(target).run == window.session.run
    assert str(target.resolve()) in window._recent()


def test_import_dialog_shows_how_values_were_read(qtbot, tmp_path) -> None:
    from curvewright.app.dialogs import ImportDialog

    path = tmp_path / "standards.csv"
    path.write_text("Concentration;Response\n1;10,5\n2;x\n4;41,0\n", encoding="utf-8")
    dialog = ImportDialog("standards", path)
    qtbot.addWidget(dialog)  # a dialog closes without asking anything
    texts = [dialog.preview.item(r, 1).text() for r in range(dialog.preview.rowCount())]
    assert "10,5 → 10.5" in texts
    assert dialog.preview.item(2, 1).toolTip() == "is not a number"
    assert "row 3, column 2" in dialog.summary.toPlainText()


def test_import_into_the_run(make_window, qtbot, tmp_path) -> None:
    from curvewright.io.importing import import_samples
    from curvewright.io.tables import table_from_text

    window = make_window(NITRATE)
    result = import_samples(table_from_text("Sample\tAbsorbance\nNew well\t0.52\nNew well\t0.53\n"), analyte="nitrate-N")
    assert window.apply_import("samples", result)
    settle(qtbot, window)
    assert window.session.run.audit[-1].action == "imported"
    ids = [s.sample_id for s in window.session.result.analytes[0].samples]
    assert "New well" in ids


def test_hovering_a_point_shows_its_values(make_window) -> None:
    window = make_window(NITRATE)
    a = window.session.result.analytes[0]
    text = window.curve_view.hover_text_at(float(a.calibration.concentration[5]), float(a.calibration.response[5]))
    assert text and "N-L2-3" in text and "back-calculated" in text


def test_sample_edits_refuse_bad_numbers_but_keep_the_text(make_window, qtbot, answer_dialogs) -> None:
    from curvewright.app import samples_model

    window = make_window(NITRATE)
    model = window.samples_model
    index = model.index(2, samples_model.DILUTION)
    assert not model.setData(index, "two")
    assert model.data(index) == "two"
    assert "not applied" in window.statusBar().currentMessage()
    assert model.setData(model.index(2, samples_model.RESPONSES), "0.62; 0.61; 0.63")
    settle(qtbot, window)
    well = [s for s in window.session.result.analytes[0].samples if s.sample_id == "Well 12"][0]
    assert len(well.replicate_responses) == 3


def test_every_demo_run_opens(make_window) -> None:
    for path in DEMOS:
        window = make_window(path)
        assert window.session.result.accepted


def test_screens_render_to_png(tmp_path) -> None:
    import subprocess
    import sys

    result = subprocess.run([sys.executable, "-m", "curvewright.app.screenshots", str(tmp_path)], capture_output=True,
                            text=True, timeout=300, env={**__import__("os").environ, "QT_QPA_PLATFORM": "offscreen"})
    assert result.returncode == 0, result.stderr
    pngs = sorted(tmp_path.glob("*.png"))
    assert len(pngs) == len(DEMOS) and all(p.stat().st_size > 20000 for p in pngs)


def test_import_from_a_file_through_the_menu_path(make_window, qtbot, tmp_path, monkeypatch, answer_dialogs) -> None:
    from curvewright.app import main_window

    path = tmp_path / "more.csv"
    path.write_text("Sample;Absorbance\nLake 2;0,41\n", encoding="utf-8")
    monkeypatch.setattr(main_window.ImportDialog, "exec", lambda self: main_window.ImportDialog.DialogCode.Accepted)
    window = make_window(NITRATE)
    assert window.import_table("samples", path=str(path))  # the table has no analyte column: the current analyte
    settle(qtbot, window)
    assert any(s.sample_id == "Lake 2" for s in window.session.result.analytes[0].samples)


def test_settings_are_offered_in_words_not_identifiers(qtbot) -> None:
    from curvewright.app.dialogs import SettingsDialog
    from PySide6.QtWidgets import QComboBox

    run = open_run(NITRATE).run
    dialog = SettingsDialog(run)
    qtbot.addWidget(dialog)
    shown = [box.itemText(i) for box in dialog.findChildren(QComboBox) for i in range(box.count())]
    assert shown and not [t for t in shown if "_" in t or t in ("band", "symmetric", "significant", "decimals")]
    # each choice still maps to the setting it stands for
    assert dialog.settings(run) == run.settings
    dialog.limits.setCurrentIndex(dialog.limits.findData("iso11843"))
    dialog.rounding_tie.setCurrentIndex(dialog.rounding_tie.findData("half_even"))
    changed = dialog.settings(run)
    assert (changed.limits_method, changed.rounding.tie) == ("iso11843", "half_even")


def test_a_curve_over_three_decades_opens_with_both_axes_said_logarithmic(make_window, tmp_path) -> None:
    # the weighted demo spans 1–1000 ng/mL with positive area ratios: the view opens on log axes and both
    # axis titles say so (the tick labels alone do not tell a reader the scale)
    import shutil

    window = make_window(Path(shutil.copy(ROOT / "sample_runs" / "veltaprine_plasma_weighted.json", tmp_path)))
    view = window.curve_view
    assert view.log_axis.isChecked()
    assert view.curve_plot.getAxis("bottom").labelText == "Concentration (ng/mL) (log scale)"
    assert view.curve_plot.getAxis("left").labelText == "Response (area ratio) (log scale)"


def test_an_excluded_standard_shows_its_back_calculated_value_as_the_workbook_does(make_window, qtbot, tmp_path,
                                                                                    answer_dialogs) -> None:
    from curvewright.io.xlsx_export import write_xlsx

    window = make_window(NITRATE)
    answer_dialogs["reason"] = "spilled vial (bench note 7)"
    window.standards_view.selectRow(20)
    qtbot.mouseClick(window.exclude_button, Qt.MouseButton.LeftButton)
    settle(qtbot, window)
    model = window.standards_model
    excluded = window.session.run.analyte("nitrate-N").standards[20]
    assert not excluded.included
    shown_back = model.data(model.index(20, sm.BACK))
    shown_re = model.data(model.index(20, sm.RE))
    assert shown_back and shown_re, "the excluded standard's back-calculated value and relative error are shown"

    book = tmp_path / "nitrate.xlsx"
    write_xlsx(window.session.result, book)
    sheet = openpyxl.load_workbook(book)["Standards – nitrate-N"]
    rows = list(sheet.iter_rows(values_only=True))
    header = next(r for r in rows if r and r[0] == "Standard id")
    row = next(r for r in rows if r and r[0] == excluded.id)
    back = row[header.index("Back-calculated (mg/L)")]
    relative = row[header.index("Relative error (%)")]
    # the same numbers as the workbook's cells, shown to the table's digits
    assert shown_back == f"{back:.5g}" and shown_re == f"{relative:+.2f}"
    assert model.data(model.index(20, sm.IN_FIT)) == "excluded"
