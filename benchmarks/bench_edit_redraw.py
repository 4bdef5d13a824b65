"""Benchmark 4: edit to redraw in the app with 30 standards and 2,000 samples.

The latency from a cell edit to the updated curve and results table (the analysis runs on the
worker thread and the views redraw on the GUI thread), its median over repeated edits, and its
ratio to the engine's compute time alone (analysis plus model comparison on the same run).

Run: python benchmarks/bench_edit_redraw.py [--smoke]
"""

from __future__ import annotations

import os
import statistics
import tempfile
import time
from dataclasses import replace
from pathlib import Path

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

import numpy as np  # noqa: E402
from common import print_table, smoke_requested  # noqa: E402

from curvewright.core.run import Analyte, Measurement, Reading, Run, RunSettings, Sample, SampleKind, Standard  # noqa: E402


def invented_big_run(n_samples: int) -> Run:
    rng = np.random.default_rng(4)
    levels = [1.0, 2.0, 5.0, 10.0, 20.0, 50.0, 100.0, 200.0, 500.0, 1000.0]
    standards = tuple(Standard(f"S{i}-{r}", c, Reading.of(float(0.02 + 0.9 * c * (1 + 0.03 * rng.standard_normal()))), r)
                      for i, c in enumerate(levels) for r in (1, 2, 3))
    samples = tuple(Sample(f"U{j}", SampleKind.UNKNOWN, j, 1.0,
                           (Measurement("lead", 1, Reading.of(float(rng.uniform(2, 800)))),))
                    for j in range(n_samples))
    analyte = Analyte("lead", "µg/L", "counts", standards, "linear", "1/x^2", "benchmark")
    return Run("benchmark run (invented data)", (analyte,), samples, RunSettings())


def main() -> None:
    from PySide6.QtCore import QSettings

    from curvewright.app.main_window import MainWindow
    from curvewright.app.qt_runtime import ensure_application
    from curvewright.app.session import RunSession, analyse_with_evidence
    from curvewright.app.standards_model import RESP

    smoke = smoke_requested()
    run = invented_big_run(200 if smoke else 2000)
    app = ensure_application()
    scratch = Path(tempfile.mkdtemp())
    session = RunSession(run, recovery_folder=scratch / "recovery")
    window = MainWindow(session, QSettings(str(scratch / "s.ini"), QSettings.Format.IniFormat))
    window.resize(1400, 860)
    window.show()
    session.wait_for_analysis()
    app.processEvents()
    latencies, computes = [], []
    model = window.standards_model
    model.reason_provider = lambda what: "benchmark: the same response edited again"  # the reason asked for each change
    for k in range(5 if smoke else 25):
        value = f"{0.9 * 5 * (1.0 + 0.001 * (k + 1)):.6f}"
        drawn = []
        session.analysis_ready.connect(lambda _r: drawn.append(time.perf_counter()))
        start = time.perf_counter()
        model.setData(model.index(6, RESP), value)
        while not drawn:
            app.processEvents()
            time.sleep(0.0005)
        app.processEvents()  # the views redraw in the slots connected before ours
        end = time.perf_counter()
        session.analysis_ready.disconnect()
        session.analysis_ready.connect(window._on_result)
        model_slot = model._on_result
        session.analysis_ready.connect(model_slot)
        latencies.append(end - start)
        t0 = time.perf_counter()
        analyse_with_evidence(session.run)
        computes.append(time.perf_counter() - t0)
    latency = statistics.median(latencies)
    compute = statistics.median(computes)
    print_table(f"Edit to redraw: 30 standards, {len(run.samples)} samples, {len(latencies)} edits", [
        ("cell edit → curve and results redrawn", f"{latency * 1e3:.1f} ms", f"{min(latencies) * 1e3:.1f}–{max(latencies) * 1e3:.1f} ms"),
        ("engine compute alone (analysis + model comparison)", f"{compute * 1e3:.1f} ms", f"{min(computes) * 1e3:.1f}–{max(computes) * 1e3:.1f} ms"),
        (f"ratio {latency / compute:.2f}× (debounce {120} ms included)", "", ""),
    ], ("", "median", "min–max"))
    session.undo_stack.setClean()
    window.close()
    os._exit(0)


if __name__ == "__main__":
    main()
