"""The people of a run are named in their roles. An analyst works a run and signs it, a reviewer opens
the saved file in their own window and signs as reviewer, an approver opens it in theirs and approves;
the record's first page and the workbook's run information then name the analyst under "Analysts",
the reviewer under "Reviewer" and the approver under "Approver", no one in another's role. Driven
through the Review and File menus' actions (pytest-qt, offscreen); the people are invented."""

from __future__ import annotations

import shutil
from pathlib import Path

import openpyxl
import pypdfium2 as pdfium
from PySide6.QtWidgets import QDialog

from curvewright.app import dialogs
from tests.app.conftest import DEMOS, settle

NITRATE = next(p for p in DEMOS if "nitrate" in p.stem)
PEOPLE = {"analyst": ("Robin Example", "QA-0042"), "reviewer": ("Dana Okafor", "QA-0107"),
          "approver": ("Ines Marchetti", "QA-0230")}
ACTIONS = {"analyst": "sign-analyst", "reviewer": "sign-reviewer", "approver": "sign-approver"}


def _first_page(path: Path) -> str:
    pdf = pdfium.PdfDocument(str(path))
    try:
        return " ".join(pdf[0].get_textpage().get_text_range().split())
    finally:
        pdf.close()


def _between(text: str, start: str, end: str) -> str:
    at = text.index(start) + len(start)
    return text[at:text.index(end, at)]


def test_each_person_is_named_in_their_role(make_window, answer_dialogs, qtbot, tmp_path, settings,
                                            monkeypatch, save_in_tmp_path) -> None:
    monkeypatch.setattr(dialogs.SignDialog, "exec", lambda self: QDialog.DialogCode.Accepted)
    run_file = tmp_path / "nitrate.json"
    shutil.copyfile(NITRATE, run_file)
    window = None
    for role in ("analyst", "reviewer", "approver"):  # each person in their own window, on the saved file
        name, person_id = PEOPLE[role]
        settings.setValue("identity/name", name)
        settings.setValue("identity/id", person_id)
        window = make_window(run_file)
        window.actions_by_name[ACTIONS[role]].trigger()
        settle(qtbot, window)
        window.actions_by_name["save"].trigger()
        settle(qtbot, window)
    assert [s.role for s in window.session.run.signatures] == ["analyst", "reviewer", "approver"]

    window.actions_by_name["export-record"].trigger()
    settle(qtbot, window)
    page = _first_page(next(tmp_path.glob("*.pdf")))
    analysts = _between(page, "Analysts", "Reviewer")
    reviewer = _between(page, "Reviewer", "Approver")
    approver = _between(page, "Approver", "Dates")
    assert "Robin Example" in analysts and "Dana Okafor" not in analysts and "Ines Marchetti" not in analysts, page
    assert "Dana Okafor" in reviewer and "Robin Example" not in reviewer, page
    assert "Ines Marchetti" in approver and "Dana Okafor" not in approver, page

    window.actions_by_name["export-xlsx"].trigger()
    settle(qtbot, window)
    book = openpyxl.load_workbook(next(tmp_path.glob("*.xlsx")), read_only=True)
    try:
        items = {r[0]: r[1] for r in book["Run information"].iter_rows(values_only=True) if len(r) > 1 and r[0]}
    finally:
        book.close()
    assert "Robin Example" in items["Analysts"] and "Okafor" not in items["Analysts"] \
        and "Marchetti" not in items["Analysts"]
    assert "Dana Okafor" in items["Reviewer"] and "Ines Marchetti" in items["Approver"]
