"""The JSON of a diluted sample gives each number on a named scale: the standard error beside the value
it belongs to.

Invented scenario: tin standards at six levels in duplicate, ±0.25 counts about y = 5 + 10·x (so the
fitted line is that line), and an extract diluted 10-fold reading 125 counts in duplicate. Read back
from the line it is 12 mg/L in the solution measured, 120 mg/L in the extract as received. The standard
error of a concentration read back from a straight line, s_x0 = (s/b)·√(1/m + 1/n + (ȳ0 − ȳ)²/(b²·Σ(xᵢ − x̄)²))
(ISO 8466-1; Miller & Miller, Statistics and Chemometrics for Analytical Chemistry, §5.6, from memory),
is worked out here with numpy on the measured scale; on the reported scale it is ten times that.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np

from tests.test_cli_tables import run_cli, write

TIN = [(c, 5 + 10 * c + d) for c in (1.0, 2.0, 4.0, 8.0, 16.0, 32.0) for d in (0.25, -0.25)]


def test_standard_error_is_given_on_the_measured_and_the_reported_scale(tmp_path: Path) -> None:
    x = np.array([c for c, _ in TIN])
    y = np.array([r for _, r in TIN])
    b, a = np.polyfit(x, y, 1)
    s = np.sqrt(np.sum((y - (a + b * x)) ** 2) / (x.size - 2))
    s_x0 = s / b * np.sqrt(1 / 2 + 1 / x.size + (125.0 - y.mean()) ** 2 / (b**2 * np.sum((x - x.mean()) ** 2)))

    std = write(tmp_path / "tin_std.csv", ["Std,Concentration (mg/L),Response",
                                           *[f"T{i},{c:g},{r:.2f}" for i, (c, r) in enumerate(TIN, start=1)]])
    smp = write(tmp_path / "tin_smp.csv", ["Sample,Dilution,Response", "EX-7,10,125.00", "EX-7,10,125.00"])
    out = run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "tin",
                  "--model", "linear", "--weighting", "none", "--json")
    assert out.returncode == 0, out.stderr
    row = json.loads(out.stdout)["analytes"][0]["samples"][0]
    assert row["id"] == "EX-7" and row["dilution_factor"] == 10 and row["replicates"] == 2
    assert abs(row["estimate"] - 12.0) < 1e-9 and abs(row["reported"] - 120.0) < 1e-8
    assert abs(row["standard_error"] - s_x0) < 1e-9 * s_x0  # the measured scale, beside estimate, lower, upper
    assert abs(row["reported_standard_error"] - 10 * s_x0) < 1e-9 * s_x0  # the reported scale, beside reported
    assert row["lower"] < row["estimate"] < row["upper"]
    assert row["reported_lower"] == row["lower"] * 10 and row["reported_upper"] == row["upper"] * 10
