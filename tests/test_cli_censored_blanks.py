"""A calibration blank entered as a censored response passes only when the statement it is reported
as is a non-detect: below the reporting limit ("<6" read below it, "ND"). One reported as "> ULOQ"
or as "< bound" with the bound above the reporting limit fails, and its reason says why.

Invented scenario: a tin line y = 5 + 10·x counts per mg/L (LLOQ 1 mg/L, the reporting limit), each
level measured twice at ±0.25 counts around it; four calibration blanks between the standards' runs,
as an instrument exports them ("<6", "<40", ">ULOQ", "ND"). The general profile asks a calibration
blank to lie below the reporting limit (common practice)."""

from __future__ import annotations

import json
from pathlib import Path

from tests.cli_runs import run_cli

STANDARDS = "Std,Concentration (mg/L),Response\n" + "".join(
    f"T{c}-{i},{c}.0,{5 + 10 * c + d}\n" for c in (1, 2, 4, 8, 16, 32) for i, d in ((1, 0.25), (2, -0.25)))
SAMPLES = ("Sample,Type,Dilution,Nominal,Response,Run order\n"
           "CB-1,calibration blank,1,,<6,1\nCB-2,calibration blank,1,,<40,2\n"
           "CB-3,calibration blank,1,,>ULOQ,3\nCB-4,calibration blank,1,,ND,4\nU-1,unknown,1,,125.3,5\n")


def test_a_censored_blank_passes_only_as_a_non_detect_and_the_reason_says_why(tmp_path: Path) -> None:
    std, smp = tmp_path / "standards.csv", tmp_path / "samples.csv"
    std.write_text(STANDARDS, encoding="utf-8")
    smp.write_text(SAMPLES, encoding="utf-8")
    out = run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "tin", "--model",
                  "linear", "--weighting", "none", "--json")
    data = json.loads(out.stdout)
    checks = {c["id"]: c for c in data["analytes"][0]["calibration_checks"]["checks"]}
    assert data["analytes"][0]["calibration_checks"]["passed"] is False
    # "<6" reads through the line as (6 − 5)/10 = 0.1 mg/L, below the reporting limit; "ND" is a non-detect
    assert checks["CB-1"]["passed"] and checks["CB-4"]["passed"]
    # "<40" reads as (40 − 5)/10 = 3.5 mg/L, above the reporting limit of 1 mg/L: the blank may lie above it
    assert not checks["CB-2"]["passed"]
    assert ("FAIL: calibration blank CB-2 (run order 2): reported as < 3.51 mg/L, a censored result that is not a "
            "non-detect: its bound lies above the reporting limit 1 mg/L, so the blank may lie at the limit or "
            "above it; a calibration blank passes only below the reporting limit 1 mg/L") in checks["CB-2"]["reason"]
    # ">ULOQ" says the blank lies above the calibrated range
    assert not checks["CB-3"]["passed"]
    assert ("reported as >ULOQ, a censored result that is not a non-detect: a result above the calibrated "
            "range; a calibration blank passes only below the reporting limit 1 mg/L") in checks["CB-3"]["reason"]
    text = run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "tin", "--model",
                   "linear", "--weighting", "none").stdout
    assert "FAIL: calibration blank CB-3 (run order 3): reported as >ULOQ, a censored result that is not a non-detect" in text
