"""The digits a reported result is shown with, as the command line prints and exports them.

The tin runs are invented: a straight line y = 5 + 10·x counts per mg/L, each level measured twice at
±0.25 counts around the line, so the fitted intercept carries binary round-off (4.999999999999972)."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import openpyxl
import pytest

from tests.io.helpers import ROOT
from tests.test_cli_export_digits import shown, sheet_rows

TIN_STANDARDS = "Std,Concentration (mg/L),Response\n" + "".join(
    f"T{c}-{i},{c}.0,{5 + 10 * c + d}\n" for c in (1, 2, 4, 8, 16, 32) for i, d in ((1, 0.25), (2, -0.25)))
TIN_TIES = "Sample,Type,Dilution,Nominal,Response\nA,unknown,1,,28.45\nB,unknown,1,,28.55\nC,unknown,1,,28.65\n"
"""Exact concentrations 2.345, 2.355 and 2.365 mg/L: ties at the second decimal."""


def tin_method(folder: Path, tie: str) -> Path:
    path = folder / f"tin_{tie}.json"
    path.write_text(json.dumps({
        "format": "curvewright-method/1", "id": "TIN-1", "name": "Tin in extract (invented)", "version": "1",
        "source": "invented validation report",
        "analytes": [{"name": "tin", "concentration_unit": "mg/L", "response_unit": "counts", "model": "linear",
                      "weighting": "none", "levels": [1, 2, 4, 8, 16, 32]}],
        "profile": "general", "rounding": {"kind": "decimals", "digits": 2, "tie": tie},
        "confidence_level": 0.95, "interval": "band", "limits_method": "residual_sd"}), encoding="utf-8")
    return path


def quantify(folder: Path, standards: str, samples: str, *extra: str) -> subprocess.CompletedProcess:
    std, smp = folder / "standards.csv", folder / "samples.csv"
    std.write_text(standards, encoding="utf-8")
    smp.write_text(samples, encoding="utf-8")
    out = subprocess.run([sys.executable, "-m", "curvewright.cli", "quantify", "--standards", str(std), "--samples",
                          str(smp), *extra], capture_output=True, text=True, cwd=ROOT, timeout=300)
    assert out.returncode == 0, out.stderr
    return out


@pytest.mark.parametrize("tie, expected", [("half_even", {"A": "2.34", "B": "2.36", "C": "2.36"}),
                                           ("half_up", {"A": "2.35", "B": "2.36", "C": "2.37"})])
def test_a_method_tie_break_rounds_the_exact_value_not_its_round_off(tmp_path, tie, expected) -> None:
    # Exact arithmetic: (28.45 − 5)/10 = 2.345 and so on (the line is y = 5 + 10·x by construction);
    # half to even keeps the even last digit, half up raises it (USP General Notices 7.20 for half up).
    out = quantify(tmp_path, TIN_STANDARDS, TIN_TIES, "--analyte", "tin", "--method", str(tin_method(tmp_path, tie)),
                   "--json", "--export", str(tmp_path / "tin.xlsx"))
    rows = {r["id"]: r for r in json.loads(out.stdout)["analytes"][0]["samples"]}
    assert {k: r["reported_rounded"] for k, r in rows.items()} == expected
    text = quantify(tmp_path, TIN_STANDARDS, TIN_TIES, "--analyte", "tin", "--method",
                    str(tin_method(tmp_path, tie))).stdout
    for sample, digits in expected.items():
        line = next(line for line in text.splitlines() if line.startswith(f"  {sample} "))
        assert line.split()[1:3] == [digits, digits], line
    book = openpyxl.load_workbook(tmp_path / "tin.xlsx")
    try:
        found = {r["Sample id"].value: shown(r["Reported"]) for r in sheet_rows(book, "Summary")}
        assert found == expected
    finally:
        book.close()
