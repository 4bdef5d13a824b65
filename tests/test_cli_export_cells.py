"""The CSV export's cells: the "QC or check" cell of a QC sample that could not be judged, the
replicate responses with the decimals they were entered with, and the delimiter a decimal comma
needs. The tables are invented (the Larkwell lake survey's manganese, ICP-MS counts) and written as a
spreadsheet program saves them; the commands run as subprocesses, as an analyst runs them."""

from __future__ import annotations

import csv
import io
import subprocess
from pathlib import Path

import openpyxl

from tests.cli_runs import run_cli

STANDARDS = [["Standard id", "Level", "Concentration (µg/L)", "Response (counts)"]] + [
    [f"MN-{i + 1:02d}", f"L{i // 2 + 1}", x, y] for i, (x, y) in enumerate(zip(
        [0.5, 0.5, 1, 1, 2, 2, 5, 5, 10, 10, 20, 20],
        [51.843, 52.517, 101.922, 102.404, 201.886, 202.731, 503.118, 504.962, 1003.57, 1005.41, 2007.88, 2009.26]))]
SAMPLES = [["Sample", "Type", "Dilution", "Nominal", "Response (counts)"],
           ["LKW-0712", "unknown", "1", "", "640.225"],
           ["LKW-0712", "unknown", "1", "", "652.118"],
           ["QC mid", "QC", "1", "5", "503.900"],
           ["QC low", "QC", "1", "", "52.3"],
           ["LKW-0713", "unknown", "2", "", "1503.80"]]


def write_csv(path: Path, rows: list[list[object]]) -> Path:
    """A table as a spreadsheet program saves it as CSV: comma-separated, CRLF line ends, quoted where needed."""
    out = io.StringIO(newline="")
    csv.writer(out, lineterminator="\r\n").writerows(rows)
    path.write_bytes(out.getvalue().encode("utf-8"))
    return path


def tables(folder: Path) -> tuple[Path, Path]:
    return write_csv(folder / "mn_standards.csv", STANDARDS), write_csv(folder / "mn_samples.csv", SAMPLES)


def exported_rows(path: Path, delimiter: str) -> dict[str, dict[str, str]]:
    lines = [line for line in path.read_text(encoding="utf-8").splitlines() if not line.startswith("#")]
    rows = list(csv.DictReader(io.StringIO("\n".join(lines)), delimiter=delimiter))
    return {row["Sample id"]: row for row in rows}


def quantify_tables(folder: Path, *extra: str) -> subprocess.CompletedProcess:
    std, smp = tables(folder)
    return run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "manganese",
                   "--model", "linear", "--weighting", "none", *extra)


def test_decimal_comma_export_judges_each_qc_sample_and_keeps_the_responses_digits(tmp_path: Path) -> None:
    target = tmp_path / "mn.csv"
    done = quantify_tables(tmp_path, "--export", str(target), "--csv-delimiter", ";", "--csv-decimal", ",")
    # the QC sample without a nominal concentration is not judged, so the run is not accepted (exit 1)
    assert done.returncode == 1, done.stderr
    assert "QC sample 'QC low' not judged: no nominal concentration" in done.stdout
    rows = exported_rows(target, ";")
    assert rows["QC low"]["QC or check"] == "not judged"  # as the QC verdict says it
    assert rows["QC mid"]["QC or check"] == "pass"  # recovery 100.1 %, within ±20 % (common practice)
    assert rows["LKW-0712"]["QC or check"] == ""  # an unknown is neither judged nor "not judged"
    # the responses as entered keep every digit typed, the trailing zeros too, with the comma
    assert rows["QC mid"]["Replicate responses"] == "503,900"
    assert rows["LKW-0713"]["Replicate responses"] == "1503,80"
    assert rows["LKW-0712"]["Replicate responses"] == "640,225 | 652,118"
    assert rows["QC low"]["Replicate responses"] == "52,3"


def test_decimal_point_export_keeps_the_responses_digits(tmp_path: Path) -> None:
    target = tmp_path / "mn.csv"
    done = quantify_tables(tmp_path, "--export", str(target))
    assert done.returncode == 1, done.stderr
    rows = exported_rows(target, ",")
    assert rows["QC mid"]["Replicate responses"] == "503.900"
    assert rows["LKW-0713"]["Replicate responses"] == "1503.80"
    assert rows["QC low"]["QC or check"] == "not judged"
    assert float(rows["QC mid"]["Mean response"]) == 503.9  # the mean stays a number at full precision


def test_the_workbook_and_the_record_say_not_judged_too(tmp_path: Path) -> None:
    book = tmp_path / "mn.xlsx"
    done = quantify_tables(tmp_path, "--export", str(book))
    assert done.returncode == 1, done.stderr
    sheet = openpyxl.load_workbook(book)["Samples"]
    values = list(sheet.iter_rows(values_only=True))
    header = next(r for r in values if r and "QC or check" in r)
    column, replicates = header.index("QC or check"), header.index("Replicate responses")
    by_id = {r[0]: r for r in values[values.index(header) + 1:] if r and r[0]}
    assert by_id["QC low"][column] == "not judged"
    assert by_id["QC mid"][replicates] == "503.900"


def test_a_decimal_comma_alone_names_the_delimiter_option(tmp_path: Path) -> None:
    target = tmp_path / "mn.csv"
    done = quantify_tables(tmp_path, "--export", str(target), "--csv-decimal", ",")
    assert done.returncode == 2
    assert "--csv-delimiter ';'" in done.stderr and "--csv-delimiter tab" in done.stderr, done.stderr
    assert not target.exists()
