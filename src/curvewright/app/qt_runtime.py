"""Starting Qt: one QApplication, offscreen when there is no display (command line, CI)."""

from __future__ import annotations

import os
import sys


def ensure_application(offscreen_if_headless: bool = True):  # type: ignore[no-untyped-def]
    """The running QApplication, creating it if needed."""
    if offscreen_if_headless and "QT_QPA_PLATFORM" not in os.environ and sys.platform.startswith("linux"):
        if not os.environ.get("DISPLAY") and not os.environ.get("WAYLAND_DISPLAY"):
            os.environ["QT_QPA_PLATFORM"] = "offscreen"
    from PySide6.QtWidgets import QApplication

    app = QApplication.instance()
    if app is None:
        app = QApplication(sys.argv[:1])
        app.setApplicationName("Curvewright")
        app.setOrganizationName("Curvewright")
    return app
