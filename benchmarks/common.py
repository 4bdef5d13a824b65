"""Timing helpers shared by the benchmarks: repeated runs, median and range, a printed table.

Every figure a benchmark reports is a ratio of two timings taken in the same run on the same
machine, so that machine speed and load largely cancel.
"""

from __future__ import annotations

import gc
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


def interleaved(fns: dict[str, Callable[[], object]], rounds: int = 5, warmup: int = 1) -> dict[str, Timing]:
    """Time several functions in interleaved rounds (A, B, C, A, B, C, ...) after ``warmup`` runs of
    each, so that a change of machine load during the run falls on every side alike."""
    for _ in range(warmup):
        for fn in fns.values():
            fn()
    seconds: dict[str, list[float]] = {label: [] for label in fns}
    for _ in range(rounds):
        for label, fn in fns.items():
            # one side's garbage is collected before the other is timed, and none while it runs
            gc.collect()
            gc.disable()
            try:
                start = time.perf_counter()
                fn()
                seconds[label].append(time.perf_counter() - start)
            finally:
                gc.enable()
    return {label: Timing(label, values) for label, values in seconds.items()}


def peak_bytes(fn: Callable[[], object]) -> int:
    """Peak memory traced by tracemalloc while ``fn`` runs (numpy's buffers included), less what
    was already allocated when it started."""
    import tracemalloc

    gc.collect()
    tracemalloc.start()
    try:
        base = tracemalloc.get_traced_memory()[0]
        result = fn()
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    del result
    return peak - base


def print_table(title: str, rows: list[tuple[str, ...]], header: tuple[str, ...]) -> None:
    widths = [max(len(str(r[i])) for r in [header, *rows]) for i in range(len(header))]
    print(f"\n{title}")
    print("  ".join(h.ljust(w) for h, w in zip(header, widths)))
    print("  ".join("-" * w for w in widths))
    for r in rows:
        print("  ".join(str(v).ljust(w) for v, w in zip(r, widths)))


def smoke_requested() -> bool:
    return "--smoke" in sys.argv
