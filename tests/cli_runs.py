"""Running the command line as a person runs it, for the command-line tests: a fresh process started
from the project's folder, its output read as UTF-8 text."""

from __future__ import annotations

import re
import subprocess
import sys
import unicodedata
from pathlib import Path

from tests.io.helpers import ROOT


def run_cli(*args: str, cwd: Path | None = None, timeout: float = 300) -> subprocess.CompletedProcess:
    """``curvewright ARGS`` in a fresh interpreter, started in ``cwd`` (the project's folder by default)."""
    return subprocess.run([sys.executable, "-m", "curvewright.cli", *args], capture_output=True, text=True,
                          encoding="utf-8", cwd=cwd or ROOT, timeout=timeout)


def flat(text: str) -> str:
    """``text`` without white space and with compatibility characters folded, so that a phrase can be found
    however a table or a page wrapped it."""
    return re.sub(r"\s+", "", unicodedata.normalize("NFKC", text))
