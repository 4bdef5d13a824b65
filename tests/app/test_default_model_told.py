"""A calibration function nobody chose is said to be the default, on screen and in the outputs.

Invented scenario: the Fenwick Road laboratory imports standards and samples of the analyte "ostrazine"
(ng/mL, peak areas against an internal standard) from CSV files as a spreadsheet writes them. The
response bends over the range, so the run's own comparison rejects the straight line. The main window
says, for the analyte shown, that its function is the default nobody chose and what the comparison
recommends; the workbook and the record say "default, not chosen by anyone". One click on the offered
button takes the recommendation through the Model evidence tab's path: the audit trail records who
chose it and the comparison's reasons, and the results are then those ``quantify --standards`` gives
for the same files.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import openpyxl
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QFileDialog

from curvewright.app import results_model as rm
from tests.app.conftest import settle
from tests.printed import printed_text

ROOT = Path(__file__).resolve().parents[2]

# an invented curve that bends (about 0.0125·x − 7e-6·x²) with duplicate standards at eight levels
STANDARDS = """Analyte,Standard id,Level,Concentration (ng/mL),Peak area,IS area
ostrazine,OST-1a,L1,1,3310,249800
ostrazine,OST-1b,L1,1,3195,246900
ostrazine,OST-2a,L2,2,6190,247100
ostrazine,OST-2b,L2,2,6650,250200
ostrazine,OST-3a,L3,5,15310,247000
ostrazine,OST-3b,L3,5,16120,253100
ostrazine,OST-4a,L4,10,30620,250400
ostrazine,OST-4b,L4,10,31790,249500
ostrazine,OST-5a,L5,25,72650,239900
ostrazine,OST-5b,L5,25,69880,235100
ostrazine,OST-6a,L6,50,141500,235900
ostrazine,OST-6b,L6,50,146200,239100
ostrazine,OST-7a,L7,100,292900,250600
ostrazine,OST-7b,L7,100,266800,230400
ostrazine,OST-8a,L8,200,550100,248800
ostrazine,OST-8b,L8,200,517300,238600
"""
SAMPLES = """Analyte,Sample,Type,Dilution,Nominal,Peak area,IS area
ostrazine,FR-31,unknown,1,,111400,240100
ostrazine,FR-31,unknown,1,,110200,243600
ostrazine,FR-QC,QC,1,80,232400,241000
"""


def _quantified(tmp_path: Path) -> dict:
    """``quantify --standards`` on the same files, as a person runs it."""
    env = dict(os.environ, PYTHONPATH=os.pathsep.join([str(ROOT / "src"), str(ROOT)]))
    done = subprocess.run([sys.executable, "-m", "curvewright.cli", "quantify", "--standards", str(tmp_path / "standards.csv"),
                           "--samples", str(tmp_path / "samples.csv"), "--json"],
                          capture_output=True, text=True, env=env, cwd=tmp_path, timeout=120)
    assert done.returncode in (0, 1), done.stderr
    return json.loads(done.stdout)


def test_the_default_is_told_and_the_recommendation_taken_in_one_click(make_window, import_csv, answer_dialogs,
                                                                      qtbot, tmp_path, monkeypatch) -> None:
    monkeypatch.setattr(QFileDialog, "getSaveFileName",
                        lambda parent, caption, suggested="", *a, **k: (str(tmp_path / Path(suggested).name), ""))
    window = make_window(None)
    window.resize(1366, 768)
    import_csv(window, standards=STANDARDS, samples=SAMPLES)
    assert window.session.run.analyte("ostrazine").model == "linear"

    note = window.default_model_note.text()
    assert window.default_model_row.isVisible()
    assert "ostrazine: the calibration function is the default (linear, unweighted); nobody has chosen it" in note, note
    assert "The model comparison recommends quadratic, weighted 1/x^2:" in note
    assert "lack-of-fit p = " in note
    assert window.take_recommendation_button.isVisible()
    assert window.take_recommendation_button.text() == "Use quadratic, weighted 1/x^2"

    # the workbook and the record, written before anyone chose, say the function is the default
    window.actions_by_name["export-xlsx"].trigger()
    settle(qtbot, window)
    book = openpyxl.load_workbook(next(tmp_path.glob("*.xlsx")), read_only=True)
    try:
        sheet = next(name for name in book.sheetnames if name.startswith("Calibration"))
        items = {r[0]: r[1] for r in book[sheet].iter_rows(values_only=True) if r and len(r) > 1 and r[0]}
    finally:
        book.close()
    assert items["Reason for the choice"] == "default, not chosen by anyone"
    assert items["Chosen by"] == "nobody (the program's default)"
    window.actions_by_name["export-record"].trigger()
    settle(qtbot, window)
    text = " ".join(printed_text(next(tmp_path.glob("*.pdf"))).split())
    assert "(none recorded)" not in text
    assert "Used: linear, unweighted: the default, not chosen by anyone." in text

    # the run saved before anyone chose: the command line says the same of it as the screen
    window.actions_by_name["save-as"].trigger()
    settle(qtbot, window)
    saved = next(tmp_path.glob("*.json"))
    env = dict(os.environ, PYTHONPATH=os.pathsep.join([str(ROOT / "src"), str(ROOT)]))
    compared = subprocess.run([sys.executable, "-m", "curvewright.cli", "compare", str(saved)],
                              capture_output=True, text=True, env=env, cwd=tmp_path, timeout=120)
    assert "chosen: linear, none — default, not chosen by anyone" in compared.stdout, compared.stdout + compared.stderr
    quantified = subprocess.run([sys.executable, "-m", "curvewright.cli", "quantify", str(saved), "--json"],
                                capture_output=True, text=True, env=env, cwd=tmp_path, timeout=120)
    entry = json.loads(quantified.stdout)["analytes"][0]
    assert entry["model_chosen_by"] == "not chosen", entry["model_chosen_by"]
    assert entry["choice_reasons"] == ["default, not chosen by anyone"], entry["choice_reasons"]

    # one click takes the recommendation, recorded as the Model evidence tab records a choice
    qtbot.mouseClick(window.take_recommendation_button, Qt.MouseButton.LeftButton)
    settle(qtbot, window)
    analyte = window.session.run.analyte("ostrazine")
    assert (analyte.model, analyte.weighting) == ("quadratic", "1/x^2")
    entry = window.session.run.audit[-1]
    assert entry.action == "model_chosen" and entry.analyst == "Robin Example"
    assert entry.details["recommended"] == ["quadratic", "1/x^2"]
    assert entry.details["reason"].startswith("recommended by the model comparison on the 16 standards in the fit")
    assert "the straight line is rejected, so the quadratic is recommended" in entry.details["reason"]
    assert not window.default_model_row.isVisible()

    # the app now gives what the command line gives for the same files
    (tmp_path / "standards.csv").write_text(STANDARDS)
    (tmp_path / "samples.csv").write_text(SAMPLES)
    cli = {s["id"]: s["reported_text"] for s in _quantified(tmp_path)["analytes"][0]["samples"]}
    results = window.results_model
    shown = {results.index(r, rm.SAMPLE).data(): results.index(r, rm.REPORTED).data() for r in range(results.rowCount())}
    assert shown == cli
