"""The refit preview of an exclusion counts the standards within limits as the verdict counts them:
under a profile that counts excluded standards as not passing (ICH M10 guideline on bioanalytical
method validation, section 3.2.5 as the shipped profile reads it: at least 75 % of the calibration
standards within limits, excluded ones counting against it), "n of m" takes in the excluded standards,
and the exclusion that makes the run fail is shown failing, with the check that fails in the verdict's
words.

The veltaprine run is the project's invented demo run (sample_runs/veltaprine_plasma_weighted.json)."""

from __future__ import annotations

import re
import shutil

from PySide6.QtCore import Qt

from tests.app.conftest import ROOT, settle
from tests.app.test_exclusion_preview_range import preview_rows
from tests.app.test_user_journeys import select_standard


def verdict_count(window) -> str:  # type: ignore[no-untyped-def]
    """"n of m" as the verdict's own words give it (the words the banner and the record print)."""
    reason = window.session.result.analytes[0].verdict.reasons[0]
    return re.search(r"(\d+ of \d+) standards within limits", reason).group(1)


def test_the_exclusion_preview_counts_as_the_verdict_does(make_window, qtbot, answer_dialogs, tmp_path) -> None:
    path = tmp_path / "veltaprine.json"
    shutil.copy(ROOT / "sample_runs" / "veltaprine_plasma_weighted.json", path)
    window = make_window(path)
    window.resize(1366, 768)
    assert window.session.result.profile.standards.count_excluded_as_failing
    answer_dialogs["reason"] = "vial found with its cap pierced twice (bench log p. 31)"
    shown = []
    for standard_id in ("CAL1-1", "CAL1-2", "CAL4-1", "CAL5-2", "CAL6-1"):
        before = verdict_count(window)
        row = [s.id for s in window.standards_model.standards].index(standard_id)
        assert select_standard(window, row) == standard_id
        qtbot.mouseClick(window.exclude_button, Qt.MouseButton.LeftButton)
        settle(qtbot, window)
        title, prompt = answer_dialogs.seen[-1]
        assert title == f"Exclude standard {standard_id}"
        assert not window.session.run.analytes[0].standard(standard_id).included
        rows = preview_rows(prompt)
        now, after = rows["Standards within limits"]
        # the preview's "now" and "after the change" are the verdict's count before and after
        assert now.split(" (")[0] == before and after.split(" (")[0] == verdict_count(window), prompt
        shown.append((after, rows["Verdict"], rows.get("Checks that fail")))
    # the fifth exclusion is the one that fails the run: 11 of 16 is below the 75 % required
    after, verdict, failing = shown[-1]
    assert after == "11 of 16 (5 excluded counted as not passing)"
    assert verdict == ("accepted", "NOT accepted") and not window.session.result.accepted
    assert failing is not None and failing[0] == "" and failing[1].startswith("standards: 11 of 16 standards within limits")
    assert "5 excluded standard(s) counted as not passing" in failing[1]
    assert [v for _, v, _ in shown[:-1]] == [("accepted", "accepted")] * 4
