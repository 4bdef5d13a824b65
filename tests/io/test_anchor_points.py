"""Anchor points of a logistic curve marked and cleared with a reason, audited, kept in the run document."""

from __future__ import annotations

from pathlib import Path

import pytest

from curvewright.core.run import RunError
from curvewright.core.run_analysis import analyse_run
from curvewright.io import run_edits
from curvewright.io.audit import verify_chain
from curvewright.io.audit_words import entry_words
from curvewright.io.run_document import loads_run, dumps_run, open_run

CYTOKINE = Path(__file__).resolve().parents[2] / "sample_runs" / "cytokine_serum_4pl.json"
ANCHORS = ["A1-1", "A1-2", "A2-1", "A2-2"]


def anchors(run) -> list[str]:  # type: ignore[no-untyped-def]
    return [s.id for s in run.analyte("cytokine").standards if s.anchor]


def test_clearing_anchor_points_judges_them_again_and_says_why() -> None:
    run = open_run(CYTOKINE).run
    assert anchors(run) == ANCHORS
    cleared = run_edits.clear_anchor_points(run, "cytokine", ["A2-1", "A2-2"], "upper anchor reread as a standard",
                                            user="demo.analyst")
    assert anchors(cleared) == ["A1-1", "A1-2"]
    entry = cleared.audit[-1]
    assert entry.action == "anchor_points_cleared"
    assert entry.details == {"analyte": "cytokine", "standards": ["A2-1", "A2-2"],
                             "reason": "upper anchor reread as a standard"}
    assert entry_words(entry) == ("cleared the anchor-point mark of standard(s) A2-1, A2-2 of cytokine (judged for "
                                  "acceptance again). Reason: upper anchor reread as a standard.")
    assert verify_chain(cleared.audit) == ()
    # judged again: the upper pair back-calculates 37.5 % low and 53.2 % high, outside ±25 % at the top level
    result = analyse_run(cleared).analyte("cytokine")
    assert result.calibration.calibrated_range == (3.0, 6000.0)
    assert list(result.calibration.relative_error[-2:].round(1)) == [-37.5, 53.2]
    assert result.verdict.reasons[0].startswith("pass: 16 of 18 standards within limits")
    assert "2 anchor point(s) fitted but not judged" in result.verdict.reasons[0]
    assert "note: the highest level (6000) fails" in result.verdict.reasons[-1]
    # the mark survives saving and opening the document
    assert anchors(loads_run(dumps_run(cleared)).run) == ["A1-1", "A1-2"]


def test_marking_them_again_restores_the_run_as_judged() -> None:
    run = open_run(CYTOKINE).run
    cleared = run_edits.clear_anchor_points(run, "cytokine", ANCHORS, "checking the fit without anchors")
    assert anchors(cleared) == []
    marked = run_edits.mark_anchor_points(cleared, "cytokine", ANCHORS, "anchors as the validated method places them")
    assert anchors(marked) == ANCHORS and marked.analytes == run.analytes
    assert entry_words(marked.audit[-1]) == (
        "marked standard(s) A1-1, A1-2, A2-1, A2-2 of cytokine as anchor points (fitted, not judged for acceptance). "
        "Reason: anchors as the validated method places them.")
    assert analyse_run(marked).analyte("cytokine").accepted
    assert len(marked.audit) == len(run.audit) + 2 and verify_chain(marked.audit) == ()


@pytest.mark.parametrize("change, ids, reason, words", [
    (run_edits.mark_anchor_points, ["S1-1"], " ", "marking anchor points of cytokine: give the reason"),
    (run_edits.clear_anchor_points, ["A1-1"], "", "clearing anchor points of cytokine: give the reason"),
    (run_edits.mark_anchor_points, [], "why", "name at least one standard"),
    (run_edits.mark_anchor_points, ["A1-1"], "why", r"standard\(s\) A1-1 is already an anchor point"),
    (run_edits.clear_anchor_points, ["S3-1", "A1-1"], "why", r"standard\(s\) S3-1 is not an anchor point"),
    (run_edits.clear_anchor_points, ["A1-1", "A1-1"], "why", r"standard\(s\) A1-1 named more than once"),
    (run_edits.mark_anchor_points, ["S9-9"], "why", "there is no standard with id 'S9-9'"),
])
def test_a_change_of_anchor_points_is_refused_in_words(change, ids, reason, words) -> None:  # type: ignore[no-untyped-def]
    run = open_run(CYTOKINE).run
    with pytest.raises(RunError, match=words):
        change(run, "cytokine", ids, reason)


def test_a_standard_inside_the_range_marked_as_an_anchor_is_refused_by_the_fit() -> None:
    # the run edit keeps what the analyst did; the fit says why the curve cannot take it
    run = open_run(CYTOKINE).run
    marked = run_edits.mark_anchor_points(run, "cytokine", ["S4-1"], "trying a mid-range anchor")
    result = analyse_run(marked).analyte("cytokine")
    assert result.calibration is None
    assert result.error.startswith("anchor points: the standard at concentration 45 is marked as an anchor point but "
                                   "lies within the range")


def test_the_standards_table_says_which_standards_are_anchor_points() -> None:
    # the table the workbook and the record print: an anchor point's %RE is there, its verdict says why none
    from curvewright.io.result_tables import standards_table

    result = analyse_run(open_run(CYTOKINE).run).analyte("cytokine")
    table = standards_table(result)
    names = [c.name for c in table.columns]
    rows = {row[0]: dict(zip(names, row)) for row in table.rows}
    for sid in ANCHORS:
        assert rows[sid]["Within limits"] == "anchor point, not judged"
        assert rows[sid]["Tolerance (%)"] is None and rows[sid]["Included"] == "yes"
    assert round(rows["A2-2"]["Relative error (%)"], 1) == 53.2
    assert rows["S1-1"]["Within limits"] == "yes" and rows["S1-1"]["Tolerance (%)"] == 25.0
