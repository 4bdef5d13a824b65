"""Writing files so that a crash or a full disk never leaves a half-written file behind.

The bytes go to a temporary file in the same folder, which is flushed and fsynced and then
renamed over the target (``os.replace`` is atomic on one file system). The previous version, when
asked for, is kept beside it as ``NAME.bak``.
"""

from __future__ import annotations

import os
import shutil
import tempfile
from contextlib import contextmanager
from pathlib import Path
from typing import Iterator

from .errors import ExportError


def write_atomically(path: Path, data: bytes, *, keep_backup: bool = False) -> None:
    """Write ``data`` to ``path`` atomically; raise :class:`ExportError` with the reason on failure."""
    with atomic_target(Path(path), keep_backup=keep_backup) as temporary:
        with open(temporary, "wb") as stream:
            stream.write(data)


def backup_path(path: Path) -> Path:
    return Path(path).with_name(Path(path).name + ".bak")


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


@contextmanager
def atomic_target(path: Path, *, keep_backup: bool = False) -> Iterator[Path]:
    """A temporary path beside ``path`` to write to; on success it is fsynced and renamed over
    ``path`` (the previous file first copied to ``NAME.bak`` when ``keep_backup``), on failure
    removed. Failures raise :class:`ExportError` with the reason."""
    path = Path(path)
    folder = path.parent if str(path.parent) else Path(".")
    try:
        handle, name = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=folder)
        os.close(handle)
    except OSError as exc:
        raise ExportError(f"{path}: cannot write in folder {folder} ({exc.strerror or exc}).") from None
    temporary = Path(name)
    try:
        yield temporary
        with open(temporary, "rb+") as stream:
            os.fsync(stream.fileno())
        if keep_backup and path.exists():
            shutil.copy2(path, backup_path(path))
        os.replace(temporary, path)
    except OSError as exc:
        temporary.unlink(missing_ok=True)
        raise ExportError(
            f"{path}: not written ({exc.strerror or exc}); the file may be open in another program or "
            "the folder not writable. Nothing was lost: the previous file, if any, is unchanged."
        ) from None
    except BaseException:
        temporary.unlink(missing_ok=True)
        raise
    _sync_folder(folder)
