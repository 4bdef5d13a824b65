"""The command line with the nonlinear calibration curves (4pl, 5pl, power), run as a user runs it.

Invented scenario: the Hollowmere immunology laboratory's cytokine sandwich immunoassay (pg/mL,
optical density with four decimals), eight levels in duplicate; sample ids are fictional. Each number
printed is checked against cw.fit(...).quantify(...) computed here.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

import curvewright as cw
from tests.io.helpers import ROOT
from tests.cli_runs import run_cli

LEVELS = [1.0, 2.5, 6.0, 15.0, 40.0, 100.0, 250.0, 600.0]
rng = np.random.default_rng(3)
X = np.repeat(LEVELS, 2)
Y = np.round((2.8 + (0.05 - 2.8) / (1 + (X / 60.0) ** 1.3)) * (1 + 0.03 * rng.standard_normal(X.size)), 4)
SAMPLES = [("HIL-P-01", 1, 0.412), ("HIL-P-01", 1, 0.405), ("HIL-P-02", 2, 1.733), ("HIL-P-03", 1, 2.95)]


def files(folder: Path) -> tuple[Path, Path]:
    standards = folder / "cytokine_standards.csv"
    standards.write_text("Standard id,Concentration (pg/mL),Response (OD)\r\n" + "".join(
        f"HIL-S{i + 1:02d},{x:g},{y:.4f}\r\n" for i, (x, y) in enumerate(zip(X, Y))), encoding="utf-8")
    samples = folder / "cytokine_samples.csv"
    samples.write_text("Sample,Dilution,Response (OD)\r\n" + "".join(f"{s},{d},{r:.4f}\r\n" for s, d, r in SAMPLES),
                       encoding="utf-8")
    return standards, samples


@pytest.mark.parametrize("model", ["4pl", "5pl"])
def test_logistic_model_on_the_command_line(tmp_path: Path, model: str) -> None:
    standards, samples = files(tmp_path)
    result = run_cli("quantify", "--standards", str(standards), "--samples", str(samples), "--analyte", "cytokine",
                     "--model", model, "--weighting", "1/y^2", "--profile", "ich-m10-ligand-binding", "--json")
    assert result.returncode in (0, 1), result.stderr
    entry = json.loads(result.stdout)["analytes"][0]
    cal = cw.fit(X, Y, model, "1/y^2")
    assert entry["model"] == model
    assert entry["coefficient_names"] == list(cal.coefficient_names)
    np.testing.assert_allclose(entry["coefficients"], cal.coefficients, rtol=1e-12)  # cw.fit(...) above
    np.testing.assert_allclose(entry["standard_errors"], cal.standard_errors, rtol=1e-12)
    assert entry["convergence"] == cal.convergence
    assert entry["limits"] is None
    by_id = {s["id"]: s for s in entry["samples"]}
    q = cal.quantify([np.mean([0.412, 0.405]), 1.733], replicates=[2, 1])
    assert by_id["HIL-P-01"]["reported"] == pytest.approx(float(q.estimate[0]), rel=1e-12)
    assert by_id["HIL-P-02"]["reported"] == pytest.approx(2 * float(q.estimate[1]), rel=1e-12)
    # a response above the upper asymptote: flagged, no number
    assert by_id["HIL-P-03"]["reported"] is None
    assert "beyond_asymptote" in by_id["HIL-P-03"]["flags"]


def test_text_output_workbook_and_record_show_the_parameters(tmp_path: Path) -> None:
    standards, samples = files(tmp_path)
    workbook, record = tmp_path / "cytokine.xlsx", tmp_path / "cytokine.pdf"
    result = run_cli("quantify", "--standards", str(standards), "--samples", str(samples), "--analyte", "cytokine",
                     "--model", "4pl", "--weighting", "1/y^2", "--export", str(workbook), "--report", str(record))
    assert result.returncode in (0, 1), result.stderr
    out = result.stdout
    assert "four-parameter logistic y = d + (a − d)/(1 + (x/c)^b), weighted 1/y²" in out
    assert "parameters: a (response at zero concentration) = " in out
    assert "fit: fitted by nonlinear least squares: converged" in out
    assert "beyond an asymptote" in out
    assert cw.CAUTION in out
    from openpyxl import load_workbook

    book = load_workbook(workbook, read_only=True)
    cells = [str(c) for sheet in book.worksheets for row in sheet.iter_rows(values_only=True) for c in row if c is not None]
    book.close()
    assert any(c.startswith("c (inflection point") for c in cells)
    assert "covariance(a, b)" in cells
    assert any(c.startswith("converged: ") for c in cells)
    assert any("not applicable to a four-parameter logistic" in c for c in cells)
    assert record.read_bytes().startswith(b"%PDF")


def test_power_model_on_the_command_line(tmp_path: Path) -> None:
    x = np.repeat([0.5, 1.5, 5.0, 15.0, 50.0, 150.0, 500.0], 2)
    y = np.round(120.0 * x**1.6 * (1 + 0.03 * np.random.default_rng(5).standard_normal(x.size)), 1)
    standards = tmp_path / "elsd.csv"
    standards.write_text("id,Concentration (µg/mL),Area\n" + "".join(
        f"E{i + 1},{a:g},{b:.1f}\n" for i, (a, b) in enumerate(zip(x, y))), encoding="utf-8")
    samples = tmp_path / "elsd_samples.csv"
    samples.write_text("Sample,Dilution,Area\nSyrup 1,1,45210.5\n", encoding="utf-8")
    result = run_cli("quantify", "--standards", str(standards), "--samples", str(samples), "--analyte", "sugar",
                     "--model", "power", "--weighting", "1/y^2", "--json")
    assert result.returncode in (0, 1), result.stderr
    entry = json.loads(result.stdout)["analytes"][0]
    cal = cw.fit(x, y, "power", "1/y^2")
    assert entry["coefficient_names"] == ["a", "b"]
    np.testing.assert_allclose(entry["coefficients"], cal.coefficients, rtol=1e-12)  # cw.fit(...) above
    assert entry["equation"].startswith("y = a·x^b with a = ")
    expected = float(cal.quantify([45210.5]).estimate[0])  # cw.fit(...).quantify(...) above
    assert entry["samples"][0]["reported"] == pytest.approx(expected, rel=1e-12)


def test_demo_ligand_binding_run_with_anchor_points() -> None:
    # The invented immunoassay demo: anchor points in the run document are fitted but not judged, and
    # the calibrated range (LLOQ–ULOQ) is that of the eight calibration levels.
    path = ROOT / "sample_runs" / "cytokine_serum_4pl.json"
    result = run_cli("quantify", str(path), "--json")
    assert result.returncode == 0, result.stderr
    entry = json.loads(result.stdout)["analytes"][0]
    document = json.loads(path.read_text(encoding="utf-8"))
    standards = document["analytes"][0]["standards"]
    x = [s["concentration"] for s in standards]
    y = [s["response"]["value"] for s in standards]
    anchors = [bool(s.get("anchor", False)) for s in standards]
    assert sum(anchors) == 4
    cal = cw.fit(x, y, "4pl", "1/y^2", anchor_points=anchors)
    np.testing.assert_allclose(entry["coefficients"], cal.coefficients, rtol=1e-12)  # cw.fit(...) above
    assert entry["calibrated_range"] == [3.0, 1600.0]
    assert entry["reporting_range"]["lloq"] == 3.0 and entry["reporting_range"]["uloq"] == 1600.0
    assert any("4 anchor point(s) fitted but not judged" in r for r in entry["verdict"]["reasons"])
    by_id = {s["id"]: s for s in entry["samples"]}
    # above the upper asymptote, on the highest standard's side: "> ULOQ", no number, a re-assay diluted asked
    donor = by_id["Donor 035"]
    assert donor["status"] == "above_range" and {"beyond_asymptote", "above_range"} <= set(donor["flags"])
    assert donor["reported"] is None and donor["suggested_dilution"] is None
    assert donor["reported_text"].startswith("> ") and "re-assay the sample diluted" in donor["flag_words"]
    assert "below_range" in by_id["Donor 033"]["flags"]


def test_compare_on_the_demo_ligand_binding_run_leaves_anchor_points_unjudged() -> None:
    # The evidence table of the demo immunoassay: the logistic curves fit the anchor points as such,
    # every other candidate is fitted without them, and none counts them among the standards failing.
    path = ROOT / "sample_runs" / "cytokine_serum_4pl.json"
    result = run_cli("compare", str(path), "--json")
    assert result.returncode == 0, result.stderr
    (entry,) = json.loads(result.stdout)
    rows = [dict(zip(entry["columns"], row, strict=True)) for row in entry["rows"]]
    chosen = next(r for r in rows if r["Chosen"] == "chosen")
    assert (chosen["Model"], chosen["Weighting"]) == ("4pl", "1/y^2") and chosen["Recommended"] == "recommended"
    quantified = json.loads(run_cli("quantify", str(path), "--json").stdout)["analytes"][0]
    verdicts = {s["id"]: s["within_limits"] for s in quantified["standards"]}
    assert [k for k, v in verdicts.items() if v is None] == ["A1-1", "A1-2", "A2-1", "A2-2"]  # the anchor points
    failing = sum(1 for v in verdicts.values() if v is False)
    assert chosen["Standards failing"] == failing == 0  # the comparison counts as the run's own verdict does
    assert all(r["Standards failing"] <= 16 for r in rows)  # 16 calibration standards, 4 anchor points
    assert any(r.startswith("4 anchor point(s) (concentration 0.8, 6000) fix the logistic curves' asymptotes")
               for r in entry["reasons"])


def test_the_command_line_fits_a_logistic_curve_with_a_variance_function(tmp_path: Path) -> None:
    from tests.core.test_nonlinear_variance_function import standards

    x, y = standards("4pl")
    table = tmp_path / "standards.csv"
    table.write_text("Standard id,Concentration (pg/mL),Response (OD)\r\n" + "".join(
        f"S{i + 1:02d},{c:g},{r:.6f}\r\n" for i, (c, r) in enumerate(zip(x, y))), encoding="utf-8")
    samples = tmp_path / "samples.csv"
    samples.write_text("Sample,Response (OD)\r\nP-01,0.9\r\n", encoding="utf-8")
    result = run_cli("quantify", "--standards", str(table), "--samples", str(samples), "--model", "4pl",
                     "--weighting", "power", "--json")
    assert result.returncode in (0, 1), result.stderr
    (entry,) = json.loads(result.stdout)["analytes"]
    cal = cw.fit(x.round(6), np.round(y, 6), "4pl", "power")
    assert (entry["model"], entry["weighting"]) == ("4pl", "power")
    np.testing.assert_allclose(entry["coefficients"], cal.coefficients, rtol=1e-9)  # cw.fit(...) above
    assert any(n.startswith("weights from a variance function") for n in entry["notes"])
    assert entry["samples"][0]["reported"] == pytest.approx(float(cal.quantify([0.9]).estimate[0]), rel=1e-9)


def test_the_archive_tracks_each_curve_s_own_quantities(tmp_path: Path) -> None:
    # Filed from the command line: the 4PL run has no slope, intercept or r to follow (its b is a slope
    # factor, not a slope in OD per pg/mL); the average-RF run follows its response-factor %RSD.
    demos = ROOT / "sample_runs"
    added = run_cli("archive", "add", str(demos / "cytokine_serum_4pl.json"),
                    str(demos / "volatiles_water_average_rf.json"), "--to", str(tmp_path))
    assert added.returncode == 0, added.stderr
    logistic = run_cli("trend", "--at", str(tmp_path), "--analyte", "cytokine", "--quantity", "slope", "--json")
    assert logistic.returncode == 0, logistic.stderr
    data = json.loads(logistic.stdout)
    assert not {"slope", "intercept", "curvature", "r", "rf_rsd_percent"} & set(data["quantities"])
    assert "residual_sd" in data["quantities"]
    assert data["problem"].startswith("no filed run of cytokine (ich-m10-ligand-binding | 4pl | 1/y^2) has a slope")
    rf = run_cli("trend", "--at", str(tmp_path), "--analyte", "toluene", "--quantity", "rf_rsd_percent", "--json")
    assert rf.returncode == 0, rf.stderr
    data = json.loads(rf.stdout)
    from curvewright.core.run_analysis import analyse_run
    from curvewright.io.run_document import open_run

    cal = analyse_run(open_run(demos / "volatiles_water_average_rf.json").run).analyte("toluene").calibration
    assert "intercept" not in data["quantities"] and "rf_rsd_percent" in data["quantities"]
    (point,) = data["points"]
    assert point["value"] == pytest.approx(cal.rf_rsd_percent, rel=1e-12)
