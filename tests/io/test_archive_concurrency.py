"""Analysts filing at the same moment lose nothing, and a filing cut off half-way leaves nothing partial.

Eight ``curvewright archive add`` processes start together against one archive (SQLite in WAL mode,
and a real PostgreSQL server), each filing 50 runs of its own and the same 5 shared runs: the
archive ends with every run exactly once, each whole. A filing killed mid-way leaves only whole runs,
and filing the same files again completes the archive.
"""

from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest
from sqlalchemy import text

from curvewright.io.archive import content_hash, open_archive
from curvewright.io.archive.schema import FILED_TABLES
from tests.io.archive_runs import lead_run, write_runs
from tests.postgres_server import pg_url, postgres_server  # noqa: F401 - fixtures

PROCESSES, OWN, SHARED = 8, 50, 5
ROOT = Path(__file__).resolve().parents[2]


@pytest.fixture(params=("sqlite", "postgresql"))
def where(request, tmp_path) -> str:  # type: ignore[no-untyped-def]
    if request.param == "sqlite":
        return str(tmp_path / "archive")
    return request.getfixturevalue("pg_url")


def command(*args: str) -> list[str]:
    return [sys.executable, "-m", "curvewright.cli", *args]


def environment() -> dict[str, str]:
    return {**os.environ, "PYTHONUNBUFFERED": "1", "QT_QPA_PLATFORM": "offscreen"}


def consistency(archive) -> tuple[int, int, int]:  # type: ignore[no-untyped-def]
    """(runs, runs without exactly one analyte row, analyte rows without their four recoveries)."""
    with archive.engine.connect() as conn:
        runs = conn.execute(text("SELECT count(*) FROM runs")).scalar()
        lonely = conn.execute(text("SELECT count(*) FROM runs r WHERE (SELECT count(*) FROM run_analytes a "
                                   "WHERE a.run_id = r.id) <> 1")).scalar()
        partial = conn.execute(text("SELECT count(*) FROM run_analytes a WHERE (SELECT count(*) FROM recoveries c "
                                    "WHERE c.run_analyte_id = a.id) <> 4")).scalar()
    return int(runs), int(lonely), int(partial)


def test_eight_processes_filing_fifty_runs_each_lose_nothing_and_duplicate_nothing(where, tmp_path) -> None:  # type: ignore[no-untyped-def]
    shared = [lead_run(9000 + k, slope=10.0 + 0.001 * k) for k in range(SHARED)]
    folders, expected = [], {content_hash(r) for r in shared}
    for p in range(PROCESSES):
        own = [lead_run(p * 1000 + k, slope=10.0 + 0.0001 * k, name=f"Lead, bench {p + 1}, run {k + 1:02d}")
               for k in range(OWN)]
        expected |= {content_hash(r) for r in own}
        folder = tmp_path / f"bench_{p + 1}"
        write_runs(folder, own + shared)
        folders.append(folder)
    assert len(expected) == PROCESSES * OWN + SHARED
    processes = [subprocess.Popen(command("archive", "add", str(f), "--to", where, "--json"), cwd=ROOT,
                                  env=environment(), stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
                 for f in folders]
    outputs = [p.communicate(timeout=900) for p in processes]
    for p, (out, err) in zip(processes, outputs):
        assert p.returncode == 0, err[-3000:]
    reports = [json.loads(out)["runs"] for out, _ in outputs]
    assert all(len(r) == OWN + SHARED and not any("error" in e for e in r) for r in reports)
    shared_keys = {content_hash(r) for r in shared}
    filed_shared = [e for r in reports for e in r if e["sha256"] in shared_keys]
    assert len(filed_shared) == PROCESSES * SHARED
    for key in shared_keys:  # each shared run filed once; every other process was given that same entry
        receipts = [e for e in filed_shared if e["sha256"] == key]
        assert sum(e["filed"] for e in receipts) == 1 and len({e["entry"] for e in receipts}) == 1
    with open_archive(where) as archive:
        keys = [e.key for e in archive.entries()]
        assert sorted(keys) == sorted(expected)  # none lost, none twice
        assert consistency(archive) == (len(expected), 0, 0)
        assert len({e.entry for e in archive.entries()}) == len(expected)


def test_a_filing_killed_half_way_leaves_only_whole_runs(where, tmp_path) -> None:  # type: ignore[no-untyped-def]
    runs = [lead_run(k, slope=10.0 + 0.001 * k) for k in range(60)]
    write_runs(tmp_path / "runs", runs)
    process = subprocess.Popen(command("archive", "add", str(tmp_path / "runs"), "--to", where), cwd=ROOT,
                               env=environment(), stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    filed = 0
    deadline = time.monotonic() + 300
    assert process.stdout is not None
    while filed < 8 and time.monotonic() < deadline:
        line = process.stdout.readline()
        if not line:
            break
        filed += line.startswith("filed: ")
    process.send_signal(signal.SIGKILL)  # no chance to tidy up: the middle of whatever it was doing
    process.wait(timeout=60)
    process.stdout.close()
    process.stderr.close()
    assert filed == 8, "the filing ended before it could be cut off"
    with open_archive(where) as archive:
        runs_now, lonely, partial = consistency(archive)
        assert 8 <= runs_now < 60 and lonely == 0 and partial == 0
    again = subprocess.run(command("archive", "add", str(tmp_path / "runs"), "--to", where), cwd=ROOT,
                           env=environment(), capture_output=True, text=True, timeout=600)
    assert again.returncode == 0, again.stderr
    assert again.stdout.count("already filed: ") == runs_now and again.stdout.count("filed: ") == 60
    with open_archive(where) as archive:
        assert consistency(archive) == (60, 0, 0)
        with archive.engine.connect() as conn:
            assert [conn.execute(text(f"SELECT count(*) FROM {t}")).scalar() for t in FILED_TABLES] == [60, 60, 240]
