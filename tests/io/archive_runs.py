"""Invented runs for the archive tests: a lead calibration whose slope, QC and checks are set by the test.

Every number is invented. Each run has ten standards (five levels in duplicate) on the line
y = intercept + slope·x with a small seeded scatter, two QC levels, a CCV, and its date set by the
test; a CCV read at 80 % makes the run not accepted (the general profile's CCV window is ±10 %).
"""

from __future__ import annotations

from dataclasses import replace
from datetime import datetime, timedelta, timezone
from pathlib import Path
from typing import Any

import numpy as np

from curvewright.core.run import Analyte, Measurement, Reading, Run, RunSettings, Sample, SampleKind, Standard
from curvewright.io import run_edits
from curvewright.io.run_document import dumps_run

LEVELS = (1.0, 2.0, 5.0, 10.0, 20.0)
START = datetime(2026, 1, 5, 9, 0, tzinfo=timezone.utc)


def reading(value: float) -> Reading:
    """A reading as an instrument writes it: three decimals."""
    text = f"{value:.3f}"
    return Reading(float(text), text)


def lead_run(number: int, *, slope: float = 10.0, intercept: float = 0.5, day: datetime | None = None,
             qc_recovery: float = 1.0, ccv_factor: float = 1.0, internal_standard: float | None = None,
             analyte: str = "lead", model: str = "linear", weighting: str = "none",
             custom_profile: dict[str, Any] | None = None, name: str | None = None) -> Run:
    """Run ``number`` of an invented lead series (its date ``day``, else one a day from 5 January 2026)."""
    rng = np.random.default_rng(1000 + number)
    when = day or START + timedelta(days=number)

    def response(c: float) -> float:
        return intercept + slope * c + 0.02 * rng.standard_normal()

    def is_reading() -> Reading | None:
        return None if internal_standard is None else reading(internal_standard * (1 + 0.002 * rng.standard_normal()))

    standards = []
    for i, c in enumerate(LEVELS, start=1):
        for r in (1, 2):
            value = response(c)
            if internal_standard is not None:  # the instrument reports the area; the ratio is calibrated
                is_r = is_reading()
                standards.append(Standard(f"Pb-{i}{'ab'[r - 1]}", c, reading(value * is_r.value), r, f"L{i}",
                                          internal_standard_response=is_r))
            else:
                standards.append(Standard(f"Pb-{i}{'ab'[r - 1]}", c, reading(value), r, f"L{i}"))

    def sample(sid: str, kind: SampleKind, order: int, nominal: float | None, c: float) -> Sample:
        measurements = []
        for r in (1, 2):
            value = response(c)
            is_r = is_reading()
            measurements.append(Measurement(analyte, r, reading(value * is_r.value) if is_r else reading(value), is_r))
        return Sample(sid, kind, order, 1.0, tuple(measurements), ((analyte, nominal),) if nominal is not None else ())

    samples = (sample("ICV", SampleKind.ICV, 1, 10.0, 10.0),
               sample("QC low", SampleKind.QC, 2, 4.0, 4.0 * qc_recovery),
               sample(f"Tap water {number}", SampleKind.UNKNOWN, 3, None, 7.5),
               sample("QC high", SampleKind.QC, 4, 15.0, 15.0 * qc_recovery),
               sample("CCV", SampleKind.CCV, 5, 10.0, 10.0 * ccv_factor))
    settings = RunSettings(acceptance_profile=(custom_profile or {}).get("id", "general"), custom_profile=custom_profile)
    a = Analyte(analyte, "µg/L", "counts", tuple(standards), model, weighting,
                "the laboratory's validated method", uses_internal_standard=internal_standard is not None)
    clock_times = iter(when + timedelta(minutes=k) for k in range(100))
    run = run_edits.new_run(name or f"Lead in water, run {number:03d}", (a,), settings=settings, user="a.tester",
                            clock=lambda: next(clock_times))
    # the samples arrive as an import does, recorded (so that the data match the audit trail's content hash)
    return run_edits.record(replace(run, samples=samples), "imported", {"what": "samples"}, user="a.tester",
                            clock=lambda: next(clock_times))


def write_runs(folder: Path, runs: list[Run]) -> list[Path]:
    """Save runs as the app saves them (the run document's JSON, UTF-8)."""
    folder.mkdir(parents=True, exist_ok=True)
    paths = []
    for i, run in enumerate(runs):
        path = folder / f"run_{i:03d}.json"
        path.write_text(dumps_run(run), encoding="utf-8")
        paths.append(path)
    return paths
