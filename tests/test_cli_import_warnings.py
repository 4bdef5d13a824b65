"""What an import warns of is printed by every command that imports a table (quantify, compare), on
the error stream, each line naming the table, its file and what the warning concerns.

Invented scenario: a zinc line whose standards table, saved from a spreadsheet, carries a comment
column the program does not read."""

from __future__ import annotations

import json
from pathlib import Path

from tests.cli_runs import run_cli

STANDARDS = "Standard id,Concentration (mg/L),Response (counts),Comment\r\n" + "".join(
    f"Z{k},{c},{12 + 98.5 * c + (-1) ** k * 0.8:.2f},prepared by R.T.\r\n"
    for k, c in enumerate((0.5, 0.5, 1, 1, 2, 2, 5, 5, 10, 10, 20, 20)))
SAMPLES = "Sample,Response (counts)\r\nZN-7,401.3\r\n"


def tables(folder: Path) -> tuple[str, str]:
    std, smp = folder / "zinc standards.csv", folder / "zinc samples.csv"
    std.write_bytes(STANDARDS.encode("utf-8-sig"))  # as a spreadsheet saves CSV: BOM and CRLF
    smp.write_bytes(SAMPLES.encode("utf-8-sig"))
    return str(std), str(smp)


def test_quantify_and_compare_print_the_import_warnings(tmp_path) -> None:
    std, smp = tables(tmp_path)
    expected = f"warning: standards table {std}: columns not used: 'Comment'"
    out = run_cli("quantify", "--standards", std, "--samples", smp, "--analyte", "zinc", "--model", "linear",
                  "--weighting", "none")
    assert out.returncode in (0, 1), out.stderr
    assert any(expected in line for line in out.stderr.splitlines()), out.stderr
    assert expected not in out.stdout  # a warning goes to the error stream
    data = run_cli("quantify", "--standards", std, "--samples", smp, "--analyte", "zinc", "--model", "linear",
                   "--weighting", "none", "--json")
    json.loads(data.stdout)  # the JSON stays whole
    assert any(expected in line for line in data.stderr.splitlines()), data.stderr
    compared = run_cli("compare", "--standards", std, "--analyte", "zinc")
    assert any(expected in line for line in compared.stderr.splitlines()), compared.stderr
    # the samples table warned of nothing: no line names it
    assert smp not in out.stderr and smp not in compared.stderr
