"""One analysis of a run, everywhere: the app, the text and JSON of the command line, the workbook, the
CSV and the printed record show the same verdict, model, coefficients, reported values, flags and
model evidence, for every demo run."""

from __future__ import annotations

import csv
import io
import json
import re
import unicodedata

import openpyxl
import pytest
from pypdf import PdfReader

from curvewright.app import results_model as rm
from curvewright.core.run_analysis import analyse_run
from curvewright.io.report import PrintedTable, build_report, evidence_table
from curvewright.io.run_document import open_run
from tests.app.conftest import DEMOS
from tests.cli_runs import run_cli


def squeeze(text: str) -> str:
    """Text without any white space, so that a word wrapped in a narrow table cell still matches (and
    NFKC-normalised: the PDF's text has typographic ligatures such as "ﬁ")."""
    return re.sub(r"\s+", "", unicodedata.normalize("NFKC", text))


@pytest.mark.parametrize("demo", DEMOS, ids=[p.stem for p in DEMOS])
def test_every_output_reads_one_analysis(demo, make_window, tmp_path) -> None:
    engine = analyse_run(open_run(demo).run)
    workbook, table, record = tmp_path / "r.xlsx", tmp_path / "r.csv", tmp_path / "r.pdf"
    commands = (["--json"], ["--export", str(workbook), "--report", str(record)], ["--export", str(table)], [])
    outputs = [run_cli("quantify", str(demo), *extra) for extra in commands]
    for out in outputs:
        assert out.returncode == (0 if engine.accepted else 1), out.stderr
    data = json.loads(outputs[0].stdout)
    text = outputs[3].stdout
    window = make_window(demo)
    shown = window.session.result

    # the verdict
    word = "ACCEPTED" if engine.accepted else "NOT ACCEPTED"
    assert data["accepted"] is engine.accepted and shown.accepted is engine.accepted
    assert f"verdict: {word}" in text and f"Run {word}" in window.verdict.text()
    pages = " ".join(page.extract_text() for page in PdfReader(record).pages)
    assert squeeze(f"Run verdict: {word}") in squeeze(pages)
    # what the laboratory must confirm about the profile stands beside every verdict
    assert engine.profile.caveat and squeeze(engine.profile.caveat) in squeeze(pages)
    assert engine.profile.caveat in text and data["profile_caveat"] == engine.profile.caveat

    book = openpyxl.load_workbook(workbook)
    rows = list(book["Samples"].iter_rows(min_row=3, values_only=True))
    header, body = rows[0], rows[1:]
    csv_lines = [line for line in table.read_text(encoding="utf-8").splitlines() if not line.startswith("#")]
    csv_rows = list(csv.reader(io.StringIO("\n".join(csv_lines))))
    for a, entry in zip(engine.analytes, data["analytes"], strict=True):
        name = a.analyte.name
        cal = a.calibration
        # the model and its coefficients
        assert (entry["model"], entry["weighting"]) == (cal.model.value, cal.weighting.value)
        assert entry["coefficients"] == cal.coefficients.tolist()
        assert cal.equation(10) in text and squeeze(f"Equation: {cal.equation(6)}") in squeeze(pages)
        # every digit of each coefficient in the record's appendix
        # (a negative one with the minus sign U+2212 a person reads, core/notation.py)
        assert all(repr(float(b)).replace("-", "\u2212", 1 if b < 0 else 0) in squeeze(pages) for b in cal.coefficients)
        sheet = {r[0]: r[1] for r in book[f"Calibration – {name}"].iter_rows(min_row=4, values_only=True)}
        labels = [f"{n} ({w})" for n, w in zip(cal.coefficient_names, cal.coefficient_descriptions, strict=True)]
        assert [sheet[label] for label in labels] == cal.coefficients.tolist()
        app = shown.analyte(name)
        assert app.calibration.coefficients.tolist() == cal.coefficients.tolist()
        # every sample: what is reported, the number behind it, the flags
        window.analyte_box.setCurrentText(name)
        model = window.results_model
        sheet_rows = [r for r in body if r[header.index("Analyte")] == name]
        csv_body = [r for r in csv_rows[1:] if r[csv_rows[0].index("Analyte")] == name]
        # the text's own block for this analyte (a multi-analyte run repeats each sample id per analyte)
        section = next(block for block in text.split("\n\n") if block.startswith(f"{name} (") or block.startswith(f"{name}\n"))
        for i, s in enumerate(a.samples):
            j = entry["samples"][i]
            assert (j["id"], j["reported_text"], j["flag_words"], j["status"]) == (
                s.sample_id, s.reported_text, s.flag_words, s.status.value)
            assert j["reported"] == s.reported
            line = next(line for line in section.splitlines() if line.strip().startswith(s.sample_id + "  ")
                        or line.strip().startswith(s.sample_id + " "))
            assert s.reported_text in line and s.flag_words in line
            assert model.text(model.rows[i], rm.SAMPLE) == s.sample_id
            assert model.text(model.rows[i], rm.REPORTED) == s.reported_text
            assert model.description(model.rows[i]).count(s.flag_words) == 1
            assert sheet_rows[i][header.index("Reported")] in (s.reported_text, _as_number(s.reported_text))
            assert sheet_rows[i][header.index("Flags")] == s.flag_words
            assert sheet_rows[i][header.index("Concentration × dilution")] == s.reported
            assert csv_body[i][csv_rows[0].index("Reported")].lstrip("'") == s.reported_text
            assert csv_body[i][csv_rows[0].index("Flags")] == s.flag_words
            assert squeeze(s.reported_text) in squeeze(pages)
        # the model evidence: the record's table is the app's, judged by the run's profile
        evidence = engine.evidence[name]
        record_table, _ = evidence_table(engine, a)
        failing = [row[7] for row in record_table.rows]
        assert failing == [c.standards_failing for c in evidence.candidates]
        window.bottom_tabs.setCurrentWidget(window.evidence_panel)
        panel = window.evidence_panel.table
        in_app = {(panel.item(r, 0).text(), panel.item(r, 1).text()): int(panel.item(r, 7).text())
                  for r in range(panel.rowCount())}
        assert in_app == {(c.model.value, c.weighting.value): c.standards_failing for c in evidence.candidates}
        content = build_report(engine)
        tables = [b for b in content.blocks if isinstance(b, PrintedTable) and b.title == "Model evidence"]
        # one table per analyte, in the run's order
        mine = tables[[x.analyte.name for x in engine.analytes].index(name)]
        assert [r[7] for r in mine.rows] == [str(f) for f in failing]


def _as_number(text: str) -> float | str:
    try:
        return float(text)
    except ValueError:
        return text
