"""Several writers of one run document: entries recorded at the same time are all kept, and a
program holding the document open learns when someone else has written it."""

from __future__ import annotations

import subprocess
import sys
import textwrap
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import pytest

from curvewright.io import run_document as doc
from tests.cli_runs import run_cli
from tests.io.helpers import DEMO_RUNS, ROOT, small_run


def record_in_parallel(document: Path, out: Path, rounds: int) -> None:
    """``rounds`` times, two ``quantify --record`` commands started together on the same document."""
    def one(tag: str) -> subprocess.CompletedProcess:
        return run_cli("quantify", str(document), "--export", str(out / f"{tag}.xlsx"), "--record")

    with ThreadPoolExecutor(max_workers=2) as pool:
        for i in range(rounds):
            for result in pool.map(one, (f"a{i}", f"b{i}")):
                assert result.returncode == 0, result.stderr


def check_trail_grew(document: Path, before: int, expected: int) -> None:
    opened = doc.open_run(document)
    assert opened.chain_verified, opened.chain_problems
    assert len(opened.run.audit) == before + expected
    written = [e.details["path"] for e in opened.run.audit[before:]]
    assert len(set(written)) == expected  # every command's own entry, none lost or doubled


def test_two_commands_recording_at_once_lose_no_entries(tmp_path) -> None:
    document = tmp_path / "R.json"
    doc.save_run(doc.open_run(DEMO_RUNS[0]).run, document)
    before = len(doc.open_run(document).run.audit)
    record_in_parallel(document, tmp_path, rounds=3)
    check_trail_grew(document, before, 6)


@pytest.mark.slow
def test_twenty_rounds_of_two_commands_recording_at_once_lose_no_entries(tmp_path) -> None:
    document = tmp_path / "R.json"
    doc.save_run(doc.open_run(DEMO_RUNS[0]).run, document)
    before = len(doc.open_run(document).run.audit)
    record_in_parallel(document, tmp_path, rounds=20)
    check_trail_grew(document, before, 40)


APPENDER = textwrap.dedent("""
    import sys
    from curvewright.io.run_document import append_to_run_document
    for i in range(int(sys.argv[3])):
        append_to_run_document(sys.argv[1], [("export_written", {"path": f"{sys.argv[2]}-{i}.xlsx", "sha256": "0" * 64})])
""")


def test_four_processes_appending_in_a_tight_loop_lose_no_entries(tmp_path) -> None:
    document = tmp_path / "R.json"
    doc.save_run(small_run(), document)
    before = len(small_run().audit)
    processes = [subprocess.Popen([sys.executable, "-c", APPENDER, str(document), f"p{n}", "15"], cwd=ROOT)
                 for n in range(4)]
    assert [p.wait(timeout=300) for p in processes] == [0, 0, 0, 0]
    check_trail_grew(document, before, 60)
    assert doc.open_run(document.with_name("R.json.bak")).chain_verified


def test_a_program_holding_the_document_learns_that_it_changed(tmp_path) -> None:
    document = tmp_path / "R.json"
    doc.save_run(small_run(), document)
    opened = doc.open_run(document)
    assert doc.document_unchanged(document, opened.sha256)
    doc.append_to_run_document(document, [("report_written", {"path": "r.pdf", "sha256": "1" * 64})])
    assert not doc.document_unchanged(document, opened.sha256)
    with pytest.raises(doc.RecordsWouldBeLost, match=r"(?s)now records what this run does not.*\n- 1 audit trail "
                       r"entry \(report_written\).*Nothing was written"):
        doc.save_run(opened.run, document, expected_sha256=opened.sha256)
    with pytest.raises(doc.RecordsWouldBeLost):  # nor when told to overwrite: the check is made at the write
        doc.save_run(opened.run, document)
    assert doc.open_run(document).run.audit[-1].action == "report_written"  # the other writer's entry is kept
    reopened = doc.open_run(document)
    written = doc.save_run(reopened.run, document, expected_sha256=reopened.sha256)
    assert doc.document_unchanged(document, written)


def test_without_file_locks_an_append_still_keeps_the_other_writers_entry(tmp_path, monkeypatch) -> None:
    """On a file system that has no locks, a change made between the read and the replace is seen
    and the entries are appended to the new version."""
    import fcntl

    def no_locks(fd, operation):
        raise OSError(37, "No locks available")

    monkeypatch.setattr(fcntl, "flock", no_locks)
    document = tmp_path / "R.json"
    doc.save_run(small_run(), document)
    real = doc._readable_document
    calls = []

    def another_writer_comes_in(run, path):  # the other writer saves while this one is between read and write
        data = real(run, path)
        if not calls:
            calls.append(1)
            other = doc.open_run(path).run
            from curvewright.io.audit import append_entry
            from dataclasses import replace

            trail = append_entry(other.audit, "report_written", {"path": "other.pdf", "sha256": "2" * 64}, user="other")
            path.write_text(doc.dumps_run(replace(other, audit=trail)), encoding="utf-8")
        return data

    monkeypatch.setattr(doc, "_readable_document", another_writer_comes_in)
    saved = doc.append_to_run_document(document, [("export_written", {"path": "mine.xlsx", "sha256": "3" * 64})])
    actions = [(e.action, e.details["path"]) for e in doc.open_run(document).run.audit[-2:]]
    assert actions == [("report_written", "other.pdf"), ("export_written", "mine.xlsx")]
    assert saved == doc.open_run(document).run and doc.open_run(document).chain_verified


def test_a_document_changed_without_new_records_is_refused_only_while_its_reader_expects_it(tmp_path) -> None:
    document = tmp_path / "R.json"
    doc.save_run(small_run(), document)
    opened = doc.open_run(document)
    document.write_bytes(document.read_bytes().replace(b"\n", b"\r\n"))  # laid out anew, nothing recorded
    with pytest.raises(doc.DocumentChanged, match=r"changed on disk after it was opened .*; nothing was written"):
        doc.save_run(opened.run, document, expected_sha256=opened.sha256)
    doc.save_run(opened.run, document)  # the caller chose to overwrite: nothing recorded is lost
    assert doc.open_run(document).run == opened.run
