"""Starting the desktop app: ``curvewright``, ``curvewright RUN.json``, ``curvewright --demo [NAME]``."""

from __future__ import annotations

import sys
import sysconfig
from pathlib import Path

from PySide6.QtCore import QSettings
from PySide6.QtWidgets import QMessageBox

from ..core.errors import CurvewrightError
from ..io import run_edits
from ..io.audit import Identity, identity_from
from ..io.run_document import open_recovery
from .qt_runtime import ensure_application
from .session import RunSession, pending_recoveries, recovery_files


def demo_run_paths() -> list[Path]:
    """The demo runs: beside the source in a checkout, or where the installation put them."""
    candidates = [Path(__file__).resolve().parents[3] / "sample_runs",
                  Path(sysconfig.get_paths()["data"]) / "share" / "curvewright" / "sample_runs"]
    for folder in candidates:
        found = sorted(folder.glob("*.json")) if folder.is_dir() else []
        if found:
            return found
    return []


def find_demo(name: str | None) -> Path:
    paths = demo_run_paths()
    if not paths:
        raise CurvewrightError("no demo runs were installed with this copy of Curvewright.")
    if not name:
        return paths[0]
    for p in paths:
        if name.lower() in p.stem.lower():
            return p
    raise CurvewrightError(f"no demo run matches {name!r} (demo runs: {', '.join(p.stem for p in paths)}).")


def settings_identity(settings: QSettings) -> Identity:
    """The person working, as set in the app's settings (full name and laboratory ID), with the login."""
    return identity_from(str(settings.value("identity/name", "") or ""), str(settings.value("identity/id", "") or ""))


def offer_recovery(folder: Path | None, parent=None, identity: Identity | None = None) -> RunSession | None:  # type: ignore[no-untyped-def]
    """After a crash: offer to restore the work kept in a recovery file (one offer per file). The
    document the work belongs to is named in the recovery file itself."""
    for recovery, _ in pending_recoveries(folder):
        opened, source = None, ""
        for candidate in (recovery, recovery_files(recovery)[2]):  # the file, else its backup
            try:
                opened, source = open_recovery(candidate)
                break
            except CurvewrightError:
                continue
        answer = QMessageBox.StandardButton.No
        if opened is not None:
            answer = QMessageBox.question(
                parent, "Restore unsaved work?",
                "Curvewright did not close normally. Unsaved work was kept"
                + (f" for {source}" if source else " for a run that was never saved") + ". Restore it?",
                QMessageBox.StandardButton.Yes | QMessageBox.StandardButton.No)
        for stale in recovery_files(recovery):
            try:
                stale.unlink(missing_ok=True)
            except OSError:
                pass  # offered again at the next start
        if opened is not None and answer == QMessageBox.StandardButton.Yes:
            session = RunSession(opened.run, Path(source) if source else None, recovery_folder=folder, identity=identity)
            session.apply(run_edits.record(opened.run, "recovered_after_crash", {"recovery_file": recovery.name},
                                           user=session.identity),
                          "Restore unsaved work")
            return session
    return None


def build_window(path: Path | None = None, *, settings: QSettings | None = None, recovery_folder: Path | None = None):  # type: ignore[no-untyped-def]
    from .main_window import MainWindow, blank_run

    ensure_application()
    settings = settings or QSettings("Curvewright", "Curvewright")
    identity = settings_identity(settings)
    session = offer_recovery(recovery_folder, identity=identity)
    from ..io import open_marker

    problems: tuple[str, ...] = ()
    # a run open in another Curvewright: the window starts blank and asks before opening it
    elsewhere = session is None and path is not None and open_marker.current(Path(path)) is not None
    if session is None:
        if path is not None and not elsewhere:
            session, problems = RunSession.open(path, recovery_folder=recovery_folder, identity=identity,
                                                defer_analysis=True)
        else:
            session = RunSession(blank_run(settings), recovery_folder=recovery_folder, identity=identity,
                                 defer_analysis=True)
    window = MainWindow(session, settings)
    if elsewhere:
        window.open_path(Path(path))  # type: ignore[arg-type]
    elif path is not None:
        window._remember(path)
    if problems:
        QMessageBox.warning(window, "Not as Curvewright left it", "\n".join(problems))
    return window


def run_app(path: str | None = None, demo: str | None | bool = False) -> int:
    app = ensure_application(offscreen_if_headless=False)
    try:
        target = find_demo(demo if isinstance(demo, str) else None) if demo is not False else (Path(path) if path else None)
        window = build_window(target)
    except CurvewrightError as exc:
        print(f"curvewright: {exc}", file=sys.stderr)
        return 2
    window.resize(1400, 860)
    window.show()
    return app.exec()


