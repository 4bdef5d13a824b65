"""Benchmark 7: importing a samples table grows in proportion to its rows.

A samples table of N rows (N/2 samples in duplicate, as an instrument export lists them) is read
from CSV text and imported, at N and 10·N rows. The figure is the log–log slope of time against
rows between the two: 1.0 is linear, 2.0 quadratic. Target ≤ 1.1.

Run: python benchmarks/bench_import_scaling.py [--smoke]
"""

from __future__ import annotations

import math

from common import measure, print_table, smoke_requested

from curvewright.io.importing import import_samples
from curvewright.io.tables import table_from_text


def samples_csv(rows: int) -> str:
    lines = ["Sample id,Type,Run order,Dilution,Replicate,Response"]
    for i in range(rows):
        sample = i // 2
        lines.append(f"W{sample:07d},unknown,{sample + 1},1,{i % 2 + 1},{1000 + (i * 37) % 9000}.25")
    return "\n".join(lines) + "\n"


def import_all(text: str) -> None:
    result = import_samples(table_from_text(text, source="bench.csv"), analyte="lead")
    assert result.complete, result.summary()


def main() -> None:
    small = 2_000 if smoke_requested() else 20_000
    sizes = (small, 10 * small)
    repeats = 2 if smoke_requested() else 5
    texts = {n: samples_csv(n) for n in sizes}
    timings = {n: measure(f"import {n:,} sample rows", lambda n=n: import_all(texts[n]), repeats=repeats)
               for n in sizes}
    slope = math.log(timings[sizes[1]].median / timings[sizes[0]].median) / math.log(sizes[1] / sizes[0])
    rows = [(f"{n:,}", f"{t.median * 1e3:.1f} ms", f"{t.median / n * 1e6:.2f} µs") for n, t in timings.items()]
    print_table("Benchmark 7: samples import against table size", rows, ("rows", "median", "per row"))
    print(f"\ntime ratio {timings[sizes[1]].median / timings[sizes[0]].median:.2f}× for 10× the rows; "
          f"log–log slope {slope:.2f} (target ≤ 1.1: {'met' if slope <= 1.1 else 'NOT met'})")


if __name__ == "__main__":
    main()
