"""The power curve is compared under the variance function the replicates lead to, in `compare` as an analyst runs it.

Invented scenario: boron by ICP-OES at the Tarnwick water lab, four replicates at ten levels from 1 to
1000 µg/L (three decades). The emission rises slightly less than in proportion (about x^0.9), and the
replicates' SD grows as about the 0.75th power of the mean response, so neither 1/x² (θ = 1) nor 1/x
(θ = 0.5) matches and the weights follow a variance function fitted to all standards. Under it the
straight line and the quadratic lack fit. The power curve, brought in by the three decades, was fitted only
under the fixed weightings, so nothing was recommended although every power-curve row passes; the comparison
now fits it under the variance function too, and the recommendation, its reasons and the table agree.
"""

from __future__ import annotations

import json
from pathlib import Path

from tests.cli_runs import run_cli
from tests.test_cli_tables import write

BORON = [(1, 40.3), (1, 40.7), (1, 40.3), (1, 39.0), (2, 75.8), (2, 75.2), (2, 74.0), (2, 75.4), (5, 171.1),
         (5, 171.0), (5, 170.3), (5, 171.6), (10, 315.0), (10, 317.1), (10, 315.9), (10, 320.0), (20, 593.1),
         (20, 591.2), (20, 588.2), (20, 591.4), (50, 1352.6), (50, 1349.4), (50, 1366.9), (50, 1363.7),
         (100, 2475.6), (100, 2490.2), (100, 2520.7), (100, 2516.3), (200, 4715.7), (200, 4715.8), (200, 4769.8),
         (200, 4678.0), (500, 10723.3), (500, 10851.0), (500, 10777.3), (500, 10778.2), (1000, 20004.2),
         (1000, 19908.7), (1000, 20061.6), (1000, 20056.7)]
VARIANCE_FUNCTION = "power"  # the weighting named 'power': SD as a power of the mean response, fitted to all standards


def boron_table(folder: Path) -> Path:
    # as a spreadsheet saves a CSV: a byte-order mark and CRLF line ends
    return write(folder / "boron_std.csv", ["Concentration (µg/L),Intensity (cps)", *[f"{c},{r}" for c, r in BORON]],
                 bom=True, newline="\r\n")


def test_the_power_curve_is_compared_under_the_variance_function_the_data_lead_to(tmp_path: Path) -> None:
    std = boron_table(tmp_path)
    out = run_cli("compare", "--standards", str(std), "--analyte", "boron", "--json")
    assert out.returncode == 0, out.stderr  # a recommendation (README's exit codes)
    entry = json.loads(out.stdout)[0]
    assert entry["recommended"] == ["power", VARIANCE_FUNCTION]
    columns = entry["columns"]
    model, weighting, lof, mark = (columns.index(k) for k in ("Model", "Weighting", "Lack-of-fit p", "Recommended"))
    marked = [(row[model], row[weighting]) for row in entry["rows"] if row[mark]]
    assert marked == [("power", VARIANCE_FUNCTION)]
    (row,) = [r for r in entry["rows"] if (r[model], r[weighting]) == ("power", VARIANCE_FUNCTION)]
    reasons = entry["reasons"]
    assert not any(r.startswith("no candidate is acceptable") for r in reasons), reasons
    assert not any("so it is not compared" in r for r in reasons), reasons
    (weighting_reason,) = [r for r in reasons if r.startswith("weighting is needed")]
    assert "no fixed weighting matches, so the weights follow a variance function fitted to all standards (power): " \
           "the power curve's weights use θ = " in weighting_reason, weighting_reason
    (power_reason,) = [r for r in reasons if "so the power curve is recommended" in r]
    assert power_reason.startswith(f"under {VARIANCE_FUNCTION} neither the straight line nor the quadratic follows the data")
    assert f"not rejected by its lack-of-fit test (p = {float(row[lof]):.3g})" in power_reason, (power_reason, row[lof])

    text = run_cli("compare", "--standards", str(std), "--analyte", "boron")
    assert text.returncode == 0, text.stderr
    assert "so the power curve is recommended" in " ".join(text.stdout.split())

    samples = write(tmp_path / "boron_smp.csv", ["Sample,Intensity (cps)", "W-1,2210.0", "W-2,8120.5"], bom=True,
                    newline="\r\n")
    quantified = run_cli("quantify", "--standards", str(std), "--samples", str(samples), "--analyte", "boron", "--json")
    assert quantified.returncode in (0, 1), quantified.stderr  # the recommendation is quantified, and judged
    (analyte,) = json.loads(quantified.stdout)["analytes"]
    assert (analyte["model"], analyte["weighting"], analyte["model_chosen_by"]) == ("power", VARIANCE_FUNCTION, "recommended")
