"""Timing helpers shared by the benchmarks: repeated runs, median and range, a printed table.

Every figure a benchmark reports is a ratio of two timings taken in the same run on the same
machine, so that machine speed and load largely cancel.
"""

from __future__ import annotations

import statistics
import sys
import time
from dataclasses import dataclass
from pathlib import Path
from typing import Callable

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT / "src") not in sys.path:
    sys.path.insert(0, str(ROOT / "src"))


@dataclass(frozen=True)
class Timing:
    label: str
    seconds: list[float]

    @property
    def median(self) -> float:
        return statistics.median(self.seconds)

    def describe(self) -> str:
        return (f"{self.label}: median {self.median * 1e3:.3f} ms (min {min(self.seconds) * 1e3:.3f}, "
                f"max {max(self.seconds) * 1e3:.3f}; {len(self.seconds)} repeats)")


def measure(label: str, fn: Callable[[], object], repeats: int = 5, warmup: int = 1) -> Timing:
    for _ in range(warmup):
        fn()
    seconds = []
    for _ in range(repeats):
        start = time.perf_counter()
        fn()
        seconds.append(time.perf_counter() - start)
    return Timing(label, seconds)


def print_table(title: str, rows: list[tuple[str, ...]], header: tuple[str, ...]) -> None:
    widths = [max(len(str(r[i])) for r in [header, *rows]) for i in range(len(header))]
    print(f"\n{title}")
    print("  ".join(h.ljust(w) for h, w in zip(header, widths)))
    print("  ".join("-" * w for w in widths))
    for r in rows:
        print("  ".join(str(v).ljust(w) for v, w in zip(r, widths)))


def smoke_requested() -> bool:
    return "--smoke" in sys.argv
