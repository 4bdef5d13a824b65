"""The audit trail in words: who, when, what changed from what to what, and why — and details of an
unexpected shape said as recorded, never an error."""

from __future__ import annotations

import pytest

from curvewright.core.run import AuditEntry
from curvewright.io.audit_words import entry_words, when, who


def entry(action: str, details, **person) -> AuditEntry:  # type: ignore[no-untyped-def]
    return AuditEntry("2026-11-05T13:42:00.000Z", "demo.analyst2", action, details, "0" * 64, "1" * 64, **person)


def test_a_change_says_from_what_to_what_and_why() -> None:
    e = entry("value_edited", {"analyte": "lead", "standard": "Pb-3", "field": "response", "old": 502.7, "new": 512.7,
                               "reason": "data entry error"}, analyst="Robin Example", analyst_id="QA-0042")
    assert entry_words(e) == ("changed the response of standard Pb-3 of lead from 502.7 to 512.7. "
                              "Reason: data entry error.")
    assert who(e) == "Robin Example (ID QA-0042, login demo.analyst2)" and when(e) == "2026-11-05 13:42:00 UTC"
    assert who(entry("x", {})) == "demo.analyst2 (login; full name not recorded)"


def test_a_model_choice_names_before_after_and_the_recommendation() -> None:
    e = entry("model_chosen", {"analyte": "lead", "old": ["linear", "none"], "new": ["linear", "1/x^2"],
                               "recommended": ["linear", "1/x^2"], "reason": "scatter grows with concentration"})
    assert entry_words(e) == ("chose linear, 1/x^2 for lead (before: linear, none; recommended: linear, 1/x^2). "
                              "Reason: scatter grows with concentration.")


@pytest.mark.parametrize("action, details", [
    ("model_chosen", {"analyte": "lead", "old": [], "new": ["linear"], "recommended": [1]}),
    ("model_chosen", {"old": "linear", "new": 5}),
    ("value_edited", {"changes": [1, "x", None]}),
    ("standard_added", {"added": ["Pb-9", 3]}),
    ("standard_removed_before_review", {"standard": "Pb-9"}),
    ("samples_edited", {"added": "U1", "removed": [None]}),
    ("imported", {"sha256": 12}),
])
def test_details_of_an_unexpected_shape_are_said_as_recorded(action: str, details) -> None:  # type: ignore[no-untyped-def]
    # a document written by another program or damaged by hand still prints its trail (the check says whether
    # the trail holds; the words must not stop the workbook or the record)
    words = entry_words(entry(action, details))
    assert words.startswith(action.replace("_", " ")) or words.split()[0] in ("chose", "changed", "added", "removed",
                                                                               "imported")
    assert isinstance(words, str) and words.endswith(".")


def _undo(*acted: tuple[str, dict]) -> AuditEntry:  # type: ignore[type-arg]
    return entry("change_undone", {"change": "the label", "entries": [{"action": a, "details": d, "hash": "2" * 64}
                                                                       for a, d in acted]})


@pytest.mark.parametrize("action, details, restored", [
    ("value_edited", {"analyte": "lead", "standard": "Pb-3", "field": "response", "old": "502.7", "new": "512.7",
                      "reason": "typo"}, "changed the response of standard Pb-3 of lead from 512.7 to 502.7."),
    ("value_edited", {"analyte": "lead", "changes": [{"standard": "Pb-3", "field": "concentration", "old": 2.0, "new": 2.5}],
                      "added": [{"id": "Pb-9"}], "reason": "r"},
     "changed, for lead: concentration of Pb-3 from 2.5 to 2; took out standard(s) Pb-9 again."),
    ("standard_included", {"analyte": "lead", "standard": "Pb-3", "previous_reason": "air bubble", "reason": "r"},
     "excluded standard Pb-3 of lead from the fit again (air bubble)."),
    ("anchor_points_marked", {"analyte": "il-6", "standards": ["A1", "A8"], "reason": "r"},
     "cleared the anchor-point mark of standard(s) A1, A8 of il-6 (judged for acceptance again)."),
    ("model_chosen", {"analyte": "lead", "old": ["linear", "none"], "new": ["quadratic", "1/x"], "reason": "r"},
     "set lead back to linear, none (from quadratic, 1/x)."),
    ("settings_changed", {"changes": {"analyte_added": "zinc"}, "reason": "r"},
     "took analyte zinc out of the run again (its addition undone)."),
    ("analyte_edited", {"analyte": "lead", "changes": {"name": {"old": "lead", "new": "lead-208"},
                                                      "concentration_unit": {"old": "µg/L", "new": "ng/mL"}}},
     "changed analyte lead-208: name from lead-208 to lead; concentration unit from ng/mL to µg/L."),
    ("samples_edited", {"changes": [{"sample": "W-1", "field": "dilution_factor", "old": 1.0, "new": 10.0}],
                        "added": [], "removed": [], "reason": "r"}, "changed dilution factor of W-1 from 10 to 1."),
])
def test_an_undo_says_what_it_restored_in_the_entrys_words_read_backwards(action, details, restored) -> None:  # type: ignore[no-untyped-def]
    assert entry_words(_undo((action, details))) == f"undid “the label”, restoring what it changed: {restored}"


def test_an_undo_of_an_unexpected_shape_is_said_as_recorded() -> None:
    words = entry_words(_undo(("model_chosen", {"analyte": "lead", "old": 3})))
    assert words.startswith("undid “the label”, restoring what it changed: took back: ")
    assert entry_words(entry("change_redone", {"change": "the label"})) == "redid: the label."
