"""Benchmark 5: XLSX export of 100,000 sample rows, against a bare openpyxl write-only dump of the
same cells. Target ≤ 1.5× the bare dump; memory stays flat (peak traced Python memory compared
at 25,000 and 100,000 rows).

Run: python benchmarks/bench_xlsx_export.py [--smoke]
"""

from __future__ import annotations

import tempfile
import tracemalloc
from pathlib import Path

import numpy as np
from common import measure, print_table, smoke_requested
from openpyxl import Workbook

from curvewright.io.result_tables import Column, Table
from curvewright.io.xlsx_export import write_tables


def samples_like_table(n: int) -> Table:
    rng = np.random.default_rng(1)
    columns = (Column("Sample id"), Column("Kind"), Column("Analyte"), Column("Mean response", kind="number"),
               Column("Reported", kind="number"), Column("Reported (rounded)", kind="reported"),
               Column("Lower", kind="number"), Column("Upper", kind="number"), Column("Flags"))
    values = rng.uniform(0.1, 900, n)
    rows = tuple((f"S{i:06d}", "unknown", "lead", float(v * 1.1), float(v), f"{v:.3g}" if v < 100 else f"{v:.0f}",
                  float(v * 0.97), float(v * 1.03), "inside the calibrated range") for i, v in enumerate(values))
    return Table("Samples", columns, rows)


def bare_dump(table: Table, path: Path) -> None:
    book = Workbook(write_only=True)
    sheet = book.create_sheet("Samples")
    for row in table.rows:
        sheet.append(list(row))
    book.save(path)


def peak_memory(fn) -> int:  # type: ignore[no-untyped-def]
    tracemalloc.start()
    fn()
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    return peak


def main() -> None:
    n = 5000 if smoke_requested() else 100_000
    table = samples_like_table(n)
    repeats = 2 if smoke_requested() else 5
    folder = Path(tempfile.mkdtemp())
    ours = measure("Curvewright workbook (caution, title, typed cells, atomic)", lambda: write_tables([table], folder / "ours.xlsx"),
                   repeats=repeats)
    bare = measure("bare openpyxl write-only dump", lambda: bare_dump(table, folder / "bare.xlsx"), repeats=repeats)
    ratio = ours.median / bare.median
    quarter = samples_like_table(n // 4)
    growth = (peak_memory(lambda: write_tables([table], folder / "a.xlsx"))
              / max(peak_memory(lambda: write_tables([quarter], folder / "b.xlsx")), 1))
    bare_growth = (peak_memory(lambda: bare_dump(table, folder / "c.xlsx"))
                   / max(peak_memory(lambda: bare_dump(quarter, folder / "d.xlsx")), 1))
    print_table(f"XLSX export of {n:,} sample rows", [
        (ours.describe(),), (bare.describe(),),
        (f"ratio {ratio:.2f}× (target ≤ 1.5×: {'met' if ratio <= 1.5 else 'NOT met'})",),
        (f"peak traced memory while writing, {n:,} rows over {n // 4:,} rows: {growth:.2f} "
         f"(bare dump: {bare_growth:.2f}; the table itself is built beforehand)",),
    ], ("result",))


if __name__ == "__main__":
    main()
