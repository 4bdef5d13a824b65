"""Build the demo run documents in this folder from invented instrument exports.

Every number here is invented for demonstration: the laboratories, analysts, analytes, samples and
responses are fictional, and named so that no one could take them for real ones. The responses are drawn from a seeded generator so the documents are
reproducible (``tests/io/test_demo_runs.py`` checks that the committed files match this script).

Run with: python sample_runs/build_demo_runs.py
"""

from __future__ import annotations

from dataclasses import replace
from datetime import datetime, timedelta, timezone
from pathlib import Path

import numpy as np

from curvewright.core.comparison import compare
from curvewright.core.rounding import RoundingRule
from curvewright.core.run_analysis import analyse_run, run_profile
from curvewright.core.run import Addition, Reading, RunSettings, Sample, SampleKind
from curvewright.io import run_edits
from curvewright.io.audit import Identity, file_sha256
from curvewright.io.importing import analytes_from_import, import_samples, import_standards
from curvewright.io.run_document import dumps_run
from curvewright.io.tables import table_from_text

HERE = Path(__file__).parent
INVENTED = "All data in this run are invented for demonstration; they describe no real laboratory, sample or product."


class Clock:
    """A fixed, advancing clock so that the audit trail of a demo is reproducible."""

    def __init__(self, start: str) -> None:
        self.now = datetime.fromisoformat(start).replace(tzinfo=timezone.utc)

    def __call__(self) -> datetime:
        self.now += timedelta(minutes=3)
        return self.now


def _tsv(header: list[str], rows: list[list[object]]) -> str:
    return "\n".join(["\t".join(header)] + ["\t".join(str(v) for v in r) for r in rows]) + "\n"


def _build(name, description, standards_text, samples_text, settings, choices, clock, user, extra=None,  # type: ignore[no-untyped-def]
           instrument="", **units):
    std = import_standards(table_from_text(standards_text, source="instrument export (standards)", sha256=file_sha256(standards_text.encode())), analyte=units.pop("analyte"))
    smp = import_samples(table_from_text(samples_text, source="instrument export (samples)", sha256=file_sha256(samples_text.encode())), analyte=std.standards[0][0])
    assert std.complete and smp.complete, (std.summary(), smp.summary())
    analytes = analytes_from_import(std, **units)
    run = run_edits.new_run(name, analytes, description=description, settings=settings, user=user, clock=clock)
    run = replace(run, samples=smp.samples, instrument=instrument)
    for result, what in ((std, "standards"), (smp, "samples")):
        run = run_edits.record(run, "imported", {"what": what, "source": result.source, "sha256": result.sha256,
                                                 "rows": len(result.standards) or len(result.samples)}, user=user, clock=clock)
    if extra:
        run = extra(run, clock, user)
    for analyte, (model, weighting, reason) in choices.items():
        cal = analyse_run(run, analytes=(analyte,)).analytes[0].calibration
        evidence = compare(cal.concentration, cal.response, profile=run_profile(run))
        recommended = (evidence.recommended.model.value, evidence.recommended.weighting.value)
        assert recommended == (model, weighting), (analyte, recommended, evidence.reasons)
        run = run_edits.choose_model(run, analyte, model, weighting, reason, recommended=recommended,
                                     user=user, clock=clock)
    return run


def nitrate_run() -> "Run":  # type: ignore[name-defined]  # noqa: F821
    """A water laboratory's nitrate-N by UV absorbance: a straight line with triplicate standards."""
    rng = np.random.default_rng(101)
    levels = [0.0, 0.5, 1.0, 2.0, 4.0, 6.0, 8.0]
    rows = []
    for i, c in enumerate(levels, start=1):
        for r in (1, 2, 3):
            a = 0.0031 + 0.1968 * c + 0.0022 * rng.standard_normal()
            rows.append([f"N-L{i}-{r}", f"L{i}", c, r, f"{a:.4f}"])
    standards = _tsv(["Standard id", "Level", "Concentration (mg/L)", "Replicate", "Absorbance (AU)"], rows)
    samples = []
    order = 1
    plan = [("Blank-1", "blank", 1, None, 0.0), ("QC-low", "qc", 1, 1.5, 1.5), ("Well 12", "unknown", 1, None, 3.17),
            ("Well 14", "unknown", 1, None, 0.42), ("Outfall A", "unknown", 5, None, 2.2), ("QC-high", "qc", 1, 6.0, 6.0),
            ("Spring 3", "unknown", 1, None, 9.1), ("Blank-2", "blank", 1, None, 0.0)]
    for sid, kind, dilution, nominal, true_c in plan:
        measured = true_c / dilution
        for r in (1, 2):
            a = 0.0031 + 0.1968 * measured + 0.0022 * rng.standard_normal()
            samples.append([sid, kind, order, dilution, "" if nominal is None else nominal, r, f"{a:.4f}"])
            order += 1
    samples_text = _tsv(["Sample", "Type", "Run order", "Dilution", "Nominal", "Replicate", "Absorbance"], samples)
    return _build(
        "Demo Water Lab (invented) — nitrate-N batch 118",
        "Nitrate-N by UV absorbance at 220 nm; seven levels in triplicate; duplicate readings of each sample. " + INVENTED,
        standards_text=standards, samples_text=samples_text,
        settings=RunSettings(acceptance_profile="general", rounding=RoundingRule("decimals", 2)),
        choices={"nitrate-N": ("linear", "none", "lack of fit and Mandel's test do not reject the straight line; replicate variances equal")},
        clock=Clock("2026-11-02T08:00:00"), user=Identity("Demo Analyst One", "DEMO-01", "demo.analyst1"), analyte="nitrate-N", response_unit="AU",
        instrument="UV-Vis spectrophotometer, asset DEMO-UV-1 (invented)",
    )


def plasma_run() -> "Run":  # type: ignore[name-defined]  # noqa: F821
    """A bioanalytical LC-MS/MS run of an invented drug in plasma: 1/x² weighting with an internal standard."""
    rng = np.random.default_rng(202)
    levels = [1.0, 2.0, 5.0, 20.0, 100.0, 250.0, 500.0, 1000.0]
    slope, is_area = 0.00412, 182000.0

    def areas(c: float) -> tuple[int, int]:
        is_a = is_area * (1 + 0.04 * rng.standard_normal())
        ratio = (0.0006 + slope * c) * (1 + 0.045 * rng.standard_normal())
        return int(round(ratio * is_a)), int(round(is_a))

    rows = []
    for i, c in enumerate(levels, start=1):
        for r in (1, 2):
            a, b = areas(c)
            rows.append([f"CAL{i}-{r}", f"CAL{i}", c, r, a, b])
    standards = _tsv(["Standard id", "Level", "Concentration (ng/mL)", "Replicate", "Area", "IS area"], rows)
    plan = [("Double blank", "blank", 1, None, 0.0), ("QC-L-1", "qc", 1, 3.0, 3.0), ("QC-M-1", "qc", 1, 150.0, 150.0),
            ("QC-H-1", "qc", 1, 750.0, 750.0), ("Subject 07 t2h", "unknown", 1, None, 412.0),
            ("Subject 07 t6h", "unknown", 1, None, 61.0), ("Subject 09 t1h", "unknown", 1, None, 1480.0),
            ("Subject 09 t24h", "unknown", 1, None, 0.6), ("Subject 09 t1h ×10", "unknown", 10, None, 1480.0),
            ("QC-L-2", "qc", 1, 3.0, 3.0), ("QC-M-2", "qc", 1, 150.0, 150.0), ("QC-H-2", "qc", 1, 750.0, 750.0)]
    samples = []
    for order, (sid, kind, dilution, nominal, true_c) in enumerate(plan, start=1):
        a, b = areas(true_c / dilution)
        samples.append([sid, kind, order, dilution, "" if nominal is None else nominal, a, b])
    samples_text = _tsv(["Sample", "Type", "Run order", "Dilution", "Nominal", "Area", "IS area"], samples)
    return _build(
        "Demo Bioanalysis Lab (invented) — veltaprine in plasma, run 457",
        "LC-MS/MS, analyte/internal-standard area ratio; duplicate standards at eight levels over three decades; "
        "QC samples at three levels in duplicate. 'Veltaprine' is an invented compound. " + INVENTED,
        standards_text=standards, samples_text=samples_text,
        settings=RunSettings(acceptance_profile="ich-m10-chromatographic", rounding=RoundingRule("significant", 3)),
        choices={"veltaprine": ("linear", "1/x^2", "replicate variance grows with concentration (ISO 8466-1 F-test) and "
                                "the replicate SD grows in proportion to concentration, as 1/x² weighting assumes")},
        clock=Clock("2026-11-05T13:30:00"), user=Identity("Demo Analyst Two", "DEMO-02", "demo.analyst2"), analyte="veltaprine", response_unit="area ratio",
        instrument="LC-MS/MS system, asset DEMO-MS-3 (invented)",
    )


def zinc_run() -> "Run":  # type: ignore[name-defined]  # noqa: F821
    """Zinc by flame emission: a curved response that needs the quadratic; the top standard is influential."""
    rng = np.random.default_rng(303)
    levels = [0.0, 1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 10.0]
    rows = []
    for i, c in enumerate(levels, start=1):
        reps = (1, 2) if c in (0.0, 3.0, 6.0) else (1,)
        for r in reps:
            e = 2.0 + 1520.0 * c - 38.0 * c * c + 9.0 * rng.standard_normal()
            rows.append([f"Zn-{i}{'abc'[r - 1]}", f"S{i}", c, r, f"{e:.1f}"])
    rows.append(["Zn-5b", "S5", 4.0, 2, "4990.7"])  # a vial later found to be made up wrongly
    standards = _tsv(["Standard id", "Level", "Concentration (mg/L)", "Replicate", "Emission (counts)"], rows)
    plan = [("Check 5 mg/L", "check standard", 1, 5.0, 5.0), ("Reagent blank", "blank", 1, None, 0.0),
            ("Alloy digest 1", "unknown", 20, None, 96.0), ("Alloy digest 2", "unknown", 20, None, 131.0),
            ("Rinse water", "unknown", 1, None, 0.35), ("Alloy digest 3", "unknown", 1, None, 11.5),
            ("Check 5 mg/L, closing", "check standard", 1, 5.0, 5.0)]
    samples = []
    for order, (sid, kind, dilution, nominal, true_c) in enumerate(plan, start=1):
        c = true_c / dilution
        for r in (1, 2, 3):
            e = 2.0 + 1520.0 * c - 38.0 * c * c + 9.0 * rng.standard_normal()
            samples.append([sid, kind, order, dilution, "" if nominal is None else nominal, r, f"{e:.1f}"])
    samples_text = _tsv(["Sample", "Type", "Run order", "Dilution", "Nominal", "Replicate", "Emission"], samples)

    def exclude(run, clock, user):  # type: ignore[no-untyped-def]
        return run_edits.exclude_standard(
            run, "zinc", "Zn-5b", "preparation error: the vial was made up from the wrong stock (bench note 2026-11-09)",
            user=user, clock=clock,
        )

    return _build(
        "Demo Materials Lab (invented) — zinc in alloy digests, batch 77",
        "Flame emission; the response bends toward saturation, so a quadratic is used; the 10 mg/L standard sits "
        "alone at the top and carries high leverage. " + INVENTED,
        standards_text=standards, samples_text=samples_text,
        settings=RunSettings(acceptance_profile="general", rounding=RoundingRule("significant", 3)),
        choices={"zinc": ("quadratic", "none", "lack of fit and Mandel's test reject the straight line; the vertex lies above the top standard")},
        clock=Clock("2026-11-09T10:15:00"), user=Identity("Demo Analyst Three", "DEMO-03", "demo.analyst3"), extra=exclude, analyte="zinc", response_unit="counts",
        instrument="flame emission spectrometer, asset DEMO-FE-2 (invented)",
    )


def volatiles_run() -> "Run":  # type: ignore[name-defined]  # noqa: F821
    """An environmental volatile-organics batch by GC-MS: three analytes calibrated by their average relative
    response factor against one internal standard, judged by the RF %RSD; an ICV, continuing checks and
    calibration blanks bracket the samples; one leachate is measured by standard additions because its
    matrix suppresses the signal."""
    rng = np.random.default_rng(404)
    levels = [1.0, 2.0, 5.0, 10.0, 20.0, 50.0]
    rrf = {"benzene": 1.21, "toluene": 0.94, "ethylbenzene": 0.71}  # per 10 µg/L of internal standard
    is_area = 250000.0

    def areas(name: str, c: float, matrix: float = 1.0) -> tuple[int, int]:
        is_a = is_area * (1 + 0.05 * rng.standard_normal())
        ratio = matrix * rrf[name] * c / 10.0 * (1 + 0.05 * rng.standard_normal())
        return int(round(ratio * is_a)), int(round(is_a))

    rows = []
    for name in rrf:
        for i, c in enumerate(levels, start=1):
            rows.append([f"{name[:3].upper()}-CAL{i}", name, f"CAL{i}", c, 1, *areas(name, c)])
    standards = _tsv(["Standard id", "Compound", "Level", "Concentration (µg/L)", "Replicate", "Area", "IS area"], rows)
    plan = [("ICV 10 (second source)", "icv", 1, 10.0, 10.0), ("CCB-1", "ccb", 1, None, 0.0),
            ("Monitoring well MW-2", "unknown", 1, None, 3.4), ("Monitoring well MW-5", "unknown", 1, None, 17.0),
            ("Field blank FB-1", "blank", 1, None, 0.0), ("Stream S-1", "unknown", 1, None, 0.8),
            ("Tank rinse T-9", "unknown", 10, None, 260.0),
            ("CCV-1 10", "ccv", 1, 10.0, 10.0), ("CCB-2", "ccb", 1, None, 0.0),
            ("Monitoring well MW-7", "unknown", 1, None, 42.0), ("Lagoon L-2", "unknown", 1, None, 6.1),
            ("CCV-2 10 (closing)", "ccv", 1, 10.0, 10.0), ("CCB-3", "ccb", 1, None, 0.0)]
    samples = []
    for order, (sid, kind, dilution, nominal, true_c) in enumerate(plan, start=1):
        for name in rrf:
            samples.append([sid, name, kind, order, dilution, "" if nominal is None else nominal,
                            *areas(name, true_c / dilution)])
    samples_text = _tsv(["Sample", "Compound", "Type", "Run order", "Dilution", "Nominal", "Area", "IS area"], samples)

    def leachate(run, clock, user):  # type: ignore[no-untyped-def]
        # Landfill leachate: its matrix suppresses benzene's response to 70 %, so it is spiked in duplicate
        # with 0, 5, 10 and 20 µg/L and read by standard additions (true content 8.0 µg/L, invented).
        additions = []
        for added in (0.0, 5.0, 10.0, 20.0):
            for r in (1, 2):
                a, b = areas("benzene", 8.0 + added, matrix=0.7)
                additions.append(Addition("benzene", added, r, Reading.of(float(a)), Reading.of(float(b))))
        sample = Sample("Leachate LF-3 (standard additions)", SampleKind.UNKNOWN, len(plan) + 1, 1.0,
                        additions=tuple(additions))
        return run_edits.update_samples(run, (*run.samples, sample), "standard additions entered for the leachate",
                                        user=user, clock=clock)

    reason = ("average relative response factor: the RF %RSD is within the environmental profile's 20 %, "
              "so no fitted curve is needed")
    return _build(
        "Demo Environmental Lab (invented) — volatile organics in water, batch 2291",
        "GC-MS, analyte/internal-standard area ratio (one internal standard at 10 µg/L in every standard and "
        "sample); six levels; average relative response factor judged by its %RSD; ICV, CCVs and calibration "
        "blanks bracket the samples; one leachate by standard additions. " + INVENTED,
        standards_text=standards, samples_text=samples_text,
        settings=RunSettings(acceptance_profile="environmental", rounding=RoundingRule("significant", 3)),
        choices={name: ("average-rf", "1/x^2", reason) for name in rrf},
        clock=Clock("2026-11-12T07:45:00"), user=Identity("Demo Analyst Four", "DEMO-04", "demo.analyst4"),
        extra=leachate, analyte="benzene", response_unit="area ratio",
        instrument="GC-MS with purge and trap, asset DEMO-GCMS-5 (invented)",
    )


def cytokine_run() -> "Run":  # type: ignore[name-defined]  # noqa: F821
    """A ligand-binding assay of an invented cytokine in serum: a 4PL with anchor points at both ends."""
    rng = np.random.default_rng(404)
    a, b, c, d = 0.045, 1.1, 220.0, 3.1  # optical density at zero and at saturation, slope, mid-point (pg/mL)

    def od(conc: float) -> float:
        return (d + (a - d) / (1.0 + (conc / c) ** b)) * (1.0 + 0.03 * rng.standard_normal())

    levels = [("A1", 0.8), ("S1", 3.0), ("S2", 7.5), ("S3", 18.0), ("S4", 45.0), ("S5", 110.0), ("S6", 280.0),
              ("S7", 700.0), ("S8", 1600.0), ("A2", 6000.0)]
    rows = []
    for label, conc in levels:
        for r in (1, 2):
            rows.append([f"{label}-{r}", label, conc, r, f"{od(conc):.4f}"])
    standards = _tsv(["Standard id", "Level", "Concentration (pg/mL)", "Replicate", "Absorbance (OD)"], rows)
    plan = [("QC-L-1", "qc", 1, 9.0, 9.0), ("QC-M-1", "qc", 1, 150.0, 150.0), ("QC-H-1", "qc", 1, 1200.0, 1200.0),
            ("Donor 031", "unknown", 1, None, 24.0), ("Donor 032", "unknown", 1, None, 310.0),
            ("Donor 033", "unknown", 1, None, 2.0), ("Donor 034 ×4", "unknown", 4, None, 2600.0),
            ("Donor 035", "unknown", 1, None, 40000.0),
            ("QC-L-2", "qc", 1, 9.0, 9.0), ("QC-M-2", "qc", 1, 150.0, 150.0), ("QC-H-2", "qc", 1, 1200.0, 1200.0)]
    samples = []
    for order, (sid, kind, dilution, nominal, true_c) in enumerate(plan, start=1):
        for r in (1, 2):
            value = od(true_c / dilution) if sid != "Donor 035" else d * (1.06 + 0.01 * rng.standard_normal())  # a well read above saturation
            samples.append([sid, kind, order, dilution, "" if nominal is None else nominal, r, f"{value:.4f}"])
    samples_text = _tsv(["Sample", "Type", "Run order", "Dilution", "Nominal", "Replicate", "Absorbance"], samples)

    clock, user = Clock("2026-11-12T09:00:00"), Identity("Demo Analyst Four", "DEMO-04", "demo.analyst4")
    run = _build(
        "Demo Immunoassay Lab (invented) — cytokine in serum, plate 12",
        "Sandwich immunoassay read at 450 nm; eight calibration levels (3 to 1600 pg/mL) and an anchor point below "
        "and above them, all in duplicate wells; QC samples at three levels in duplicate. Donor 035 reads beyond "
        "the upper asymptote. 'Cytokine' stands for an invented analyte. " + INVENTED,
        standards_text=standards, samples_text=samples_text,
        settings=RunSettings(acceptance_profile="ich-m10-ligand-binding", rounding=RoundingRule("significant", 3)),
        choices={"cytokine": ("4pl", "1/y^2", "ligand-binding assay: 4PL, the 5PL's asymmetry is no significant "
                              "improvement; the replicate SD grows with the response, so 1/y² weighting")},
        clock=clock, user=user, analyte="cytokine", response_unit="OD",
        instrument="microplate reader, asset DEMO-PR-5 (invented)",
    )
    # once the 4PL is chosen, the wells beyond the calibration levels become its anchor points
    return run_edits.mark_anchor_points(
        run, "cytokine", ["A1-1", "A1-2", "A2-1", "A2-2"],
        "anchor points below the LLOQ and above the ULOQ fix the asymptotes of the 4PL (method SOP, invented)",
        user=user, clock=clock,
    )


DEMOS = {"nitrate_water_linear.json": nitrate_run, "veltaprine_plasma_weighted.json": plasma_run,
         "zinc_emission_quadratic.json": zinc_run, "volatiles_water_average_rf.json": volatiles_run,
         "cytokine_serum_4pl.json": cytokine_run}


def main() -> None:
    for filename, build in DEMOS.items():
        (HERE / filename).write_text(dumps_run(build()), encoding="utf-8")
        print("wrote", filename)


if __name__ == "__main__":
    main()
