"""A failing lowest or highest level narrows the range results are reported in, in every output.

Invented scenario: the Harrowgate bioanalytical laboratory's drozafen assay in plasma (ng/mL),
duplicates at eight levels, judged by the ICH M10 chromatographic profile. In one run both 800 ng/mL
standards read about 29 % low, in another both 1 ng/mL standards 40 % off. ICH M10 (calibration curve:
when the LLOQ or ULOQ standard fails, the next passing standard becomes the LLOQ or ULOQ, and the
range is narrowed) and TNI 2016 Standard V1M4 §1.7.1.1 (nothing beyond the remaining standards is
reported quantitatively) give the narrowed range 1–400 and 2–800 ng/mL (both recalled, not re-read):
a sample read at 549 ng/mL is then above the ULOQ, and one at 1.97 ng/mL below the LLOQ.
"""

from __future__ import annotations

import json
from pathlib import Path

import openpyxl
import pypdfium2 as pdfium

from tests.cli_runs import run_cli
from tests.test_cli_tables import write

HEADER = "Standard id,Level,Concentration (ng/mL),Response"
# (level, concentration, responses of the two standards): a line 0.0049 + 0.01183·x, invented
LEVELS = [(1, 1, (0.01666, 0.01630)), (2, 2, (0.02865, 0.02923)), (3, 5, (0.06703, 0.06610)),
          (4, 10, (0.12823, 0.13029)), (5, 50, (0.63529, 0.62145)), (6, 100, (1.23895, 1.26403)),
          (7, 400, (5.04403, 4.97398)), (8, 800, (7.00280, 7.20288))]
LOW_ONES = (0.00990, 0.02277)  # both 1 ng/mL standards about 40 % off (invented)


def standards(path: Path, low_fails: bool = False) -> Path:
    rows = [HEADER]
    for level, x, ys in LEVELS:
        if level == 1 and low_fails:
            ys = LOW_ONES
        if level == 8 and low_fails:
            ys = (9.94398, 10.10404)  # the 800 ng/mL standards passing
        rows += [f"S{level}-{k + 1},L{level},{x},{y}" for k, y in enumerate(ys)]
    return write(path, rows)


def samples(path: Path, unknown: tuple[str, float], qc_high: tuple[int, float]) -> Path:
    return write(path, ["Sample id,Type,Dilution,Nominal,Response", f"{unknown[0]},unknown,1,,{unknown[1]}",
                        "QC-L,QC,1,3,0.0420", "QC-M,QC,1,300,3.75", f"QC-H,QC,1,{qc_high[0]},{qc_high[1]}"])


def quantify(tmp_path: Path, std: Path, smp: Path, *extra: str):  # type: ignore[no-untyped-def]
    out = run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "drozafen",
                  "--model", "linear", "--weighting", "1/x^2", "--profile", "ich-m10-chromatographic", *extra)
    assert out.returncode in (0, 1), out.stderr
    return out


def test_failed_highest_level_narrows_the_range_in_text_json_workbook_and_record(tmp_path: Path) -> None:
    std = standards(tmp_path / "std.csv")
    smp = samples(tmp_path / "smp.csv", ("High-1", 6.5), (350, 4.38))
    book, record = tmp_path / "out.xlsx", tmp_path / "out.pdf"
    text = quantify(tmp_path, std, smp, "--export", str(book), "--report", str(record)).stdout
    assert "calibrated range 1–400 ng/mL (LLOQ–ULOQ)" in text
    assert "RANGE NARROWED from the standards' 1–800 ng/mL: the highest level (800) fails" in text
    row = next(line for line in text.splitlines() if line.strip().startswith("High-1"))
    assert "> 400 ng/mL (ULOQ)" in row and "re-assay at a dilution" in row and "inside" not in row

    data = json.loads(quantify(tmp_path, std, smp, "--json").stdout)
    analyte = data["analytes"][0]
    rng = analyte["reporting_range"]
    assert (rng["lloq"], rng["uloq"], rng["narrowed"], rng["standards_range"]) == (1, 400, True, [1, 800])
    assert "the highest level (800) fails" in rng["narrowing"]
    assert analyte["calibrated_range"] == [1, 400]
    high = next(s for s in analyte["samples"] if s["id"] == "High-1")
    assert high["status"] == "above_range" and high["suggested_dilution"] is not None

    rows = {r[0]: r[1] for r in openpyxl.load_workbook(book)["Calibration – drozafen"].iter_rows(values_only=True)
            if r and r[0]}
    assert rows["Calibrated range, ULOQ (highest passing standard)"] == 400
    assert rows["Range of the standards in the fit"] == "1–800"
    assert "the highest level (800) fails" in rows["Range narrowed, why"]
    pdf = pdfium.PdfDocument(str(record))
    printed = " ".join(" ".join(page.get_textpage().get_text_range().split()) for page in pdf)
    pdf.close()
    assert "Range narrowed from the standards' 1–800" in printed


def test_failed_lowest_level_narrows_the_range_from_below(tmp_path: Path) -> None:
    std = standards(tmp_path / "std.csv", low_fails=True)
    smp = samples(tmp_path / "smp.csv", ("Low-3", 0.0285), (600, 7.5))
    data = json.loads(quantify(tmp_path, std, smp, "--json").stdout)
    analyte = data["analytes"][0]
    assert analyte["reporting_range"]["lloq"] == 2 and analyte["reporting_range"]["uloq"] == 800
    low = next(s for s in analyte["samples"] if s["id"] == "Low-3")
    assert low["status"] == "below_reporting_limit", low
    assert any("the lowest level (1) fails; the reporting range is narrowed to the passing levels 2–800" in r
               for r in analyte["verdict"]["reasons"])


def test_a_profile_that_only_notes_a_failing_end_level_keeps_the_range(tmp_path: Path) -> None:
    from importlib import resources

    data = json.loads(resources.files("curvewright.core").joinpath("profiles", "ich_m10_chromatographic.json")
                      .read_text("utf-8"))
    data["id"], data["standards"]["failed_end_level"] = "lab-note-only", "note"
    profile = tmp_path / "note_only.json"
    profile.write_text(json.dumps(data), encoding="utf-8")
    std = standards(tmp_path / "std.csv")
    smp = samples(tmp_path / "smp.csv", ("High-1", 6.5), (350, 4.38))
    out = run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "drozafen",
                  "--model", "linear", "--weighting", "1/x^2", "--profile", str(profile), "--json")
    analyte = json.loads(out.stdout)["analytes"][0]
    assert analyte["reporting_range"]["uloq"] == 800 and analyte["reporting_range"]["narrowed"] is False
    assert any("the highest level (800) fails; the quantitation range would have to end" in r
               for r in analyte["verdict"]["reasons"])
    bad = dict(data, standards=dict(data["standards"], failed_end_level="shrink"))
    profile.write_text(json.dumps(bad), encoding="utf-8")
    refused = run_cli("quantify", "--standards", str(std), "--samples", str(smp), "--analyte", "drozafen",
                      "--model", "linear", "--weighting", "1/x^2", "--profile", str(profile))
    assert refused.returncode == 2 and "'failed_end_level' must be one of narrow_range, note" in refused.stderr
