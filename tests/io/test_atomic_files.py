"""Files written atomically: permissions that follow the umask, a backup that is never partial or
followed through a link, messages that say exactly what is where, and no left-over temporaries."""

from __future__ import annotations

import importlib.util
import os
import stat
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import pytest

from curvewright.io import atomic, run_edits
from curvewright.io import run_document as doc
from curvewright.io.errors import ExportError
from tests.io.helpers import ROOT, small_run

POSIX = pytest.mark.skipif(sys.platform == "win32", reason="POSIX permissions, links and limits")


def mode(path: Path) -> int:
    return stat.S_IMODE(os.stat(path).st_mode)


def temporaries(folder: Path) -> list[str]:
    return sorted(p.name for p in folder.iterdir() if p.name.endswith(".tmp"))


# --- permissions ---------------------------------------------------------------------------------
@POSIX
@pytest.mark.parametrize("umask, expected", [(0o022, 0o644), (0o002, 0o664), (0o077, 0o600)])
def test_new_files_follow_the_umask(tmp_path, umask, expected) -> None:
    old = os.umask(umask)
    try:
        atomic.write_atomically(tmp_path / "results.csv", b"a,b\n")
        doc.save_run(small_run(), tmp_path / "run.json")
    finally:
        os.umask(old)
    assert mode(tmp_path / "results.csv") == expected
    assert mode(tmp_path / "run.json") == expected


@POSIX
def test_a_replaced_file_keeps_its_mode_and_so_does_its_backup(tmp_path) -> None:
    path = tmp_path / "run.json"
    doc.save_run(small_run(), path)
    os.chmod(path, 0o640)
    doc.save_run(small_run(), path)
    assert mode(path) == 0o640 and mode(path.with_name("run.json.bak")) == 0o640


# --- the backup ----------------------------------------------------------------------------------
def test_the_backup_holds_the_previous_version_complete(tmp_path) -> None:
    path = tmp_path / "r.bin"
    atomic.write_atomically(path, b"first", keep_backup=True)
    atomic.write_atomically(path, b"second", keep_backup=True)
    atomic.write_atomically(path, b"third", keep_backup=True)
    assert path.read_bytes() == b"third" and (tmp_path / "r.bin.bak").read_bytes() == b"second"
    assert temporaries(tmp_path) == []


def test_without_hard_links_the_backup_is_copied_atomically(tmp_path, monkeypatch) -> None:
    def no_links(*args, **kwargs):
        raise OSError(1, "Operation not permitted")

    monkeypatch.setattr(atomic.os, "link", no_links)
    path = tmp_path / "r.bin"
    atomic.write_atomically(path, b"first", keep_backup=True)
    atomic.write_atomically(path, b"second", keep_backup=True)
    assert path.read_bytes() == b"second" and (tmp_path / "r.bin.bak").read_bytes() == b"first"
    assert temporaries(tmp_path) == []


def test_a_save_stopped_between_its_two_renames_is_completed_by_the_next(tmp_path) -> None:
    path = tmp_path / "r.bin"
    atomic.write_atomically(path, b"first")
    os.link(path, tmp_path / "r.bin.bak")  # the backup made, the target not yet replaced: one file, two names
    atomic.write_atomically(path, b"second", keep_backup=True)
    assert path.read_bytes() == b"second" and (tmp_path / "r.bin.bak").read_bytes() == b"first"
    assert temporaries(tmp_path) == []


@POSIX
def test_a_backup_that_is_a_link_is_replaced_never_followed(tmp_path) -> None:
    victim = tmp_path / "someone else's file.txt"
    victim.write_text("keep me", encoding="utf-8")
    path = tmp_path / "run.json"
    doc.save_run(small_run(), path)
    (tmp_path / "run.json.bak").symlink_to(victim)
    doc.save_run(small_run(), path)
    assert victim.read_text(encoding="utf-8") == "keep me"
    backup = tmp_path / "run.json.bak"
    assert not backup.is_symlink() and doc.open_run(backup).run == small_run()


def test_when_the_backup_cannot_be_written_nothing_changes_and_the_message_says_so(tmp_path) -> None:
    path = tmp_path / "r.bin"
    atomic.write_atomically(path, b"first")
    (tmp_path / "r.bin.bak").mkdir()  # something that is not a file where the backup goes
    with pytest.raises(ExportError) as info:
        atomic.write_atomically(path, b"second", keep_backup=True)
    message = str(info.value)
    assert "not saved, because its backup" in message and f"{path} and {path}.bak are unchanged" in message
    assert "Nothing was lost" not in message
    assert path.read_bytes() == b"first" and (tmp_path / "r.bin.bak").is_dir()
    assert temporaries(tmp_path) == []


def test_when_the_target_cannot_be_replaced_after_the_backup_the_message_says_where_things_are(tmp_path, monkeypatch) -> None:
    path = tmp_path / "r.bin"
    atomic.write_atomically(path, b"first", keep_backup=True)
    atomic.write_atomically(path, b"second", keep_backup=True)
    real_replace = os.replace

    def refuse_target(source, destination):  # the target is locked by another program
        if Path(destination) == path:
            raise PermissionError(13, "Permission denied")
        return real_replace(source, destination)

    monkeypatch.setattr(atomic.os, "replace", refuse_target)
    with pytest.raises(ExportError) as info:
        atomic.write_atomically(path, b"third", keep_backup=True)
    assert f"{path} is unchanged, and {path}.bak now holds a copy of it" in str(info.value)
    assert path.read_bytes() == b"second" and (tmp_path / "r.bin.bak").read_bytes() == b"second"


FULL_DISK = textwrap.dedent("""
    import os, resource, signal, sys
    from pathlib import Path
    from curvewright.io import atomic, run_edits
    from curvewright.io.errors import ExportError
    if sys.argv[2] == "no-links":
        def no_links(*a, **k):
            raise OSError(1, "Operation not permitted")
        atomic.os.link = no_links
    signal.signal(signal.SIGXFSZ, signal.SIG_IGN)
    resource.setrlimit(resource.RLIMIT_FSIZE, (20_000, resource.RLIM_INFINITY))  # every file stops at 20 kB
    try:
        atomic.write_atomically(Path(sys.argv[1]), b"new " * 1000, keep_backup=True)
        print("saved")
    except ExportError as exc:
        print(exc)
""")


@POSIX
@pytest.mark.parametrize("links", ["links", "no-links"])
def test_a_full_disk_never_destroys_the_previous_backup(tmp_path, links) -> None:
    path = tmp_path / "run.json"
    path.write_bytes(b"old " * 10_000)  # 40 kB: larger than the disk has room for
    (tmp_path / "run.json.bak").write_bytes(b"older")
    result = subprocess.run([sys.executable, "-c", FULL_DISK, str(path), links], capture_output=True, text=True,
                            timeout=120, env={**os.environ, "PYTHONPATH": os.pathsep.join(sys.path)})
    assert result.returncode == 0, result.stderr
    backup = (tmp_path / "run.json.bak").read_bytes()
    if links == "links":  # a hard link needs no room: the save goes through, the backup is the old file
        assert result.stdout.strip() == "saved"
        assert path.read_bytes() == b"new " * 1000 and backup == b"old " * 10_000
    else:  # the copy does not fit: nothing changes, and the message says so
        assert "could not be written (File too large)" in result.stdout
        assert f"{path} and {path}.bak are unchanged" in result.stdout and "Nothing was lost" not in result.stdout
        assert path.read_bytes() == b"old " * 10_000 and backup == b"older"
    assert temporaries(tmp_path) == []


# --- left-over temporaries -----------------------------------------------------------------------
def _temporary_of(target: Path, pid: int) -> Path:
    """A temporary of our naming for ``target`` as if written by process ``pid``."""
    made = atomic.new_temporary(target)
    host, _, rest = made.name[len(target.name) + 2:].partition("-")
    renamed = made.with_name(f".{target.name}.{host}-{pid}-{rest.split('-', 1)[1]}")
    made.rename(renamed)
    renamed.write_bytes(b"partial")
    return renamed


@POSIX
def test_left_over_temporaries_are_removed_on_the_next_save_and_only_ours(tmp_path) -> None:
    target = tmp_path / "run.json"
    gone = subprocess.run([sys.executable, "-c", "import os; print(os.getpid())"], capture_output=True, text=True)
    dead_pid = int(gone.stdout)
    alive = subprocess.Popen([sys.executable, "-c", "import time; time.sleep(60)"])
    try:
        killed = _temporary_of(target, dead_pid)
        killed_backup = _temporary_of(target.with_name("run.json.bak"), dead_pid)
        in_use = _temporary_of(target, alive.pid)
        old_style = tmp_path / ".run.json.k3x9_q2a.tmp"  # the earlier naming, an hour old
        old_style.write_bytes(b"partial")
        hour_ago = time.time() - 3600
        os.utime(old_style, (hour_ago, hour_ago))
        fresh_old_style = tmp_path / ".run.json.m7p0zz1b.tmp"  # the earlier naming, just written
        fresh_old_style.write_bytes(b"partial")
        others = [tmp_path / ".run.json.notours.tmp", tmp_path / "run.json.tmp", tmp_path / ".other.json.k3x9_q2a.tmp",
                  _temporary_of(tmp_path / "other.json", dead_pid)]
        for other in others:
            other.write_bytes(b"not ours to remove")
            os.utime(other, (hour_ago, hour_ago))
        doc.save_run(small_run(), target)
        assert not killed.exists() and not killed_backup.exists() and not old_style.exists()
        assert in_use.exists() and fresh_old_style.exists() and all(p.exists() for p in others)
    finally:
        alive.kill()
        alive.wait()


# --- symbolic links ------------------------------------------------------------------------------
@POSIX
def test_saving_a_linked_document_writes_through_the_link(tmp_path) -> None:
    real = tmp_path / "shared" / "batch.json"
    real.parent.mkdir()
    link = tmp_path / "my batch.json"
    first = small_run()
    doc.save_run(first, real)
    link.symlink_to(real)
    second = run_edits.record(first, "export_written", {"path": "r.xlsx", "sha256": "0" * 64}, user="tester")
    doc.save_run(second, link)
    assert link.is_symlink() and os.readlink(link) == str(real)
    assert doc.open_run(real).run == second and doc.open_run(link).run == second
    assert doc.open_run(real.with_name("batch.json.bak")).run == first  # the backup lies beside the real file
    assert not (tmp_path / "my batch.json.bak").exists()
    doc.append_to_run_document(link, [("report_written", {"path": "r.pdf", "sha256": "1" * 64})])
    assert link.is_symlink() and doc.open_run(real).run.audit[-1].action == "report_written"


# --- outputs that are inputs ---------------------------------------------------------------------
def test_an_output_that_is_an_input_is_refused(tmp_path) -> None:
    samples = tmp_path / "smp.csv"
    samples.write_text("Sample,Response\nU1,5\n", encoding="utf-8")
    with pytest.raises(ExportError, match=r"--export: .*smp\.csv is the samples table this command reads"):
        atomic.ensure_not_input(tmp_path / "." / "smp.csv", {"samples table": samples}, "--export")
    atomic.ensure_not_input(tmp_path / "results.csv", {"samples table": samples}, "--export")


@POSIX
@pytest.mark.parametrize("use_lxml", [True, False], ids=["lxml writer", "standard-library writer"])
def test_a_full_disk_prints_no_stray_tracebacks_and_leaves_no_temporaries(tmp_path, use_lxml: bool) -> None:
    if use_lxml and importlib.util.find_spec("lxml") is None:
        pytest.skip("lxml is not installed here: openpyxl writes with the standard library")
    script = textwrap.dedent("""
        import resource, signal, sys
        import openpyxl
        assert openpyxl.LXML is (sys.argv[3] == "True")  # the writer asked for is the one used
        from curvewright.core.run_analysis import analyse_run
        from curvewright.io.errors import ExportError
        from curvewright.io.run_document import open_run
        from curvewright.io.xlsx_export import write_xlsx
        result = analyse_run(open_run(sys.argv[1]).run)
        signal.signal(signal.SIGXFSZ, signal.SIG_IGN)
        resource.setrlimit(resource.RLIMIT_FSIZE, (3000, resource.RLIM_INFINITY))
        try:
            write_xlsx(result, sys.argv[2])
        except ExportError as exc:
            print(exc)
    """)
    scratch = tmp_path / "scratch"
    scratch.mkdir()
    demo = ROOT / "sample_runs" / "veltaprine_plasma_weighted.json"
    result = subprocess.run([sys.executable, "-W", "error", "-c", script, str(demo), str(tmp_path / "results.xlsx"),
                             str(use_lxml)], capture_output=True, text=True, timeout=120,
                            env={**os.environ, "PYTHONPATH": os.pathsep.join(sys.path), "TMPDIR": str(scratch),
                                 "OPENPYXL_LXML": str(use_lxml)})
    assert "results.xlsx: not written (File too large)" in result.stdout, result.stdout + result.stderr
    assert result.stderr == ""  # no "Exception ignored" traceback from the workbook writer
    assert result.returncode == 0 and temporaries(tmp_path) == [] and list(scratch.iterdir()) == []
