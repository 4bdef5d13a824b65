"""Cold start: the window opens before the first fit and works the same once it arrives.

The engine (and scipy with it) is loaded on the analysis thread, the first analysis of an opened
run starts once the window has been painted, and the views behind other tabs are drawn when their
tab is opened. How long the start takes is measured in ``benchmarks/bench_app_start.py``.
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

from PySide6.QtCore import QSettings

from tests.app.conftest import DEMOS, ROOT, settle

WEIGHTED = next(p for p in DEMOS if "weighted" in p.stem)

WHO_LOADS = """
import os, sys, tempfile, threading
from pathlib import Path
os.environ["QT_QPA_PLATFORM"] = "offscreen"
loaded_by = {}

class Watch:
    def find_spec(self, name, path=None, target=None):
        if name in ("scipy", "scipy.special", "curvewright.core.run_analysis") and name not in loaded_by:
            loaded_by[name] = threading.current_thread().name
        return None

sys.meta_path.insert(0, Watch())
from curvewright.app.qt_runtime import ensure_application
app = ensure_application()
from PySide6.QtCore import QSettings
from curvewright.app.main import build_window
scratch = Path(tempfile.mkdtemp())
window = build_window(Path(sys.argv[1]), settings=QSettings(str(scratch / "s.ini"), QSettings.Format.IniFormat),
                      recovery_folder=scratch / "recovery")
before_show = dict(loaded_by)
window.show()
app.processEvents()
window.grab()
painted_rows = window.standards_model.rowCount()
window.session.wait_for_analysis()
app.processEvents()
print(sorted(before_show.items()), painted_rows, window.session.result is not None)
print(loaded_by.get("scipy.special"), loaded_by.get("curvewright.core.run_analysis"))
os._exit(0)
"""


def test_the_engine_and_scipy_load_on_the_analysis_thread() -> None:
    env = {**os.environ, "QT_QPA_PLATFORM": "offscreen"}
    done = subprocess.run([sys.executable, "-c", WHO_LOADS, str(WEIGHTED)], capture_output=True, text=True,
                          env=env, cwd=ROOT, timeout=120)
    assert done.returncode == 0, done.stderr[-2000:]
    first, second = done.stdout.splitlines()[-2:]
    rows = int(first.split()[-2])
    assert first.startswith("[] ") and rows > 0 and first.endswith("True")  # nothing of it before the window
    scipy_thread, engine_thread = second.split()
    assert scipy_thread != "MainThread" and engine_thread != "MainThread"


def test_the_window_shows_the_run_before_its_first_fit(qtbot, tmp_path, settings: QSettings) -> None:
    from curvewright.app.main import build_window

    window = build_window(WEIGHTED, settings=settings, recovery_folder=tmp_path / "recovery")
    qtbot.addWidget(window)
    # built, not yet shown: the run's standards are in the table, the fit has not started
    assert window.standards_model.rowCount() > 0
    assert window.session.analysis_pending and window.session.result is None
    assert window.results_model.rowCount() == 0
    window.resize(1300, 820)
    window.show()
    qtbot.waitExposed(window)
    settle(qtbot, window)
    # the fit arrived and is shown: results, verdict, refit time, the curve
    analyte = window.session.result.analyte(window.current_analyte())
    assert window.results_model.rowCount() == len(analyte.samples) > 0
    assert "ACCEPTED" in window.verdict.text().upper()
    assert window.refit_label.text().startswith("refit in")
    assert window.curve_view.analyte is not None and window.curve_view.analyte.calibration is not None
    window.session.undo_stack.setClean()
    window.close()


def test_a_session_nobody_shows_still_analyses(qtbot, tmp_path) -> None:
    from curvewright.app.session import RunSession

    session, _ = RunSession.open(WEIGHTED, recovery_folder=tmp_path / "recovery", defer_analysis=True)
    assert session.analysis_pending and session.result is None
    with qtbot.waitSignal(session.analysis_ready, timeout=10000):
        pass  # started by the session itself shortly after the event loop runs
    assert session.result is not None and not session.analysis_pending


def test_waiting_for_a_deferred_analysis_starts_it(qtbot, tmp_path) -> None:
    from curvewright.app.session import RunSession

    session, _ = RunSession.open(WEIGHTED, recovery_folder=tmp_path / "recovery", defer_analysis=True)
    assert session.wait_for_analysis()
    qtbot.waitUntil(lambda: session.result is not None, timeout=10000)
    assert not session.analysis_pending


def test_tabs_behind_others_are_drawn_when_opened(make_window) -> None:
    window = make_window(WEIGHTED)
    assert window.bottom_tabs.currentWidget() is window.results_view
    influence = window.influence_view
    assert influence not in (window.bottom_tabs.currentWidget(),)
    assert not influence.plot.listDataItems()  # not drawn while hidden behind the results
    window.bottom_tabs.setCurrentWidget(influence)
    assert influence.plot.listDataItems()  # drawn on opening
    window.bottom_tabs.setCurrentWidget(window.evidence_panel)
    assert window.evidence_panel.table.rowCount() > 0
