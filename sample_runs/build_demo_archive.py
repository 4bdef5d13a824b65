"""Build the demo archive: a year of invented copper runs with a drift that the control rules catch.

Every number here is invented for demonstration: the laboratory, its analysts, samples and
responses are fictional. The Fenwick Vale Water Laboratory runs copper in river water by ICP optical
emission, calibrated on the ratio to an yttrium internal standard, about once a week: 60 runs from
November 2025 to October 2026. Each run has twelve standards (six levels in duplicate), an ICV, two
QC levels, four river samples, a calibration blank and two CCVs. From run 42 on, the torch's
sensitivity to copper falls away slowly (0.3 % of the slope per run) while the internal standard's
response falls faster (0.8 % per run): the QC recoveries stay near 100 % because the ratio
compensates, but the slope and the internal-standard response leave their control limits, and the
1-3s, 2-2s, 4-1s and 10-x rules flag the runs. Run 17's closing CCV reads low (the autosampler drew
air), so that run is not accepted and stays out of the baseline.

The responses come from a seeded generator, so the runs (and their content hashes) are the same on
every build. The archive is built on demand, not committed: a SQLite file's bytes depend on the
SQLite library that wrote it.

    python sample_runs/build_demo_archive.py                   # builds sample_runs/demo_archive/
    python sample_runs/build_demo_archive.py --show            # builds it, then opens the History view
    python sample_runs/build_demo_archive.py --to FOLDER       # builds it in FOLDER
"""

from __future__ import annotations

import argparse
import sys
from dataclasses import replace
from datetime import datetime, timedelta, timezone
from pathlib import Path

import numpy as np

from curvewright.core.run import Run, RunSettings
from curvewright.io import run_edits
from curvewright.io.audit import file_sha256
from curvewright.io.importing import analytes_from_import, import_samples, import_standards
from curvewright.io.tables import table_from_text

HERE = Path(__file__).parent
DEFAULT_FOLDER = HERE / "demo_archive"
ANALYTE = "copper"
RUNS = 60
DRIFT_FROM = 42
"""The first run of the drift (runs are numbered from 1)."""
NOT_ACCEPTED = 17
"""The run whose closing CCV reads low."""
ANALYSTS = ("r.amadi", "s.keller", "t.nakamura")
INVENTED = ("All data in this run are invented for demonstration; they describe no real laboratory, sample or "
            "product.")
LEVELS = (0.0, 5.0, 10.0, 25.0, 50.0, 100.0)
SLOPE, INTERCEPT, IS_COUNTS = 0.0042, 0.0008, 250000.0


class Clock:
    """A fixed clock that advances three minutes a call, so that a run's audit trail is reproducible."""

    def __init__(self, start: datetime) -> None:
        self.now = start

    def __call__(self) -> datetime:
        self.now += timedelta(minutes=3)
        return self.now


def _tsv(header: list[str], rows: list[list[object]]) -> str:
    return "\n".join(["\t".join(header)] + ["\t".join(str(v) for v in r) for r in rows]) + "\n"


def demo_run(number: int, rng: np.random.Generator) -> Run:
    """Run ``number`` (1–60) of the year."""
    drift = max(0, number - DRIFT_FROM + 1)
    slope = SLOPE * (1 + 0.012 * rng.standard_normal()) * (1 - 0.003 * drift)
    intercept = INTERCEPT * (1 + 0.05 * rng.standard_normal())
    is_level = IS_COUNTS * (1 + 0.015 * rng.standard_normal()) * (1 - 0.008 * drift)

    def counts(c: float, factor: float = 1.0) -> tuple[str, str]:
        is_counts = is_level * (1 + 0.008 * rng.standard_normal())
        ratio = (intercept + slope * c) * (1 + 0.008 * rng.standard_normal()) + 0.0002 * rng.standard_normal()
        return f"{ratio * is_counts * factor:.1f}", f"{is_counts:.1f}"

    standards = []
    for i, c in enumerate(LEVELS, start=1):
        for r in (1, 2):
            cu, y = counts(c)
            standards.append([f"Cu-S{i}-{r}", f"S{i}", c, r, cu, y])
    standards_text = _tsv(["Standard id", "Level", "Concentration (µg/L)", "Replicate", "Intensity (counts)",
                           "Internal standard (counts)"], standards)
    plan = [("ICV 50", "ICV", 50.0, 50.0, 1.0), ("QC low", "QC", 10.0, 10.0, 1.0), ("QC high", "QC", 80.0, 80.0, 1.0),
            (f"River Fen at Ashby, week {number}", "unknown", None, 3.1 + 0.4 * rng.standard_normal(), 1.0),
            (f"River Fen at Mill Lane, week {number}", "unknown", None, 7.8 + 0.9 * rng.standard_normal(), 1.0),
            ("CCV 50 (mid)", "CCV", 50.0, 50.0, 1.0),
            (f"Culvert outfall 2, week {number}", "unknown", None, 18.0 + 2.5 * rng.standard_normal(), 1.0),
            (f"Reservoir inlet, week {number}", "unknown", None, 1.6 + 0.2 * rng.standard_normal(), 1.0),
            ("CCB", "calibration blank", None, 0.0, 1.0),
            ("CCV 50 (closing)", "CCV", 50.0, 50.0, 0.86 if number == NOT_ACCEPTED else 1.0)]
    samples = []
    for order, (sid, kind, nominal, true_c, factor) in enumerate(plan, start=1):
        for r in (1, 2):
            cu, y = counts(true_c, factor)
            samples.append([sid, kind, order, "" if nominal is None else nominal, r, cu, y])
    samples_text = _tsv(["Sample", "Type", "Run order", "Nominal", "Replicate", "Intensity", "Internal standard"],
                        samples)

    day = datetime(2025, 11, 3, 8, 10, tzinfo=timezone.utc) + timedelta(days=6 * (number - 1))
    clock, user = Clock(day), ANALYSTS[number % len(ANALYSTS)]
    std = import_standards(table_from_text(standards_text, source=f"ICP export run {number:02d} (standards)",
                                           sha256=file_sha256(standards_text.encode())), analyte=ANALYTE)
    smp = import_samples(table_from_text(samples_text, source=f"ICP export run {number:02d} (samples)",
                                         sha256=file_sha256(samples_text.encode())), analyte=ANALYTE)
    assert std.complete and smp.complete, (std.summary(), smp.summary())
    name = f"Fenwick Vale Water Lab — copper, run {number:02d} ({day:%Y-%m-%d})"
    description = (f"Copper in river water by ICP optical emission at 324.754 nm, ratio to yttrium at 371.030 nm; "
                   f"weekly run {number} of {RUNS}. {INVENTED}")
    run = run_edits.new_run(name, analytes_from_import(std, response_unit="Cu/Y intensity ratio"), description=description,
                            settings=RunSettings(acceptance_profile="general"), user=user, clock=clock)
    run = replace(run, samples=smp.samples)
    for result, what in ((std, "standards"), (smp, "samples")):
        run = run_edits.record(run, "imported", {"what": what, "source": result.source, "sha256": result.sha256},
                               user=user, clock=clock)
    return run_edits.choose_model(run, ANALYTE, "linear", "none", "the validated method: a straight line, unweighted",
                                  user=user, clock=clock)


def demo_runs() -> list[Run]:
    """The 60 runs, in order."""
    rng = np.random.default_rng(2611)
    return [demo_run(n, rng) for n in range(1, RUNS + 1)]


def build(folder: Path = DEFAULT_FOLDER) -> Path:
    """File the demo runs into the archive in ``folder`` (made if needed); returns the archive file.
    Building again adds nothing: each run's content is filed once."""
    from curvewright.io.archive import open_archive

    with open_archive(str(folder), create=True) as archive:
        for run in demo_runs():
            archive.file(run, source="sample_runs/build_demo_archive.py", user="demo builder")
        assert archive.location.path is not None
        return archive.location.path


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description="Build the demo archive (60 invented copper runs over a year).")
    parser.add_argument("--to", type=Path, default=DEFAULT_FOLDER, help="the archive's folder (default: %(default)s)")
    parser.add_argument("--show", action="store_true", help="open the History view on it once built")
    args = parser.parse_args(argv)
    path = build(args.to)
    print(f"demo archive: {path} ({RUNS} runs of {ANALYTE})")
    if args.show:
        from curvewright.app.history_view import run_history_app

        return run_history_app(str(args.to), analyte=ANALYTE, quantity="slope")
    return 0


if __name__ == "__main__":
    sys.exit(main())
