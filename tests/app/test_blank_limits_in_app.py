"""The limits from blanks chosen in the app as an analyst chooses them (Analysis → Run settings, the
LOD/LOQ method's list), shown above the results with the number of blank readings and their SD, and
carried into the saved run, the exported workbook and the printed record.

Invented scenario: the nickel line of tests/test_cli_blank_limits.py, imported from CSV files, with
six reagent blanks read once each. The reference values are computed here with numpy: LOD = 3.3·σ_b/S,
LOQ = 10·σ_b/S (ICH Q2(R1) §6.3.2, §7.3.2), S the least-squares slope (``np.polyfit``), σ_b the SD of
the blank readings (``np.std(ddof=1)``).
"""

from __future__ import annotations

import json

import numpy as np
import openpyxl

from curvewright.core.notation import computed, figures
from tests.app.conftest import settle
from tests.printed import printed_text
from tests.test_cli_blank_limits import STANDARDS

BLANK_READINGS = (2.31, 2.05, 2.66, 2.48, 2.12, 2.40)
STANDARDS_CSV = "Standard id,Concentration (µg/L),Response (counts)\n" + "".join(
    f"{i},{c},{r}\n" for i, c, r in STANDARDS)
SAMPLES_CSV = "Sample,Type,Dilution,Response (counts)\n" + "".join(
    f"RB-{k},blank,1,{v}\n" for k, v in enumerate(BLANK_READINGS, 1)) + "HG-311,unknown,1,2.89\nHG-312,unknown,1,56.8\n"
NAME = "ICH Q2: 3.3σ/slope and 10σ/slope, σ the SD of the blanks"


def test_blank_limits_chosen_in_the_settings_are_shown_saved_exported_and_printed(
        make_window, qtbot, import_csv, answer_dialogs, save_in_tmp_path, monkeypatch) -> None:
    from curvewright.app import dialogs

    window = make_window(None)
    import_csv(window, standards=STANDARDS_CSV, samples=SAMPLES_CSV)
    assert "σ the SD of the blanks" not in window.results_view.limits.text()

    offered = []

    def choose_blanks(self) -> int:  # the analyst picks the method by the words the list shows
        offered.extend(self.limits.itemText(i) for i in range(self.limits.count()))
        self.limits.setCurrentIndex(self.limits.findText(NAME))
        self.reason.setText("method HG-NI-07 sets the limits from reagent blanks")
        return dialogs.SettingsDialog.DialogCode.Accepted

    monkeypatch.setattr(dialogs.SettingsDialog, "exec", choose_blanks)
    window.actions_by_name["settings"].trigger()
    settle(qtbot, window)
    assert NAME in offered and "mean blank + 3 SD and + 10 SD read through the curve (common practice)" in offered
    assert window.session.run.settings.limits_method == "blank_sd"
    from curvewright.io.audit_words import entry_words

    assert (f"limits method from residual_sd (ICH Q2: 3.3σ/slope and 10σ/slope, σ the residual SD) to blank_sd "
            f"({NAME})") in entry_words(window.session.run.audit[-1])

    x = np.array([c for _, c, _ in STANDARDS])
    y = np.array([r for _, _, r in STANDARDS])
    slope, _ = np.polyfit(x, y, 1)
    mean, sd = np.mean(BLANK_READINGS), np.std(BLANK_READINGS, ddof=1)
    lod, loq = 3.3 * sd / slope, 10 * sd / slope
    rule = window.session.run.settings.rounding
    shown = window.results_view.limits.text()
    assert window.results_view.limits.isVisible()
    assert shown == (f"LOD {computed(lod, rule)} µg/L, LOQ {computed(loq, rule)} µg/L — {NAME}; from 6 blank readings: "
                     f"mean ȳ_b {figures(mean, 4)} counts, SD σ_b {figures(sd, 4)} counts")
    window.resize(1300, 820)
    window.grab().save(str(save_in_tmp_path / "window.png"))

    window.actions_by_name["save-as"].trigger()
    saved = json.loads((save_in_tmp_path / f"{window.session.run.name}.json").read_text(encoding="utf-8"))
    assert saved["settings"]["limits_method"] == "blank_sd"
    from curvewright.io.run_document import open_run

    assert open_run(save_in_tmp_path / f"{window.session.run.name}.json").run.settings.limits_method == "blank_sd"

    window.actions_by_name["export-xlsx"].trigger()
    sheet = {r[0]: r[1] for r in openpyxl.load_workbook(save_in_tmp_path / f"{window.session.run.name}.xlsx")[
        f"Calibration – {window.current_analyte()}"].iter_rows(values_only=True) if r and r[0]}
    assert abs(sheet["LOD"] - lod) < 1e-12 and abs(sheet["LOQ"] - loq) < 1e-12
    assert sheet["LOD/LOQ method"] == NAME and sheet["Blank readings (n)"] == 6
    assert abs(sheet["Blank SD σ_b (counts)"] - sd) < 1e-14

    window.actions_by_name["export-record"].trigger()
    text = printed_text(save_in_tmp_path / f"{window.session.run.name}.pdf")
    assert f"LOD {computed(lod, rule)} LOQ {computed(loq, rule)} LOD/LOQ method {NAME}" in text
    assert "Blank readings (n) 6" in text and f"Blank SD σ_b (counts) {figures(sd, 6)}" in text
