"""The θ the power weighting's weights use, on screen: the curve's line and the model evidence.

Invented scenario: the lead standards of ``tests/test_cli_power_weights_theta.py`` (where the
replicate evidence's θ = 0.83 is worked out with scipy), opened in the app with the straight line
weighted by a power of the mean response.
"""

from __future__ import annotations

from curvewright.core.run import Analyte, Reading, Standard
from curvewright.io import run_edits
from curvewright.io.run_document import dumps_run
from tests.test_cli_power_weights_theta import LEAD


def test_the_screen_shows_the_theta_the_weights_use(make_window, tmp_path) -> None:
    standards = tuple(Standard(f"P{c}-{i + 1}", float(c), Reading(r, f"{r:.3f}"), i + 1, f"L{c}")
                      for c, rs in LEAD.items() for i, r in enumerate(rs))
    run = run_edits.new_run("Lead, batch 3 (invented)", (Analyte("lead", "ng/mL", "counts", standards, "linear", "power"),),
                            user="a.tester")
    path = tmp_path / "lead.json"
    path.write_text(dumps_run(run), encoding="utf-8")
    window = make_window(path)
    words = window.curve_view.curve_words.text()
    assert words.startswith("straight line y = b0 + b1·x, weighted by a power of the mean response (variance function "
                            "of all standards) (SD ∝ (mean response)^θ with θ = 0.808, the θ the weights use, fitted "
                            "to the residuals of all standards): y = "), words
    window.bottom_tabs.setCurrentWidget(window.evidence_panel)
    reasons = window.evidence_panel.reasons.toPlainText()
    assert ("the straight line's weights use θ = 0.808, fitted to the residuals of all standards about the curve; "
            "θ = 0.83 is the replicate evidence's estimate") in reasons
