"""Run documents: exact round trips, atomic saving with a backup, the audit chain, migrations."""

from __future__ import annotations

import json
from dataclasses import replace

import jsonschema
import pytest

from curvewright.core.run import Reading
from curvewright.io import run_document as doc
from curvewright.io import run_edits
from curvewright.io.audit import verify_chain
from curvewright.io.errors import DocumentError, ExportError
from tests.io.helpers import DEMO_RUNS, ROOT, FixedClock, small_run


def test_save_and_open_keep_every_value_bit_for_bit(tmp_path) -> None:
    run = small_run()
    path = tmp_path / "batch.json"
    doc.save_run(run, path)
    opened = doc.open_run(path)
    assert opened.run == run
    assert opened.chain_verified
    assert doc.dumps_run(opened.run) == path.read_text(encoding="utf-8")


def test_saving_keeps_the_previous_version_as_backup(tmp_path) -> None:
    path = tmp_path / "batch.json"
    first = small_run()
    doc.save_run(first, path)
    second = run_edits.include_standard(first, "cobalt", "S6b", "reason withdrawn", user="tester", clock=FixedClock())
    doc.save_run(second, path)
    assert doc.open_run(path).run == second
    assert doc.open_run(path.with_name("batch.json.bak")).run == first
    assert not [p for p in tmp_path.iterdir() if p.name.endswith(".tmp")]


def test_saving_into_a_missing_folder_says_so_and_loses_nothing(tmp_path) -> None:
    with pytest.raises(ExportError, match="cannot write in folder"):
        doc.save_run(small_run(), tmp_path / "no such folder" / "batch.json")


def test_audit_chain_records_edits_and_detects_tampering() -> None:
    run = small_run()
    actions = [e.action for e in run.audit]
    assert actions == ["run_created", "imported", "standard_excluded"]
    assert run.audit[-1].details["reason"] == "=cmd() typed as a reason"
    assert run.audit[0].user == "tester" and run.audit[0].time_utc.endswith("Z")
    assert verify_chain(run.audit) == ()
    altered = replace(run.audit[1], details={"what": "samples"})
    assert "altered" in verify_chain((run.audit[0], altered, run.audit[2]))[0]
    assert "removed, inserted or reordered" in verify_chain((run.audit[0], run.audit[2]))[0]


def test_a_broken_chain_opens_but_says_so(tmp_path) -> None:
    path = tmp_path / "batch.json"
    doc.save_run(small_run(), path)
    data = json.loads(path.read_text(encoding="utf-8"))
    data["audit"][1]["details"]["sha256"] = "f" * 64
    path.write_text(json.dumps(data), encoding="utf-8")
    opened = doc.open_run(path)
    assert not opened.chain_verified
    assert "audit entry 2" in opened.chain_problems[0]


def test_exclusion_is_a_flag_and_the_standard_stays() -> None:
    run = small_run()
    standard = run.analyte("cobalt").standard("S6b")
    assert not standard.included and standard.response == Reading(40450.0, "40450")
    assert len(run.analyte("cobalt").standards) == 12


def test_edits_log_old_and_new_values() -> None:
    run = run_edits.edit_standard(small_run(), "cobalt", "S1a", "response", Reading(1030.0, "1030"), "typing error corrected",
                                  user="tester", clock=FixedClock())
    entry = run.audit[-1]
    assert (entry.action, entry.details["old"], entry.details["new"]) == ("value_edited", "1031.5", "1030")
    chosen = run_edits.choose_model(run, "cobalt", "quadratic", "1/x", "test", recommended=("linear", "none"),
                                    user="tester", clock=FixedClock())
    assert chosen.analyte("cobalt").model == "quadratic"
    with pytest.raises(ValueError, match="give the reason"):
        run_edits.choose_model(run, "cobalt", "quadratic", "none", " ", recommended=("linear", "none"))


def test_demo_runs_match_the_published_schema() -> None:
    schema = json.loads((ROOT / "resources" / "run-document.schema.json").read_text(encoding="utf-8"))
    assert len(DEMO_RUNS) >= 3
    for path in DEMO_RUNS:
        jsonschema.validate(json.loads(path.read_text(encoding="utf-8")), schema)
    jsonschema.validate(json.loads(doc.dumps_run(small_run())), schema)


def test_versions_outside_the_known_range_are_refused() -> None:
    current = json.loads(doc.dumps_run(small_run()))
    with pytest.raises(DocumentError, match="'schema_version' must be a whole number"):
        doc.loads_run(json.dumps({**current, "schema_version": 0}))
    with pytest.raises(DocumentError, match="newer than this Curvewright"):
        doc.loads_run(json.dumps({**current, "schema_version": doc.SCHEMA_VERSION + 1}))


def test_a_registered_migration_brings_an_old_document_up_to_date(monkeypatch) -> None:
    current = json.loads(doc.dumps_run(small_run()))
    monkeypatch.setattr(doc, "SCHEMA_VERSION", 2)

    def one_to_two(data):
        data = dict(data)
        data["description"] = data["description"] + " (migrated)"
        return data

    monkeypatch.setitem(doc.MIGRATIONS, 1, one_to_two)
    opened = doc.loads_run(json.dumps(current))
    assert opened.migrated_from == 1
    assert opened.run.description.endswith("(migrated)")
