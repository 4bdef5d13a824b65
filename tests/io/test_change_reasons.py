"""A raw value that was entered changes only with a reason, in the API as in the app."""

from __future__ import annotations

import math
import re
from dataclasses import replace

import pytest

from curvewright.core.run import Reading, RunError, Sample, Standard
from curvewright.io import run_edits
from curvewright.io.run_edits import ReasonRequired
from tests.io.helpers import small_run


def with_response(run, index: int, text: str):  # type: ignore[no-untyped-def]
    standards = list(run.analytes[0].standards)
    standards[index] = replace(standards[index], response=Reading(float(text), text))
    return tuple(standards)


def test_changing_an_entered_response_needs_a_reason() -> None:
    run = small_run()
    old = run.analytes[0].standards[2]
    with pytest.raises(ReasonRequired, match=rf"changing the response of '{old.id}' from '{old.response.text}' to '1234.5'"):
        run_edits.update_standards(run, "cobalt", with_response(run, 2, "1234.5"), "typed")
    changed = run_edits.update_standards(run, "cobalt", with_response(run, 2, "1234.5"), "typed",
                                         reason="data entry error corrected against the raw data")
    entry = changed.audit[-1]
    assert entry.details["reason"] == "data entry error corrected against the raw data"
    assert entry.details["changes"] == [{"standard": old.id, "field": "response", "old": old.response.text, "new": "1234.5"}]


def test_filling_in_an_empty_value_is_an_entry_not_a_change() -> None:
    run = small_run()
    blank = Standard("S-new", math.nan, Reading(None, ""), 1)
    run = run_edits.update_standards(run, "cobalt", run.analytes[0].standards + (blank,), "added")
    filled = replace(blank, concentration=3.0, response=Reading(310.2, "310.2"))
    after = run_edits.update_standards(run, "cobalt", run.analytes[0].standards[:-1] + (filled,), "typed")
    assert after.audit[-1].action == "value_edited" and after.audit[-1].details["reason"] == ""


def test_changing_a_dilution_factor_or_a_sample_response_needs_a_reason() -> None:
    run = small_run()
    first = run.samples[0]
    diluted = (replace(first, dilution_factor=first.dilution_factor * 10),) + run.samples[1:]
    with pytest.raises(ReasonRequired, match="dilution factor"):
        run_edits.update_samples(run, diluted, "typed")
    done = run_edits.update_samples(run, diluted, "typed", reason="first entry: the value was not recorded yet")
    assert done.audit[-1].details["reason"] == "first entry: the value was not recorded yet"
    m = first.measurements[0]
    reread = (replace(first, measurements=(replace(m, response=Reading(1.0, "1.0")),) + first.measurements[1:]),) + run.samples[1:]
    with pytest.raises(ReasonRequired, match="responses"):
        run_edits.update_samples(run, reread, "typed")
    added = run.samples + (Sample("New well"),)
    assert run_edits.update_samples(run, added, "added").audit[-1].details["added"][0]["id"] == "New well"


def test_edit_standard_needs_a_reason_for_an_entered_value() -> None:
    run = small_run()
    sid = run.analytes[0].standards[0].id
    with pytest.raises(ReasonRequired):
        run_edits.edit_standard(run, "cobalt", sid, "concentration", 1.5)
    assert run_edits.edit_standard(run, "cobalt", sid, "concentration", 1.5, "re-read from the weighing record").audit[-1].details["reason"]


def test_a_sample_edit_among_many_records_that_sample_alone() -> None:
    """An edit of one sample compares only the samples that are new objects (runs and samples are
    immutable, so one kept as it was has the same fields); a copy made field for field records nothing."""
    run = small_run()
    many = run.samples + tuple(Sample(f"Well {k:04d}", dilution_factor=1.0 + k % 3) for k in range(2000))
    run = run_edits.update_samples(run, many, "added")
    target = run.samples[1500]
    edited = run.samples[:1500] + (replace(target, run_order=77),) + run.samples[1501:]
    done = run_edits.update_samples(run, edited, "typed")
    assert done.audit[-1].details["changes"] == [{"sample": target.id, "field": "run_order",
                                                  "old": target.run_order, "new": 77}]
    copies = tuple(replace(s) for s in run.samples)  # new objects, the same fields: nothing changed
    assert run_edits.update_samples(run, copies, "typed") is run


def test_an_id_used_twice_is_refused_for_standards_and_samples_alike() -> None:
    # the first id repeated going down the table is named, in the words of its table
    run = small_run()
    standards = run.analytes[0].standards
    twice = (*standards[:3], replace(standards[3], id=standards[1].id), replace(standards[4], id=standards[0].id),
             *standards[5:])
    with pytest.raises(RunError, match=rf"^cobalt: standard id '{re.escape(standards[1].id)}' is used twice; each standard needs "
                                       r"its own id\.$"):
        run_edits.update_standards(run, "cobalt", twice, "typed")
    samples = run.samples
    assert len(samples) >= 2
    with pytest.raises(RunError, match=rf"^sample id '{re.escape(samples[0].id)}' is used twice; each sample needs its own id\.$"):
        run_edits.update_samples(run, (*samples, replace(samples[-1], id=samples[0].id)), "typed")
    assert run_edits.repeated_id(["a", "b", "c"]) is None
    assert run_edits.repeated_id(["a", "b", "b", "a"]) == "b"
