"""The public API and the boundary between numbers and screens."""

from __future__ import annotations

import ast
import subprocess
import sys
from pathlib import Path

import curvewright as cw

PACKAGE = Path(cw.__file__).parent
QT_MODULES = ("PySide6", "pyqtgraph", "shiboken6")


def test_core_and_io_never_import_qt_when_loaded() -> None:
    code = (
        "import sys, curvewright, curvewright.core.comparison, curvewright.core.acceptance;"
        "import pkgutil, importlib, curvewright.core as c, curvewright.io as i;"
        "[importlib.import_module('curvewright.core.' + m.name) for m in pkgutil.iter_modules(c.__path__)];"
        "[importlib.import_module('curvewright.io.' + m.name) for m in pkgutil.iter_modules(i.__path__)];"
        f"bad = [m for m in sys.modules if m.split('.')[0] in {QT_MODULES!r}];"
        "print(bad); sys.exit(1 if bad else 0)"
    )
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert result.returncode == 0, result.stdout + result.stderr


def test_core_source_has_no_qt_import() -> None:
    for path in (PACKAGE / "core").rglob("*.py"):
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            names = []
            if isinstance(node, ast.Import):
                names = [a.name for a in node.names]
            elif isinstance(node, ast.ImportFrom) and node.module:
                names = [node.module]
            assert not any(n.split(".")[0] in QT_MODULES for n in names), f"{path.name} imports Qt"


def test_public_names_are_curated() -> None:
    for name in cw.__all__:
        assert hasattr(cw, name), name
    assert "fit" in cw.__all__ and "compare" in cw.__all__


def test_caution_is_part_of_the_api() -> None:
    assert "qualified laboratory personnel" in cw.CAUTION
    assert "validated procedures" in cw.CAUTION
