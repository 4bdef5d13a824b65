"""Every replicate row of a sample counts, one without a response or without its internal-standard
response too, and every output says the same count and why a row was not used.

Invented scenario (the Fenwick Road laboratory's ostrazine run of ``test_default_model_told.py``):
sample FR-40 was injected three times at ×2, but the second row's peak area was never filled in;
FR-41 has a peak area and an empty internal-standard cell. Imported from CSV files as a spreadsheet
writes them, the results table, the workbook, the record and ``quantify --json`` all give FR-40 three
replicates (2 measured, 1 not usable), as its flag "replicate not usable" says, and FR-41 one (0
measured, 1 not usable). The record says why FR-41 is not quantified and which row of FR-40 was left
out, in the words the command line uses.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import openpyxl
from PySide6.QtWidgets import QFileDialog

from curvewright.app import results_model as rm
from tests.app.conftest import settle
from tests.app.test_default_model_told import ROOT, STANDARDS
from tests.printed import printed_text

SAMPLES = """Analyte,Sample,Type,Dilution,Nominal,Peak area,IS area
ostrazine,FR-40,unknown,2,,30500,241000
ostrazine,FR-40,unknown,2,,,242300
ostrazine,FR-40,unknown,2,,31200,239500
ostrazine,FR-41,unknown,1,,95000,
ostrazine,FR-42,unknown,1,,61000,240800
"""


def test_every_replicate_row_counts_alike_everywhere(make_window, import_csv, answer_dialogs, qtbot, tmp_path,
                                                      monkeypatch) -> None:
    monkeypatch.setattr(QFileDialog, "getSaveFileName",
                        lambda parent, caption, suggested="", *a, **k: (str(tmp_path / Path(suggested).name), ""))
    window = make_window(None)
    import_csv(window, standards=STANDARDS, samples=SAMPLES)
    results = window.results_model
    rows = {results.index(r, rm.SAMPLE).data(): r for r in range(results.rowCount())}
    assert results.index(rows["FR-40"], rm.N).data() == "3 (2\u00a0measured, 1\u00a0not\u00a0usable)"
    assert "replicate not usable" in results.index(rows["FR-40"], rm.FLAGS).data()
    assert results.index(rows["FR-41"], rm.N).data() == "1 (0\u00a0measured, 1\u00a0not\u00a0usable)"
    assert results.index(rows["FR-42"], rm.N).data() == "1"

    window.actions_by_name["export-xlsx"].trigger()
    settle(qtbot, window)
    book = openpyxl.load_workbook(next(tmp_path.glob("*.xlsx")), read_only=True)
    try:
        sheet = [list(row) for row in book["Samples"].iter_rows(values_only=True)]
    finally:
        book.close()
    names = next(r for r in sheet if r and r[0] == "Sample id")
    counts = {r[0]: tuple(r[names.index(c)] for c in ("Replicates", "Measured", "Censored"))
              for r in sheet[sheet.index(names) + 1:] if r and r[0]}
    assert counts == {"FR-40": (3, 2, 0), "FR-41": (1, 0, 0), "FR-42": (1, 1, 0)}

    window.actions_by_name["export-record"].trigger()
    settle(qtbot, window)
    text = " ".join(printed_text(next(tmp_path.glob("*.pdf"))).split())
    table = text[text.index("Samples – ostrazine"):]
    assert " FR-40 unknown 3 (2 measured, 1 not usable)" in table, table[:600]
    assert " FR-41 unknown 1 (0 measured, 1 not usable)" in table
    assert "Not quantified: FR-41: replicate 1: no internal-standard response for the ratio." in table
    assert "Quantified from the usable replicates only: FR-40: replicate 2: no response recorded." in table

    (tmp_path / "standards.csv").write_text(STANDARDS)
    (tmp_path / "samples.csv").write_text(SAMPLES)
    env = dict(os.environ, PYTHONPATH=os.pathsep.join([str(ROOT / "src"), str(ROOT)]))
    done = subprocess.run([sys.executable, "-m", "curvewright.cli", "quantify", "--standards", "standards.csv",
                           "--samples", "samples.csv", "--json"],
                          capture_output=True, text=True, env=env, cwd=tmp_path, timeout=120)
    assert done.returncode in (0, 1), done.stderr
    js = {s["id"]: (s["replicates"], s["replicates_measured"], s["replicates_censored"])
          for s in json.loads(done.stdout)["analytes"][0]["samples"]}
    assert js == counts
