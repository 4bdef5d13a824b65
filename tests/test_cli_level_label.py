"""A confidence level other than a whole percent is labelled as it is (99.5 %, not "100%"), in the
command's text, the workbook's headings and the printed record."""

from __future__ import annotations

import subprocess
import sys

import pytest
from openpyxl import load_workbook

from curvewright.core.level_text import percent_label
from tests.io.helpers import ROOT

RUN = ROOT / "sample_runs" / "nitrate_water_linear.json"


@pytest.mark.parametrize(("level", "label"), [
    (0.95, "95%"), (0.9, "90%"), (0.99, "99%"), (0.995, "99.5%"), (0.975, "97.5%"), (0.999, "99.9%"),
    (0.6827, "68.27%"),
])
def test_percent_label(level: float, label: str) -> None:
    assert percent_label(level) == label


def _quantify(*args: str) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "curvewright", "quantify", str(RUN), *args],
                          capture_output=True, text=True, cwd=ROOT, timeout=300)


def test_a_995_level_is_labelled_995_in_the_text_and_the_workbook(tmp_path) -> None:
    book = tmp_path / "nitrate.xlsx"
    done = _quantify("--level", "0.995", "--export", str(book))
    assert done.returncode == 0, done.stderr
    assert "interval (99.5%)" in done.stdout
    assert "100%" not in done.stdout
    texts = [c.value for ws in load_workbook(book) for row in ws.iter_rows() for c in row
             if isinstance(c.value, str)]
    # the Run information and Samples sheets say how each interval was made, with its level
    assert any(t.startswith("99.5% prediction band inverted") for t in texts)
    assert not any("100%" in t for t in texts)


def test_a_995_level_is_labelled_995_in_the_record(tmp_path) -> None:
    from pypdf import PdfReader

    pdf = tmp_path / "nitrate.pdf"
    done = _quantify("--level", "0.995", "--report", str(pdf))
    assert done.returncode == 0, done.stderr
    text = "\n".join(page.extract_text() for page in PdfReader(pdf).pages)
    assert "99.5%" in text
    assert "100%" not in text
