"""Benchmark 5: XLSX export of 100,000 sample rows, against a bare openpyxl write-only dump of the
same cells. Target ≤ 1.5× the bare dump; memory stays flat.

- Building the tables is timed too: the samples table of an analysed run (from the engine's result
  to the rows the workbook writes), beside the writing of the same rows.
- Memory is the process's peak resident set (VmHWM, reset just before writing; it counts the C
  allocations tracemalloc misses), measured in a fresh process for 25,000 and 100,000 rows, over
  the same process's resident set just before writing; peak traced Python memory is given beside it.
- openpyxl's lxml writer against its standard-library writer when lxml is installed (chosen by
  ``OPENPYXL_LXML`` in fresh processes, interleaved rounds); tests/io/test_workbook_floats.py shows
  both keep every double exact.

Run: python benchmarks/bench_xlsx_export.py [--smoke]
"""

from __future__ import annotations

import importlib.util
import json
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
from common import ROOT, measure, print_table, smoke_requested
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


CHILD = r"""
import json, resource, sys, time, tracemalloc
from pathlib import Path
sys.path.insert(0, sys.argv[3])
import openpyxl
from bench_xlsx_export import samples_like_table
from curvewright.io.xlsx_export import write_tables
n, out = int(sys.argv[1]), Path(sys.argv[2])
table = samples_like_table(n)
write_tables([samples_like_table(50)], out)  # load everything the writer uses before measuring


def status(field):  # kiB, from the kernel's account of this process
    for line in Path("/proc/self/status").read_text().splitlines():
        if line.startswith(field + ":"):
            return int(line.split()[1])
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss


try:
    Path("/proc/self/clear_refs").write_text("5")  # the peak (VmHWM) starts again from the current size
except OSError:
    pass
before = status("VmRSS")
trace = "--trace" in sys.argv
if trace:
    tracemalloc.start()
start, cpu_start = time.perf_counter(), time.process_time()
write_tables([table], out)
seconds, cpu = time.perf_counter() - start, time.process_time() - cpu_start
traced = tracemalloc.get_traced_memory()[1] if trace else 0
after = status("VmHWM")
print(json.dumps({"seconds": seconds, "cpu": cpu, "rss_kib": after - before, "traced": traced, "lxml": openpyxl.LXML}))
"""


def child(n: int, folder: Path, *, lxml: bool = True, trace: bool = False) -> dict:
    env = {**os.environ, "OPENPYXL_LXML": str(lxml), "PYTHONPATH": str(ROOT / "src")}
    args = [sys.executable, "-c", CHILD, str(n), str(folder / f"child-{n}.xlsx"), str(ROOT / "benchmarks")]
    done = subprocess.run(args + (["--trace"] if trace else []), capture_output=True, text=True, env=env,
                          timeout=1200)
    assert done.returncode == 0, done.stderr[-2000:]
    return json.loads(done.stdout.strip().splitlines()[-1])


def analysed_run(n: int):  # type: ignore[no-untyped-def]
    """An invented lead calibration (1/x² weighted) with ``n`` unknowns, analysed."""
    from curvewright.core.run import Analyte, Measurement, Reading, Run, RunSettings, Sample, SampleKind, Standard
    from curvewright.core.run_analysis import analyse_run

    rng = np.random.default_rng(5)
    levels = [1.0, 2.0, 5.0, 10.0, 20.0, 50.0, 100.0, 200.0, 500.0, 1000.0]
    standards = tuple(Standard(f"S{i}-{r}", c, Reading.of(float(0.02 + 0.9 * c * (1 + 0.03 * rng.standard_normal()))), r)
                      for i, c in enumerate(levels) for r in (1, 2, 3))
    samples = tuple(Sample(f"U{j}", SampleKind.UNKNOWN, j, 1.0,
                           (Measurement("lead", 1, Reading.of(float(rng.uniform(2, 800)))),)) for j in range(n))
    analyte = Analyte("lead", "µg/L", "counts", standards, "linear", "1/x^2", "benchmark")
    return analyse_run(Run("benchmark run (invented data)", (analyte,), samples, RunSettings()))


def main() -> None:
    smoke = smoke_requested()
    n = 5000 if smoke else 100_000
    table = samples_like_table(n)
    repeats = 2 if smoke else 5
    folder = Path(tempfile.mkdtemp())
    ours = measure("Curvewright workbook (caution, title, typed cells, atomic)", lambda: write_tables([table], folder / "ours.xlsx"),
                   repeats=repeats)
    bare = measure("bare openpyxl write-only dump", lambda: bare_dump(table, folder / "bare.xlsx"), repeats=repeats)
    ratio = ours.median / bare.median

    # building the samples table from an analysed run, and writing it
    from curvewright.io.result_tables import samples_table

    result = analysed_run(n // 10 if smoke else 20_000)
    build = measure("building the samples table of an analysed run", lambda: samples_table(result), repeats=repeats)
    built = samples_table(result)
    write = measure("writing those rows", lambda: write_tables([built], folder / "built.xlsx"), repeats=repeats)

    # memory: peak resident set in fresh processes
    quarter, full = child(n // 4, folder), child(n, folder)
    traced_quarter, traced_full = child(n // 4, folder, trace=True), child(n, folder, trace=True)
    rss_growth = full["rss_kib"] / max(quarter["rss_kib"], 1)
    traced_growth = traced_full["traced"] / max(traced_quarter["traced"], 1)

    # openpyxl's lxml writer against its standard-library writer, interleaved fresh processes
    # (CPU time beside the wall time: on a shared machine the wall time moves with the load)
    with_lxml, without = [], []
    lxml_installed = importlib.util.find_spec("lxml") is not None
    for k in range((1 if smoke else 5) if lxml_installed else 0):
        for use in ((True, False) if k % 2 == 0 else (False, True)):
            (with_lxml if use else without).append(child(n, folder, lxml=use))

    print_table(f"XLSX export of {n:,} sample rows", [
        (ours.describe(),), (bare.describe(),),
        (f"ratio {ratio:.2f}× (target ≤ 1.5×: {'met' if ratio <= 1.5 else 'NOT met'})",),
    ], ("result",))
    print_table(f"Building the tables ({len(built.rows):,} samples of an analysed run)", [
        (build.describe(),), (write.describe(),),
        (f"building is {build.median / (build.median + write.median):.0%} of building and writing",),
    ], ("result",))
    print_table("Memory while writing (fresh process each; growth beyond the table built beforehand)", [
        (f"peak RSS growth: {quarter['rss_kib'] / 1024:.1f} MiB at {n // 4:,} rows, {full['rss_kib'] / 1024:.1f} MiB "
         f"at {n:,} rows: ratio {rss_growth:.2f} (flat: {'yes' if rss_growth < 1.5 or full['rss_kib'] < 5 * 1024 else 'NO'}; "
         "under 5 MiB counts as flat whatever the ratio)",),
        (f"peak traced Python memory: {traced_quarter['traced'] / 2**20:.1f} MiB and {traced_full['traced'] / 2**20:.1f} MiB: "
         f"ratio {traced_growth:.2f}",),
    ], ("result",))
    if with_lxml:
        rows = []
        for key, what in (("seconds", "wall time"), ("cpu", "CPU time")):
            fast = statistics.median(c[key] for c in with_lxml)
            slow = statistics.median(c[key] for c in without)
            rows.append((f"{what}: with lxml median {fast:.2f} s; standard library median {slow:.2f} s; "
                         f"lxml takes {1 - fast / slow:.0%} less (ratio {fast / slow:.2f}×)",))
        print_table("openpyxl's XML writer (fresh processes, interleaved)", rows, ("result",))
    else:
        print("\nopenpyxl's XML writer: lxml is not installed, so only the standard-library writer is timed "
              "(install lxml to compare the two).")


if __name__ == "__main__":
    main()
