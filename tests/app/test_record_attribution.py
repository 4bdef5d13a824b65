"""Who excluded a standard and who chose the calibration function, as the record and the workbook name
them: the person as every other line names a person ("Name (ID …, login …)") with a "… UTC" time,
and still after the analyte is renamed (once, several times, back again), but never taken from another
analyte that had the name before.

The run is an invented one of a fictional laboratory: two analytes, velmorin and ostarin, six levels
in duplicate; VEL-L4-2 carries a response about half again too high (an injection problem)."""

from __future__ import annotations

import re

import openpyxl
import pytest
from PySide6.QtCore import QItemSelectionModel, Qt
from PySide6.QtWidgets import QDialog

from curvewright.app import dialogs
from tests.app.conftest import settle
from tests.cli_runs import run_cli
from tests.printed import printed_text

STANDARDS = """Analyte,Standard id,Level,Concentration (ng/mL),Peak area
velmorin,VEL-L1-1,L1,2,4105
velmorin,VEL-L1-2,L1,2,3977
velmorin,VEL-L2-1,L2,5,10240
velmorin,VEL-L2-2,L2,5,9861
velmorin,VEL-L3-1,L3,10,20318
velmorin,VEL-L3-2,L3,10,19702
velmorin,VEL-L4-1,L4,25,50466
velmorin,VEL-L4-2,L4,25,74910
velmorin,VEL-L5-1,L5,50,99318
velmorin,VEL-L5-2,L5,50,101522
velmorin,VEL-L6-1,L6,100,197640
velmorin,VEL-L6-2,L6,100,203115
ostarin,OST-L1-1,L1,2,1530
ostarin,OST-L1-2,L1,2,1611
ostarin,OST-L2-1,L2,5,3902
ostarin,OST-L2-2,L2,5,3780
ostarin,OST-L3-1,L3,10,7695
ostarin,OST-L3-2,L3,10,7911
ostarin,OST-L4-1,L4,25,19488
ostarin,OST-L4-2,L4,25,19020
ostarin,OST-L5-1,L5,50,38790
ostarin,OST-L5-2,L5,50,39544
ostarin,OST-L6-1,L6,100,77961
ostarin,OST-L6-2,L6,100,78402
"""
SAMPLES = """Analyte,Sample,Type,Dilution,Nominal,Peak area
velmorin,K-101,unknown,1,,30512
ostarin,K-101,unknown,1,,11820
"""
PERSON = re.compile(r"Robin Example \(ID QA-0042, login [^)]+\), \d{4}-\d\d-\d\d \d\d:\d\d:\d\d UTC")


def _analyte(w, qtbot, name: str) -> None:
    w.analyte_box.setCurrentText(name)
    settle(qtbot, w)


def _exclude(w, qtbot, answer_dialogs, standard_id: str, reason: str) -> None:
    """Select the standard's row in the standards table and click Exclude, giving the reason."""
    w.left_tabs.setCurrentIndex(0)
    model = w.standards_model
    row = next(r for r in range(model.rowCount()) if model.index(r, 0).data() == standard_id)
    w.standards_view.setFocus()
    w.standards_view.selectionModel().setCurrentIndex(
        model.index(row, 0), QItemSelectionModel.SelectionFlag.ClearAndSelect | QItemSelectionModel.SelectionFlag.Rows)
    answer_dialogs["reason"] = reason
    qtbot.mouseClick(w.exclude_button, Qt.MouseButton.LeftButton)
    settle(qtbot, w)


def _choose(w, qtbot, answer_dialogs, model: str, weighting: str, reason: str) -> None:
    """Analysis → Choose model, the candidate selected in the evidence panel, Use clicked with a reason."""
    w.actions_by_name["choose-model"].trigger()
    settle(qtbot, w)
    w.evidence_panel.select(model, weighting)
    answer_dialogs["reason"] = reason
    qtbot.mouseClick(w.evidence_panel.use_button, Qt.MouseButton.LeftButton)
    settle(qtbot, w)


def _dialog_names(monkeypatch, name: str) -> None:
    """The analyte dialog (name and units) answered with ``name`` typed as the name."""
    def answered(self):  # type: ignore[no-untyped-def]
        self.name.setText(name)
        return QDialog.DialogCode.Accepted
    monkeypatch.setattr(dialogs.AnalyteDialog, "exec", answered)


def _rename(w, qtbot, monkeypatch, new_name: str) -> None:
    """Analysis → Analyte name and units on the analyte shown, the dialog answered with ``new_name``."""
    _dialog_names(monkeypatch, new_name)
    w.actions_by_name["edit-analyte"].trigger()
    settle(qtbot, w)
    assert w.analyte_box.currentText() == new_name


def _outputs(w, tmp_path, tag: str) -> tuple[str, dict[str, dict[str, object]]]:
    """The record's printed text, and each Calibration sheet of the workbook as item → value."""
    pdf, xlsx = tmp_path / f"{tag}.pdf", tmp_path / f"{tag}.xlsx"
    w.export_report(path=str(pdf))
    w.export_results("xlsx", path=str(xlsx))
    book = openpyxl.load_workbook(xlsx, read_only=True)
    sheets = {name.split(" – ", 1)[1]: {row[0]: row[1] for row in book[name].iter_rows(values_only=True) if len(row) > 1 and row[0]}
              for name in book.sheetnames if name.startswith("Calibration – ")}
    book.close()
    return printed_text(pdf), sheets


def _excluded_line(text: str, standard_id: str) -> str:
    start = text.index(f"• {standard_id} (")
    return text[start:text.index(" Standards – ", start)]


def test_chosen_by_names_the_person_and_time_as_the_exclusion_does(make_window, qtbot, answer_dialogs, import_csv, tmp_path):
    w = make_window(None)
    import_csv(w, standards=STANDARDS, samples=SAMPLES)
    _analyte(w, qtbot, "velmorin")
    _exclude(w, qtbot, answer_dialogs, "VEL-L4-2", "injection problem noted in the run log")
    _choose(w, qtbot, answer_dialogs, "quadratic", "1/x", "as the laboratory's procedure fixes")
    text, sheets = _outputs(w, tmp_path, "chosen")

    excluded = _excluded_line(text, "VEL-L4-2")
    assert PERSON.search(excluded), excluded
    chosen = text[text.index("Chosen by", text.index("Calibration – velmorin")):][:120]
    assert PERSON.match(chosen.removeprefix("Chosen by ")), chosen
    assert PERSON.fullmatch(str(sheets["velmorin"]["Chosen by"])), sheets["velmorin"]["Chosen by"]
    assert sheets["ostarin"]["Chosen by"] == "nobody (the program's default)"


def test_who_excluded_and_who_chose_survive_renaming_the_analyte(make_window, qtbot, answer_dialogs, import_csv, tmp_path,
                                                                  monkeypatch, save_in_tmp_path):
    w = make_window(None)
    import_csv(w, standards=STANDARDS, samples=SAMPLES)
    _analyte(w, qtbot, "velmorin")
    _exclude(w, qtbot, answer_dialogs, "VEL-L4-2", "injection problem noted in the run log")
    _choose(w, qtbot, answer_dialogs, "quadratic", "1/x", "as the laboratory's procedure fixes")
    _rename(w, qtbot, monkeypatch, "velmorin-M1")
    text, sheets = _outputs(w, tmp_path, "renamed")

    excluded = _excluded_line(text, "VEL-L4-2")
    assert "injection problem noted in the run log; excluded by " in excluded and PERSON.search(excluded), excluded
    assert "no audit entry records the exclusion" not in text
    assert PERSON.fullmatch(str(sheets["velmorin-M1"]["Chosen by"])), sheets["velmorin-M1"]["Chosen by"]
    chosen = text[text.index("Chosen by", text.index("Calibration – velmorin-M1")):][:120]
    assert PERSON.match(chosen.removeprefix("Chosen by ")), chosen

    # the saved run, quantified on the command line, names them alike in its record and workbook
    w.actions_by_name["save-as"].trigger()
    saved = next(save_in_tmp_path.glob("*.json"))
    done = run_cli("quantify", str(saved), "--report", str(tmp_path / "cli.pdf"), "--export", str(tmp_path / "cli.xlsx"))
    assert done.returncode == 0, done.stdout + done.stderr
    text = printed_text(tmp_path / "cli.pdf")
    assert PERSON.search(_excluded_line(text, "VEL-L4-2")), _excluded_line(text, "VEL-L4-2")
    book = openpyxl.load_workbook(tmp_path / "cli.xlsx", read_only=True)
    rows = {row[0]: row[1] for row in book["Calibration – velmorin-M1"].iter_rows(values_only=True) if len(row) > 1}
    book.close()
    assert PERSON.fullmatch(str(rows["Chosen by"])), rows["Chosen by"]


def test_several_renames_and_a_rename_back_keep_every_entry_under_each_name(
        make_window, qtbot, answer_dialogs, import_csv, tmp_path, monkeypatch):
    """Excluded under the first name, renamed, chosen under the second name, renamed again and back to the
    first name: both lines name the person; the second exclusion, made under the last name, too."""
    w = make_window(None)
    import_csv(w, standards=STANDARDS, samples=SAMPLES)
    _analyte(w, qtbot, "velmorin")
    _exclude(w, qtbot, answer_dialogs, "VEL-L4-2", "injection problem noted in the run log")
    _rename(w, qtbot, monkeypatch, "velmorin (lot A)")
    _choose(w, qtbot, answer_dialogs, "quadratic", "1/x", "as the laboratory's procedure fixes")
    _rename(w, qtbot, monkeypatch, "velmorin (lot B)")
    _exclude(w, qtbot, answer_dialogs, "VEL-L1-1", "vial cap pierced twice")
    _rename(w, qtbot, monkeypatch, "velmorin")
    text, sheets = _outputs(w, tmp_path, "renamed-back")

    for standard_id in ("VEL-L4-2", "VEL-L1-1"):
        excluded = _excluded_line(text, standard_id)
        assert PERSON.search(excluded), excluded
    assert "no audit entry records" not in text
    assert PERSON.fullmatch(str(sheets["velmorin"]["Chosen by"])), sheets["velmorin"]["Chosen by"]


@pytest.mark.parametrize("how", ["another analyte renamed to it", "a new analyte added with it"])
def test_an_analyte_given_an_old_name_does_not_take_the_other_analytes_entries(
        make_window, qtbot, answer_dialogs, import_csv, tmp_path, monkeypatch, how):
    """velmorin is renamed velmorin-M1; then ostarin is renamed velmorin (or a new analyte velmorin is
    added). The choice made for the first velmorin belongs to velmorin-M1 alone."""
    w = make_window(None)
    import_csv(w, standards=STANDARDS, samples=SAMPLES)
    _analyte(w, qtbot, "velmorin")
    _choose(w, qtbot, answer_dialogs, "quadratic", "1/x", "as the laboratory's procedure fixes")
    _rename(w, qtbot, monkeypatch, "velmorin-M1")
    if how == "another analyte renamed to it":
        _analyte(w, qtbot, "ostarin")
        _rename(w, qtbot, monkeypatch, "velmorin")
    else:
        _dialog_names(monkeypatch, "velmorin")
        answer_dialogs["reason"] = "second compound of the panel"
        w.actions_by_name["add-analyte"].trigger()
        settle(qtbot, w)
        assert "velmorin" in [a.name for a in w.session.run.analytes]
    text, sheets = _outputs(w, tmp_path, "old-name")

    assert PERSON.fullmatch(str(sheets["velmorin-M1"]["Chosen by"])), sheets["velmorin-M1"]["Chosen by"]
    assert sheets["velmorin"]["Chosen by"] == "nobody (the program's default)"
