"""A QC sample that cannot be judged (no nominal concentration, an uncalculated nominal formula) is
named as not judged, and the run is not accepted on it; a sample with a nominal concentration and an
empty kind cell is said to be quantified as an unknown. The command as a subprocess on tables written
the way an instrument and a spreadsheet write them; its JSON, workbook and record all say the same."""

from __future__ import annotations

import json
import subprocess
from pathlib import Path

import openpyxl
from pypdf import PdfReader

from tests.cli_runs import run_cli, flat

# An invented zinc run: six levels in duplicate, response ≈ 4 + 52·x counts.
STANDARDS = [("ZN-1a", 1, 56.1), ("ZN-1b", 1, 55.2), ("ZN-2a", 2, 108.4), ("ZN-2b", 2, 107.9),
             ("ZN-3a", 5, 264.0), ("ZN-3b", 5, 262.7), ("ZN-4a", 10, 523.6), ("ZN-4b", 10, 521.8),
             ("ZN-5a", 20, 1043.9), ("ZN-5b", 20, 1046.0), ("ZN-6a", 50, 2599.5), ("ZN-6b", 50, 2607.3)]
QUANTIFY = ("--analyte", "zinc", "--model", "linear", "--weighting", "1/x", "--decimal-mark", ".",
            "--profile", "ich-m10-chromatographic")


def write_csv(path: Path, rows: list[tuple]) -> Path:
    """As an instrument's export: UTF-8, CRLF line ends, the unit in the header."""
    text = "".join(",".join("" if v is None else str(v) for v in row) + "\r\n" for row in rows)
    path.write_bytes(text.encode("utf-8"))
    return path


def standards(tmp_path: Path) -> Path:
    return write_csv(tmp_path / "zn_std.csv", [("Standard id", "Concentration (µg/L)", "Response (counts)"),
                                               *STANDARDS])


def samples(tmp_path: Path, low_kind: str, low_nominal: float | None) -> Path:
    return write_csv(tmp_path / "zn_smp.csv", [
        ("Sample", "Type", "Dilution", "Nominal", "Response (counts)"),
        ("QC low", low_kind, 1, low_nominal, 159.8),
        ("QC high", "QC", 1, 40, 2090.6),
        ("Well 7", "unknown", 1, None, 402.2),
    ])


def quantify_qc_mid(tmp_path: Path, kind: str, nominal: str) -> subprocess.CompletedProcess:
    """quantify on samples of 'QC mid' (of ``kind``, with ``nominal``) beside one unknown, no dilution column."""
    smp = write_csv(tmp_path / "zn_smp.csv", [("Sample", "Type", "Nominal", "Response (counts)"),
                                              ("QC mid", kind, nominal, 1043.0), ("Well 7", "unknown", "", 402.2)])
    return run_cli("quantify", "--standards", str(standards(tmp_path)), "--samples", str(smp), *QUANTIFY)


def test_qc_without_nominal_is_not_judged_and_the_run_not_accepted(tmp_path: Path) -> None:
    std = standards(tmp_path)
    # the same QC with its nominal: judged, within ±15 % (3.0 found for 3), so the run is accepted
    judged = run_cli("quantify", "--standards", str(std), "--samples", str(samples(tmp_path, "QC", 3)), *QUANTIFY)
    assert judged.returncode == 0, judged.stdout + judged.stderr
    assert "verdict: ACCEPTED" in judged.stdout and "2 of 2 QC samples" in judged.stdout
    assert "not judged" not in judged.stdout

    smp = samples(tmp_path, "QC", None)
    book, record = tmp_path / "zn.xlsx", tmp_path / "zn.pdf"
    done = run_cli("quantify", "--standards", str(std), "--samples", str(smp), *QUANTIFY)
    assert done.returncode == 1, done.stdout + done.stderr  # as for a failed verdict
    assert "verdict: NOT ACCEPTED" in done.stdout
    assert "QC FAIL: 1 of 2 QC samples within ±15 %" in done.stdout
    assert "QC FAIL: QC sample 'QC low' not judged: no nominal concentration" in done.stdout

    data = json.loads(run_cli("quantify", "--standards", str(std), "--samples", str(smp), *QUANTIFY,
                              "--json", "--export", str(book), "--report", str(record)).stdout)
    assert data["accepted"] is False
    qc = data["analytes"][0]["qc_verdict"]
    assert qc["passed"] is False
    assert any(r.startswith("FAIL: QC sample 'QC low' not judged: no nominal concentration") for r in qc["reasons"])
    assert any("QC low" in r and "not judged" in r for r in data["reasons"])

    cells = [row for sheet in openpyxl.load_workbook(book) for row in sheet.iter_rows(values_only=True)]
    assert ("QC verdict", "NOT accepted") in [tuple(r[:2]) for r in cells]
    assert any(r[0] == "QC reason" and "'QC low' not judged" in str(r[1]) for r in cells)

    pages = flat(" ".join(p.extract_text() for p in PdfReader(record).pages))
    assert flat("Run verdict: NOT ACCEPTED") in pages
    assert flat("QC sample 'QC low' not judged: no nominal concentration") in pages


def test_uncalculated_nominal_formula_is_refused_before_any_verdict(tmp_path: Path) -> None:
    # a spreadsheet saved by a program that does not calculate: the formula has no cached value. The
    # import refuses such a cell in every column (naming it), so no verdict is given on a QC sample
    # whose nominal could not be read
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.append(["Sample", "Type", "Dilution", "Nominal", "Response (counts)"])
    sheet.append(["QC low", "QC", 1, "=1.5*2", 159.8])
    sheet.append(["QC high", "QC", 1, 40, 2090.6])
    smp = tmp_path / "zn_smp.xlsx"
    book.save(smp)
    done = run_cli("quantify", "--standards", str(standards(tmp_path)), "--samples", str(smp), *QUANTIFY)
    assert done.returncode == 2, done.stdout + done.stderr
    assert "nothing was quantified" in done.stderr and "verdict: ACCEPTED" not in done.stdout
    assert "row 2, column 4 (Nominal): '=1.5*2' — a formula with no calculated value" in done.stderr


def test_only_qc_without_nominal_is_not_accepted(tmp_path: Path) -> None:
    done = quantify_qc_mid(tmp_path, "QC", "")
    assert done.returncode == 1, done.stdout + done.stderr
    assert "QC FAIL: 0 of 1 QC samples within ±15 %" in done.stdout
    assert "QC sample 'QC mid' not judged" in done.stdout


def test_nominal_with_an_empty_kind_is_said_to_be_unused(tmp_path: Path) -> None:
    done = run_cli("quantify", "--standards", str(standards(tmp_path)), "--samples",
                   str(samples(tmp_path, "", 3)), *QUANTIFY, "--json")
    data = json.loads(done.stdout)
    reasons = data["analytes"][0]["qc_verdict"]["reasons"]
    assert any(r.startswith("note: 1 sample(s) of kind unknown") and "'QC low' (3 µg/L)" in r
               and "its nominal is not used" in r for r in reasons)
    # the QC high alone is judged; the note does not change the verdict
    assert reasons[0].startswith("pass: 1 of 1 QC samples") and data["accepted"] is True


def test_a_nominal_on_the_only_qc_like_sample_says_no_qc_was_judged(tmp_path: Path) -> None:
    done = quantify_qc_mid(tmp_path, "", "20")
    assert done.returncode == 0, done.stdout + done.stderr
    assert "QC note: no QC sample to judge" in done.stdout
    assert "'QC mid' (20 µg/L); each is quantified as an unknown and its nominal is not used" in done.stdout
