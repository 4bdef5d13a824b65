"""The digits of an interval's ends, and of the value beside them, for results far from unity, as the
command line prints them, writes them as JSON, exports them to the workbook and prints them in the record.

The rule checked (README, "How reported values are rounded"): an interval's ends are printed to the
decimal place of the second significant figure of its half-width (GUM JCGM 100:2008 §7.2.6: the
uncertainty to at most two significant figures, the result to the same decimal place), never coarser
than the run's rule keeps of the ends; the value is shown by the rule unless that would put it outside
its printed interval or end a whole number in zeros read as exact digits, and then to the interval's place.

The potassium brines are invented: a straight line of about 4.8e-4 counts per mg/L from 50000 to
2000000 mg/L, each level measured twice a little off the line, read with a weighting of 1/x. The same
standards scaled by 1e-11 give a trace run from 5e-7 to 2e-5 mg/L.
"""

from __future__ import annotations

import json
import math
import re
from decimal import ROUND_HALF_EVEN, Decimal
from pathlib import Path

import openpyxl
import pypdfium2

from tests.cli_runs import run_cli
from tests.test_cli_export_digits import shown, sheet_rows

LEVELS = (50000, 100000, 200000, 500000, 1000000, 2000000)
OFF_THE_LINE = (0.006, -0.004, 0.009, -0.007, 0.003, -0.008, 0.005, -0.006, 0.008, -0.002, 0.004, -0.009)
SAMPLES = "Sample,Dilution,Response (counts)\nBrine A,1000,97.3\nBrine B,1,331.2\nBrine B,1,334.0\n"


def standards(scale: float) -> str:
    """The standards table as a spreadsheet saves it (concentrations in its general number format)."""
    rows = [f"K{k + 1},{c * scale:.6g},{0.1 + 4.8e-4 * c * (1 + OFF_THE_LINE[k]):.4f}\n"
            for k, c in enumerate(c for c in LEVELS for _ in (1, 2))]
    return "Standard id,Concentration (mg/L),Response (counts)\n" + "".join(rows)


def quantify(folder: Path, scale: float, *extra: str) -> str:
    std, smp = folder / "standards.csv", folder / "samples.csv"
    std.write_text(standards(scale), encoding="utf-8")
    smp.write_text(SAMPLES, encoding="utf-8")
    out = run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "potassium",
                  "--model", "linear", "--weighting", "1/x", *extra)
    assert out.returncode == 0, out.stderr
    return out.stdout


def sample_line(text: str, sample: str) -> list[str]:
    """The reported text, the value and the interval's ends of ``sample`` as the command line prints them
    (a number in scientific notation, "2.026 × 10⁸", is held together by no-break spaces)."""
    line = next(line for line in text.splitlines() if line.startswith(f"  {sample}  "))
    words = re.split(r" +", line[len(sample) + 2:].strip())
    assert words[3] == "–", line
    return [words[0], words[1], words[2], words[4]]


_SUPERSCRIPTS = str.maketrans("⁰¹²³⁴⁵⁶⁷⁸⁹⁻", "0123456789-")


def as_decimal(text: str) -> Decimal:
    """The number a shown text stands for, with the digits it shows: "2.026 × 10⁸" is 2.026E+8, "1.968e8"
    (a file's text field) 1.968E+8, "693200" 693200."""
    text = text.replace("\u00a0", " ").replace("\u2212", "-")
    if "×" in text:
        mantissa, power = text.split(" × 10")
        return Decimal(mantissa).scaleb(int(power.translate(_SUPERSCRIPTS)))
    return Decimal(text)


def gum_ends(lower: float, upper: float) -> tuple[Decimal, Decimal, int]:
    """The ends rounded to the place of the second significant figure of the half-width (GUM JCGM
    100:2008 §7.2.6), worked out here independently of the program, and that place (decimals)."""
    places = 1 - math.floor(math.log10((upper - lower) / 2.0))
    step = Decimal(1).scaleb(-places)
    return (*(Decimal(repr(v)).quantize(step, rounding=ROUND_HALF_EVEN) for v in (lower, upper)), places)


def test_large_whole_numbers_are_printed_to_the_place_their_interval_supports(tmp_path) -> None:
    text = quantify(tmp_path, 1.0, "--export", str(tmp_path / "k.xlsx"), "--report", str(tmp_path / "k.pdf"))
    data = json.loads(quantify(tmp_path, 1.0, "--json"))
    rows = {r["id"]: r for r in data["analytes"][0]["samples"]}
    # GUM §7.2.6: Brine A's half-width is about 5.8e6 mg/L (second figure: hundred thousands) and Brine B's
    # about 8.0e3 (hundreds); three significant figures keep coarser places of the ends, so the GUM place
    # stands for the ends. Brine B's value by the rule, 693000, would end in zeros read as exact digits:
    # it is shown to its interval's place. Brine A's, 2.03 × 10⁸, is written with an exponent, where no
    # zero reads as exact, and lies inside its interval: the rule (three significant figures) stands.
    expected = {"Brine A": ["203000000", "203000000", "196800000", "208500000"],
                "Brine B": ["693200", "693200", "685200", "701300"]}
    for sample, want in expected.items():
        row = rows[sample]
        lower, upper, places = gum_ends(row["reported_lower"], row["reported_upper"])
        assert places < 0  # the interval supports no units
        assert [Decimal(w) for w in want[2:]] == [lower, upper]  # GUM §7.2.6, as worked out above
        assert [as_decimal(w) for w in sample_line(text, sample)] == [Decimal(w) for w in want]
        # the value inside its printed interval; to the same place as it (GUM §7.2.6) where the rule's
        # zeros would read as exact, else to the rule's three significant figures
        step = Decimal(1).scaleb(-places) if sample == "Brine B" else Decimal("1e6")  # 2.03 × 10⁸: the millions
        assert Decimal(want[1]) == Decimal(repr(row["reported"])).quantize(step)
        assert lower <= Decimal(want[1]) <= upper
        assert row["reported_rounded"] == row["reported_text"]
        assert as_decimal(row["reported_rounded"]) == Decimal(want[0])
    # the note names the value shown to its interval's place, and not the one written with an exponent
    assert "shown to the decimal place of their interval: Brine B (the rounding rule" in text
    # the workbook's Reported cell holds the number rounded to that place and shows it so; the estimate
    # and the ends keep their full numbers (a number format cannot round to tens or hundreds)
    book = openpyxl.load_workbook(tmp_path / "k.xlsx")
    try:
        summary = {r["Sample id"].value: r for r in sheet_rows(book, "Summary")}
        samples = {r["Sample id"].value: r for r in sheet_rows(book, "Samples")}
        for sample, want in expected.items():
            for cell in (summary[sample]["Reported"], samples[sample]["Reported"]):
                if "E" in cell.number_format:  # scientific, as the text: the mantissa's decimals are the text's
                    assert Decimal(repr(cell.value)) == Decimal(want[0])
                    figures = as_decimal(sample_line(text, sample)[0]).as_tuple()
                    assert cell.number_format == "0." + "0" * (len(figures.digits) - 1) + "E+00"
                else:
                    assert shown(cell) == want[0]
            for row in (summary[sample], samples[sample]):
                for name in ("Lower limit", "Upper limit"):
                    assert row[name + " × dilution"].value == rows[sample]["reported_" + name.split()[0].lower()]
        said = {r["Item"].value: r["Value"].value for r in sheet_rows(book, "Calibration – potassium")}
        assert said["Shown to the decimal place of their interval instead"].startswith("Brine B: the rule")
    finally:
        book.close()
    pdf = pypdfium2.PdfDocument(tmp_path / "k.pdf")
    try:
        record = " ".join(" ".join(pdf[i].get_textpage().get_text_range().split()) for i in range(len(pdf)))
    finally:
        pdf.close()
    # the record's samples table: reported, concentration × dilution, interval (the same GUM place)
    for sample, head in (("Brine A", "Brine A unknown 1 1000"), ("Brine B", "Brine B unknown 2 1")):
        reported, value, low, high = (" ".join(w.split()) for w in sample_line(text, sample))
        assert f"{head} {reported} {value} {low} – {high}" in record, record
    assert "Shown to the decimal place of their interval instead Brine B: the rule" in record


def test_trace_values_keep_the_digits_of_their_interval(tmp_path) -> None:
    data = json.loads(quantify(tmp_path, 1e-11, "--json"))
    text = quantify(tmp_path, 1e-11)
    for row in data["analytes"][0]["samples"]:
        lower, upper, places = gum_ends(row["reported_lower"], row["reported_upper"])
        words = sample_line(text, row["id"])
        # GUM §7.2.6: the ends to the second significant figure of the half-width, finer than three
        # significant figures of the ends would keep here
        assert [as_decimal(w) for w in words[2:]] == [lower, upper], words
        assert lower <= as_decimal(words[1]) <= upper
        assert as_decimal(words[1]) == as_decimal(row["reported_rounded"])
        assert -as_decimal(words[1]).as_tuple().exponent <= places  # never finer than the interval's place
