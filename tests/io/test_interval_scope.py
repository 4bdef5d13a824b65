"""The calibration interval is labelled for what it is wherever the workbook and the record show it."""

from __future__ import annotations

import unicodedata

import openpyxl
from pypdf import PdfReader

from curvewright.core.inverse import INTERVAL_SCOPE_NOTE
from tests.cli_runs import run_cli
from tests.io.helpers import ROOT

ZINC = ROOT / "sample_runs" / "zinc_emission_quadratic.json"


def test_workbook_and_record_say_the_interval_is_not_the_full_uncertainty(tmp_path) -> None:
    workbook, record = tmp_path / "results.xlsx", tmp_path / "record.pdf"
    done = run_cli("quantify", str(ZINC), "--export", str(workbook), "--report", str(record))
    assert done.returncode == 0, done.stderr
    samples = openpyxl.load_workbook(workbook)["Samples"]
    assert "Interval" in [c.value for c in samples[3]]
    assert samples["B2"].value == INTERVAL_SCOPE_NOTE  # beside the sheet's title, above the interval columns
    text = " ".join(page.extract_text() for page in PdfReader(record).pages)
    flat = " ".join(unicodedata.normalize("NFKC", text).split())
    assert "it is not the full measurement uncertainty" in flat
