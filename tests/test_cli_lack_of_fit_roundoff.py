"""The lack-of-fit test is not made of round-off: where the level means lie on the straight line, the
lack-of-fit sum of squares is zero and the command says "F = 0, p = 1" (never an F of 10⁻²⁶, the last
bits of the arithmetic); where the replicates agree too, the fit is exact and no test is meaningful.

Invented scenarios: a tin line y = 5 + 10·x counts per mg/L measured twice per level at ±0.25 counts
around it (each level's mean exactly on the line, in exact arithmetic); and the copper standards of
tests/test_cli_signed_zero.py, every reading exactly on y = 5 + 10·x."""

from __future__ import annotations

import json
from pathlib import Path

from tests.cli_runs import run_cli
from tests.test_cli_signed_zero import COPPER

TIN = "Std,Concentration (mg/L),Response\n" + "".join(
    f"T{c}-{i},{c}.0,{5 + 10 * c + d}\n" for c in (1, 2, 4, 8, 16, 32) for i, d in ((1, 0.25), (2, -0.25)))


def quantify(folder: Path, standards: str, *extra: str):  # type: ignore[no-untyped-def]
    std, smp = folder / "standards.csv", folder / "samples.csv"
    std.write_bytes(standards.replace("\n", "\r\n").encode())  # as a spreadsheet saves it
    smp.write_bytes(b"Sample,Response\r\nZ-1,55.4\r\n")
    out = run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "metal", "--model",
                  "linear", "--weighting", "none", *extra)
    assert out.returncode in (0, 1), out.stderr
    return out


def test_level_means_on_the_line_give_an_f_of_zero(tmp_path: Path) -> None:
    # exact arithmetic: each level's mean residual is (0.25 − 0.25)/2 = 0, so SS_LF = 0, F = 0 and p = 1
    text = quantify(tmp_path, TIN).stdout
    assert "lack-of-fit F = 0, p = 1" in text, text
    assert "× 10⁻" not in next(line for line in text.splitlines() if "lack-of-fit" in line)
    lack = json.loads(quantify(tmp_path, TIN, "--json").stdout)["analytes"][0]["lack_of_fit"]
    assert lack["available"] and lack["f_statistic"] == 0.0 and lack["p_value"] == 1.0, lack


def test_standards_on_the_line_say_the_fit_is_exact(tmp_path: Path) -> None:
    text = quantify(tmp_path, COPPER).stdout
    assert ("lack of fit not tested (the standards lie on the curve to within round-off (the replicates agree and "
            "the levels lie on the curve), so the fit is exact and no lack-of-fit test is meaningful)") in text, text
