"""A response beyond a quadratic's turning point gives no concentration, in every output.

Invented scenario: the Brackenfield metals laboratory's zinc emission line (mg/L), duplicates at
eight levels from 0.5 to 50 mg/L, curving over towards the top, fitted as a quadratic weighted 1/x.
The curve's highest value (its vertex) is checked here with numpy's weighted polynomial fit
(``numpy.polyfit``, weights √(1/x) on the residuals): two samples read above it, where no
concentration gives their response. The engine's stand-in, the vertex itself, must not be reported as
a result, nor a dilution worked out from it: they lie on the side of the highest standard, so they are
reported above the ULOQ, with a re-assay diluted asked and no factor.

A second invented scenario, the Ollendorf feed laboratory's mycotoxin assay (mg/kg), curves upward: its
quadratic's lowest point lies below zero concentration. A response below that lowest point lies on the side
of the lowest standard: reported below the reporting limit, like a lower response the curve does give, and
never with the advice to dilute (ICH M10 practice for results below the LLOQ, from memory).
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import openpyxl

from tests.cli_runs import run_cli
from tests.printed import printed_text
from tests.test_cli_tables import write

STANDARDS = [("Z00", 0.5, 51.46), ("Z01", 0.5, 51.72), ("Z10", 1, 100.95), ("Z11", 1, 100.31),
             ("Z20", 2, 199.11), ("Z21", 2, 198.87), ("Z30", 5, 481.26), ("Z31", 5, 479.85),
             ("Z40", 10, 923.71), ("Z41", 10, 925.47), ("Z50", 20, 1682.63), ("Z51", 20, 1685.52),
             ("Z60", 35, 2520.32), ("Z61", 35, 2541.44), ("Z70", 50, 2999.38), ("Z71", 50, 2991.27)]
SAMPLES = [("E1", 2990), ("E3", 3100), ("E4", 3126), ("E5", 3140), ("E7", 1500)]


def test_a_response_above_the_curves_maximum_is_not_given_a_number_or_a_dilution(tmp_path: Path) -> None:
    x = np.array([c for _, c, _ in STANDARDS], dtype=float)
    y = np.array([r for _, _, r in STANDARDS])
    c2, c1, c0 = np.polyfit(x, y, 2, w=np.sqrt(1 / x))  # numpy: minimises Σ (w·residual)², so w² = 1/x
    vertex = -c1 / (2 * c2)
    top = c0 + c1 * vertex + c2 * vertex**2
    assert 62.0 < vertex < 62.3 and 3118 < top < 3119  # the curve's maximum, 3118.4 at 62.13 mg/L
    assert 3126 > top and 3140 > top and 3100 < top     # E4 and E5 read above it, E3 below it

    std = write(tmp_path / "std.csv", ["Standard,Level,Concentration (mg/L),Emission",
                                       *[f"{i},L{k // 2},{c},{r}" for k, (i, c, r) in enumerate(STANDARDS)]])
    smp = write(tmp_path / "smp.csv", ["Sample,Dilution,Emission", *[f"{i},1,{r}" for i, r in SAMPLES]])
    args = ("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "zinc",
            "--model", "quadratic", "--weighting", "1/x")
    book = tmp_path / "out.xlsx"
    text = run_cli(*args, "--export", str(book))
    assert text.returncode in (0, 1), text.stderr
    for sid in ("E4", "E5"):
        row = next(line for line in text.stdout.splitlines() if line.strip().startswith(sid + " "))
        assert "> 50.0 mg/L (ULOQ)" in row and "beyond the curve's turning point" in row, row
        assert "re-assay the sample diluted" in row and "side of the highest standard" in row, row
        assert "62.1" not in row and "×5" not in row, row

    data = json.loads(run_cli(*args, "--json").stdout)
    by_id = {s["id"]: s for s in data["analytes"][0]["samples"]}
    for sid in ("E4", "E5"):
        s = by_id[sid]
        assert s["status"] == "above_range" and sorted(s["flags"]) == ["above_range", "beyond_turning_point"]
        assert s["reported"] is None and s["lower"] is None and s["upper"] is None
        assert s["reported_text"] == "> 50.0 mg/L (ULOQ)", s
        assert s["suggested_dilution"] is None and "no number is reported" in s["flag_words"]
    # below the maximum: a root on the calibrated branch, above the ULOQ, the interval across the vertex said
    assert by_id["E3"]["status"] == "above_range" and "turning_point" in by_id["E3"]["flags"]
    assert "at the curve's turning point" in by_id["E3"]["flag_words"]

    sheet = openpyxl.load_workbook(book)["Summary"]
    rows = [r for r in sheet.iter_rows(values_only=True) if r and r[0] in ("E4", "E5")]
    assert len(rows) == 2
    for r in rows:
        assert "above the range" in r and "> 50.0 mg/L (ULOQ)" in r, r
        assert not any(isinstance(v, float) and 62 < v < 63 for v in r), r


# Ollendorf feed laboratory, mycotoxin by fluorescence (mg/kg), duplicates at eight levels; the response
# curves upward, so the quadratic's lowest point lies below zero concentration.
MYCOTOXIN = [("M2a", 2, 6.896), ("M2b", 2, 5.058), ("M5a", 5, 8.167), ("M5b", 5, 7.773), ("M10a", 10, 11.819),
             ("M10b", 10, 11.914), ("M20a", 20, 22.192), ("M20b", 20, 22.907), ("M40a", 40, 56.654),
             ("M40b", 40, 58.329), ("M60a", 60, 107.090), ("M60b", 60, 106.859), ("M80a", 80, 172.887),
             ("M80b", 80, 172.733), ("M100a", 100, 254.578), ("M100b", 100, 254.844)]


def test_a_response_below_the_curves_lowest_point_is_reported_below_the_reporting_limit(tmp_path: Path) -> None:
    x = np.array([c for _, c, _ in MYCOTOXIN], dtype=float)
    y = np.array([r for _, _, r in MYCOTOXIN])
    c2, c1, c0 = np.polyfit(x, y, 2)  # numpy's unweighted polynomial fit
    vertex = -c1 / (2 * c2)
    lowest = c0 + c1 * vertex + c2 * vertex**2
    assert -13.2 < vertex < -12.6 and 1.4 < lowest < 1.6  # the curve's lowest point, 1.49 at -12.9 mg/kg
    std = write(tmp_path / "std.csv", ["Standard,Concentration (mg/kg),Response",
                                       *[f"{i},{c},{r}" for i, c, r in MYCOTOXIN]])
    # F-1 and F-4 read below the lowest point (F-4 diluted 10-fold), F-3 far below it, F-2 above it
    smp = write(tmp_path / "smp.csv", ["Sample,Dilution,Response", "F-1,1,1.0", "F-1,1,1.2", "F-2,1,3.0",
                                       "F-3,1,-2.0", "F-4,10,1.1"])
    args = ("quantify", "--standards", str(std), "--samples", str(smp), "--model", "quadratic", "--weighting", "none")
    text = run_cli(*args)
    assert text.returncode in (0, 1), text.stderr
    row = {line.split()[0]: line for line in text.stdout.splitlines() if line.strip().startswith("F-")}
    loq = row["F-2"].split()[1:4]  # "< 11.2 mg/kg": F-2 has a number below the reporting limit
    assert loq[0] == "<", row["F-2"]
    for sid in ("F-1", "F-3"):
        assert row[sid].split()[1:4] == loq, row[sid]  # the same statement as the response the curve gives
        assert "lies below the calibrated range" in row[sid] and "diluted would not help" in row[sid], row[sid]
        assert "re-assay the sample diluted" not in row[sid], row[sid]
    assert "× dilution 10)" in row["F-4"] and "re-assay the sample diluted" not in row["F-4"], row["F-4"]

    data = json.loads(run_cli(*args, "--json").stdout)
    by_id = {s["id"]: s for s in data["analytes"][0]["samples"]}
    for sid in ("F-1", "F-3", "F-4"):
        s = by_id[sid]
        assert s["status"] == "below_reporting_limit" and "below_range" in s["flags"] and "below_loq" in s["flags"], s
        assert s["reported"] is None and s["lower"] is None and s["upper"] is None and s["suggested_dilution"] is None
    assert by_id["F-1"]["reported_text"] == by_id["F-2"]["reported_text"]
    assert "beyond_turning_point" in by_id["F-1"]["flags"] and "no_solution" in by_id["F-3"]["flags"]

    # the record's samples table says why there is no number, and its key explains the short words
    record = tmp_path / "record.pdf"
    assert run_cli(*args, "--report", str(record)).returncode in (0, 1)
    printed = " ".join(printed_text(record).split())
    assert "beyond turning point — the response lies beyond the curve's turning point" in printed, printed
    assert "no solution — the curve never gives the response" in printed, printed
    assert "read at the extreme" not in printed
