"""Render the main window with each demo run to PNG, offscreen, so anyone can look at the screens.

Run with: python -m curvewright.app.screenshots OUTPUT_FOLDER
"""

from __future__ import annotations

import os
import sys
import tempfile
from pathlib import Path


def render_demo_screens(folder: Path, width: int = 1400, height: int = 860) -> list[Path]:
    os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    from PySide6.QtCore import QSettings

    from .main import build_window, demo_run_paths
    from .qt_runtime import ensure_application

    app = ensure_application()
    folder.mkdir(parents=True, exist_ok=True)
    written = []
    with tempfile.TemporaryDirectory() as scratch:
        settings = QSettings(str(Path(scratch) / "settings.ini"), QSettings.Format.IniFormat)
        for path in demo_run_paths():
            window = build_window(path, settings=settings, recovery_folder=Path(scratch) / "recovery")
            window.resize(width, height)
            window.show()
            window.session.wait_for_analysis()
            for _ in range(3):
                app.processEvents()
            target = folder / f"{path.stem}.png"
            window.grab().save(str(target))
            written.append(target)
            window.session.wait_for_analysis()
            window.close()
            window.deleteLater()
            app.processEvents()
    return written


def main() -> int:
    folder = Path(sys.argv[1] if len(sys.argv) > 1 else "screens")
    for path in render_demo_screens(folder):
        print(path)
    return 0


if __name__ == "__main__":
    code = main()
    sys.stdout.flush()
    os._exit(code)  # leave without tearing Qt down object by object at interpreter exit
