"""Benchmark 6: what the file-safety measures cost.

1. Reading a workbook of 20,000 rows with :func:`table_from_xlsx` (the zip directory and every part
   checked before parsing, cells bounded while reading) against the same read without the checks:
   the file hashed, opened read-only by openpyxl and every cell converted. Target ≤ 1.3×.
2. Saving a run document with :func:`save_run` (the document's lock, a check that it opens again, a
   hard-linked backup, fsync of file and folder, the rename) against writing the same bytes to a
   temporary, fsyncing and renaming it. Reported, no target: the backup and the check are the point.

Run: python benchmarks/bench_safe_files.py [--smoke]
"""

from __future__ import annotations

import io
import os
import tempfile
from pathlib import Path

import openpyxl
from common import measure, print_table, smoke_requested

from curvewright.io.audit import file_sha256
from curvewright.io.run_document import dumps_run, open_run, save_run
from curvewright.io.tables import _cell, table_from_xlsx

ROOT = Path(__file__).resolve().parents[1]


def workbook(path: Path, rows: int) -> None:
    book = openpyxl.Workbook(write_only=True)
    sheet = book.create_sheet("Samples")
    sheet.append(["Sample", "Dilution", "Replicate", "Area", "Note"])
    for i in range(rows):
        sheet.append([f"S{i:06d}", 1 + i % 5, 1 + i % 3, 1000.0 + i * 0.37, "invented sample"])
    book.save(path)


def unchecked_read(path: Path) -> int:
    data = path.read_bytes()
    file_sha256(data)
    book = openpyxl.load_workbook(io.BytesIO(data), read_only=True, data_only=True)
    try:
        return len([tuple(_cell(v) for v in row) for row in book.worksheets[0].iter_rows(values_only=True)])
    finally:
        book.close()


def bare_save(data: bytes, path: Path) -> None:
    temporary = path.with_name(path.name + ".bare.tmp")
    with open(temporary, "wb") as stream:
        stream.write(data)
        stream.flush()
        os.fsync(stream.fileno())
    os.replace(temporary, path)


def main() -> None:
    rows = 2000 if smoke_requested() else 20_000
    repeats = 2 if smoke_requested() else 7
    folder = Path(tempfile.mkdtemp())
    book = folder / "samples.xlsx"
    workbook(book, rows)
    assert len(table_from_xlsx(book).rows) == unchecked_read(book) == rows + 1
    ours = measure("table_from_xlsx (checked, bounded)", lambda: table_from_xlsx(book), repeats=repeats)
    bare = measure("the same read without the checks", lambda: unchecked_read(book), repeats=repeats)
    read_ratio = ours.median / bare.median

    run = open_run(ROOT / "sample_runs" / "veltaprine_plasma_weighted.json").run
    document = folder / "run.json"
    data = dumps_run(run).encode("utf-8")
    saved = measure("save_run (lock, check, backup, fsync, rename)", lambda: save_run(run, document), repeats=repeats * 3)
    plain = measure("bytes written, fsynced, renamed", lambda: bare_save(data, folder / "plain.json"), repeats=repeats * 3)
    save_ratio = saved.median / plain.median
    print_table(f"Reading a workbook of {rows:,} rows; saving a run document of {len(data):,} bytes", [
        (ours.describe(),), (bare.describe(),),
        (f"reading: ratio {read_ratio:.2f}× (target ≤ 1.3×: {'met' if read_ratio <= 1.3 else 'NOT met'})",),
        (saved.describe(),), (plain.describe(),),
        (f"saving: ratio {save_ratio:.2f}× (reported)",),
    ], ("result",))


if __name__ == "__main__":
    main()
