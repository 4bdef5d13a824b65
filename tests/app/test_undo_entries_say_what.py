"""An undo or a redo in the audit trail says what it restored or made again, as the entry it acts on
says it (analyte, standard or sample, field, old → new), not the command's label alone. The undo of a
rename is followed by the record's look-up of who did what under each name; the trail's chain still
verifies (``curvewright check`` on the saved run); and a run document written with the short entries of
earlier versions still opens and prints them.

The run is the invented one of ``test_record_attribution``."""

from __future__ import annotations

import json

from PySide6.QtWidgets import QDialog

from curvewright.app import dialogs
from tests.app.conftest import paste_from_menu, settle
from tests.app.test_record_attribution import PERSON, SAMPLES, STANDARDS, _analyte, _choose, _exclude, _rename
from tests.cli_runs import run_cli
from tests.printed import printed_text


def _undo(w, qtbot) -> None:
    w.actions_by_name["undo"].trigger()
    settle(qtbot, w)


def _redo(w, qtbot) -> None:
    w.actions_by_name["redo"].trigger()
    settle(qtbot, w)


def _trail_words(w) -> list[str]:
    """The audit trail tab's "What was done" column, as the analyst reads it."""
    from curvewright.io.audit_words import audit_rows

    w.bottom_tabs.setCurrentWidget(w.audit_view)
    settle_rows = audit_rows(w.session.run)
    model = w.audit_view.entries.model()
    shown = [model.index(r, 3).data() for r in range(model.rowCount())]
    assert shown == [row[3] for row in settle_rows]
    return shown


def test_undo_and_redo_entries_name_what_they_restored(make_window, qtbot, answer_dialogs, import_csv, tmp_path,
                                                       monkeypatch, save_in_tmp_path):
    w = make_window(None)
    import_csv(w, standards=STANDARDS, samples=SAMPLES)
    _analyte(w, qtbot, "velmorin")
    _exclude(w, qtbot, answer_dialogs, "VEL-L4-2", "injection problem noted in the run log")
    w.left_tabs.setCurrentIndex(1)
    w.samples_view.clearSelection()
    paste_from_menu(qtbot, w, w.samples_view, "Sample\tDilution\tPeak area\nK-102\t2\t41250\n")
    assert "K-102" in [s.id for s in w.session.run.samples]

    def settings_answered(self):  # type: ignore[no-untyped-def]
        self.level.setValue(0.99)
        self.reason.setText("the client's contract asks for 99 % intervals")
        return QDialog.DialogCode.Accepted
    monkeypatch.setattr(dialogs.SettingsDialog, "exec", settings_answered)
    w.actions_by_name["settings"].trigger()
    settle(qtbot, w)
    assert w.session.run.settings.confidence_level == 0.99

    _undo(w, qtbot)  # the settings
    _undo(w, qtbot)  # the pasted sample
    _undo(w, qtbot)  # the exclusion
    _redo(w, qtbot)  # the exclusion again
    words = _trail_words(w)[-4:]
    assert words[0].startswith("undid “Change run settings”, restoring what it changed: changed the run's settings: "
                               "confidence level from 0.99 to 0.95"), words[0]
    assert words[1].startswith("undid “Paste 1 sample(s)") and "restoring what it changed: took out sample K-102 (" in words[1] \
        and "dilution factor: 2" in words[1] and "velmorin/1: 41250" in words[1], words[1]
    assert words[2] == ("undid “Exclude VEL-L4-2”, restoring what it changed: put standard VEL-L4-2 of velmorin back "
                        "in the fit (its exclusion undone: injection problem noted in the run log)."), words[2]
    assert words[3] == ("redid “Exclude VEL-L4-2”: excluded standard VEL-L4-2 of velmorin from the fit. "
                        "Reason: injection problem noted in the run log."), words[3]

    # the record prints them; the saved run's chain verifies
    w.export_report(path=str(tmp_path / "record.pdf"))
    text = printed_text(tmp_path / "record.pdf")
    assert "put standard VEL-L4-2 of velmorin back in the fit" in text
    w.actions_by_name["save-as"].trigger()
    checked = run_cli("check", str(next(save_in_tmp_path.glob("*.json"))))
    assert checked.returncode == 0 and "audit trail verified" in checked.stdout, checked.stdout + checked.stderr


def test_undoing_a_rename_keeps_who_chose_and_names_the_names(make_window, qtbot, answer_dialogs, import_csv, tmp_path,
                                                               monkeypatch):
    """Chosen under the first name, renamed, the rename undone and done again, renamed back by Undo:
    the choice is still the analyst's, and the undo entry names both names."""
    w = make_window(None)
    import_csv(w, standards=STANDARDS, samples=SAMPLES)
    _analyte(w, qtbot, "velmorin")
    _rename(w, qtbot, monkeypatch, "velmorin-M1")
    _choose(w, qtbot, answer_dialogs, "quadratic", "1/x", "as the laboratory's procedure fixes")
    _undo(w, qtbot)  # the choice
    _undo(w, qtbot)  # the rename
    _redo(w, qtbot)
    _redo(w, qtbot)
    _undo(w, qtbot)  # the choice again
    _undo(w, qtbot)  # the rename again: the analyte is velmorin; its choice was undone
    _redo(w, qtbot)
    _redo(w, qtbot)  # velmorin-M1, chosen
    words = _trail_words(w)
    assert any(x.startswith("undid “Edit name and units of velmorin”, restoring what it changed: changed analyte "
                            "velmorin-M1: name from velmorin-M1 to velmorin.") for x in words), words[-8:]
    w.export_report(path=str(tmp_path / "record.pdf"))
    text = printed_text(tmp_path / "record.pdf")
    chosen = text[text.index("Chosen by", text.index("Calibration – velmorin-M1")):][:120]
    assert PERSON.match(chosen.removeprefix("Chosen by ")), chosen


def test_a_run_with_the_short_undo_entries_of_earlier_versions_opens_and_prints(make_window, qtbot, tmp_path):
    """A run document whose undo and redo entries carry only the label (as earlier versions wrote them):
    the trail verifies, the window opens it and the record prints the entries as they were."""
    from curvewright.io import run_edits
    from curvewright.io.run_document import save_run
    from tests.io.helpers import small_run

    run = small_run()
    name = run.analytes[0].name
    standard = run.analytes[0].standards[1].id
    run = run_edits.exclude_standard(run, name, standard, "bubble in the syringe", user="lab-analyst")
    done = run_edits.record(run, "change_undone", {"change": f"Exclude {standard}"}, user="lab-analyst")
    path = tmp_path / "earlier.json"
    save_run(done, path)
    assert json.loads(path.read_text(encoding="utf-8"))["audit"][-1]["details"] == {"change": f"Exclude {standard}"}
    checked = run_cli("check", str(path))
    assert checked.returncode == 0, checked.stdout + checked.stderr

    w = make_window(path)
    assert _trail_words(w)[-1] == f"undid: Exclude {standard}."
    w.export_report(path=str(tmp_path / "earlier.pdf"))
    assert f"undid: Exclude {standard}." in printed_text(tmp_path / "earlier.pdf")


def test_an_exclusion_made_before_a_rename_that_was_undone_keeps_its_person(
        make_window, qtbot, answer_dialogs, import_csv, tmp_path, monkeypatch):
    """Excluded, renamed, the rename undone (Edit → Undo): the trail's last rename goes from velmorin
    away, and only the undo entry says the name came back; the exclusion is still the analyst's."""
    w = make_window(None)
    import_csv(w, standards=STANDARDS, samples=SAMPLES)
    _analyte(w, qtbot, "velmorin")
    _exclude(w, qtbot, answer_dialogs, "VEL-L4-2", "injection problem noted in the run log")
    _rename(w, qtbot, monkeypatch, "velmorin-M1")
    _undo(w, qtbot)
    assert "velmorin" in [a.name for a in w.session.run.analytes]
    w.export_report(path=str(tmp_path / "record.pdf"))
    text = printed_text(tmp_path / "record.pdf")
    line = text[text.index("• VEL-L4-2 ("):][:200]
    assert PERSON.search(line), line


def test_a_choice_undone_is_no_longer_named_as_the_choice(make_window, qtbot, answer_dialogs, import_csv, tmp_path):
    """Chosen, then Edit → Undo: the analyte is back on the function it had, chosen by no one, and the
    record and the workbook say so; Edit → Redo names the analyst again."""
    import openpyxl

    w = make_window(None)
    import_csv(w, standards=STANDARDS, samples=SAMPLES)
    _analyte(w, qtbot, "velmorin")
    _choose(w, qtbot, answer_dialogs, "quadratic", "1/x", "as the laboratory's procedure fixes")
    _undo(w, qtbot)
    assert w.session.run.analyte("velmorin").model == "linear"
    w.export_results("xlsx", path=str(tmp_path / "undone.xlsx"))
    book = openpyxl.load_workbook(tmp_path / "undone.xlsx", read_only=True)
    rows = {row[0]: row[1] for row in book["Calibration – velmorin"].iter_rows(values_only=True) if len(row) > 1}
    book.close()
    assert rows["Chosen by"] == "nobody (the program's default)", rows["Chosen by"]
    _redo(w, qtbot)
    w.export_report(path=str(tmp_path / "redone.pdf"))
    text = printed_text(tmp_path / "redone.pdf")
    chosen = text[text.index("Chosen by", text.index("Calibration – velmorin")):][:120]
    assert PERSON.match(chosen.removeprefix("Chosen by ")), chosen
