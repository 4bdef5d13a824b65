"""The files the command writes, as colleagues and the next command find them: readable on a shared
folder, and written through a link rather than over it."""

from __future__ import annotations

import os
import stat
import subprocess
import sys
from pathlib import Path

import openpyxl
import pytest

from curvewright.io.run_document import open_run, save_run
from tests.io.helpers import DEMO_RUNS, ROOT

POSIX = pytest.mark.skipif(sys.platform == "win32", reason="POSIX permissions and links")


def run_cli(*args: str, umask: int | None = None) -> subprocess.CompletedProcess:
    def set_umask() -> None:
        if umask is not None:
            os.umask(umask)

    return subprocess.run([sys.executable, "-m", "curvewright.cli", *args], capture_output=True, text=True, cwd=ROOT,
                          timeout=300, preexec_fn=set_umask if sys.platform != "win32" else None)


def mode(path: Path) -> int:
    return stat.S_IMODE(os.stat(path).st_mode)


@POSIX
@pytest.mark.parametrize("umask, expected", [(0o022, 0o644), (0o002, 0o664)])
def test_every_file_written_follows_the_umask(tmp_path, umask, expected) -> None:
    document = tmp_path / "run.json"
    save_run(open_run(DEMO_RUNS[0]).run, document)
    os.chmod(document, 0o666 & ~umask)
    result = run_cli("quantify", str(document), "--export", str(tmp_path / "results.xlsx"), "--report",
                     str(tmp_path / "record.pdf"), "--record", umask=umask)
    assert result.returncode == 0, result.stderr
    result = run_cli("quantify", str(document), "--export", str(tmp_path / "samples.csv"), umask=umask)
    assert result.returncode == 0, result.stderr
    for name in ("results.xlsx", "record.pdf", "samples.csv", "run.json", "run.json.bak"):
        assert mode(tmp_path / name) == expected, name


@POSIX
def test_a_replaced_export_keeps_the_mode_it_had(tmp_path) -> None:
    workbook = tmp_path / "results.xlsx"
    workbook.write_bytes(b"an older export")
    os.chmod(workbook, 0o640)
    assert run_cli("quantify", str(DEMO_RUNS[0]), "--export", str(workbook), umask=0o022).returncode == 0
    assert mode(workbook) == 0o640 and openpyxl.load_workbook(workbook).sheetnames[0] == "Samples"


@POSIX
def test_an_export_to_a_link_writes_the_file_it_points_to(tmp_path) -> None:
    shared = tmp_path / "shared"
    shared.mkdir()
    real = shared / "batch 12 results.xlsx"
    link = tmp_path / "latest.xlsx"
    link.symlink_to(real)
    assert run_cli("quantify", str(DEMO_RUNS[0]), "--export", str(link)).returncode == 0
    assert link.is_symlink() and os.readlink(link) == str(real)
    assert openpyxl.load_workbook(real).sheetnames[0] == "Samples"
