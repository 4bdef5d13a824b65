"""The files the command writes, as colleagues and the next command find them: readable on a shared
folder, never written over an input, and written through a link rather than over it."""

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
    """The command as a user runs it; with ``umask``, from a shell that set it first."""
    command = [sys.executable, "-m", "curvewright.cli", *args]
    if umask is not None:
        command = ["sh", "-c", f"umask {umask:03o} && exec \"$@\"", "sh", *command]
    return subprocess.run(command, capture_output=True, text=True, cwd=ROOT, timeout=300)


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
    assert mode(workbook) == 0o640 and "Samples" in openpyxl.load_workbook(workbook).sheetnames


def test_an_export_over_an_input_table_is_refused_naming_both(tmp_path) -> None:
    standards = tmp_path / "std.csv"
    standards.write_text("Concentration (µg/L),Area\n1,101\n2,199\n5,502\n10,1003\n20,1996\n", encoding="utf-8")
    samples = tmp_path / "smp.csv"
    samples.write_text("Sample,Dilution,Area\nWell 3,2,640\nTap,1,55\n", encoding="utf-8")
    before = samples.read_bytes()
    result = run_cli("quantify", "--standards", str(standards), "--samples", str(samples), "--export", str(samples))
    assert result.returncode == 2
    assert f"--export: {samples} is the samples table this command reads ({samples}); nothing was written" in result.stderr
    assert samples.read_bytes() == before
    result = run_cli("quantify", "--standards", str(standards), "--samples", str(samples), "--export",
                     str(tmp_path / "." / "std.csv"))
    assert result.returncode == 2 and "is the standards table this command reads" in result.stderr


@POSIX
def test_an_export_through_a_link_to_an_input_is_refused(tmp_path) -> None:
    standards = tmp_path / "std.csv"
    standards.write_text("Concentration,Area\n1,101\n2,199\n5,502\n", encoding="utf-8")
    samples = tmp_path / "smp.csv"
    samples.write_text("Sample,Area\nWell 3,640\n", encoding="utf-8")
    link = tmp_path / "out.csv"
    link.symlink_to(samples)
    result = run_cli("quantify", "--standards", str(standards), "--samples", str(samples), "--export", str(link))
    assert result.returncode == 2 and f"{link} is the samples table this command reads ({samples})" in result.stderr
    assert samples.read_text(encoding="utf-8") == "Sample,Area\nWell 3,640\n"


@POSIX
def test_an_export_to_a_link_writes_the_file_it_points_to(tmp_path) -> None:
    shared = tmp_path / "shared"
    shared.mkdir()
    real = shared / "batch 12 results.xlsx"
    link = tmp_path / "latest.xlsx"
    link.symlink_to(real)
    assert run_cli("quantify", str(DEMO_RUNS[0]), "--export", str(link)).returncode == 0
    assert link.is_symlink() and os.readlink(link) == str(real)
    assert "Samples" in openpyxl.load_workbook(real).sheetnames
