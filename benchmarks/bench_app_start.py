"""Benchmark 3: app cold start to the main window drawn with a demo run, against the floor: a bare
PySide6 window holding one pyqtgraph plot. Each start is a fresh Python process (offscreen).
Target: ≤ 2× the floor.

Run: python benchmarks/bench_app_start.py [--smoke]
"""

from __future__ import annotations

import os
import statistics
import subprocess
import sys
import time

from common import ROOT, print_table, smoke_requested

FLOOR = """
import os, time
os.environ["QT_QPA_PLATFORM"] = "offscreen"
from PySide6.QtWidgets import QApplication
import pyqtgraph as pg
app = QApplication([])
w = pg.PlotWidget()
w.plot([1, 2, 3], [2, 1, 3])
w.resize(1400, 860)
w.show()
app.processEvents()
w.grab()
print("drawn")
os._exit(0)
"""

APP = """
import os, sys, tempfile
from pathlib import Path
os.environ["QT_QPA_PLATFORM"] = "offscreen"
from curvewright.app.qt_runtime import ensure_application
app = ensure_application()
from PySide6.QtCore import QSettings
from curvewright.app.main import build_window
scratch = Path(tempfile.mkdtemp())
window = build_window(Path(sys.argv[1]), settings=QSettings(str(scratch / "s.ini"), QSettings.Format.IniFormat),
                      recovery_folder=scratch / "recovery")
window.resize(1400, 860)
window.show()
window.session.wait_for_analysis()
app.processEvents()
app.processEvents()
window.grab()
assert window.session.result is not None
print("drawn")
os._exit(0)
"""


def cold(code: str, *args: str) -> float:
    env = {**os.environ, "QT_QPA_PLATFORM": "offscreen", "PYTHONPATH": str(ROOT / "src")}
    start = time.perf_counter()
    result = subprocess.run([sys.executable, "-c", code, *args], capture_output=True, text=True, env=env, timeout=120)
    elapsed = time.perf_counter() - start
    assert result.returncode == 0 and "drawn" in result.stdout, result.stderr
    return elapsed


def main() -> None:
    repeats = 2 if smoke_requested() else 7
    demo = str(ROOT / "sample_runs" / "veltaprine_plasma_weighted.json")
    cold(FLOOR), cold(APP, demo)  # warm the file-system cache once
    floor = [cold(FLOOR) for _ in range(repeats)]
    app = [cold(APP, demo) for _ in range(repeats)]
    ratio = statistics.median(app) / statistics.median(floor)
    print_table("App cold start (fresh process, offscreen, to the first drawn window)", [
        ("bare PySide6 + one pyqtgraph plot", f"{statistics.median(floor):.3f} s", f"{min(floor):.3f}–{max(floor):.3f} s"),
        ("Curvewright with a demo run", f"{statistics.median(app):.3f} s", f"{min(app):.3f}–{max(app):.3f} s"),
        (f"ratio {ratio:.2f}× (target ≤ 2×: {'met' if ratio <= 2 else 'NOT met'})", "", ""),
    ], ("", f"median of {repeats}", "min–max"))


if __name__ == "__main__":
    main()
