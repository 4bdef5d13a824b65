"""Where an archive lives: a SQLite file in a folder, or a PostgreSQL database reached by a URL.

Accepted forms:

* a folder, ``FOLDER`` — the archive is the SQLite file ``FOLDER/curvewright-archive.sqlite``;
* a file ending in ``.sqlite``, ``.sqlite3`` or ``.db``, or ``sqlite:///PATH``;
* ``postgresql://USER@HOST[:PORT]/DATABASE`` (also ``postgres://``), served by the psycopg driver.

When none is given, the location is taken from the environment variable
:data:`ENVIRONMENT`. A password is never stored by Curvewright: it belongs in the environment
(``PGPASSWORD``), the user's ``~/.pgpass`` or the variable above, which the PostgreSQL client
library reads itself. Every location is shown, and remembered in settings, without its password.
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path
from typing import Mapping

from sqlalchemy.engine import URL, make_url
from sqlalchemy.exc import ArgumentError

from .errors import ArchiveError

ENVIRONMENT = "CURVEWRIGHT_ARCHIVE_URL"
"""The environment variable that names the archive when no location is given."""
ARCHIVE_FILE = "curvewright-archive.sqlite"
"""The SQLite archive's file name inside the folder the user chooses."""
SQLITE_SUFFIXES = (".sqlite", ".sqlite3", ".db")
POSTGRESQL_DRIVER = "postgresql+psycopg"

FORMS = ("a folder (a SQLite archive is kept in it), a .sqlite file, sqlite:///PATH, or "
         "postgresql://USER@HOST:PORT/DATABASE")


@dataclass(frozen=True)
class ArchiveLocation:
    """A resolved archive location: ``url`` for the database engine, ``kind`` ("sqlite" or "postgresql"),
    and for SQLite the archive file's ``path``."""

    url: URL
    kind: str
    path: Path | None = None

    @property
    def shown(self) -> str:
        """The location as shown to the analyst: the SQLite file, or the URL with its password hidden."""
        if self.path is not None:
            return str(self.path)
        return _plain_url(self.url).render_as_string(hide_password=True)

    @property
    def remembered(self) -> str:
        """The location as kept in settings: never with a password."""
        if self.path is not None:
            return str(self.path)
        u = _plain_url(self.url)
        return URL.create(u.drivername, u.username, None, u.host, u.port, u.database, u.query).render_as_string(
            hide_password=False)

    @property
    def has_password(self) -> bool:
        return bool(self.url.password)

    @property
    def user(self) -> str:
        return self.url.username or ""


def _plain_url(url: URL) -> URL:
    """The URL as the analyst wrote it (postgresql://, without the driver name)."""
    return url.set(drivername="postgresql") if url.drivername == POSTGRESQL_DRIVER else url


def locate(text: str | os.PathLike[str] | None, *, environ: Mapping[str, str] | None = None) -> ArchiveLocation:
    """Resolve what the analyst gave (or, when nothing, the environment variable) to a location."""
    environ = os.environ if environ is None else environ
    given = str(text).strip() if text is not None else ""
    if not given:
        given = environ.get(ENVIRONMENT, "").strip()
        if not given:
            raise ArchiveError(f"no archive given: name {FORMS}, or set the environment variable {ENVIRONMENT}.")
    lower = given.lower()
    if lower.startswith("sqlite:"):
        try:
            url = make_url(given)
        except ArgumentError as exc:
            raise ArchiveError(f"{given!r} is not a SQLite URL ({exc}); write sqlite:///PATH.") from None
        if not url.database or url.database == ":memory:":
            raise ArchiveError(f"{given!r} names no file; an archive is kept in a file: sqlite:///PATH.")
        return _sqlite(Path(url.database))
    if lower.startswith(("postgresql:", "postgresql+", "postgres:")):
        try:
            url = make_url(given)
        except ArgumentError as exc:
            raise ArchiveError(f"{_hide_password(given)!r} is not a PostgreSQL URL ({exc}); write {FORMS.split(', or ')[-1]}.") from None
        if url.drivername in ("postgresql", "postgres"):
            url = url.set(drivername=POSTGRESQL_DRIVER)
        if not url.database:
            raise ArchiveError(f"{_hide_password(given)}: the URL names no database; write "
                               "postgresql://USER@HOST:PORT/DATABASE.")
        return ArchiveLocation(url, "postgresql")
    if "://" in given:
        raise ArchiveError(f"{_hide_password(given)!r} is not an archive location Curvewright reads; give {FORMS}.")
    return _sqlite(Path(given).expanduser())


def _sqlite(path: Path) -> ArchiveLocation:
    path = path if path.suffix.lower() in SQLITE_SUFFIXES and not path.is_dir() else path / ARCHIVE_FILE
    path = path.absolute()
    return ArchiveLocation(URL.create("sqlite", database=str(path)), "sqlite", path)


def _hide_password(text: str) -> str:
    """A URL-like text with whatever stands between ``user:`` and ``@`` hidden."""
    scheme, sep, rest = text.partition("://")
    if not sep or "@" not in rest:
        return text
    credentials, at, host = rest.rpartition("@")
    user, colon, _ = credentials.partition(":")
    return f"{scheme}://{user}{':***' if colon else ''}@{host}"
