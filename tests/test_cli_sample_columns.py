"""``quantify --standards … --samples … --json`` writes each sample's row from the analysis's columns.

The rows must be the same, byte for byte, as rows made one at a time from each sample's result
object (the definition below). The tables are invented (the Fernhollow river laboratory's copper
line, µg/L) and written as a spreadsheet writes CSV (BOM, CRLF); they hold replicates, dilutions,
blanks, QC samples with nominal values, a calibration check, empty and unreadable readings, a
censored reading, results below the LOD and the LOQ and above the range.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from curvewright import cli
from curvewright.core.notation import computed_within, machine
from tests.cli_runs import run_cli
from tests.io.helpers import ROOT

STANDARDS = ["Standard id,Level,Concentration (µg/L),Response (counts)"] + [
    f"Cu-{i + 1:02d},L{i // 2 + 1},{x:g},{y:.3f}" for i, (x, y) in enumerate(zip(
        [0, 0, 1, 1, 2, 2, 5, 5, 10, 10, 20, 20],
        [3.112, 2.874, 51.905, 52.640, 101.377, 99.862, 252.310, 250.871, 497.415, 503.302, 1001.944, 998.517]))]
# id, kind, dilution, nominal, response, run order
SAMPLES = ["Sample,Type,Dilution,Nominal,Response (counts),Run order"] + [
    ",".join(row) for row in [
        ("FR-001", "unknown", "1", "", "412.556", "1"),
        ("FR-001", "unknown", "1", "", "409.871", "1"),     # a replicate
        ("FR-002", "unknown", "10", "", "733.020", "2"),    # diluted
        ("FR-003", "unknown", "1", "", "1188.400", "3"),    # above the range
        ("FR-004", "unknown", "2", "", "1301.7", "4"),      # above the range, diluted
        ("FR-005", "unknown", "1", "", "4.911", "5"),       # below the LOD
        ("FR-006", "unknown", "1", "", "41.205", "6"),      # below the lowest standard
        ("FR-007", "unknown", "1", "", "", "7"),            # empty reading
        ("FR-008", "unknown", "1", "", "n/a", "8"),         # unreadable reading
        ("FR-009", "unknown", "1", "", "<0.5", "9"),        # censored
        ("FR-010", "unknown", "1", "", "250.1", "10"),
        ("FR-010", "unknown", "1", "", "", "10"),           # one replicate of two empty
        ("BLK-1", "blank", "1", "", "3.402", "11"),
        ("QC-L", "QC", "1", "1.5", "76.118", "12"),
        ("QC-H", "QC", "1", "15", "742.905", "13"),
        ("QC-H", "QC", "1", "15", "751.334", "13"),
        ("FR-011", "unknown", "1", "", "-12.5", "14"),      # a negative response
        ("FR-012", "unknown", "0.5", "", "600.02", "15"),
    ]]


def write(path: Path, lines: list[str]) -> Path:
    path.write_bytes("\ufeff".encode() + ("\r\n".join(lines) + "\r\n").encode("utf-8"))
    return path


def reference_row(rounding, s) -> dict:  # type: ignore[no-untyped-def]
    """One sample's JSON row made from its result object: the definition the columns must meet."""
    return {
        "id": s.sample_id, "kind": s.kind.value, "run_order": s.run_order, "replicates": s.replicates,
        "replicates_measured": len(s.replicate_responses), "replicates_censored": s.censored_readings,
        "mean_response": s.mean_response, "estimate": s.estimate, "standard_error": s.standard_error,
        "lower": s.lower, "upper": s.upper, "dilution_factor": s.dilution_factor, "reported": s.reported,
        "reported_standard_error": s.reported_standard_error,
        "reported_lower": s.reported_lower, "reported_upper": s.reported_upper,
        # text fields in the notation's machine-readable form (core/notation.py)
        "reported_rounded": None if s.reported is None else machine(computed_within(s.reported, s.reported_lower,
                                                                                    s.reported_upper, rounding)),
        "reported_text": machine(s.reported_text), "status": s.status.value, "reportable": s.reportable,
        "suggested_dilution": s.suggested_dilution,
        "flags": [f.name.lower() for f in s.flags] if s.flags is not None else [],
        "flag_words": machine(s.flag_words), "nominal": s.nominal, "recovery_percent": s.recovery_percent,
        "within_limits": s.within_limits}


class ReferenceRows:
    """The rows made one at a time from the result objects (:meth:`SampleColumns.results`)."""

    def __init__(self, columns, rounding) -> None:  # type: ignore[no-untyped-def]
        self.results = () if columns is None else columns.results()
        self.rounding = rounding

    def __len__(self) -> int:
        return len(self.results)

    def __iter__(self):  # type: ignore[no-untyped-def]
        return (reference_row(self.rounding, s) for s in self.results)


@pytest.mark.parametrize("extra", [
    [],
    ["--model", "quadratic", "--weighting", "none"],
    ["--profile", "environmental"],
    ["--profile", "ESTIMATE"],
])
def test_rows_from_columns_are_the_rows_of_the_result_objects(tmp_path, monkeypatch, capsys, extra) -> None:
    if "ESTIMATE" in extra:  # results between the LOD and the reporting limit shown as estimated numbers
        profile = json.loads((ROOT / "src/curvewright/core/profiles/general.json").read_text(encoding="utf-8"))
        profile["reporting"]["between_lod_and_reporting_limit"] = "estimate"
        profile["id"] = "general-estimated"
        (tmp_path / "estimated.json").write_text(json.dumps(profile), encoding="utf-8")
        extra = ["--profile", str(tmp_path / "estimated.json")]
    standards = write(tmp_path / "cu_standards.csv", STANDARDS)
    samples = write(tmp_path / "cu_samples.csv", SAMPLES)
    args = ["quantify", "--standards", str(standards), "--samples", str(samples), "--analyte", "copper",
            "--allow-unreadable", "--json", *extra]
    done = run_cli(*args)
    assert done.returncode in (0, 1), done.stderr
    monkeypatch.setattr(cli, "_SampleRows", ReferenceRows)
    code = cli.main(args)
    expected = capsys.readouterr().out
    assert code == done.returncode
    assert done.stdout == expected
    rows = json.loads(done.stdout)["analytes"][0]["samples"]
    statuses = {r["id"]: r["status"] for r in rows}
    # the table reaches every kind of result it was written for
    assert statuses["FR-003"] == "above_range" and statuses["FR-004"] == "above_range"
    assert statuses["FR-007"] == statuses["FR-008"] == statuses["FR-009"] == "not_quantified"
    assert {statuses["FR-005"], statuses["FR-006"]} <= {"below_lod", "below_reporting_limit"}
    assert any(r["recovery_percent"] is not None and r["within_limits"] is not None for r in rows)
    # FR-010's row with an empty response cell counts among its replicates, not usable
    assert [r["replicates"] for r in rows if r["id"] in ("FR-001", "FR-010", "QC-H")] == [2, 2, 2]
    if "estimated.json" in " ".join(extra):
        assert "(estimated, below LLOQ)" in {r["id"]: r["reported_text"] for r in rows}["FR-005"]


def test_a_calibration_check_among_the_samples_gives_the_same_rows(tmp_path, monkeypatch, capsys) -> None:
    """With a check in the run, its window and the bracketing are judged on result objects; the
    rows written are still those of the objects."""
    standards = write(tmp_path / "cu_standards.csv", STANDARDS)
    samples = write(tmp_path / "cu_samples.csv", SAMPLES + ["CCV-1,CCV,1,10,502.7,16"])
    args = ["quantify", "--standards", str(standards), "--samples", str(samples), "--analyte", "copper",
            "--allow-unreadable", "--json"]
    done = run_cli(*args)
    monkeypatch.setattr(cli, "_SampleRows", ReferenceRows)
    cli.main(args)
    assert done.stdout == capsys.readouterr().out
    data = json.loads(done.stdout)
    assert data["analytes"][0]["calibration_checks"] is not None


def test_a_bad_cell_is_still_named_by_file_row_field_and_reason(tmp_path) -> None:
    standards = write(tmp_path / "cu_standards.csv", STANDARDS)
    samples = write(tmp_path / "cu_samples.csv", SAMPLES + ["FR-013,unknown,-2,,100.0,17"])
    done = run_cli("quantify", "--standards", str(standards), "--samples", str(samples), "--analyte", "copper",
                   "--json")
    assert done.returncode == 2, done.stderr
    assert f"{samples}: 1 cell(s) cannot be used" in done.stderr
    assert "row 20" in done.stderr and "3 (Dilution)" in done.stderr
    assert "a dilution factor must be above zero" in done.stderr
