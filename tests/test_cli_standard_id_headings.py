"""A standards table whose id column is headed as laboratories head it ("Std", "Std ID", "Std. no.")
is read with that column as each standard's id, not passed over as a column not used.

Invented scenario: cobalt standards at five levels on about 8 counts per µg/L, saved from a spreadsheet
as CSV (byte-order mark, CRLF line ends)."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from tests.test_cli_tables import run_cli, write

ROWS = ["C-01,1,8.4", "C-02,2,16.1", "C-05,5,40.3", "C-10,10,79.6", "C-20,20,160.8"]


@pytest.mark.parametrize("heading", ["Std", "Std ID", "Std. no.", "Std no", "Standard no."])
def test_the_standard_id_column_is_read_under_its_common_headings(tmp_path: Path, heading: str) -> None:
    std = write(tmp_path / "cobalt standards.csv", [f"{heading},Concentration (µg/L),Response", *ROWS],
                bom=True, newline="\r\n")
    smp = write(tmp_path / "cobalt samples.csv", ["Sample,Response", "W-1,55.0"], bom=True, newline="\r\n")
    out = run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "cobalt", "--json")
    assert out.returncode in (0, 1), out.stderr
    assert "columns not used" not in out.stderr, out.stderr
    standards = json.loads(out.stdout)["analytes"][0]["standards"]
    assert [s["id"] for s in standards] == ["C-01", "C-02", "C-05", "C-10", "C-20"]
