"""The model evidence's reasons on screen are the command line's, word for word.

Invented scenario: the manganese standards of ``tests/test_cli_compare_reasons.py`` (blanks and six levels in
duplicate), opened in the app; the Model evidence tab shows the reasons and the candidates not fitted as
``compare`` prints them for the same run file.
"""

from __future__ import annotations

from curvewright.core.run import Analyte, Reading, Standard
from curvewright.io import run_edits
from curvewright.io.run_document import dumps_run
from tests.cli_runs import run_cli
from tests.test_cli_compare_reasons import MANGANESE


def test_the_evidence_tab_reads_as_compare_does(make_window, tmp_path) -> None:
    standards = tuple(Standard(f"MN-{i + 1}", float(c), Reading(r, f"{r}"), 1 + i % 2, "")
                      for i, (c, r) in enumerate(MANGANESE))
    run = run_edits.new_run("Manganese, batch 12 (invented)",
                            (Analyte("manganese", "µg/L", "counts", standards, "linear", "power"),), user="a.tester")
    path = tmp_path / "mn.json"
    path.write_text(dumps_run(run), encoding="utf-8")
    printed = run_cli("compare", str(path))
    assert printed.returncode in (0, 1), printed.stderr
    said = [line.strip()[2:] for line in printed.stdout.splitlines() if line.strip().startswith("• ")]
    assert any(line.startswith("not fitted with power weighting for the line through the origin") for line in said)

    window = make_window(path)
    window.bottom_tabs.setCurrentWidget(window.evidence_panel)
    shown = [line[2:] for line in window.evidence_panel.reasons.toPlainText().splitlines()]
    assert shown == said
