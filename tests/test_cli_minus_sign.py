"""The minus sign of a negative number: U+2212 in text for a person (the command's text, the record),
as the equation writes its terms; the hyphen-minus in text for programs (JSON strings, CSV cells),
which ``float()`` reads (core/notation.py).

Invented scenario: a tin line y = 5 + 10·x counts per mg/L, each level measured twice at ±0.25 counts
around it; two blanks read just above and just below the intercept, so their intervals reach below
zero and one estimate is negative (exact arithmetic: (4.8 − 5)/10 = −0.02 mg/L)."""

from __future__ import annotations

import csv
import io
import json
from pathlib import Path

import pypdfium2

from tests.cli_runs import run_cli

STANDARDS = "Std,Concentration (mg/L),Response\n" + "".join(
    f"T{c}-{i},{c}.0,{5 + 10 * c + d}\n" for c in (1, 2, 4, 8, 16, 32) for i, d in ((1, 0.25), (2, -0.25)))
SAMPLES = "Sample,Type,Dilution,Nominal,Response\nZ-1,unknown,1,,5.4\nB-2,unknown,1,,4.8\n"


def quantify(folder: Path, *extra: str) -> str:
    std, smp = folder / "standards.csv", folder / "samples.csv"
    std.write_text(STANDARDS, encoding="utf-8")
    smp.write_text(SAMPLES, encoding="utf-8")
    out = run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "tin", "--model",
                  "linear", "--weighting", "none", *extra)
    assert out.returncode == 0, out.stderr
    return out.stdout


def test_negative_numbers_carry_the_minus_sign_for_a_person_and_the_hyphen_for_programs(tmp_path) -> None:
    text = quantify(tmp_path, "--report", str(tmp_path / "tin.pdf"))
    lines = {line.split()[0]: line for line in text.splitlines() if line.startswith(("  Z-1 ", "  B-2 "))}
    # the estimate −0.0200 (exact arithmetic above) and the interval's lower ends below zero
    assert " −0.0200 " in lines["B-2"] and "−0.0858 – 0.0457" in lines["B-2"], lines["B-2"]
    assert "−0.0258 – 0.1057" in lines["Z-1"], lines["Z-1"]
    assert not any("-0." in line for line in lines.values()), lines
    pdf = pypdfium2.PdfDocument(tmp_path / "tin.pdf")
    try:
        record = "\n".join(pdf[i].get_textpage().get_text_range() for i in range(len(pdf)))
    finally:
        pdf.close()
    assert "−0.0858 – 0.0457" in record and "−0.0200" in record
    assert "-0.0858" not in record and "-0.0200" not in record
    data = json.loads(quantify(tmp_path, "--json"))
    rows = {r["id"]: r for r in data["analytes"][0]["samples"]}
    assert rows["B-2"]["reported_rounded"] == "-0.0200" and float(rows["B-2"]["reported_rounded"]) == -0.02
    assert rows["B-2"]["reported_lower"] < 0  # a JSON number stays a number
    quantify(tmp_path, "--export", str(tmp_path / "tin.csv"))
    body = [line for line in (tmp_path / "tin.csv").read_text(encoding="utf-8").splitlines() if not line.startswith("#")]
    table = {r["Sample id"]: r for r in csv.DictReader(io.StringIO("\n".join(body)))}
    assert float(table["B-2"]["Lower limit × dilution"]) < 0 and "−" not in "".join(table["B-2"].values())
