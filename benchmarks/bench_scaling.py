"""Benchmark 9: how the work grows with its size, as the slope of log(time) against log(size).

* standards per calibration (10 … 10,000): fit a quadratic weighted 1/x² and quantify 100 unknowns;
* unknowns (100 … 1,000,000): quantify them on one quadratic weighted 1/x²;
* analytes per run (1 … 200): analyse a run document whose analytes are copies of one invented
  analyte (fit, limits, acceptance, every sample quantified);
* standards edited in one step (10 … 10,000): ``run_edits.update_standards`` with one response changed.

The runs per batch (1 … 500) are in benchmark 6 (``bench_many_runs.py``), through the command line.
Target: no slope above 1.1 (work that grows faster than its size shows as a slope near 2).
Each point is the median of interleaved rounds.

Run: python benchmarks/bench_scaling.py [--smoke]
"""

from __future__ import annotations

import copy
import json
from dataclasses import replace

import numpy as np
from common import ROOT, interleaved, print_table, smoke_requested

import curvewright as cw
from curvewright.core.run import Reading
from curvewright.core.run_analysis import analyse_run
from curvewright.io.run_document import run_from_mapping
from curvewright.io.run_edits import update_standards

LIMIT = 1.1


def slope(sizes: list[int], seconds: list[float]) -> float:
    """Least-squares slope of log(time) on log(size)."""
    return float(np.polyfit(np.log(sizes), np.log(seconds), 1)[0])


def invented_standards(n: int, seed: int = 0) -> tuple[np.ndarray, np.ndarray]:
    """n standards over 1 … 200 on a gently bending curve with a 3 % CV."""
    rng = np.random.default_rng(seed)
    x = np.geomspace(1.0, 200.0, n)
    y = (0.2 + 1.5 * x - 0.002 * x**2) * (1 + 0.03 * rng.standard_normal(n))
    return x, y


def standards_job(n: int):  # type: ignore[no-untyped-def]
    x, y = invented_standards(n)
    y0 = np.linspace(y[1], y[n // 2], 100)
    return lambda: cw.fit(x, y, "quadratic", "1/x^2").quantify(y0)


def unknowns_job(k: int):  # type: ignore[no-untyped-def]
    x, y = invented_standards(24)
    cal = cw.fit(x, y, "quadratic", "1/x^2")
    y0 = np.random.default_rng(1).uniform(y[0], y[18], k)
    return lambda: cal.quantify(y0)


def run_with_analytes(count: int):  # type: ignore[no-untyped-def]
    """The nitrate demo run with its one analyte copied ``count`` times under new names."""
    mapping = json.loads((ROOT / "sample_runs" / "nitrate_water_linear.json").read_text(encoding="utf-8"))
    template = mapping["analytes"][0]
    mapping["analytes"] = []
    for i in range(count):
        analyte = copy.deepcopy(template)
        analyte["name"] = f"analyte {i + 1}"
        mapping["analytes"].append(analyte)
    for sample in mapping["samples"]:
        original = [m for m in sample["measurements"] if m["analyte"] == template["name"]]
        sample["measurements"] = [{**m, "analyte": f"analyte {i + 1}"} for i in range(count) for m in original]
        sample["nominal"] = {f"analyte {i + 1}": v for i in range(count) for v in sample["nominal"].values()}
    mapping["audit"] = []
    mapping.pop("content", None)
    return run_from_mapping(mapping, "invented run").run


def analytes_job(count: int):  # type: ignore[no-untyped-def]
    run = run_with_analytes(count)
    return lambda: analyse_run(run)


def edit_job(n: int):  # type: ignore[no-untyped-def]
    run = run_with_analytes(1)
    analyte = run.analytes[0]
    x, y = invented_standards(n)
    template = analyte.standards[0]
    standards = tuple(
        replace(template, id=f"S{i + 1}", level=f"L{i + 1}", concentration=float(c), response=Reading.of(float(r)))
        for i, (c, r) in enumerate(zip(x, y))
    )
    run = run.with_analyte(replace(analyte, standards=standards))
    edited = list(standards)
    edited[n // 2] = replace(edited[n // 2], response=Reading.of(float(y[n // 2]) * 1.01))
    edited_standards = tuple(edited)
    return lambda: update_standards(run, analyte.name, edited_standards, "response re-read",
                                    reason="re-integrated peak")


def main() -> None:
    smoke = smoke_requested()
    series = {
        "standards per calibration": (standards_job, [10, 100, 1000] if smoke else [10, 100, 1000, 10_000]),
        "unknowns": (unknowns_job, [100, 1000, 10_000] if smoke else [100, 1000, 10_000, 100_000, 1_000_000]),
        "analytes per run": (analytes_job, [1, 5, 20] if smoke else [1, 10, 50, 200]),
        "standards edited in one step": (edit_job, [10, 100, 1000] if smoke else [10, 100, 1000, 10_000]),
    }
    rows = []
    worst = 0.0
    for name, (make, sizes) in series.items():
        jobs = {str(size): make(size) for size in sizes}
        timing = interleaved(jobs, rounds=3 if smoke else 5, warmup=1)
        seconds = [timing[str(size)].median for size in sizes]
        s = slope(sizes, seconds)
        worst = max(worst, s)
        rows.append((name, f"{sizes[0]:,} … {sizes[-1]:,}", "  ".join(f"{t * 1e3:.3g}" for t in seconds),
                     f"{s:.2f}", "met" if s <= LIMIT else "NOT met"))
    print_table("Scaling: slope of log(time) against log(size)", rows,
                ("work", "sizes", "median ms at each size", "slope", f"≤ {LIMIT}"))
    print(f"\nlargest slope {worst:.2f} (target ≤ {LIMIT}: {'met' if worst <= LIMIT else 'NOT met'}); "
          f"a slope of 1.00 is time proportional to size (×)")


if __name__ == "__main__":
    main()
