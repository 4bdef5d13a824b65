"""The content digest kept with a saved run: changes are named, and a damaged digest never stops a check."""

from __future__ import annotations

import json

from curvewright.io.run_document import loads_run
from tests.io.helpers import ROOT

DEMO = ROOT / "sample_runs" / "nitrate_water_linear.json"


def edited_demo(edit) -> str:  # type: ignore[no-untyped-def]
    data = json.loads(DEMO.read_text(encoding="utf-8"))
    edit(data)
    return json.dumps(data)


def test_an_edited_response_is_named_with_its_standard() -> None:
    def edit(data: dict) -> None:
        data["analytes"][0]["standards"][4]["response"] = {"value": 0.1531, "text": "0.1531"}

    change = loads_run(edited_demo(edit)).content_change
    assert change is not None
    assert any("response" in c and "standard N-L2-2 of nitrate-N" in c for c in change.changes), change.changes


def test_a_damaged_digest_still_reports_the_change_without_naming_garbage() -> None:
    def edit(data: dict) -> None:
        data["analytes"][0]["standards"][4]["response"] = {"value": 0.1531, "text": "0.1531"}
        parts = data["content"]["parts"]
        parts["analyte\x1fnitrate-N"] = False       # not a digest
        parts["standard\x1fonly-one-name"] = "abc"  # a key of the wrong shape
        parts["weather\x1fsunny"] = "abc"           # a kind the program does not write

    change = loads_run(edited_demo(edit)).content_change
    assert change is not None and change.entry_number >= 1
    assert str(change).startswith("data changed outside Curvewright after entry")
    assert "an unrecognised part of the run was removed" in change.changes
    assert any("standard N-L2-2 of nitrate-N" in c for c in change.changes)
