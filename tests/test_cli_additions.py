"""Standard additions from the outside: the command line's text and JSON, the workbook and the record."""

from __future__ import annotations

import json
import re
import unicodedata

import openpyxl
import pytest
from pypdf import PdfReader

import curvewright as cw
from curvewright.core.notation import figures
from curvewright.core.run_analysis import analyse_run
from curvewright.io.run_document import dumps_run
from tests.core.test_addition_series import invented_run
from tests.io.helpers import ROOT
from tests.cli_runs import run_cli


@pytest.fixture
def document(tmp_path):
    path = tmp_path / "lead additions.json"
    path.write_text(dumps_run(invented_run()), encoding="utf-8")
    return path


def test_text_and_json_report_each_series(document) -> None:
    engine = analyse_run(invented_run()).analytes[0].additions
    text = run_cli("quantify", str(document))
    assert text.returncode in (0, 1), text.stderr
    out = text.stdout
    assert "standard additions (x-intercept of the line through the spiked portions; matrix-matched linearity is assumed):" in out
    river = engine[0]
    # written in the one notation (core/notation.py): a standard error of about 5e-15 with its exponent
    assert (f"River 4: {figures(river.reported, 5)} µg/L (95% interval {figures(river.reported_lower, 5)} to "
            f"{figures(river.reported_upper, 5)}; standard error {figures(river.reported_standard_error, 3)})") in out
    assert "Flat: not extrapolated: response: the line through the additions has slope 0" in out
    assert cw.CAUTION in out
    data = json.loads(run_cli("quantify", str(document), "--json").stdout)
    series = data["analytes"][0]["standard_additions"]
    assert [s["id"] for s in series] == ["River 4", "Flat"]
    assert series[0]["reported"] == river.reported and series[0]["lower"] == river.result.lower
    assert series[0]["warnings"][0] == river.result.warnings[0] and "matrix-matched linearity" in series[0]["warnings"][0]
    assert series[1]["reported"] is None and series[1]["note"] == engine[1].note


def test_workbook_and_record_show_the_series(document, tmp_path) -> None:
    workbook, record = tmp_path / "lead.xlsx", tmp_path / "lead.pdf"
    done = run_cli("quantify", str(document), "--export", str(workbook), "--report", str(record))
    assert done.returncode in (0, 1), done.stderr
    sheet = openpyxl.load_workbook(workbook)["Standard additions – lead"]
    rows = list(sheet.iter_rows(values_only=True))
    header_at = next(i for i, r in enumerate(rows) if r and r[0] == "Sample id")
    header = rows[header_at]
    river = dict(zip(header, rows[header_at + 1]))
    engine = analyse_run(invented_run()).analytes[0].additions[0]
    assert river["Sample id"] == "River 4"
    assert river["Reported concentration (µg/L)"] == engine.reported  # full precision in the workbook
    assert river["Lower limit (95%) (µg/L)"] == engine.reported_lower
    assert "matrix-matched linearity" in river["Warnings"]
    pages = re.sub(r"\s+", "", unicodedata.normalize("NFKC", " ".join(p.extract_text() for p in PdfReader(record).pages)))
    assert "Standardadditions–lead" in pages and "River4" in pages
    assert "matrix-matchedlinearity" in pages


def test_environmental_demo_reports_the_average_rrf_from_the_command_line() -> None:
    demo = ROOT / "sample_runs" / "volatiles_water_average_rf.json"
    engine = analyse_run(__import__("curvewright.io.run_document", fromlist=["open_run"]).open_run(demo).run)
    text = run_cli("quantify", str(demo))
    assert text.returncode == 0, text.stderr
    data = json.loads(run_cli("quantify", str(demo), "--json").stdout)
    for a, entry in zip(engine.analytes, data["analytes"], strict=True):
        rf = a.calibration.response_factors
        assert (f"mean relative response factor (response ratio to the internal standard per unit concentration) "
                f"{rf.mean:.6g} (standard error {rf.standard_error:.3g}); RRF SD {rf.sd:.4g}, %RSD {rf.rsd_percent:.3g} %") in text.stdout
        assert entry["model"] == "average-rf" and entry["equation"] == a.calibration.equation(17)
        assert entry["response_factors"]["rsd_percent"] == rf.rsd_percent and entry["response_factors"]["relative"] is True
        assert f"pass: response factor %RSD = {rf.rsd_percent:.3g} %; at most 20 %" in text.stdout
    assert "pass: CCV-2 10 (closing)" in text.stdout


def test_environmental_demo_workbook_and_record_carry_the_rrf_and_its_rsd(tmp_path) -> None:
    from curvewright.io.run_document import open_run

    demo = ROOT / "sample_runs" / "volatiles_water_average_rf.json"
    benzene = analyse_run(open_run(demo).run).analytes[0].calibration.response_factors
    workbook, record = tmp_path / "voc.xlsx", tmp_path / "voc.pdf"
    done = run_cli("quantify", str(demo), "--export", str(workbook), "--report", str(record))
    assert done.returncode == 0, done.stderr
    rows = {r[0]: r for r in openpyxl.load_workbook(workbook)["Calibration – benzene"].iter_rows(values_only=True) if r and r[0]}
    mean_row = rows["Mean relative response factor (response ratio to the internal standard per unit concentration)"]
    assert mean_row[1] == benzene.mean and mean_row[2] == benzene.standard_error
    assert rows["RRF %RSD"][1] == benzene.rsd_percent
    assert rows["Equation"][1].startswith("y = ") and rows["Equation"][1].endswith("·x")
    pages = re.sub(r"\s+", "", unicodedata.normalize("NFKC", " ".join(p.extract_text() for p in PdfReader(record).pages)))
    assert "RRF%RSD" in pages and "Meanrelativeresponsefactor" in pages
