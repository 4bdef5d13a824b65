"""A QC sample is judged on the number the run reports, and the calibrated range is one range.

Invented scenario: the Ovenden laboratory's cadmium line (µg/L) with two blanks fitted as points of
the curve, unweighted. The computed LOQ (ICH Q2: 10·σ/S, σ the residual SD, S the slope, worked out
here with numpy's least squares) lies above the low QC's result, so that QC is reported "< LOQ": it
has no reported number to judge (common practice: a QC result must be reportable to be judged), it
counts as not passing and the run is not accepted. The blanks do not stretch the calibrated range:
the JSON's ``calibrated_range`` is the LLOQ–ULOQ the text and the flags use, 0.5–50 µg/L.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import openpyxl

from tests.cli_runs import run_cli
from tests.test_cli_tables import write

STANDARDS = [("B-01", 0, 3.12), ("B-02", 0, 2.71), ("C-01", 0.5, 55.83), ("C-02", 0.5, 49.96),
             ("C-03", 1, 104.21), ("C-04", 1, 98.47), ("C-05", 2.5, 251.9), ("C-06", 2.5, 262.4),
             ("C-07", 5, 511.7), ("C-08", 5, 494.2), ("C-09", 10, 1013.5), ("C-10", 10, 968.8),
             ("C-11", 25, 2412.0), ("C-12", 25, 2561.3), ("C-13", 50, 4870.4), ("C-14", 50, 5011.9)]


def test_a_qc_below_the_loq_is_not_judged_and_fails_the_qc_rules(tmp_path: Path) -> None:
    x = np.array([c for _, c, _ in STANDARDS])
    y = np.array([r for _, _, r in STANDARDS])
    b, a = np.polyfit(x, y, 1)
    loq = 10 * np.sqrt(np.sum((y - a - b * x) ** 2) / (x.size - 2)) / b
    assert round(loq, 2) == 4.08 and (151.2 - a) / b < loq  # the low QC reads below the LOQ

    std = write(tmp_path / "std.csv", ["Standard id,Level,Concentration (µg/L),Response (counts)",
                                       *[f"{i},L,{c},{r}" for i, c, r in STANDARDS]])
    smp = write(tmp_path / "smp.csv", ["Sample,Type,Dilution,Nominal,Response (counts)", "QC low,QC,1,1.5,151.2",
                                       "QC mid,QC,1,20,1905.0", "QC high,QC,1,40,4150.0", "W-1,unknown,1,,2100"])
    args = ("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "cadmium",
            "--model", "linear", "--weighting", "none")
    book = tmp_path / "out.xlsx"
    out = run_cli(*args, "--export", str(book))
    assert out.returncode == 1, out.stderr  # completed, the profile failed
    assert "QC FAIL: 2 of 3 QC samples within ±20 %; all required; 1 QC sample(s) not judged" in out.stdout
    assert "QC pass: 3 of 3" not in out.stdout
    assert "QC sample 'QC low' not judged: its result is not reported as a number (below the reporting limit" in out.stdout
    assert "calibrated range 0.5–50 µg/L (LLOQ–ULOQ)" in out.stdout

    data = json.loads(run_cli(*args, "--json").stdout)
    analyte = data["analytes"][0]
    assert data["accepted"] is False and analyte["qc_verdict"]["passed"] is False
    low = next(s for s in analyte["samples"] if s["id"] == "QC low")
    assert low["status"] == "below_reporting_limit" and low["within_limits"] is None
    assert analyte["calibrated_range"] == [0.5, 50.0]
    assert [analyte["reporting_range"]["lloq"], analyte["reporting_range"]["uloq"]] == analyte["calibrated_range"]

    info = [r for r in openpyxl.load_workbook(book)["Run information"].iter_rows(values_only=True) if r and r[0]]
    assert any("QC sample 'QC low' not judged" in str(v) for r in info for v in r)
