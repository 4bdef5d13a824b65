"""Crash consistency: a writer killed (SIGKILL) at a random point of saving a run document,
exporting the workbook or writing the recovery file never leaves a partial target or backup, and
the next save leaves no temporary behind.

A child process writes two versions, A and B, in turn, without end; it is killed a random few
milliseconds after its first complete write. Children are forked from a server process that has
already imported Curvewright, so that each kill costs milliseconds, not an interpreter start.
"""

from __future__ import annotations

import multiprocessing
import os
import random
import sys
import time
from dataclasses import replace
from pathlib import Path

import openpyxl
import pytest

from curvewright.core.run_analysis import analyse_run
from curvewright.io import run_document as doc
from curvewright.io.atomic import temporary_pattern
from curvewright.io.errors import DocumentError
from curvewright.io.xlsx_export import write_xlsx
from tests.io.helpers import small_run

pytestmark = pytest.mark.skipif(not hasattr(os, "fork") or sys.platform == "win32", reason="POSIX processes")

TARGETS = {"document": "batch.json", "workbook": "results.xlsx", "recovery": "recovery-00c0ffee00c0ffee.json"}
SOURCE = "/lab/batches/batch.json"


def versions():  # type: ignore[no-untyped-def]
    # the same audit trail in both, so that neither save drops what the other recorded (a save that would
    # is refused); B is made long by its description, so that kills land inside its write
    a = small_run()
    b = replace(a, name="Test batch 1 (B)", description="x" * 20_000)
    return a, b


def write_once(kind: str, folder: Path, run, result) -> None:  # type: ignore[no-untyped-def]
    target = folder / TARGETS[kind]
    if kind == "document":
        doc.save_run(run, target)
    elif kind == "workbook":
        write_xlsx(result, target)
    else:
        doc.save_recovery(run, target, SOURCE)


def writer(kind: str, folder: str) -> None:
    """The child: write A and B in turn until killed; mark the first complete write."""
    a, b = versions()
    results = (analyse_run(a), analyse_run(b)) if kind == "workbook" else (None, None)
    n = 0
    while True:
        write_once(kind, Path(folder), (a, b)[n % 2], results[n % 2])
        if n == 0:
            (Path(folder) / "started").touch()
        n += 1


def complete(kind: str, path: Path, names: set[str]) -> bool:
    """The file at ``path`` is version A or B, whole."""
    try:
        if kind == "workbook":
            book = openpyxl.load_workbook(path, read_only=True)
            try:
                rows = {r[0]: r[1] for r in book[next(n for n in book.sheetnames if n.startswith("Calibration"))].iter_rows(min_row=4, values_only=True)}
                book["Audit trail"].calculate_dimension(force=True)
            finally:
                book.close()
            return rows.get("Run") in names
        if kind == "recovery":
            opened, source = doc.open_recovery(path)
            return source == SOURCE and opened.chain_verified and opened.run.name in names
        opened = doc.open_run(path)
        return opened.chain_verified and opened.run.name in names
    except (DocumentError, OSError, KeyError, ValueError, IndexError, EOFError, __import__("zipfile").BadZipFile):
        return False


def our_temporaries(folder: Path) -> list[str]:
    patterns = [temporary_pattern(n) for t in TARGETS.values() for n in (t, t + ".bak")]
    return [p.name for p in folder.iterdir() if any(q.fullmatch(p.name) for q in patterns)]


@pytest.fixture(scope="module")
def forkserver():  # type: ignore[no-untyped-def]
    context = multiprocessing.get_context("forkserver")
    context.set_forkserver_preload(["curvewright.io.run_document", "curvewright.io.xlsx_export",
                                    "curvewright.core.run_analysis", __name__])
    return context


def kill_rounds(forkserver, tmp_path: Path, kind: str, rounds: int, seed: int) -> dict[str, int]:  # type: ignore[no-untyped-def]
    rng = random.Random(seed)
    a, b = versions()
    names = {a.name, b.name}
    result = (analyse_run(a), None)[0] if kind == "workbook" else None
    folder = tmp_path / kind
    folder.mkdir()
    tally = {"kills": 0, "partial targets": 0, "partial backups": 0, "temporaries left": 0}
    for _ in range(rounds):
        (folder / "started").unlink(missing_ok=True)
        child = forkserver.Process(target=writer, args=(kind, str(folder)))
        child.start()
        deadline = time.monotonic() + 60
        while not (folder / "started").exists() and child.is_alive() and time.monotonic() < deadline:
            time.sleep(0.002)
        assert child.is_alive(), f"the {kind} writer stopped by itself (exit code {child.exitcode})"
        time.sleep(rng.uniform(0, 0.04))
        child.kill()
        child.join()
        tally["kills"] += 1
        target = folder / TARGETS[kind]
        backup = target.with_name(target.name + ".bak")
        tally["partial targets"] += not complete(kind, target, names)
        if kind != "workbook" and backup.exists():
            tally["partial backups"] += not complete(kind, backup, names)
        write_once(kind, folder, a, result)  # the next save
        tally["temporaries left"] += len(our_temporaries(folder))
        assert complete(kind, target, {a.name})
    return tally


def check(tally: dict[str, int]) -> None:
    assert (tally["partial targets"], tally["partial backups"], tally["temporaries left"]) == (0, 0, 0), tally


@pytest.mark.parametrize("kind", list(TARGETS))
def test_a_killed_writer_leaves_old_or_new_and_no_temporaries(forkserver, tmp_path, kind) -> None:
    check(kill_rounds(forkserver, tmp_path, kind, rounds=3, seed=7))


@pytest.mark.slow
def test_two_hundred_kills_leave_no_partial_file(forkserver, tmp_path) -> None:
    tallies = [kill_rounds(forkserver, tmp_path, kind, rounds=n, seed=11 + i)
               for i, (kind, n) in enumerate([("document", 80), ("workbook", 60), ("recovery", 60)])]
    total = {key: sum(t[key] for t in tallies) for key in tallies[0]}
    assert total["kills"] == 200
    check(total)
