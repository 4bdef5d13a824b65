"""A calibration check is named with its kind once: "ICV 10 (second source)", not "ICV ICV 10 (second
source)", where the sample's id already begins with the kind; an id that does not keeps the kind
before it ("check standard Mid 8"). The command's text and the workbook's calibration sheet alike.

Invented scenario: a tin line y = 5 + 10·x counts per mg/L, each level measured twice at ±0.25 counts
around it, an initial check of a second-source standard at 10 mg/L, a closing CCV and a mid-range
check standard, as an instrument's sequence lists them."""

from __future__ import annotations

from pathlib import Path

import openpyxl

from tests.cli_runs import run_cli

STANDARDS = "Std,Concentration (mg/L),Response\n" + "".join(
    f"T{c}-{i},{c}.0,{5 + 10 * c + d}\n" for c in (1, 2, 4, 8, 16, 32) for i, d in ((1, 0.25), (2, -0.25)))
SAMPLES = ("Sample,Type,Dilution,Nominal,Response,Run order\n"
           "ICV 10 (second source),ICV,1,10,105.2,1\nMid 8,check standard,1,8,84.6,2\nU-1,unknown,1,,125.3,3\n"
           "ccv-2,CCV,1,10,104.1,4\n")


def test_a_check_is_named_with_its_kind_once(tmp_path: Path) -> None:
    std, smp, book = tmp_path / "standards.csv", tmp_path / "samples.csv", tmp_path / "tin.xlsx"
    std.write_text(STANDARDS, encoding="utf-8")
    smp.write_text(SAMPLES, encoding="utf-8")
    out = run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "tin", "--model",
                  "linear", "--weighting", "none", "--export", str(book))
    assert out.returncode in (0, 1), out.stderr
    # recoveries (105.2 − 5)/10 = 10.02 of 10 and (84.6 − 5)/10 = 7.96 of 8 mg/L: exact arithmetic
    assert "pass: ICV 10 (second source) (run order 1): recovery 100.2 % of 10 mg/L" in out.stdout
    assert "pass: check standard Mid 8 (run order 2): recovery 99.5 % of 8 mg/L" in out.stdout
    assert "pass: ccv-2 (run order 4)" in out.stdout  # the kind in another case is still the kind
    assert "ICV ICV" not in out.stdout and "CCV ccv" not in out.stdout
    workbook = openpyxl.load_workbook(book, read_only=True)
    try:
        said = [r[1] for r in workbook["Calibration – tin"].iter_rows(values_only=True)
                if r and r[0] == "Calibration check"]
    finally:
        workbook.close()
    assert [s.split(":", 2)[1].strip() for s in said] == ["ICV 10 (second source) (run order 1)",
                                                         "check standard Mid 8 (run order 2)", "ccv-2 (run order 4)"]
