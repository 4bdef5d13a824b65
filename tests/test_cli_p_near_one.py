"""A p-value below 1 whose shown figures would round it to 1 is written "> 0.999" everywhere a person
reads it: the command's text ("p > 0.999") and its model-evidence table, the workbook's calibration
sheet (its cell keeps the number) and the printed record's tables. A p of exactly 1 (F = 0) stays "1".

Invented scenario: a tin line y = 5 + 10·x counts per mg/L read twice per level at ±0.25 counts around
it, except that the second 8 mg/L reading is 0.249 below: the level means lie all but on the line, so
the lack-of-fit F is about 10⁻⁶ and its p all but 1 (scipy.stats.f.sf: 1 − p ≈ 2 × 10⁻¹²)."""

from __future__ import annotations

import re
from pathlib import Path

import openpyxl
from scipy import stats

from tests.cli_runs import run_cli
from tests.printed import printed_text

STANDARDS = "Std,Concentration (mg/L),Response\n" + "".join(
    f"T{c}-{i},{c}.0,{5 + 10 * c + d}\n" for c in (1, 2, 4, 8, 16, 32)
    for i, d in ((1, 0.25), (2, -0.249 if c == 8 else -0.25)))


def written(folder: Path) -> tuple[Path, Path]:
    std, smp = folder / "standards.csv", folder / "samples.csv"
    std.write_bytes(STANDARDS.replace("\n", "\r\n").encode())  # as a spreadsheet saves it
    smp.write_bytes(b"Sample,Response\r\nZ-1,55.4\r\n")
    return std, smp


def test_a_p_value_that_rounds_to_one_is_shown_as_above_0_999(tmp_path: Path) -> None:
    std, smp = written(tmp_path)
    compared = run_cli("compare", "--standards", str(std), "--analyte", "tin")
    assert compared.returncode == 0, compared.stderr
    lines = compared.stdout.splitlines()
    heading = next(line for line in lines if line.startswith("Model "))
    column = heading.index("Lack-of-fit p")
    line = next(line for line in lines if line.startswith("linear ") and " none " in line)
    assert line[column:].startswith("> 0.999 "), line

    book, record = tmp_path / "tin.xlsx", tmp_path / "tin.pdf"
    done = run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "tin", "--model", "linear",
                   "--weighting", "none", "--export", str(book), "--report", str(record))
    assert done.returncode in (0, 1), done.stderr
    said = re.search(r"lack-of-fit F = ([\d.]+)\u00a0×\u00a010⁻([⁰¹²³⁴⁵⁶⁷⁸⁹]+), p > 0\.999", done.stdout)
    assert said is not None, done.stdout
    f = float(said.group(1)) * 10.0 ** -int(said.group(2).translate(str.maketrans("⁰¹²³⁴⁵⁶⁷⁸⁹", "0123456789")))
    p = float(stats.f.sf(f, 4, 6))  # (6 levels − 2 parameters, 12 standards − 6 levels) df
    assert 0.9995 < p < 1.0, p  # scipy: below 1, yet "1" at three figures

    workbook = openpyxl.load_workbook(book)
    try:
        cell = next(r[1] for r in workbook["Calibration – tin"].iter_rows() if r[0].value == "Lack-of-fit p")
    finally:
        workbook.close()
    assert 0.9995 < cell.value < 1.0 and cell.number_format == '"> 0.999"', (cell.value, cell.number_format)

    text = printed_text(record)
    assert "Lack-of-fit p > 0.999" in text
    evidence = text[text.index("Model evidence"):]
    assert re.search(r"linear none \S+ \S+ > 0\.999 ", evidence), evidence[:300]
