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
HAND_EDITED_NAMED = "the response of standard N-L2-2 of nitrate-N"
"""How the program names the one value :func:`hand_edited_nitrate` types over."""

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


def hand_edited_nitrate(folder: Path) -> Path:
    """The nitrate demo run with one response typed over in a text editor (0.1008 to 0.1108, value
    and text alike), its digest and audit trail left as saved: ``folder/nitrate_edited.json``."""
    text = (ROOT / "sample_runs" / "nitrate_water_linear.json").read_text(encoding="utf-8")
    edited = text.replace('"value": 0.1008,', '"value": 0.1108,', 1).replace('"text": "0.1008"', '"text": "0.1108"', 1)
    assert edited != text
    path = folder / "nitrate_edited.json"
    path.write_text(edited, encoding="utf-8")
    return path


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


ICP_ELEMENTS = ("Ag", "Al", "As", "B", "Ba", "Be", "Ca", "Cd", "Co", "Cr", "Cu", "Fe", "K", "Li", "Mg", "Mn", "Mo",
                "Na", "Ni", "P", "Pb", "Sb", "Se", "Si", "Sn", "Sr", "Ti", "Tl", "V", "Zn")


def many_element_run(elements: tuple[str, ...] = ICP_ELEMENTS) -> Run:
    """An invented multi-element emission run: for each element six standards (0 to 100 µg/L) on a
    straight line with its own sensitivity and a little scatter, five unknowns (one diluted tenfold,
    one above the range for some elements) and a QC sample at 20 µg/L. The numbers describe no real
    instrument or sample."""
    import numpy as np

    from dataclasses import replace

    from curvewright.core.run import Analyte, Measurement, Reading, Sample, SampleKind, Standard

    clock = FixedClock()
    rng = np.random.default_rng(30)
    levels = (0.0, 1.0, 5.0, 20.0, 50.0, 100.0)
    sensitivity = {e: float(s) for e, s in zip(elements, rng.uniform(200.0, 9000.0, len(elements)))}
    analytes = []
    for e in elements:
        standards = tuple(
            Standard(f"{e}-S{i}", x, Reading(round(40.0 + sensitivity[e] * x * (1 + rng.normal(0, 0.01)), 1)),
                     level=f"L{i}")
            for i, x in enumerate(levels, start=1))
        analytes.append(Analyte(e, "µg/L", "counts/s", standards))
    truths = {"Well 4 raw": 3.2, "Well 9 raw": 27.0, "Effluent A": 61.5, "Effluent B ×10": 8.4, "Leachate 2": 140.0}
    samples = []
    for order, (sample_id, truth) in enumerate(truths.items(), start=1):
        measurements = tuple(Measurement(e, 1, Reading(round(40.0 + sensitivity[e] * truth * (1 + rng.normal(0, 0.01)), 1)))
                             for e in elements)
        samples.append(Sample(sample_id, SampleKind.UNKNOWN, order, 10.0 if "×10" in sample_id else 1.0, measurements))
    samples.append(Sample("QC 20", SampleKind.QC, len(samples) + 1, 1.0,
                          tuple(Measurement(e, 1, Reading(round(40.0 + sensitivity[e] * 20.0 * (1 + rng.normal(0, 0.01)), 1)))
                                for e in elements),
                          tuple((e, 20.0) for e in elements)))
    run = run_edits.new_run("Demo Metals Lab (invented) — trace elements, batch 12", tuple(analytes), user="tester",
                            clock=clock)
    run = replace(run, samples=tuple(samples), instrument="ICP emission spectrometer, asset DEMO-ICP-1 (invented)")
    return run_edits.record(run, "imported", {"what": "standards and samples", "sha256": "1" * 64}, user="tester",
                            clock=clock)
