"""The workbook's Samples sheet: the standard error and the interval's ends on the reported scale
(after dilution), named so, beside the working behind them.

Invented scenario: a tin line y = 5 + 10·x counts per mg/L, each level measured twice at ±0.25 counts
around it; one extract measured as it is and one diluted 1 in 10 before measuring."""

from __future__ import annotations

import json
import math
from pathlib import Path

import openpyxl

from tests.cli_runs import run_cli
from tests.test_cli_export_digits import sheet_rows

STANDARDS = "Std,Concentration (mg/L),Response\n" + "".join(
    f"T{c}-{i},{c}.0,{5 + 10 * c + d}\n" for c in (1, 2, 4, 8, 16, 32) for i, d in ((1, 0.25), (2, -0.25)))
SAMPLES = "Sample,Type,Dilution,Nominal,Response\nEX-1,unknown,1,,125.3\nEX-2,unknown,10,,125.3\n"


def test_the_samples_sheet_gives_the_standard_error_and_the_ends_after_dilution(tmp_path: Path) -> None:
    std, smp, book = tmp_path / "standards.csv", tmp_path / "samples.csv", tmp_path / "tin.xlsx"
    std.write_text(STANDARDS, encoding="utf-8")
    smp.write_text(SAMPLES, encoding="utf-8")
    args = ("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "tin", "--model", "linear",
            "--weighting", "none")
    done = run_cli(*args, "--export", str(book))
    assert done.returncode == 0, done.stderr
    data = {r["id"]: r for r in json.loads(run_cli(*args, "--json").stdout)["analytes"][0]["samples"]}
    workbook = openpyxl.load_workbook(book)
    try:
        rows = {r["Sample id"].value: r for r in sheet_rows(workbook, "Samples")}
        summary = {r["Sample id"].value: r for r in sheet_rows(workbook, "Summary")}
    finally:
        workbook.close()
    headings = list(next(iter(rows.values())))
    assert "Lower limit" not in headings and "Upper limit" not in headings  # no end without its scale
    # the Summary sheet's ends are on the same (reported) scale, and say so
    assert "Lower limit" not in list(next(iter(summary.values()))) and "Upper limit" not in list(next(iter(summary.values())))
    for sample in ("EX-1", "EX-2"):
        assert summary[sample]["Lower limit × dilution"].value == rows[sample]["Lower limit × dilution"].value
        assert summary[sample]["Upper limit × dilution"].value == rows[sample]["Upper limit × dilution"].value
    for sample, dilution in (("EX-1", 1), ("EX-2", 10)):
        row, said = rows[sample], data[sample]
        se = row["Standard error × dilution"]
        # the reported scale: the solution's standard error times the dilution factor
        assert math.isclose(se.value, said["standard_error"] * dilution, rel_tol=1e-12)
        assert math.isclose(se.value, said["reported_standard_error"], rel_tol=1e-12)
        shown = f"{se.value:.{len(se.number_format.partition('.')[2])}f}"  # as the cell's format shows it
        assert len(shown.replace(".", "").lstrip("0")) == 3, (se.number_format, shown)  # three significant figures
        assert row["Lower limit × dilution"].value == said["reported_lower"]
        assert row["Upper limit × dilution"].value == said["reported_upper"]
        assert row["Lower limit × dilution"].value < row["Concentration × dilution"].value < row["Upper limit × dilution"].value
    # the diluted extract's ends are ten times the other's: on the reported scale
    assert math.isclose(rows["EX-2"]["Upper limit × dilution"].value, 10 * rows["EX-1"]["Upper limit × dilution"].value)
