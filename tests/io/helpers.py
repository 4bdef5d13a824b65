"""Builders of small invented runs for the io tests."""

from __future__ import annotations

from datetime import datetime, timedelta, timezone
from pathlib import Path

from curvewright.core.run import Run
from curvewright.io import run_edits
from curvewright.io.importing import analytes_from_import, import_samples, import_standards
from curvewright.io.tables import table_from_text

ROOT = Path(__file__).resolve().parents[2]
DEMO_RUNS = sorted((ROOT / "sample_runs").glob("*.json"))

STANDARDS_TSV = (
    "Standard id\tLevel\tConcentration (µg/L)\tReplicate\tResponse (counts)\n"
    "S1a\tL1\t1\t1\t1031.5\nS1b\tL1\t1\t2\t998.25\nS2a\tL2\t2\t1\t2011\nS2b\tL2\t2\t2\t1987.5\n"
    "S3a\tL3\t5\t1\t5040\nS3b\tL3\t5\t2\t4960.125\nS4a\tL4\t10\t1\t10110\nS4b\tL4\t10\t2\t9902\n"
    "S5a\tL5\t20\t1\t20200\nS5b\tL5\t20\t2\t19850.5\nS6a\tL6\t40\t1\t39700\nS6b\tL6\t40\t2\t40450\n"
)
SAMPLES_TSV = (
    "Sample\tType\tRun order\tDilution\tNominal\tReplicate\tResponse\n"
    "=HYPERLINK(\"http://example.invalid\")\tunknown\t1\t1\t\t1\t7000\n"
    "=HYPERLINK(\"http://example.invalid\")\tunknown\t1\t1\t\t2\t7100.5\n"
    "QC mid\tQC\t2\t1\t15\t1\t15100\n"
    "Diluted\tunknown\t3\t4\t\t1\t9000.75\n"
    "Non-detect\tunknown\t4\t1\t\t1\tND\n"
    "+cmd|' /C calc'!A0\tunknown\t5\t1\t\t1\t500\n"
    "@SUM(1+1)\tunknown\t6\t1\t\t1\t45000\n"
)


class FixedClock:
    def __init__(self) -> None:
        self.now = datetime(2026, 11, 20, 9, 0, tzinfo=timezone.utc)

    def __call__(self) -> datetime:
        self.now += timedelta(seconds=30)
        return self.now


def small_run() -> Run:
    """An invented single-analyte run with a formula-like sample id and a censored replicate."""
    clock = FixedClock()
    std = import_standards(table_from_text(STANDARDS_TSV), analyte="cobalt")
    smp = import_samples(table_from_text(SAMPLES_TSV), analyte="cobalt")
    assert std.complete and smp.complete, std.summary() + smp.summary()
    run = run_edits.new_run("Test batch 1", analytes_from_import(std), user="tester", clock=clock)
    from dataclasses import replace

    run = replace(run, samples=smp.samples)
    run = run_edits.record(run, "imported", {"what": "standards", "sha256": "0" * 64}, user="tester", clock=clock)
    return run_edits.exclude_standard(run, "cobalt", "S6b", "=cmd() typed as a reason", user="tester", clock=clock)
