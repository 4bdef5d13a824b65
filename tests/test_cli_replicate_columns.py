"""A samples sheet with one column per replicate reading ("Response 1", "Response 2", "Response 3").

Each column mapped to the response is read as a further replicate of the row's sample; a mapped
"Response 1" beside unmapped "Response 2" and "Response 3" is refused, never reported from one of
three readings. The scenario is invented (the Larkmoor water laboratory's zirconium line, µg/L);
every mean and result is checked against ``cw.fit(...).quantify(...)`` computed here.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import openpyxl
import pytest

import curvewright as cw
from tests.test_cli_tables import run_cli, write

ZR_X = [0.5, 0.5, 1, 1, 2, 2, 5, 5, 10, 10, 20, 20]
ZR_Y = [51.20, 50.80, 101.9, 99.7, 203.1, 198.4, 506.2, 497.0, 1003.5, 995.1, 2011.8, 1992.2]
SAMPLES = [("Fluss-A", 1, [640.5, 652.1, 646.0]), ("Fluss-B", 5, [1503.9, 1497.1, None])]  # B: two readings


def _files(tmp_path: Path) -> tuple[Path, Path]:
    std = write(tmp_path / "std.csv", ["Standard id,Concentration (µg/L),Response (counts)"]
                + [f"Zr-{i + 1:02d},{x:g},{y}" for i, (x, y) in enumerate(zip(ZR_X, ZR_Y))])
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.title = "Samples"
    sheet.append(["Sample", "Dilution", "Response 1", "Response 2", "Response 3"])
    for sid, dilution, readings in SAMPLES:
        sheet.append([sid, dilution, *readings])
    book.save(tmp_path / "samples.xlsx")
    return std, tmp_path / "samples.xlsx"


def _quantify(tmp_path: Path, *maps: str) -> "subprocess.CompletedProcess":  # noqa: F821
    std, book = _files(tmp_path)
    args = ["quantify", "--standards", str(std), "--samples", str(book), "--analyte", "zirconium",
            "--model", "linear", "--weighting", "none", "--json"]
    for header in maps:
        args += ["--map", f"samples.{header}"]
    return run_cli(*args)


def test_every_mapped_column_is_a_replicate(tmp_path: Path) -> None:
    done = _quantify(tmp_path, "response=Response 1", "response=Response 2", "response=Response 3")
    assert done.returncode == 0, done.stderr
    out = json.loads(done.stdout)
    rows = {s["id"]: s for s in out["analytes"][0]["samples"]}
    cal = cw.fit(ZR_X, ZR_Y, "linear", "none")
    for sid, dilution, readings in SAMPLES:
        read = [r for r in readings if r is not None]
        expected = float(cal.quantify([float(np.mean(read))], replicates=len(read)).estimate[0]) * dilution
        assert rows[sid]["replicates"] == len(read)
        assert rows[sid]["mean_response"] == pytest.approx(np.mean(read), rel=1e-12)
        assert rows[sid]["reported"] == pytest.approx(expected, rel=1e-9)
    notes = "\n".join(out["notes"])
    assert ("responses read from the columns 3 (Response 1), 4 (Response 2), 5 (Response 3), each a replicate; "
            "empty replicate cells passed over: row 3 column 5 (Response 3)") in notes


def test_unmapped_further_readings_are_refused_naming_the_sheet(tmp_path: Path) -> None:
    done = _quantify(tmp_path, "response=Response 1")
    assert done.returncode != 0 and done.stdout == ""
    assert ("samples.xlsx, sheet 'Samples': the response is read from column 'Response 1', but the columns "
            "'Response 2', 'Response 3' look like further readings") in done.stderr
    assert '--map samples.response="Response 2"' in done.stderr


def test_a_column_left_out_on_purpose_is_said(tmp_path: Path) -> None:
    done = _quantify(tmp_path, "response=Response 1", "response=Response 2", "skip=Response 3")
    assert done.returncode == 0, done.stderr
    out = json.loads(done.stdout)
    assert {s["id"]: s["replicates"] for s in out["analytes"][0]["samples"]} == {"Fluss-A": 2, "Fluss-B": 2}
    assert "sheet 'Samples': columns not used: 'Response 3'" in "\n".join(out["notes"])


def test_without_a_mapping_the_refusal_names_the_sheet(tmp_path: Path) -> None:
    done = _quantify(tmp_path)
    assert done.returncode != 0
    assert "samples.xlsx, sheet 'Samples': no column for response" in done.stderr
