"""A sample's replicates are counted whether measured or censored, and every output says how many of each.

Invented scenario (the Larkmoor zirconium line of ``tests/test_cli_censored_samples.py``): sample
Fluss-M was read twice, "<20" and 300.2 counts; Fluss-G once, "<20"; Fluss-D twice, both measured;
Fluss-U has 305.1, a reading mistyped "64O.2" and a row with an empty response cell. The command's
JSON, the workbook's Samples sheet and the printed record all give Fluss-M two replicates, one measured
and one censored, and Fluss-U three, two of them not usable (the flag "replicate not usable" names both
rows); a sample measured throughout shows its count alone.
"""

from __future__ import annotations

import json
from pathlib import Path

import openpyxl
import pypdfium2 as pdfium

from tests.test_cli_censored_samples import _files
from tests.test_cli_tables import run_cli

SAMPLES = ["Fluss-M,1,<20", "Fluss-M,1,300.2", "Fluss-G,1,<20", "Fluss-D,1,412.5", "Fluss-D,1,409.1",
           "Fluss-U,1,305.1", "Fluss-U,1,64O.2", "Fluss-U,1,"]


def test_censored_readings_count_among_the_replicates(tmp_path: Path) -> None:
    std, smp = _files(tmp_path, SAMPLES)
    workbook, record = tmp_path / "zr.xlsx", tmp_path / "zr.pdf"
    args = ["quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "zirconium",
            "--model", "linear", "--weighting", "1/x^2", "--allow-unreadable"]
    done = run_cli(*args, "--export", str(workbook), "--report", str(record))
    assert done.returncode == 0, done.stderr
    js = run_cli(*args, "--json")
    rows = {s["id"]: s for s in json.loads(js.stdout)["analytes"][0]["samples"]}
    assert [(rows[i]["replicates"], rows[i]["replicates_measured"], rows[i]["replicates_censored"])
            for i in ("Fluss-M", "Fluss-G", "Fluss-D", "Fluss-U")] == [(2, 1, 1), (1, 0, 1), (2, 2, 0), (3, 1, 0)]

    sheet = openpyxl.load_workbook(workbook, read_only=True)["Samples"]
    values = [list(r) for r in sheet.iter_rows(values_only=True)]
    head = next(i for i, r in enumerate(values) if r and r[0] == "Sample id")
    names = values[head]
    got = {r[0]: (r[names.index("Replicates")], r[names.index("Measured")], r[names.index("Censored")])
           for r in values[head + 1:] if r and r[0]}
    assert got == {"Fluss-M": (2, 1, 1), "Fluss-G": (1, 0, 1), "Fluss-D": (2, 2, 0), "Fluss-U": (3, 1, 0)}

    pdf = pdfium.PdfDocument(str(record))
    try:
        text = " ".join(" ".join(pdf[i].get_textpage().get_text_range() for i in range(len(pdf))).split())
    finally:
        pdf.close()
    samples = text[text.index("Samples – zirconium"):]
    assert "Fluss-M unknown 2 (1 measured, 1 censored)" in samples, samples[:600]
    assert "Fluss-G unknown 1 (0 measured, 1 censored)" in samples
    assert "Fluss-U unknown 3 (1 measured, 2 not usable)" in samples
    assert "Fluss-D unknown 2 1" in samples  # measured throughout: the count alone, then the dilution factor
