"""A run document whose response was edited by hand in a text editor, its digest left as saved: the
record, the workbook and ``quantify --json`` name the changed value as ``check`` does, and quantify
warns once. The commands as subprocesses on the edited file."""

from __future__ import annotations

import json
from pathlib import Path

import openpyxl
from pypdf import PdfReader

from tests.io.helpers import HAND_EDITED_NAMED as NAMED, hand_edited_nitrate
from tests.cli_runs import run_cli, flat

UNNAMED = "cannot be said"


def test_every_output_names_the_hand_edited_value_as_check_does(tmp_path: Path) -> None:
    path = hand_edited_nitrate(tmp_path)
    checked = run_cli("check", str(path))
    assert checked.returncode == 1 and NAMED in checked.stdout, checked.stdout + checked.stderr

    book, record = tmp_path / "n.xlsx", tmp_path / "n.pdf"
    done = run_cli("quantify", str(path), "--export", str(book), "--report", str(record))
    said = done.stdout + done.stderr
    assert said.count("data changed outside Curvewright") == 1, said  # warned once
    assert NAMED in said and UNNAMED not in said

    data = json.loads(run_cli("quantify", str(path), "--json").stdout)
    assert data["data_match_audit_trail"] is False
    assert data["chain_check"].startswith("NOT verified: data changed outside Curvewright")
    assert data["chain_check"].endswith(NAMED), data["chain_check"]

    sheet = openpyxl.load_workbook(book)["Run information"]
    trail = [str(r[1]) for r in sheet.iter_rows(values_only=True) if r and r[0] == "Audit trail"]
    assert trail and trail[0].endswith(NAMED) and UNNAMED not in trail[0], trail

    reader = PdfReader(record)
    first = flat(reader.pages[0].extract_text())
    assert flat(NAMED) in first and flat(UNNAMED) not in first
    assert flat(UNNAMED) not in flat(" ".join(p.extract_text() for p in reader.pages))


def _trail(path: Path) -> list[dict]:
    return json.loads(path.read_text(encoding="utf-8"))["audit"]


def test_recording_exports_keeps_the_outside_change_in_the_trail(tmp_path: Path) -> None:
    # --record adds entries that carry the hash of the data as they are; without an entry for the
    # outside change first, check would afterwards find the data matching the trail and the hand edit
    # would be gone from the record
    path = hand_edited_nitrate(tmp_path)
    before = _trail(path)
    done = run_cli("quantify", str(path), "--export", str(tmp_path / "n.xlsx"), "--record", "--analyst", "R. Ostrander")
    # the run as read was not intact: exit code 1, as check's on it (the verdict line says so)
    assert done.returncode == 1, done.stdout + done.stderr
    assert "but the run's record is NOT intact" in done.stdout
    after = _trail(path)
    added = after[len(before):]
    assert [e["action"] for e in added][:2] == ["data_changed_outside", "export_written"], added
    assert added[0]["details"]["changes"] == [NAMED]
    assert added[0]["details"]["after_entry"] == len(before)

    checked = run_cli("check", str(path))
    # the trail verifies again, and check says where it records the outside change
    assert checked.returncode == 0 and "audit trail verified" in checked.stdout, checked.stdout + checked.stderr
    assert f"entry {len(before) + 1} records data changed outside Curvewright" in checked.stdout
    assert NAMED in checked.stdout
    record = tmp_path / "after.pdf"
    assert run_cli("quantify", str(path), "--report", str(record)).returncode == 0
    pages = flat(" ".join(p.extract_text() for p in PdfReader(record).pages))
    assert flat(f"found the data changed outside Curvewright after entry {len(before)}") in pages
    assert flat(NAMED) in pages
    assert flat(f"The trail records data changed outside Curvewright (entry {len(before) + 1})") in pages


def test_a_hand_edited_run_is_not_signed(tmp_path: Path) -> None:
    path = hand_edited_nitrate(tmp_path)
    before = path.read_bytes()
    done = run_cli("sign", str(path), "--role", "reviewer", "--analyst", "R. Ostrander")
    assert done.returncode != 0
    assert "data changed outside Curvewright" in done.stderr and NAMED in done.stderr, done.stderr
    assert "A signature would cover data its audit trail does not account for" in done.stderr
    assert path.read_bytes() == before  # nothing written
