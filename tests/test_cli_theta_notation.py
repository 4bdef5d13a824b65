"""θ of the variance function SD ∝ (mean response)^θ is written in the notation of every number for a
person (core/notation.py): no sign on a value that rounds to zero at its two decimals, and the minus sign
U+2212 on a negative interval end.

Invented scenario: nickel standards at six levels from 1 to 50 mg/L on y = 5 + 10·x counts, three
readings each at −d, 0 and +d about the line, d = 0.300 counts at every level but the top one, where it
is 0.298: the scatter is all but constant, and the fitted θ lies just below zero."""

from __future__ import annotations

from pathlib import Path

import numpy as np
from scipy.optimize import minimize_scalar

from tests.test_cli_tables import run_cli, write

LEVELS = (1, 2, 5, 10, 20, 50)


def spread(c: int) -> float:
    return 0.298 if c == 50 else 0.300


def evidence_theta() -> float:
    """θ maximising −(N/2)·log(Σ SSᵢ·μᵢ^(−2θ)/N) − θ·Σ νᵢ·log μᵢ over the levels' pure-error sums of
    squares SSᵢ (νᵢ = 2 each, N = Σνᵢ), μᵢ the level means (the likelihood stated in core/variance.py,
    maximised by scipy's bounded search)."""
    means = np.array([5.0 + 10.0 * c for c in LEVELS])
    ss = np.array([2 * spread(c) ** 2 for c in LEVELS])
    nu = np.full(len(LEVELS), 2)
    n = nu.sum()
    return float(minimize_scalar(lambda t: 0.5 * n * np.log(np.sum(ss * means ** (-2 * t)) / n)
                                 + t * np.sum(nu * np.log(means)), bounds=(-1, 3), method="bounded",
                                 options={"xatol": 1e-9}).x)


def test_a_theta_that_rounds_to_zero_has_no_sign_and_negative_ends_the_minus_sign(tmp_path: Path) -> None:
    theta = evidence_theta()
    assert -0.005 < theta < 0, theta  # scipy: just below zero, "0.00" at two decimals
    std = write(tmp_path / "nickel.csv", ["Standard,Concentration (mg/L),Response",
                                          *[f"N{c}-{i + 1},{c},{5 + 10 * c + d * spread(c):.3f}"
                                            for c in LEVELS for i, d in enumerate((-1, 0, 1))]], newline="\r\n")
    out = run_cli("compare", "--standards", str(std), "--analyte", "nickel")
    assert out.returncode == 0, out.stderr
    line = next(line for line in out.stdout.splitlines() if "SD ∝ (mean response)^θ" in line)
    assert "θ = 0.00 (95 % interval −0.33 to 0.33)" in line, line
    assert "-0." not in line, line
