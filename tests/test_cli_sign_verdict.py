"""``curvewright sign`` and the run's verdict and people, as subprocesses on run documents: an
approval of a NOT ACCEPTED run needs --approve-not-accepted REASON (recorded in the trail, printed
beside the approval in the record); one person signing in a second role is warned, and the trail
says so. Signing reads the document under its lock, so nothing signed elsewhere meanwhile is lost."""

from __future__ import annotations

import json
from pathlib import Path

from curvewright.core.run_analysis import analyse_run
from curvewright.io import run_edits
from curvewright.io.run_document import open_run, save_run
from tests.io.helpers import ROOT
from tests.cli_runs import run_cli

DEMO = ROOT / "sample_runs" / "nitrate_water_linear.json"
REASON = "Standard 4 misread; samples re-run in batch 12 agree"


def not_accepted_run(tmp_path: Path) -> Path:
    """The demo run with one standard's response entered three times too high (with a reason, as the
    app records it), saved: its verdict is NOT ACCEPTED."""
    run = open_run(DEMO).run
    analyte = run.analytes[0]
    standard = analyte.standards[3]
    run = run_edits.edit_standard(run, analyte.name, standard.id, "response", standard.response.value * 3,
                                  "typing error at entry", user="analyst")
    path = tmp_path / "run.json"
    save_run(run, path)
    assert not analyse_run(open_run(path).run).accepted
    return path


def test_a_not_accepted_run_is_approved_only_with_a_reason(tmp_path) -> None:
    path = not_accepted_run(tmp_path)
    before = path.read_bytes()
    refused = run_cli("sign", str(path), "--role", "approver", "--analyst", "Tomas Reyes")
    assert refused.returncode != 0 and "NOT ACCEPTED" in refused.stderr and "--approve-not-accepted" in refused.stderr
    assert path.read_bytes() == before  # nothing signed
    done = run_cli("sign", str(path), "--role", "approver", "--analyst", "Tomas Reyes", "--approve-not-accepted", REASON)
    assert done.returncode == 0, done.stdout + done.stderr
    document = json.loads(path.read_text(encoding="utf-8"))
    assert document["signatures"][-1]["meaning"].endswith(f"NOT ACCEPTED; reason: {REASON}")
    entry = document["audit"][-1]
    assert entry["details"]["run_verdict"] == "NOT ACCEPTED"
    assert entry["details"]["approved_although_not_accepted"] == REASON
    record = tmp_path / "record.pdf"
    printed = run_cli("quantify", str(path), "--report", str(record))
    assert printed.returncode in (0, 1), printed.stderr
    import pypdfium2 as pdfium

    pdf = pdfium.PdfDocument(str(record))
    try:
        text = " ".join(" ".join(pdf[i].get_textpage().get_text_range().split()) for i in range(len(pdf)))
    finally:
        pdf.close()
    assert f"Approved although the run verdict is NOT ACCEPTED; reason: {REASON}" in text


def test_an_accepted_run_refuses_the_option(tmp_path) -> None:
    path = tmp_path / "run.json"
    path.write_bytes(DEMO.read_bytes())
    done = run_cli("sign", str(path), "--role", "approver", "--analyst", "Tomas Reyes", "--approve-not-accepted", REASON)
    assert done.returncode != 0 and "verdict is ACCEPTED" in done.stderr
    assert path.read_bytes() == DEMO.read_bytes()


def test_one_person_in_two_roles_is_warned_and_recorded(tmp_path) -> None:
    path = tmp_path / "run.json"
    path.write_bytes(DEMO.read_bytes())
    first = run_cli("sign", str(path), "--role", "analyst", "--analyst", "Ines Varga", "--analyst-id", "QA-7")
    assert first.returncode == 0 and "warning" not in first.stderr
    second = run_cli("sign", str(path), "--role", "reviewer", "--analyst", "Ines Varga", "--analyst-id", "QA-7")
    assert second.returncode == 0, second.stderr  # allowed: laboratories differ
    assert "warning: Ines Varga has already signed this run as analyst" in second.stderr
    document = json.loads(path.read_text(encoding="utf-8"))
    assert [s["role"] for s in document["signatures"]] == ["analyst", "reviewer"]
    assert document["audit"][-1]["details"]["also_signed_as"] == ["analyst"]
