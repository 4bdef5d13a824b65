"""LOD and LOQ from the run's blanks through ``quantify``: the method file chooses them, the blank
samples' readings give σ_b, and the text, the JSON and the workbook show the limits with the number
of blank readings and their SD; samples are flagged against them. Too few numeric blank readings say
how many there are and why no limit can be computed.

Invented scenario: the Harrowgate laboratory's nickel line (counts against µg/L), duplicates at six
levels, and a sample table saved by a spreadsheet (UTF-8 with a byte-order mark, CRLF line ends,
quoted headers) holding four reagent blanks read in duplicate. The references are computed here with
numpy: LOD = 3.3·σ_b/S and LOQ = 10·σ_b/S (ICH Q2(R1) §6.3.2, §7.3.2), S the slope of the
least-squares line (``np.polyfit``), σ_b the SD of the eight blank readings (``np.std(ddof=1)``);
and the common practice x = (ȳ_b + k·σ_b − a)/b, k = 3 and 10.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import openpyxl

from curvewright.core.notation import computed
from curvewright.core.rounding import RoundingRule
from tests.cli_runs import run_cli
from tests.test_cli_tables import write

STANDARDS = [("N-01", 0.5, 7.1), ("N-02", 0.5, 7.6), ("N-03", 1, 11.8), ("N-04", 1, 12.5), ("N-05", 2, 22.4),
             ("N-06", 2, 21.3), ("N-07", 5, 53.0), ("N-08", 5, 51.8), ("N-09", 10, 103.3), ("N-10", 10, 101.9),
             ("N-11", 20, 204.1), ("N-12", 20, 207.5)]
BLANKS = {"RB-1": (2.31, 2.05), "RB-2": (2.66, 2.48), "RB-3": (2.12, 2.40), "RB-4": (1.97, 2.59)}
METHOD = {"format": "curvewright-method/1", "id": "HG-NI-07", "name": "Nickel in digest (invented)",
          "version": "2", "source": "invented validation report",
          "analytes": [{"name": "nickel", "concentration_unit": "µg/L", "response_unit": "counts",
                        "model": "linear", "weighting": "none", "levels": [0.5, 1, 2, 5, 10, 20]}],
          "profile": "general", "confidence_level": 0.95, "interval": "band", "limits_method": "blank_sd"}


def tables(tmp_path: Path, blanks: dict[str, tuple[str, str]]) -> tuple[Path, Path]:
    std = write(tmp_path / "standards.csv", ['"Standard id","Concentration (µg/L)","Response (counts)"',
                                             *[f"{i},{c},{r}" for i, c, r in STANDARDS]], bom=True, newline="\r\n")
    smp = write(tmp_path / "samples.csv", ['"Sample","Type","Dilution","Response 1","Response 2"',
                                           *[f"{sid},Blank,1,{a},{b}" for sid, (a, b) in blanks.items()],
                                           "HG-311,Unknown,1,2.95,2.83", "HG-312,Unknown,1,57.2,56.4"],
                bom=True, newline="\r\n")
    return std, smp


def quantify(tmp_path: Path, std: Path, smp: Path, limits_method: str, *extra: str):  # type: ignore[no-untyped-def]
    method = tmp_path / f"{limits_method}.json"
    method.write_text(json.dumps({**METHOD, "limits_method": limits_method}), encoding="utf-8")
    return run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "nickel",
                   "--method", str(method), "--map", "samples.response=Response 1",
                   "--map", "samples.response=Response 2", *extra)


def test_limits_from_the_blanks_with_their_count_and_sd(tmp_path: Path) -> None:
    x = np.array([c for _, c, _ in STANDARDS])
    y = np.array([r for _, _, r in STANDARDS])
    b, a = np.polyfit(x, y, 1)
    readings = np.array([v for pair in BLANKS.values() for v in pair])
    mean, sd = readings.mean(), readings.std(ddof=1)
    lod, loq = 3.3 * sd / b, 10 * sd / b
    std, smp = tables(tmp_path, {k: tuple(map(str, v)) for k, v in BLANKS.items()})
    book = tmp_path / "out.xlsx"
    out = quantify(tmp_path, std, smp, "blank_sd", "--export", str(book))
    assert out.returncode in (0, 1), out.stderr
    rule = RoundingRule()  # the method sets none: three significant figures
    assert f"LOD {computed(lod, rule)} µg/L, LOQ {computed(loq, rule)} µg/L (ICH Q2 (based on the SD of the blank)" in out.stdout
    assert (f"limits from 8 blank readings: mean ȳ_b {np.format_float_positional(mean, 4, fractional=False)} counts, "
            f"SD σ_b {np.format_float_positional(sd, 4, fractional=False)} counts") in out.stdout

    data = json.loads(quantify(tmp_path, std, smp, "blank_sd", "--json").stdout)
    analyte = data["analytes"][0]
    limits = analyte["limits"]
    assert limits["method"] == "blank_sd" and limits["name"] == "ICH Q2: 3.3σ/slope and 10σ/slope, σ the SD of the blanks"
    assert abs(limits["lod"] - lod) < 1e-12 * lod and abs(limits["loq"] - loq) < 1e-12 * loq
    assert limits["blank_readings"] == 8 and abs(limits["blank_sd"] - sd) < 1e-14 and abs(limits["blank_mean"] - mean) < 1e-14
    by_id = {s["id"]: s for s in analyte["samples"]}
    # HG-311 reads (2.89 − a)/b ≈ 0.117 µg/L: above the LOD (≈ 0.083), below the LOQ (≈ 0.25)
    assert a + b * lod < 2.89 < a + b * loq
    assert "below_loq" in by_id["HG-311"]["flags"] and "below_lod" not in by_id["HG-311"]["flags"]
    assert by_id["HG-312"]["flags"] == ["in_range"]

    sheet = {r[0]: r[1] for r in openpyxl.load_workbook(book)["Calibration – nickel"].iter_rows(values_only=True)
             if r and r[0]}
    assert abs(sheet["LOD"] - lod) < 1e-12 and abs(sheet["LOQ"] - loq) < 1e-12
    assert sheet["LOD/LOQ method"] == "ICH Q2: 3.3σ/slope and 10σ/slope, σ the SD of the blanks"
    assert sheet["Blank readings (n)"] == 8
    assert abs(sheet["Blank SD σ_b (counts)"] - sd) < 1e-14 and abs(sheet["Blank mean ȳ_b (counts)"] - mean) < 1e-14

    # the common practice: mean blank + 3 SD and + 10 SD read through the line
    data = json.loads(quantify(tmp_path, std, smp, "blank_mean", "--json").stdout)
    limits = data["analytes"][0]["limits"]
    assert limits["name"] == "mean blank + 3 SD and + 10 SD read through the curve (common practice)"
    assert abs(limits["lod"] - (mean + 3 * sd - a) / b) < 1e-9 and abs(limits["loq"] - (mean + 10 * sd - a) / b) < 1e-9


def test_too_few_numeric_blank_readings_are_counted_and_no_limit_is_made(tmp_path: Path) -> None:
    std, smp = tables(tmp_path, {"RB-1": ("ND", "ND"), "RB-2": ("2.31", ""), "RB-3": ("<LOD", "ND")})
    out = quantify(tmp_path, std, smp, "blank_sd")
    assert out.returncode in (0, 1), out.stderr
    said = ("LOD/LOQ not computed (ICH Q2: 3.3σ/slope and 10σ/slope, σ the SD of the blanks): the limits from "
            "blanks need at least 2 numeric blank readings for an SD; this run has 1 numeric reading from 3 blank "
            "samples (4 not numeric: RB-1: response is censored (ND); RB-1: response is censored (ND); RB-3: "
            "response is censored (<LOD); and 1 more)")
    assert said in out.stdout
    data = json.loads(quantify(tmp_path, std, smp, "blank_sd", "--json").stdout)
    analyte = data["analytes"][0]
    assert analyte["limits"] is None and "1 numeric reading from 3 blank samples" in analyte["limits_note"]
    assert all("below_lod" not in s["flags"] for s in analyte["samples"])

    # identical readings: SD 0
    std, smp = tables(tmp_path, {"RB-1": ("2.40", "2.40"), "RB-2": ("2.40", "2.40")})
    out = quantify(tmp_path, std, smp, "blank_sd")
    assert ("the 4 numeric blank readings are all 2.4, so their SD is 0 and gives no limit; this run has 4 numeric "
            "readings from 2 blank samples") in out.stdout
