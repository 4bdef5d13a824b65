"""Who has a run document open: a small marker file ``.NAME.open`` beside the document.

The lock on ``.NAME.lock`` (:mod:`.atomic`) is held only while a file is written, so it cannot tell
a second program that the run is open elsewhere. A program that opens a run writes this marker
(person, login, computer, process, time, as JSON), refreshes it while the run stays open and
removes it when it lets the run go. Another program opening the run reads it and tells its user.

Crashes leave markers behind, so a marker counts only while its holder can be alive: on the same
computer, its process must still run; from another computer (whose processes cannot be checked),
it must have been refreshed within :data:`STALE_AFTER_SECONDS`. Anything unreadable is no marker.
Markers are advice to people, never a lock: nothing is refused because of one.
"""

from __future__ import annotations

import json
import os
import socket
import sys
import time
from dataclasses import dataclass
from pathlib import Path

from .atomic import resolve_target, write_atomically
from .audit import Identity, current_user
from .errors import ExportError

REFRESH_SECONDS = 60.0
"""How often a program holding a run open refreshes its marker."""
STALE_AFTER_SECONDS = 5 * REFRESH_SECONDS
"""A marker from another computer not refreshed this long is a crash's left-over."""


@dataclass(frozen=True)
class OpenMarker:
    """Who holds a run open: full name, login, computer, process id, and when it was opened (UTC)."""

    name: str
    login: str
    host: str
    pid: int
    opened_utc: str

    def words(self) -> str:
        who = f"{self.name} ({self.login})" if self.name else self.login
        return f"{who} on computer {self.host}, since {self.opened_utc.replace('T', ' ')[:19]} UTC"

    @property
    def is_this_process(self) -> bool:
        return self.host == socket.gethostname() and self.pid == os.getpid()


def marker_path(path: Path) -> Path:
    """``.NAME.open`` beside the file ``path`` leads to (a symbolic link is followed)."""
    target = resolve_target(Path(path))
    return target.with_name(f".{target.name}.open")


def hold(path: Path, person: Identity, opened_utc: str) -> None:
    """Write (or refresh) this process's marker for ``path``. A marker that cannot be written (a
    read-only folder) is left out silently: it is advice, and the run still opens."""
    data = {"name": person.name, "login": person.login or current_user(), "host": socket.gethostname(), "pid": os.getpid(),
            "opened_utc": opened_utc}
    try:
        write_atomically(marker_path(path), json.dumps(data, ensure_ascii=False).encode("utf-8"))
    except (ExportError, OSError):
        pass


def let_go(path: Path) -> None:
    """Remove the marker for ``path`` when it is this process's (another program's is left alone)."""
    marker = current(path, include_own=True)
    if marker is not None and marker.is_this_process:
        try:
            marker_path(path).unlink()
        except OSError:
            pass


def _alive(marker: OpenMarker, age: float) -> bool:
    if marker.host != socket.gethostname() or sys.platform == "win32":
        return age <= STALE_AFTER_SECONDS
    if marker.pid <= 0:
        return False
    try:
        os.kill(marker.pid, 0)
    except ProcessLookupError:
        return False
    except OSError:
        return True  # exists, owned by someone else
    return True


def current(path: Path, *, include_own: bool = False, now: float | None = None) -> OpenMarker | None:
    """The marker of a program that holds ``path`` open now; None when there is none, it is a
    crash's left-over (see the module's docstring), it cannot be read, or it is this process's own
    (unless ``include_own``)."""
    where = marker_path(path)
    try:
        age = (time.time() if now is None else now) - where.stat().st_mtime
        data = json.loads(where.read_text(encoding="utf-8"))
        marker = OpenMarker(str(data["name"]), str(data["login"]), str(data["host"]), int(data["pid"]),
                            str(data["opened_utc"]))
    except (OSError, ValueError, KeyError, TypeError):
        return None
    if marker.is_this_process and not include_own:
        return None
    return marker if _alive(marker, age) else None
