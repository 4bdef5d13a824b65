"""The audit entries of one analyte across its renames (:mod:`curvewright.io.analyte_trail`): a chain
of renames is followed back, two analytes that swap names keep their own entries, and an analyte that
takes a name another analyte had before starts its own trail there."""

from __future__ import annotations

from dataclasses import replace

from curvewright.core.run import Analyte, Reading, Run, Standard
from curvewright.io import run_edits
from curvewright.io.analyte_trail import analyte_entries, last_entry

WHO = "lab-analyst"


def _analyte(name: str, prefix: str) -> Analyte:
    """An invented analyte: three standards."""
    return Analyte(name, "ng/mL", "area", standards=tuple(
        Standard(f"{prefix}-{i}", float(c), Reading.of(str(r))) for i, (c, r) in enumerate(((1, 105), (5, 498), (20, 2011)), 1)))


def _run() -> Run:
    return run_edits.new_run("panel 7", (_analyte("velmorin", "V"), _analyte("ostarin", "O")), user=WHO)


def _rename(run: Run, old: str, new: str) -> Run:
    return run_edits.edit_analyte(run, old, name=new, concentration_unit="ng/mL", response_unit="area", user=WHO)


def test_a_chain_of_renames_is_followed_back_to_the_first_name() -> None:
    run = run_edits.exclude_standard(_run(), "velmorin", "V-2", "vial dropped", user=WHO)
    run = _rename(run, "velmorin", "velmorin (lot A)")
    run = run_edits.choose_model(run, "velmorin (lot A)", "quadratic", "1/x", "procedure", user=WHO)
    run = _rename(run, "velmorin (lot A)", "velmorin")
    found = last_entry(run.audit, "velmorin", "standard_excluded", standard="V-2")
    assert found is not None and found[1].details["analyte"] == "velmorin"
    found = last_entry(run.audit, "velmorin", "model_chosen")
    assert found is not None and found[1].details["analyte"] == "velmorin (lot A)"
    assert last_entry(run.audit, "ostarin", "model_chosen") is None


def test_two_analytes_that_swap_names_keep_their_own_entries() -> None:
    run = run_edits.choose_model(_run(), "velmorin", "quadratic", "none", "procedure", user=WHO)
    run = _rename(run, "velmorin", "spare")
    run = _rename(run, "ostarin", "velmorin")
    run = _rename(run, "spare", "ostarin")  # the first velmorin is now called ostarin
    assert last_entry(run.audit, "ostarin", "model_chosen") is not None
    assert last_entry(run.audit, "velmorin", "model_chosen") is None


def test_an_analyte_added_with_an_old_name_starts_its_own_trail() -> None:
    run = run_edits.choose_model(_run(), "velmorin", "quadratic", "none", "procedure", user=WHO)
    run = _rename(run, "velmorin", "velmorin-M1")
    added = replace(run, analytes=run.analytes + (_analyte("velmorin", "W"),))
    run = run_edits.record(added, "settings_changed", {"changes": {"analyte_added": "velmorin"}, "reason": ""}, user=WHO)
    assert last_entry(run.audit, "velmorin", "model_chosen") is None
    assert last_entry(run.audit, "velmorin-M1", "model_chosen") is not None
    assert [run.audit[i].action for i in analyte_entries(run.audit, "velmorin")] == ["settings_changed"]
