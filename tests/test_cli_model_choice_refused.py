"""Model choice from a standards table: a rejected model is never recommended, nor quietly used;
and Mandel's test on a line with no curvature reads PG = 0, p = 1.

Invented scenarios. The Kestrel laboratory's standards curve over strongly: the straight line's
lack-of-fit F-test and Mandel's test both reject it (the lack-of-fit p is worked out here with
statsmodels' pure-error ANOVA of the line against the level means), and the quadratic turns over
inside the calibrated range. The Redmarsh tin standards lie at ±0.25 about 5 + 10·x, so the line
passes through every level's mean: the quadratic cannot do better, its residual sum of squares
equals the line's, and Mandel's test value DS²/s₂² is zero (ISO 8466-1: DS² = (N − 2)·s₁² − (N − 3)·s₂²
is never negative for nested fits), p = 1.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import statsmodels.api as sm
from statsmodels.formula.api import ols

from tests.cli_runs import run_cli
from tests.test_cli_tables import write

K = [(125, 160), (100, 112), (200, 124), (75, 28), (150, 152), (175, 156), (75, 42), (175, 124), (125, 150),
     (200, 104), (100, 136)]
TIN = [(c, 5 + 10 * c + d) for c in (1.0, 2.0, 4.0, 8.0, 16.0, 32.0) for d in (0.25, -0.25)]


def test_no_candidate_acceptable_recommends_nothing_and_quantify_refuses(tmp_path: Path) -> None:
    import pandas as pd

    frame = pd.DataFrame(K, columns=["x", "y"])
    line = ols("y ~ x", frame).fit()
    means = ols("y ~ C(x)", frame).fit()
    p_lack_of_fit = sm.stats.anova_lm(line, means)["Pr(>F)"][1]
    assert round(p_lack_of_fit, 5) == 0.00559  # the line is rejected at 0.05

    std = write(tmp_path / "k_std.csv", ["Concentration,Response", *[f"{c},{r}" for c, r in K]])
    smp = write(tmp_path / "k_smp.csv", ["Sample,Response", "K-1,140", "K-2,90"])
    out = run_cli("compare", "--standards", str(std), "--analyte", "k")
    assert out.returncode == 1, out.stderr  # nothing recommended: a result for the analyst, not a usage error
    assert "recommended: none — no candidate is acceptable" in out.stdout
    assert "recommended: linear" not in out.stdout
    assert "no candidate is acceptable, so none is recommended: the straight line" in out.stdout
    entry = json.loads(run_cli("compare", "--standards", str(std), "--analyte", "k", "--json").stdout)[0]
    assert entry["recommended"] is None and entry["reasons"][0].startswith("no candidate is acceptable")

    refused = run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "k", "--json")
    assert refused.returncode == 2 and refused.stdout == ""
    assert "k: no model recommended: the straight line" in refused.stderr
    assert "give --model and --weighting" in refused.stderr
    chosen = run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "k",
                     "--model", "linear", "--weighting", "none")
    assert chosen.returncode == 1, chosen.stderr  # the analyst's own choice is quantified, and judged


def test_mandel_on_a_line_without_curvature_is_zero_with_p_one(tmp_path: Path) -> None:
    x = np.array([c for c, _ in TIN])
    y = np.array([r for _, r in TIN])
    sse_line = np.sum((y - np.polyval(np.polyfit(x, y, 1), x)) ** 2)
    sse_quad = np.sum((y - np.polyval(np.polyfit(x, y, 2), x)) ** 2)
    assert abs(sse_line - sse_quad) < 1e-9 * sse_line  # equal sums of squares (numpy)

    std = write(tmp_path / "tin.csv", ["Std,Concentration (mg/L),Response", *[f"T{i},{c},{r}" for i, (c, r) in enumerate(TIN)]])
    out = run_cli("compare", "--standards", str(std), "--analyte", "tin")
    assert out.returncode == 0, out.stderr
    assert "Mandel's test: PG = 0, p = 1 " in out.stdout and "nan" not in out.stdout
    smp = write(tmp_path / "tin_smp.csv", ["Sample,Response", "T-1,100"])
    book = tmp_path / "tin.xlsx"
    done = run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "tin",
                   "--model", "linear", "--weighting", "none", "--export", str(book))
    assert done.returncode in (0, 1), done.stderr
    import openpyxl

    rows = {r[0]: r[1] for r in openpyxl.load_workbook(book)["Calibration – tin"].iter_rows(values_only=True) if r and r[0]}
    assert rows["Mandel's test PG (ISO 8466-1)"] == 0 and rows["Mandel's test p"] == 1
