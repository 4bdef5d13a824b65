"""Writing files so that a crash, a kill or a full disk never leaves a half-written file behind.

The bytes go to a temporary file of our own naming in the same folder
(``.NAME.<host>-<process>-<random>.tmp``), which is flushed, fsynced and then renamed over the
target (``os.replace`` is atomic on one file system). What the folder holds is therefore always the
old file or the new one, complete.

- **Permissions.** The temporary is created with mode 0o666 so that the operating system applies
  the user's umask (a colleague on a shared folder can open the workbook as with any file the user
  saves); a file that is replaced keeps the mode it had.
- **Backup.** With ``keep_backup`` the previous version is kept as ``NAME.bak``. The backup is
  itself made atomically before the target is touched: a hard link to the old file under a
  temporary name, renamed over ``NAME.bak`` (or, where the file system has no hard links, a copy
  written, fsynced and renamed). A ``NAME.bak`` that is a symbolic link is replaced, never followed.
- **Symbolic links.** A target that is a symbolic link is written *through* the link: the file it
  points to is replaced (its backup and temporaries beside it), and the link stays a link, so the
  two names never diverge.
- **Left-overs.** A temporary left by a process that was killed is removed by the next write of the
  same file: ours only (our exact name pattern, beside that file), and only when the process that
  made it is gone (same computer) or it has not been touched for :data:`STALE_AFTER_SECONDS`.
- **Failures** raise :class:`~curvewright.io.errors.ExportError` saying exactly what is where.
"""

from __future__ import annotations

import errno
import hashlib
import os
import re
import secrets
import shutil
import socket
import stat
import sys
import time
from contextlib import contextmanager
from pathlib import Path
from typing import Iterator, Mapping

from .errors import ExportError

STALE_AFTER_SECONDS = 600.0
"""A temporary of ours untouched this long is a left-over even when its writer cannot be checked."""
LOCK_TIMEOUT_SECONDS = 60.0
"""How long a writer waits for another to finish with the same file before giving up."""
_NAME_BYTES = 150  # the target name is shortened in temporary names so that they stay legal
_ADVICE = "Check that the disk has space, the folder is writable and the file is not open in another program, then try again."


def write_atomically(path: Path, data: bytes, *, keep_backup: bool = False) -> None:
    """Write ``data`` to ``path`` atomically; raise :class:`ExportError` with the reason on failure."""
    with atomic_target(Path(path), keep_backup=keep_backup) as temporary:
        with open(temporary, "wb") as stream:
            stream.write(data)


def backup_path(path: Path) -> Path:
    """Where the previous version of ``path`` is kept: ``NAME.bak`` beside the file itself."""
    target = resolve_target(Path(path))
    return target.with_name(target.name + ".bak")


def resolve_target(path: Path) -> Path:
    """The file that writing ``path`` replaces: ``path`` itself, or the file its symbolic links
    lead to (written through, so that the link stays a link)."""
    path = Path(path)
    if not path.is_symlink() and not any(p.is_symlink() for p in path.parents if str(p) not in ("", ".")):
        return path
    return Path(os.path.realpath(path))


# --- temporaries -----------------------------------------------------------------------------------
def _host_tag() -> str:
    return hashlib.sha256(socket.gethostname().encode("utf-8", "replace")).hexdigest()[:8]


def _short(name: str) -> str:
    """``name`` cut to at most :data:`_NAME_BYTES` bytes of UTF-8 (whole characters)."""
    data = name.encode("utf-8", "surrogateescape")
    if len(data) <= _NAME_BYTES:
        return name
    return data[:_NAME_BYTES].decode("utf-8", "ignore")


def temporary_pattern(target_name: str) -> re.Pattern[str]:
    """The names of our temporaries for a file called ``target_name``: the current pattern
    (host tag, process id, random part) and the earlier one (eight random characters)."""
    return re.compile(
        r"\." + re.escape(_short(target_name))
        + r"\.(?:(?P<host>[0-9a-f]{8})-(?P<pid>[0-9]{1,10})-[0-9a-f]{12}|[a-z0-9_]{8})\.tmp"
    )


def new_temporary(target: Path) -> Path:
    """Create an empty temporary of our naming beside ``target`` (mode 0o666 less the umask)."""
    flags = os.O_CREAT | os.O_EXCL | os.O_WRONLY | getattr(os, "O_BINARY", 0) | getattr(os, "O_CLOEXEC", 0)
    for _ in range(100):
        name = f".{_short(target.name)}.{_host_tag()}-{os.getpid()}-{secrets.token_hex(6)}.tmp"
        candidate = target.with_name(name)
        try:
            fd = os.open(candidate, flags, 0o666)
        except FileExistsError:
            continue
        os.close(fd)
        return candidate
    raise FileExistsError(errno.EEXIST, "no free temporary name", str(target.parent))


def _writer_is_gone(host: str | None, pid: str | None) -> bool:
    if host is None or pid is None or host != _host_tag() or sys.platform == "win32":
        return False  # another computer, or no safe check (on Windows a signal 0 would end the process)
    number = int(pid)
    if number <= 0 or number == os.getpid():
        return False
    try:
        os.kill(number, 0)
    except ProcessLookupError:
        return True
    except OSError:
        return False  # exists, owned by someone else
    return False


def remove_stale_temporaries(target: Path, *, now: float | None = None) -> list[Path]:
    """Remove temporaries of ours beside ``target`` (for it and for its backup) whose writer is
    gone or that are older than :data:`STALE_AFTER_SECONDS`; return what was removed. A temporary
    that a live writer is using is left alone. Errors are ignored: tidying never stops a save."""
    now = time.time() if now is None else now
    patterns = [temporary_pattern(target.name), temporary_pattern(target.name + ".bak")]
    prefix = "." + _short(target.name) + "."
    removed = []
    try:
        entries = list(os.scandir(target.parent if str(target.parent) else "."))
    except OSError:
        return removed
    for entry in entries:
        if not entry.name.startswith(prefix) or not entry.name.endswith(".tmp"):
            continue
        match = next((m for p in patterns if (m := p.fullmatch(entry.name))), None)
        if match is None:
            continue
        try:
            info = entry.stat(follow_symlinks=False)
            if not stat.S_ISREG(info.st_mode):
                continue
            if _writer_is_gone(match.group("host"), match.group("pid")) or now - info.st_mtime > STALE_AFTER_SECONDS:
                os.unlink(entry.path)
                removed.append(Path(entry.path))
        except OSError:
            continue
    return removed


# --- the write -------------------------------------------------------------------------------------
def _sync_folder(folder: Path) -> None:
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


def _fsync_path(path: Path) -> None:
    with open(path, "rb+") as stream:
        os.fsync(stream.fileno())


def _reason(exc: OSError) -> str:
    return exc.strerror or str(exc)


class _BackupFailed(Exception):
    def __init__(self, cause: OSError) -> None:
        super().__init__(cause)
        self.cause = cause


def _write_backup(target: Path, backup: Path) -> None:
    """Make ``backup`` a complete copy of ``target`` atomically: a hard link (else a copy) under a
    temporary name, renamed over the backup (a link there is replaced, never followed). When the
    backup already is the target's file (a save stopped between the two renames), nothing is done:
    renaming one link of a file over another link of it would leave the temporary in place."""
    try:
        if not backup.is_symlink() and os.path.samefile(target, backup):
            return
    except OSError:
        pass
    temporary = new_temporary(backup)
    try:
        try:
            temporary.unlink()
            os.link(target, temporary)
        except OSError:  # no hard links here (some network and removable file systems): copy
            with open(target, "rb") as source, open(temporary, "xb") as copy:
                shutil.copyfileobj(source, copy, 1 << 20)
                copy.flush()
                os.fsync(copy.fileno())
            shutil.copymode(target, temporary)
        os.replace(temporary, backup)
    except BaseException:
        temporary.unlink(missing_ok=True)
        raise
    temporary.unlink(missing_ok=True)  # still there only if the backup was already this very file
    _sync_folder(backup.parent)


@contextmanager
def atomic_target(path: Path, *, keep_backup: bool = False) -> Iterator[Path]:
    """A temporary path beside the target to write to. On success it is fsynced, given the mode
    of the file it replaces, and renamed over the target (after the previous file has been kept
    as ``NAME.bak`` when ``keep_backup``); on failure it is removed and :class:`ExportError` says
    what is where. A symbolic link is written through (see the module's docstring)."""
    given = Path(path)
    target = resolve_target(given)
    shown = str(given) if target == given else f"{given} (a link to {target})"
    folder = target.parent if str(target.parent) else Path(".")
    backup = target.with_name(target.name + ".bak")
    remove_stale_temporaries(target)
    try:
        temporary = new_temporary(target)
    except OSError as exc:
        raise ExportError(f"{shown}: cannot write in folder {folder} ({_reason(exc)}); nothing was written.") from None
    existed = target.exists()
    had_backup = backup.exists() or backup.is_symlink()
    backup_made = False
    try:
        yield temporary
        _fsync_path(temporary)
        if existed:
            try:
                os.chmod(temporary, stat.S_IMODE(os.stat(target).st_mode))
            except OSError:
                pass  # a target we cannot inspect: the new file keeps the umask's mode
        if keep_backup and target.is_file():
            try:
                _write_backup(target, backup)
            except OSError as exc:
                raise _BackupFailed(exc) from None
            backup_made = True
        os.replace(temporary, target)
    except _BackupFailed as failed:
        temporary.unlink(missing_ok=True)
        kept = f"{target} and {backup} are unchanged" if had_backup else f"{target} is unchanged and no backup was made"
        raise ExportError(
            f"{shown}: not saved, because its backup {backup} could not be written ({_reason(failed.cause)}). "
            f"{kept}. {_ADVICE}"
        ) from None
    except OSError as exc:
        temporary.unlink(missing_ok=True)
        if not existed:
            where = f"no file was created at {target}"
        elif backup_made:
            where = f"{target} is unchanged, and {backup} now holds a copy of it"
        else:
            where = f"{target} is unchanged" + (f", and so is {backup}" if keep_backup and had_backup else "")
        raise ExportError(f"{shown}: not written ({_reason(exc)}); {where}. {_ADVICE}") from None
    except BaseException:
        temporary.unlink(missing_ok=True)
        raise
    _sync_folder(folder)


# --- several writers -------------------------------------------------------------------------------
def lock_path(path: Path) -> Path:
    """The lock file of ``path``: ``.NAME.lock`` beside the file itself (kept; it is empty)."""
    target = resolve_target(Path(path))
    return target.with_name(f".{_short(target.name)}.lock")


@contextmanager
def exclusive_lock(path: Path, *, timeout: float = LOCK_TIMEOUT_SECONDS) -> Iterator[bool]:
    """Hold the operating system's exclusive lock on ``path``'s lock file while the block runs, so
    that a read-modify-write by another process (or thread) waits for this one to finish.
    ``fcntl.flock`` on POSIX, ``msvcrt.locking`` on Windows; the lock ends with the process.

    Yields True while the lock is held, or False on a file system that has no locks (some network
    shares): the block then goes on unlocked, and a caller that reads before it writes checks
    itself that the file did not change in between."""
    target = resolve_target(Path(path))
    where = lock_path(target)
    try:
        fd = os.open(where, os.O_RDWR | os.O_CREAT | getattr(os, "O_CLOEXEC", 0), 0o666)
    except OSError as exc:
        raise ExportError(f"{target}: cannot write in folder {where.parent} ({_reason(exc)}); nothing was written.") from None
    try:
        deadline = time.monotonic() + timeout
        while (locked := _try_lock(fd)) is False:
            if time.monotonic() > deadline:
                raise ExportError(
                    f"{target}: another program has been writing this file for more than {timeout:.0f} s; "
                    "nothing was written. Try again when it has finished."
                )
            time.sleep(0.02)
        try:
            yield bool(locked)
        finally:
            if locked:
                _unlock(fd)
    finally:
        os.close(fd)


def _try_lock(fd: int) -> bool | None:
    """True when locked, False when another holds the lock, None when the file system has none."""
    if sys.platform == "win32":  # pragma: no cover - exercised on Windows only
        import msvcrt

        try:
            os.lseek(fd, 0, os.SEEK_SET)
            msvcrt.locking(fd, msvcrt.LK_NBLCK, 1)
            return True
        except OSError:
            return False
    import fcntl

    try:
        fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
        return True
    except BlockingIOError:
        return False
    except OSError:  # ENOLCK, EOPNOTSUPP…: no locks on this file system
        return None


def _unlock(fd: int) -> None:
    if sys.platform == "win32":  # pragma: no cover - exercised on Windows only
        import msvcrt

        os.lseek(fd, 0, os.SEEK_SET)
        msvcrt.locking(fd, msvcrt.LK_UNLCK, 1)
        return
    import fcntl

    fcntl.flock(fd, fcntl.LOCK_UN)


# --- outputs that would destroy inputs -------------------------------------------------------------
def same_file(a: Path, b: Path) -> bool:
    """True when ``a`` and ``b`` name one file (the same file when both exist, else the same
    resolved path, compared as the operating system compares names)."""
    try:
        return os.path.samefile(a, b)
    except OSError:
        pass
    return os.path.normcase(os.path.realpath(a)) == os.path.normcase(os.path.realpath(b))


def ensure_not_input(target: Path, inputs: Mapping[str, Path | str | None], option: str) -> None:
    """Refuse to write ``target`` when it is one of the files being read (``inputs`` maps what
    each input is, e.g. "samples table", to its path)."""
    for what, source in inputs.items():
        if source is not None and same_file(Path(target), Path(source)):
            raise ExportError(
                f"{option}: {target} is the {what} this command reads ({source}); nothing was written. "
                "Give the output another name."
            )
