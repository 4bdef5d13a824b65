"""The model evidence on screen when no candidate is acceptable: the candidate the steps pick lacks fit.

Invented scenarios, one run document each:
- the Harrowgate zinc standards of ``tests/test_cli_quadratic_lacks_fit.py`` (lack-of-fit p values checked
  against statsmodels there): the straight line is rejected and the quadratic lacks fit too;
- the Fernhollow cytokine plate of ``tests/test_cli_logistic_lacks_fit.py`` (the 4PL's lack-of-fit p checked
  with scipy there): the ligand-binding profile's logistic curve lacks fit.
The evidence panel marks no candidate recommended and says why first, with the p value, and no later reason
says that the rejected model is recommended; the model chosen from the panel asks for a reason and is recorded
with no recommendation beside it (the entry the workbook's and the record's audit trail print).
"""

from __future__ import annotations

import pytest

from tests.app.conftest import recommended_marks, show_evidence, use_from_evidence
from tests.test_cli_logistic_lacks_fit import plate_run_document
from tests.test_cli_quadratic_lacks_fit import zinc_run_document

CASES = {
    "quadratic": (zinc_run_document, "zinc",
                  "the quadratic (unweighted (ordinary least squares)) is rejected by its lack-of-fit test (p = 7.49 × 10⁻⁷)",
                  "the quadratic is recommended", ("quadratic", "none"),
                  "cubic rise above 8 mg/L; the range is to be narrowed in the next batch"),
    "logistic": (plate_run_document, "cytokine",
                 "the 4PL logistic curve (weighted 1/y²) is rejected by its lack-of-fit test (p = 1.22 × 10⁻⁹)",
                 "a logistic curve is recommended", ("4pl", "1/y^2"),
                 "distortion above 32 pg/mL under investigation; reported for information only"),
}


@pytest.mark.parametrize("case", list(CASES))
def test_evidence_panel_recommends_no_model_that_lacks_fit(case, make_window, qtbot, answer_dialogs, tmp_path) -> None:
    document, analyte, rejected, not_said, (model, weighting), reason = CASES[case]
    window = make_window(document(tmp_path / f"{analyte}.json"))
    panel = show_evidence(window)
    assert panel.comparison.recommendation is None
    marks = recommended_marks(panel)
    assert marks == [""] * len(marks)
    shown = panel.reasons.toPlainText()
    # the panel's plain text gives no-break spaces as spaces
    assert shown.startswith(f"• no candidate is acceptable, so none is recommended: {rejected}"), shown
    assert not_said not in shown

    asked, entry = use_from_evidence(qtbot, window, answer_dialogs, model, weighting, reason)
    assert f"No model is recommended for {analyte}: no candidate is acceptable" in asked
    assert entry.action == "model_chosen" and entry.details["new"] == [model, weighting]
    assert entry.details["recommended"] is None  # the workbook's and the record's audit trail print this entry
