"""Benchmark 3: app cold start to the main window drawn with a demo run, against the floor: a bare
PySide6 window holding one pyqtgraph plot. Each start is a fresh Python process (offscreen), timed
from its launch to the moment its window has been painted (the process reports the wall-clock time
of that moment). The app shows its window before the first fit has finished; the time until the fit
is shown is reported beside it. Bytecode is written in a warm-up round, as an installed program has
it, and the two sides run in interleaved rounds. Target: ≤ 1.5× the floor to the first painted window.

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
print("drawn", time.time())
os._exit(0)
"""

APP = """
import os, sys, tempfile, time
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
app.processEvents()
window.grab()
assert window.standards_model.rowCount() > 0
print("drawn", time.time())
window.session.wait_for_analysis()
app.processEvents()
app.processEvents()
window.grab()
assert window.session.result is not None and window.results_model.rowCount() > 0
print("fitted", time.time())
os._exit(0)
"""


def cold(code: str, *args: str) -> dict[str, float]:
    """Seconds from the launch of a fresh process to each moment it reports ("drawn", "fitted")."""
    env = {**os.environ, "QT_QPA_PLATFORM": "offscreen", "PYTHONPATH": str(ROOT / "src")}
    env.pop("PYTHONDONTWRITEBYTECODE", None)  # an installed program has its bytecode
    launched = time.time()
    result = subprocess.run([sys.executable, "-c", code, *args], capture_output=True, text=True, env=env, timeout=120)
    assert result.returncode == 0 and "drawn" in result.stdout, result.stderr
    moments = dict(line.split() for line in result.stdout.splitlines() if line.startswith(("drawn", "fitted")))
    return {what: float(at) - launched for what, at in moments.items()}


def main() -> None:
    repeats = 2 if smoke_requested() else 9
    demo = str(ROOT / "sample_runs" / "veltaprine_plasma_weighted.json")
    cold(FLOOR), cold(APP, demo)  # warm-up: bytecode and the file-system cache
    floor, drawn, fitted = [], [], []
    for _ in range(repeats):  # interleaved rounds
        floor.append(cold(FLOOR)["drawn"])
        app = cold(APP, demo)
        drawn.append(app["drawn"])
        fitted.append(app["fitted"])
    base = statistics.median(floor)
    ratio = statistics.median(drawn) / base
    print_table("App cold start (fresh process, offscreen, from launch)", [
        ("bare PySide6 + one pyqtgraph plot, painted", f"{base:.3f} s", f"{min(floor):.3f}–{max(floor):.3f} s", "1.00×"),
        ("Curvewright with a demo run, window painted", f"{statistics.median(drawn):.3f} s",
         f"{min(drawn):.3f}–{max(drawn):.3f} s", f"{ratio:.2f}×"),
        ("Curvewright, first fit shown", f"{statistics.median(fitted):.3f} s",
         f"{min(fitted):.3f}–{max(fitted):.3f} s", f"{statistics.median(fitted) / base:.2f}×"),
    ], ("", f"median of {repeats}", "min–max", "ratio"))
    print(f"\nratio to the first painted window {ratio:.2f}× (target ≤ 1.5×: {'met' if ratio <= 1.5 else 'NOT met'})")


if __name__ == "__main__":
    main()
