"""ISO 11843-2 limits: the critical values shown with their values, and results judged against them.

Invented scenario: the Ovenden laboratory's cadmium line (µg/L), duplicates at seven levels, under a
method that sets ISO 11843-2 limits. The expected x_c, y_c and x_d are worked out here from the
standard's formulas for an unweighted straight line (ISO 11843-2:2000, as recalled, not re-read):
q = √(1/K + 1/N + x̄²/Sxx), x_c = t(0.95; N − 2)·(σ/b)·q, y_c = a + t·σ·q, x_d = δ·(σ/b)·q with δ the
non-centrality whose non-central t has t(0.95) as its 5 % quantile (scipy.stats). A QC read at
1.46 µg/L lies above x_c (detected) and below x_d; readings below x_c are not detected.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import openpyxl
from scipy import optimize, stats

from curvewright.core.notation import computed
from curvewright.core.rounding import RoundingRule
from tests.cli_runs import flat, run_cli
from tests.test_cli_tables import write

STANDARDS = [("C-01", 0.5, 55.83), ("C-02", 0.5, 49.96), ("C-03", 1, 104.21), ("C-04", 1, 98.47),
             ("C-05", 2.5, 251.9), ("C-06", 2.5, 262.4), ("C-07", 5, 511.7), ("C-08", 5, 494.2),
             ("C-09", 10, 1013.5), ("C-10", 10, 968.8), ("C-11", 25, 2412.0), ("C-12", 25, 2561.3),
             ("C-13", 50, 4870.4), ("C-14", 50, 5011.9)]
METHOD = {"format": "curvewright-method/1", "id": "OV-CD-11843", "name": "Cadmium in extract (invented)",
          "version": "1", "source": "invented validation report",
          "analytes": [{"name": "cadmium", "concentration_unit": "µg/L", "response_unit": "counts",
                        "model": "linear", "weighting": "none", "levels": [0.5, 1, 2.5, 5, 10, 25, 50]}],
          "profile": "general", "rounding": {"kind": "decimals", "digits": 2, "tie": "half_even"},
          "confidence_level": 0.95, "interval": "band", "limits_method": "iso11843"}


def iso11843(x: np.ndarray, y: np.ndarray, readings: int = 1) -> tuple[float, float, float]:
    n = x.size
    b, a = np.polyfit(x, y, 1)
    sigma = np.sqrt(np.sum((y - a - b * x) ** 2) / (n - 2))
    q = np.sqrt(1 / readings + 1 / n + x.mean() ** 2 / np.sum((x - x.mean()) ** 2))
    t = stats.t.ppf(0.95, n - 2)
    delta = optimize.brentq(lambda d: stats.nct.cdf(t, n - 2, d) - 0.05, 0, 50)
    return t * sigma / b * q, a + t * sigma * q, delta * sigma / b * q


def test_iso11843_limits_are_shown_and_results_judged_against_them(tmp_path: Path) -> None:
    x = np.array([c for _, c, _ in STANDARDS])
    y = np.array([r for _, _, r in STANDARDS])
    x_c, y_c, x_d = iso11843(x, y)
    assert round(x_c, 4) == 0.8305 and round(y_c, 2) == 88.89 and round(x_d, 3) == 1.629

    std = write(tmp_path / "std.csv", ["Standard id,Level,Concentration (µg/L),Response (counts)",
                                       *[f"{i},L,{c},{r}" for i, c, r in STANDARDS]])
    smp = write(tmp_path / "smp.csv", ["Sample,Type,Dilution,Nominal,Response (counts)",
                                       "OV-104,unknown,1,,21.5", "OV-107,unknown,1,,66.0",
                                       "QC low,QC,1,1.5,151.2", "QC mid,QC,1,20,1905.0"])
    method = tmp_path / "method.json"
    method.write_text(json.dumps(METHOD), encoding="utf-8")
    args = ("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "cadmium", "--method", str(method))
    book = tmp_path / "out.xlsx"
    out = run_cli(*args, "--export", str(book))
    assert out.returncode in (0, 1), out.stderr
    # the limits by the run's rounding rule (the method's, or three significant figures), core/notation.py
    rule = RoundingRule(**METHOD["rounding"]) if "rounding" in METHOD else RoundingRule()
    assert (f"critical value x_c {computed(x_c, rule)} µg/L (critical response y_c {computed(y_c, rule)}), "
            f"minimum detectable value x_d {computed(x_d, rule)} µg/L") in out.stdout
    rows = {line.split()[0] + (" " + line.split()[1] if line.split()[0] == "QC" else ""): line
            for line in out.stdout.splitlines()[-8:] if line.startswith("  ")}
    assert "below the minimum detectable value x_d" in rows["QC low"] and "1.46" in rows["QC low"]
    assert "not detected" in rows["OV-104"] and "< 0.83 µg/L (x_c)" in rows["OV-104"]
    # 0.60 µg/L lies above the lowest standard but below x_c: not detected, no number
    assert "not detected" in rows["OV-107"] and "< 0.83 µg/L (x_c)" in rows["OV-107"]

    data = json.loads(run_cli(*args, "--json").stdout)
    analyte = data["analytes"][0]
    limits = analyte["limits"]
    assert abs(limits["critical_concentration"] - x_c) < 1e-9 * x_c and abs(limits["critical_response"] - y_c) < 1e-9 * y_c
    assert abs(limits["lod"] - x_d) < 1e-8 * x_d
    by_id = {s["id"]: s for s in analyte["samples"]}
    assert by_id["QC low"]["flags"] == ["in_range", "below_min_detectable"]
    assert "below the minimum detectable value x_d" in by_id["QC low"]["flag_words"]
    for sid in ("OV-104", "OV-107"):
        assert "below_lod" in by_id[sid]["flags"] and "not detected" in by_id[sid]["flag_words"]
        assert by_id[sid]["status"] == "below_lod"

    sheet = {r[0]: r[1] for r in openpyxl.load_workbook(book)["Calibration – cadmium"].iter_rows(values_only=True)
             if r and r[0]}
    assert abs(sheet["Critical value x_c (not detected below it)"] - x_c) < 1e-9
    assert abs(sheet["Critical response y_c"] - y_c) < 1e-9
    assert abs(sheet["Minimum detectable value x_d"] - x_d) < 1e-8


def test_a_sample_read_three_times_is_judged_against_the_limits_for_three_readings(tmp_path: Path) -> None:
    """ISO 11843-2's q holds 1/K, K the readings of the test sample: read three times, a sample has a lower
    x_c (0.527 µg/L here) than read once (0.831 µg/L). Three readings averaging 76.0 counts (0.70 µg/L) are
    detected; one reading of 76.0 counts is not. The limits for K = 3 are worked out here independently
    (scipy.stats, the formulas in the module docstring) and shown beside those for one reading."""
    x = np.array([c for _, c, _ in STANDARDS])
    y = np.array([r for _, _, r in STANDARDS])
    x_c1, _, _ = iso11843(x, y)
    x_c3, y_c3, x_d3 = iso11843(x, y, readings=3)
    assert round(x_c3, 4) == 0.5272 and round(y_c3, 2) == 58.92
    std = write(tmp_path / "std.csv", ["Standard id,Level,Concentration (µg/L),Response (counts)",
                                       *[f"{i},L,{c},{r}" for i, c, r in STANDARDS]])
    smp = write(tmp_path / "smp.csv", ["Sample,Type,Dilution,Response 1,Response 2,Response 3",
                                       "OV-211,unknown,1,74.1,77.9,76.0", "OV-212,unknown,1,76.0,,"])
    method = tmp_path / "method.json"
    method.write_text(json.dumps(METHOD), encoding="utf-8")
    book = tmp_path / "out.xlsx"
    args = ("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "cadmium", "--method", str(method),
            "--map", "samples.response=Response 1", "--map", "samples.response=Response 2",
            "--map", "samples.response=Response 3")
    out = run_cli(*args, "--export", str(book))
    assert out.returncode in (0, 1), out.stderr
    rule = RoundingRule(**METHOD["rounding"])
    assert (f"for samples read 3 times: critical value x_c {computed(x_c3, rule)} µg/L (critical response y_c "
            f"{computed(y_c3, rule)}), minimum detectable value x_d {computed(x_d3, rule)} µg/L") in out.stdout
    rows = {line.split()[0]: line for line in out.stdout.splitlines() if line.startswith("  OV-")}
    assert "not detected" not in rows["OV-211"] and "below the minimum detectable value x_d" in rows["OV-211"]
    assert "not detected" in rows["OV-212"] and f"< {computed(x_c1, rule)} µg/L (x_c)" in rows["OV-212"]

    data = json.loads(run_cli(*args, "--json").stdout)
    analyte = data["analytes"][0]
    [by_three] = analyte["limits"]["by_readings"]
    assert by_three["readings"] == 3 and abs(by_three["critical_concentration"] - x_c3) < 1e-9 * x_c3
    assert abs(by_three["lod"] - x_d3) < 1e-8 * x_d3
    by_id = {s["id"]: s for s in analyte["samples"]}
    assert "below_lod" not in by_id["OV-211"]["flags"] and "below_min_detectable" in by_id["OV-211"]["flags"]
    assert by_id["OV-212"]["status"] == "below_lod"

    sheet = {r[0]: r[1] for r in openpyxl.load_workbook(book)["Calibration – cadmium"].iter_rows(values_only=True)
             if r and r[0]}
    assert abs(sheet["Critical value x_c for 1 reading (not detected below it)"] - x_c1) < 1e-9
    assert abs(sheet["Critical value x_c for 3 readings (not detected below it)"] - x_c3) < 1e-9
    assert abs(sheet["Minimum detectable value x_d for 3 readings"] - x_d3) < 1e-8


def test_the_calibration_table_shows_the_limits_by_the_runs_rule(tmp_path: Path) -> None:
    # The run's rule (two decimals, the method's) governs every computed value: the calibration table's
    # x_c, y_c and x_d too, in the workbook (the cell keeps the full number, its format shows two
    # decimals) and in the record, as the command's text shows them (core/notation.py).
    x = np.array([c for _, c, _ in STANDARDS])
    y = np.array([r for _, _, r in STANDARDS])
    x_c, y_c, x_d = iso11843(x, y)
    std = write(tmp_path / "std.csv", ["Standard id,Level,Concentration (µg/L),Response (counts)",
                                       *[f"{i},L,{c},{r}" for i, c, r in STANDARDS]])
    smp = write(tmp_path / "smp.csv", ["Sample,Type,Dilution,Nominal,Response (counts)", "OV-110,unknown,1,,1905.0"])
    method = tmp_path / "method.json"
    method.write_text(json.dumps(METHOD), encoding="utf-8")
    book, record = tmp_path / "out.xlsx", tmp_path / "out.pdf"
    out = run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "cadmium", "--method",
                  str(method), "--export", str(book), "--report", str(record))
    assert out.returncode in (0, 1), out.stderr
    rule = RoundingRule(**METHOD["rounding"])
    wb = openpyxl.load_workbook(book)
    try:
        cells = {r[0].value: r[1] for r in wb["Calibration – cadmium"].iter_rows() if r and r[0].value}
    finally:
        wb.close()
    for item, value in (("Critical value x_c (not detected below it)", x_c), ("Critical response y_c", y_c),
                        ("Minimum detectable value x_d", x_d)):
        cell = cells[item]
        assert abs(cell.value - value) < 1e-8 * value, item  # the full number kept
        assert cell.number_format == "0.00", (item, cell.number_format)
        assert f"{cell.value:.2f}" == computed(value, rule)
    import pypdfium2 as pdfium

    pdf = pdfium.PdfDocument(str(record))
    try:
        text = flat(" ".join(pdf[i].get_textpage().get_text_range() for i in range(len(pdf))))
    finally:
        pdf.close()
    for item, value in (("Criticalvaluex_c(notdetectedbelowit)", x_c), ("Criticalresponsey_c", y_c),
                        ("Minimumdetectablevaluex_d", x_d)):
        assert item + computed(value, rule) in text, item
        assert item + f"{value:.6g}" not in text, item


def test_a_sample_below_x_d_is_told_the_number_of_readings_x_d_is_for(tmp_path: Path) -> None:
    """A sample read three times and found between its x_c and x_d is told both limits for three readings,
    as a sample below x_c is told "the critical value x_c for 3 readings"; a sample read once is told
    them without a count (the limits for one reading, as everywhere)."""
    std = write(tmp_path / "std.csv", ["Standard id,Level,Concentration (µg/L),Response (counts)",
                                       *[f"{i},L,{c},{r}" for i, c, r in STANDARDS]], newline="\r\n")
    smp = write(tmp_path / "smp.csv", ["Sample,Type,Dilution,Response 1,Response 2,Response 3",
                                       "OV-211,unknown,1,74.1,77.9,76.0", "OV-213,unknown,1,150,,"], newline="\r\n")
    method = tmp_path / "method.json"
    method.write_text(json.dumps(METHOD), encoding="utf-8")
    args = ("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "cadmium", "--method", str(method),
            "--map", "samples.response=Response 1", "--map", "samples.response=Response 2",
            "--map", "samples.response=Response 3")
    out = run_cli(*args)
    assert out.returncode in (0, 1), out.stderr
    rows = {line.split()[0]: line for line in out.stdout.splitlines() if line.startswith("  OV-")}
    assert ("detected (at or above the critical value x_c for 3 readings) but below the minimum detectable value "
            "x_d for 3 readings (ISO 11843-2)") in rows["OV-211"], rows["OV-211"]
    assert ("detected (at or above the critical value x_c) but below the minimum detectable value x_d "
            "(ISO 11843-2)") in rows["OV-213"], rows["OV-213"]
    samples = {s["id"]: s for s in json.loads(run_cli(*args, "--json").stdout)["analytes"][0]["samples"]}
    assert "below the minimum detectable value x_d for 3 readings" in samples["OV-211"]["flag_words"]
