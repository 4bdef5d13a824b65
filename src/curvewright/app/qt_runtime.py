"""Starting Qt: one QApplication, offscreen when there is no display (command line, CI)."""

from __future__ import annotations

import os
import sys
from ..core.notation import entered


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


NO_WINDOW_PLATFORMS = ("offscreen", "minimal", "minimalegl")
"""Qt platforms that draw into memory only: no window ever reaches a screen."""
_PROBE = ("import sys\n"
          "from PySide6.QtGui import QGuiApplication\n"
          "app = QGuiApplication(sys.argv[:1])\n"
          "sys.exit(0 if app.primaryScreen() is not None else 4)\n")
PROBE_SECONDS = 30.0


def window_problem() -> str | None:
    """Why no window can be shown here, in words (None when one can): a Qt application already runs in
    this process (None); ``QT_QPA_PLATFORM`` names a platform that draws no window; on Linux, neither
    ``DISPLAY`` nor ``WAYLAND_DISPLAY`` is set for the default platform; or Qt, tried in a separate
    process, cannot open its platform on the display named (Qt ends a process that it cannot give a
    platform, so it is tried where that ends nothing of ours)."""
    widgets = sys.modules.get("PySide6.QtWidgets")
    if widgets is not None and widgets.QApplication.instance() is not None:
        return None
    given = os.environ.get("QT_QPA_PLATFORM", "")
    platform = given.split(":")[0].strip().lower()
    if platform in NO_WINDOW_PLATFORMS:
        return f"QT_QPA_PLATFORM={given} draws no window on a screen (unset it, or set it to the desktop's platform)"
    if not sys.platform.startswith("linux"):
        return None
    display, wayland = os.environ.get("DISPLAY", ""), os.environ.get("WAYLAND_DISPLAY", "")
    if not platform and not display and not wayland:
        return "there is no display here (neither DISPLAY nor WAYLAND_DISPLAY is set)"
    import subprocess

    named = ", ".join(f"{k}={v}" for k, v in (("QT_QPA_PLATFORM", given), ("DISPLAY", display),
                                              ("WAYLAND_DISPLAY", wayland)) if v)
    try:
        probe = subprocess.run([sys.executable, "-c", _PROBE], capture_output=True, timeout=PROBE_SECONDS)
    except subprocess.TimeoutExpired:
        return f"the display ({named}) did not answer within {entered(PROBE_SECONDS)} s"
    except OSError as exc:
        return f"Qt could not be started to open a window ({exc})"
    if probe.returncode != 0:
        return f"Qt cannot open a window on the display named here ({named}): no display answers there, or Qt's " \
               "platform for it cannot be loaded"
    return None
