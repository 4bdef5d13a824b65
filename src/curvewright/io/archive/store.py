"""Filing runs into an archive and reading them back: one code path for SQLite and PostgreSQL.

A run is filed with its content hash (:func:`content_hash`): filing the same content again finds
the entry already there and adds nothing. A run is identified by its first audit entry, its creation
(:func:`run_identity`): another version of a filed run (the same run with other content) is refused,
so that each run is one entry and one point of every trend. Everything about one run (its row, its analytes' tracked
quantities, their recoveries) is written in one transaction, so a failure half-way leaves no trace
of it. On SQLite the archive is kept in WAL mode and a filing takes the write lock at its start
(``BEGIN IMMEDIATE``, waiting up to :data:`BUSY_SECONDS` for another filing to finish); on
PostgreSQL the unique content hash settles two filings of the same run at the same moment: the
second finds the first's entry. The run file stays the record of truth: filing never changes it.
"""

from __future__ import annotations

import hashlib
import json
import os
from contextlib import contextmanager
from dataclasses import dataclass
from datetime import datetime
from pathlib import Path
from typing import Iterator

from sqlalchemy import Connection, Engine, create_engine, event, func, insert, select
from sqlalchemy.engine import URL
from sqlalchemy.exc import DBAPIError, IntegrityError

from ..._version import __version__
from ...core.run import Run
from ...core.run_analysis import RunResult, analyse_run
from ...core.tracked import CALIBRATION_QUANTITIES, TrackedValues, recovery_key, tracked_values
from ...core.trends import TrendPoint
from ..audit import current_user
from ..run_document import dumps_run, loads_run
from .errors import ArchiveError
from .location import ArchiveLocation, locate
from .schema import CURRENT_VERSION, migrate, recoveries, run_analytes, runs, stored_version, utc_text
from ...core.notation import entered

BUSY_SECONDS = 60.0
"""How long a SQLite filing waits for another one to finish before it gives up."""
CONNECT_SECONDS = 15
"""How long to wait for a PostgreSQL server to answer before saying it cannot be reached."""


def content_hash(run: Run) -> str:
    """SHA-256 of the run's canonical document: the saved JSON (:func:`~..run_document.dumps_run`) with its
    keys sorted, no spaces, UTF-8, and without the writing program's version, so that the same content
    saved by another version of Curvewright is the same entry."""
    mapping = json.loads(dumps_run(run))
    mapping.pop("software_version", None)
    canonical = json.dumps(mapping, sort_keys=True, separators=(",", ":"), ensure_ascii=False, allow_nan=False)
    return hashlib.sha256(canonical.encode("utf-8")).hexdigest()


def run_identity(run: Run) -> str | None:
    """What identifies the run in the archive: the hash of its first audit entry (its creation), which
    every later version of the run keeps; None for a run without an audit trail."""
    return run.audit[0].hash if run.audit and run.audit[0].hash else None


def _identity_of_document(document: str) -> str | None:
    try:
        audit = json.loads(document).get("audit") or []
        return str(audit[0]["hash"]) if audit and audit[0].get("hash") else None
    except (ValueError, TypeError, AttributeError, KeyError, IndexError):
        return None


class SameRunFiled(ArchiveError):
    """Another version of the run (other content, the same creation) is already filed."""


class RecordNotIntact(ArchiveError):
    """The run's record is not intact (what ``curvewright check`` reports: :mod:`..record_check`), and it
    was not asked to be filed all the same. ``what`` says briefly what is wrong, ``problems`` names each
    problem."""

    def __init__(self, run_name: str, what: str, problems: tuple[str, ...]) -> None:
        super().__init__(f"not filed: {what}: " + "; ".join(problems) + ". The archive keeps only runs whose record "
                         "is intact (curvewright check shows the same problems); a run can be filed all the same, "
                         "marked and kept out of the control limits, on request.")
        self.run_name, self.what, self.problems = run_name, what, problems


def run_date(run: Run) -> str | None:
    """The run's date: when it was created (its first audit entry), as UTC text; None without a trail."""
    if not run.audit:
        return None
    try:
        return utc_text(datetime.fromisoformat(run.audit[0].time_utc.replace("Z", "+00:00")))
    except ValueError:
        return None


@dataclass(frozen=True)
class ArchivedAnalyte:
    name: str
    method_key: str
    accepted: bool
    error: str | None


@dataclass(frozen=True)
class ArchivedRun:
    """One entry of the archive: ``entry`` is its number, ``key`` the run's content hash."""

    entry: int
    key: str
    name: str
    run_date: str
    filed_utc: str
    filed_by: str
    source: str | None
    accepted: bool
    software_version: str
    analytes: tuple[ArchivedAnalyte, ...]
    record_problems: str | None = None
    """None when the run's record was intact when filed; else the problems found (filed on request)."""


@dataclass(frozen=True)
class FilingReceipt:
    """What filing did: ``new`` is False when the same content was already filed (``run`` is that entry)."""

    run: ArchivedRun
    new: bool


@dataclass(frozen=True)
class MethodRecords:
    """The filed values of one analyte under one method: the quantities that hold a value, each one's
    series in run order, and the units of the latest run."""

    analyte: str
    method_key: str
    quantities: tuple[str, ...]
    series: dict[str, tuple[TrendPoint, ...]]
    units: tuple[str, str]


@dataclass(frozen=True)
class MethodSummary:
    method_key: str
    runs: int
    latest: str


class Archive:
    """An open archive. Use as a context manager, or call :meth:`close`."""

    def __init__(self, location: ArchiveLocation, engine: Engine) -> None:
        self.location = location
        self.engine = engine
        self.read_only = False
        """True for a SQLite archive in a folder the user may not write in: it is read, never filed into."""

    # --- opening ---------------------------------------------------------------------------------
    @classmethod
    def open(cls, where: ArchiveLocation | str | None, *, create: bool = False) -> "Archive":
        """Open the archive at ``where`` (a location, its text, or None for the environment). With
        ``create``, a missing SQLite archive (and its folder) is made, and any archive is brought up to
        the current schema version; without it, an archive must already hold runs of this version or an
        older one (which is brought up to date)."""
        location = where if isinstance(where, ArchiveLocation) else locate(where)
        if location.kind == "sqlite":
            assert location.path is not None
            if not location.path.exists():
                if not create:
                    raise ArchiveError(f"{location.shown}: there is no archive here yet. File a run into it first: "
                                       f"curvewright archive add RUN.json --to {location.path.parent}")
                try:
                    location.path.parent.mkdir(parents=True, exist_ok=True)
                except OSError as exc:
                    raise ArchiveError(f"{location.path.parent}: cannot make the archive's folder "
                                       f"({exc.strerror or exc}); check the folder's permissions.") from None
            read_only = not _may_write(location.path)
            url = location.url
            if read_only:  # read the archive as it stands; filing needs the right to write in its folder
                url = URL.create("sqlite", database=f"{location.path.as_uri()}?mode=ro&immutable=1",
                                 query={"uri": "true"})
            engine = create_engine(url, connect_args={"timeout": BUSY_SECONDS})
            _sqlite_transactions(engine, read_only)
        else:
            engine = create_engine(location.url, connect_args={"connect_timeout": CONNECT_SECONDS})
        archive = cls(location, engine)
        archive.read_only = location.kind == "sqlite" and read_only
        try:
            archive._prepare(create)
        except BaseException:
            engine.dispose()
            raise
        return archive

    def _prepare(self, create: bool) -> None:
        with self._read("opening the archive") as conn:
            version = stored_version(conn)
        if version == CURRENT_VERSION:
            return
        if version == 0 and (not create or self.read_only):
            raise ArchiveError(f"{self.location.shown}: no run has been filed into this archive yet; file one first "
                               "(curvewright archive add RUN.json --to LOCATION).")
        with self._write("preparing the archive's tables") as conn:
            migrate(conn)

    def close(self) -> None:
        self.engine.dispose()

    def __enter__(self) -> "Archive":
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    @property
    def version(self) -> int:
        with self._read("reading the schema version") as conn:
            return stored_version(conn)

    # --- transactions and errors -----------------------------------------------------------------
    @contextmanager
    def _read(self, doing: str) -> Iterator[Connection]:
        with self._speaking(doing), self.engine.connect() as conn, conn.begin():
            yield conn

    @contextmanager
    def _write(self, doing: str) -> Iterator[Connection]:
        with self._speaking(doing), self.engine.connect() as conn:
            conn.execution_options(curvewright_write=True)
            with conn.begin():
                yield conn

    @contextmanager
    def _speaking(self, doing: str) -> Iterator[None]:
        """Database errors as messages a laboratory user can act on."""
        try:
            yield
        except IntegrityError:
            raise
        except DBAPIError as exc:
            raise ArchiveError(explain(exc, self.location, doing)) from None

    # --- filing ----------------------------------------------------------------------------------
    def file(self, run: Run, *, source: str | None = None, result: RunResult | None = None,
             user: str | None = None, despite_problems: bool = False,
             chain_problems: tuple[str, ...] | None = None) -> FilingReceipt:
        """File ``run`` (analysed here unless its ``result`` is given). Filing the same content again
        returns the entry already filed and changes nothing; another version of a filed run (its first
        audit entry the same, its content not) is refused with :class:`SameRunFiled`. A run whose record
        is not intact (:func:`..record_check.record_problems`, what ``curvewright check`` reports) is
        refused with :class:`RecordNotIntact`, unless ``despite_problems``: it is then filed marked with
        its problems and never sets control limits. ``chain_problems`` is what checking the run's audit
        trail found when it was read (checked here otherwise)."""
        from ..record_check import record_not_intact_words, record_problems

        problems = record_problems(run, chain_problems)
        if problems and not despite_problems:
            raise RecordNotIntact(run.name, record_not_intact_words(run, chain_problems), problems)
        if self.read_only:
            raise ArchiveError(f"{self.location.shown}: run {run.name!r} cannot be filed: you may read this archive "
                               "but not write in its folder. Who may file into a SQLite archive is whoever may write "
                               "in its folder: ask for the right to, or check the folder's permissions.")
        key = content_hash(run)
        found = self.find(key)
        if found is not None:
            return FilingReceipt(found, new=False)
        result = result if result is not None and result.run is run else analyse_run(run)
        values = tracked_values(result)
        document = dumps_run(run)
        filed = utc_text()
        row = dict(content_sha256=key, name=run.name, run_date_utc=run_date(run) or filed, filed_utc=filed,
                   filed_by=user or current_user(), source=source, software_version=__version__,
                   accepted=result.accepted, document=document, run_identity=run_identity(run),
                   record_problems="; ".join(problems) or None)
        for _ in range(3):
            same_run = None
            try:
                with self._write(f"filing run {run.name!r}") as conn:
                    existing = conn.execute(select(runs.c.id).where(runs.c.content_sha256 == key)).first()
                    if existing is None:
                        same_run = self._same_run(conn, run)
                    if existing is None and same_run is None:
                        run_id = int(conn.execute(insert(runs).values(**row)).inserted_primary_key[0])
                        for tracked in values:
                            self._file_analyte(conn, run_id, tracked)
            except IntegrityError:
                continue  # the same run was filed at this moment by someone else: read their entry
            if same_run is not None:
                raise self._refusal(run, same_run)
            found = self.find(key)
            assert found is not None
            return FilingReceipt(found, new=existing is None)
        raise ArchiveError(f"{self.location.shown}: run {run.name!r} could not be filed (the archive refused its "
                           "entry three times); try again.")

    @staticmethod
    def _same_run(conn: Connection, run: Run) -> str | None:
        """The content hash of the filed version of ``run`` (another content, the same creation), or None.
        Runs filed before the archive kept identities are compared by their documents (those of the
        same name)."""
        identity = run_identity(run)
        if identity is None:
            return None
        found = conn.execute(select(runs.c.content_sha256).where(runs.c.run_identity == identity)).scalar()
        if found is not None:
            return str(found)
        for key, document in conn.execute(select(runs.c.content_sha256, runs.c.document)
                                          .where(runs.c.run_identity.is_(None) & (runs.c.name == run.name))):
            if _identity_of_document(document) == identity:
                return str(key)
        return None

    def _refusal(self, run: Run, key: str) -> SameRunFiled:
        entry = self.find(key)
        assert entry is not None
        created = run.audit[0]
        source = f", from {entry.source}" if entry.source else ""
        return SameRunFiled(
            f"not filed: another version of this run is already filed: entry {entry.entry}, {entry.name!r} "
            f"(filed {entry.filed_utc} by {entry.filed_by}{source}, SHA-256 {entry.key[:16]}…). Both are the run "
            f"created {created.time_utc} by {created.user}, with different content; the archive keeps one entry "
            "per run, so that it counts once in the control limits. Compare the two (curvewright check) and keep "
            "the filed one as the run's record.")

    @staticmethod
    def _file_analyte(conn: Connection, run_id: int, tracked: TrackedValues) -> None:
        values = {q: getattr(tracked, q) for q in CALIBRATION_QUANTITIES}
        analyte_id = int(conn.execute(insert(run_analytes).values(
            run_id=run_id, analyte=tracked.analyte, method=tracked.method, method_key=tracked.method_key,
            profile_id=tracked.profile_id, model=tracked.model, weighting=tracked.weighting,
            concentration_unit=tracked.concentration_unit, response_unit=tracked.response_unit,
            accepted=tracked.accepted, error=tracked.error, is_response_count=tracked.is_response_count, **values,
        )).inserted_primary_key[0])
        if tracked.recoveries:
            conn.execute(insert(recoveries), [
                dict(run_analyte_id=analyte_id, quantity=recovery_key(r.kind, r.nominal), kind=r.kind,
                     nominal=r.nominal, recovery_percent=r.recovery_percent, count=r.count)
                for r in tracked.recoveries])

    # --- reading ---------------------------------------------------------------------------------
    def find(self, key: str) -> ArchivedRun | None:
        """The entry with this content hash, or None."""
        found = self.entries(key=key)
        return found[0] if found else None

    def entries(self, analyte: str | None = None, *, key: str | None = None) -> tuple[ArchivedRun, ...]:
        """The filed runs in run order (date, then entry), optionally only those with ``analyte``."""
        query = select(runs.c.id, runs.c.content_sha256, runs.c.name, runs.c.run_date_utc, runs.c.filed_utc,
                       runs.c.filed_by, runs.c.source, runs.c.accepted, runs.c.software_version,
                       runs.c.record_problems)
        if key is not None:
            query = query.where(runs.c.content_sha256 == key)
        if analyte is not None:
            query = query.where(runs.c.id.in_(select(run_analytes.c.run_id).where(run_analytes.c.analyte == analyte)))
        with self._read("listing the filed runs") as conn:
            rows = conn.execute(query.order_by(runs.c.run_date_utc, runs.c.id)).all()
            ids = [r.id for r in rows]
            per_run: dict[int, list[ArchivedAnalyte]] = {i: [] for i in ids}
            if ids:
                for a in conn.execute(select(run_analytes.c.run_id, run_analytes.c.analyte, run_analytes.c.method_key,
                                             run_analytes.c.accepted, run_analytes.c.error)
                                      .where(run_analytes.c.run_id.in_(ids)).order_by(run_analytes.c.id)):
                    per_run[a.run_id].append(ArchivedAnalyte(a.analyte, a.method_key, bool(a.accepted), a.error))
        return tuple(ArchivedRun(r.id, r.content_sha256, r.name, r.run_date_utc, r.filed_utc, r.filed_by, r.source,
                                 bool(r.accepted), r.software_version, tuple(per_run[r.id]), r.record_problems)
                     for r in rows)

    def count(self) -> int:
        with self._read("counting the filed runs") as conn:
            return int(conn.execute(select(func.count()).select_from(runs)).scalar() or 0)

    def analytes(self) -> tuple[str, ...]:
        with self._read("listing the analytes") as conn:
            return tuple(conn.execute(select(run_analytes.c.analyte).distinct().order_by(run_analytes.c.analyte))
                         .scalars())

    def methods(self, analyte: str) -> tuple[MethodSummary, ...]:
        """The methods ``analyte`` was filed under, the one of the latest run first."""
        query = (select(run_analytes.c.method_key, func.count(), func.max(runs.c.run_date_utc))
                 .join(runs, runs.c.id == run_analytes.c.run_id).where(run_analytes.c.analyte == analyte)
                 .group_by(run_analytes.c.method_key))
        with self._read(f"listing the methods of {analyte}") as conn:
            found = [MethodSummary(m, int(n), latest) for m, n, latest in conn.execute(query)]
        return tuple(sorted(found, key=lambda m: (m.latest, m.method_key), reverse=True))

    def records(self, analyte: str, method_key: str) -> "MethodRecords":
        """Every tracked value of ``analyte`` under ``method_key``, in run order (two queries)."""
        where = (run_analytes.c.analyte == analyte) & (run_analytes.c.method_key == method_key)
        head = (runs.c.content_sha256, runs.c.name, runs.c.run_date_utc, run_analytes.c.accepted, runs.c.id,
                runs.c.source, runs.c.record_problems)
        order = (runs.c.run_date_utc, runs.c.id)
        with self._read(f"reading the history of {analyte}") as conn:
            rows = conn.execute(select(*head, run_analytes.c.concentration_unit, run_analytes.c.response_unit,
                                       *(run_analytes.c[q] for q in CALIBRATION_QUANTITIES))
                                .join(runs, runs.c.id == run_analytes.c.run_id).where(where).order_by(*order)).all()
            recovered = conn.execute(
                select(*head, recoveries.c.quantity, recoveries.c.kind, recoveries.c.nominal,
                       recoveries.c.recovery_percent)
                .join(run_analytes, run_analytes.c.id == recoveries.c.run_analyte_id)
                .join(runs, runs.c.id == run_analytes.c.run_id).where(where).order_by(*order)).all()
        series: dict[str, list[TrendPoint]] = {}
        for row in rows:
            for q, value in zip(CALIBRATION_QUANTITIES, row[9:]):
                if value is not None:
                    series.setdefault(q, []).append(_point(row, float(value)))
        kinds = {"qc": 0, "icv": 1, "ccv": 2, "check_standard": 3, "low_level_check": 4}
        recovery_order = sorted({(kinds.get(r.kind, 9), r.nominal, r.quantity) for r in recovered})
        for r in recovered:
            series.setdefault(r.quantity, []).append(_point(r, float(r.recovery_percent)))
        quantities = tuple(q for q in CALIBRATION_QUANTITIES if q in series) + tuple(q for *_, q in recovery_order)
        units = (rows[-1][7], rows[-1][8]) if rows else ("", "")
        return MethodRecords(analyte, method_key, quantities, {q: tuple(v) for q, v in series.items()}, units)

    def quantities(self, analyte: str, method_key: str) -> tuple[str, ...]:
        """The tracked quantities that hold a value in at least one run of ``analyte`` under ``method_key``."""
        return self.records(analyte, method_key).quantities

    def units(self, analyte: str, method_key: str) -> tuple[str, str]:
        """(concentration unit, response unit) of the latest run of ``analyte`` under ``method_key``."""
        return self.records(analyte, method_key).units

    def series(self, analyte: str, quantity: str, method_key: str) -> tuple[TrendPoint, ...]:
        """The runs of ``analyte`` under ``method_key`` that hold a value of ``quantity``, in run order."""
        return self.records(analyte, method_key).series.get(quantity, ())

    def document(self, key: str) -> str:
        """The run document filed under ``key`` (the JSON as it was saved)."""
        with self._read("reading a filed run") as conn:
            text = conn.execute(select(runs.c.document).where(runs.c.content_sha256 == key)).scalar()
        if text is None:
            raise ArchiveError(f"{self.location.shown}: no run with content hash {key[:16]}… is filed here.")
        return str(text)

    def run(self, key: str) -> Run:
        return loads_run(self.document(key), origin=f"{self.location.shown}, run {key[:16]}…").run


def _point(row, value: float) -> TrendPoint:  # type: ignore[no-untyped-def]
    """A trend point of a filed run from a row that begins with :meth:`Archive.records`' ``head``."""
    return TrendPoint(row[0], row[1], row[2], value, bool(row[3]), entry=int(row[4]), source=row[5],
                      record_problems=row[6] or "")


def open_archive(where: ArchiveLocation | str | None, *, create: bool = False) -> Archive:
    """Open the archive at ``where``; see :meth:`Archive.open`."""
    return Archive.open(where, create=create)


def _may_write(path: Path) -> bool:
    """Whether this user may write the SQLite archive: its folder (for the WAL files beside it) and the file."""
    folder = next((p for p in (path.parent, *path.parents) if p.exists()), path.anchor)
    return os.access(folder, os.W_OK) and (not path.exists() or os.access(path, os.W_OK))


def _sqlite_transactions(engine: Engine, read_only: bool = False) -> None:
    """SQLite in WAL mode, foreign keys enforced, and transactions begun by us: a filing takes the write
    lock at its start (BEGIN IMMEDIATE), so two filings never deadlock on upgrading a read lock.

    A reader who may not write in the archive's folder opens the file read-only and immutable: WAL mode
    needs its index file beside the database, which such a reader cannot make. The file then holds
    every run filed up to the last time a program closed the archive."""

    @event.listens_for(engine, "connect")
    def connect(dbapi_connection, _record) -> None:  # type: ignore[no-untyped-def]
        dbapi_connection.isolation_level = None
        cursor = dbapi_connection.cursor()
        try:
            cursor.execute("PRAGMA foreign_keys = ON")
            if not read_only and cursor.execute("PRAGMA journal_mode").fetchone()[0] != "wal":
                cursor.execute("PRAGMA journal_mode = WAL")
        finally:
            cursor.close()

    @event.listens_for(engine, "begin")
    def begin(conn: Connection) -> None:
        conn.exec_driver_sql("BEGIN IMMEDIATE" if conn.get_execution_options().get("curvewright_write") else "BEGIN")


def explain(exc: DBAPIError, location: ArchiveLocation, doing: str) -> str:
    """A database error in words: what was being done, what the database said, and what to do."""
    original = exc.orig
    said = str(original).strip().splitlines()[0] if str(original).strip() else type(original).__name__
    state = getattr(original, "sqlstate", None) or ""
    where = location.shown
    if location.kind == "sqlite":
        lowered = said.lower()
        if "readonly" in lowered or "read-only" in lowered or "unable to open" in lowered or "permission" in lowered:
            return (f"{where}: {doing} is not possible: {said}. Who may file into a SQLite archive is whoever may "
                    "write in its folder: check the folder's permissions.")
        if "locked" in lowered or "busy" in lowered:
            return (f"{where}: {doing} waited {entered(BUSY_SECONDS)} s for another filing to finish and gave up ({said}); "
                    "try again.")
        return f"{where}: {doing} failed: {said}."
    if state == "42501":
        return (f"{where}: the database refuses {doing} to user {location.user or '(default)'}: {said}. Who may "
                "file or read is set by the database's own access control: ask the archive's administrator.")
    if state.startswith("28"):
        return (f"{where}: the database did not accept user {location.user or '(default)'}: {said}. The password "
                "is read from PGPASSWORD or ~/.pgpass (or the URL in CURVEWRIGHT_ARCHIVE_URL), never from "
                "Curvewright's settings.")
    if state == "3D000":
        return f"{where}: {said}; ask the archive's administrator to create the database."
    if state.startswith("08") or "connect" in said.lower():
        return (f"{where}: cannot connect for {doing}: {said}. Check that the server runs and that the URL's host, "
                "port and database are right.")
    return f"{where}: {doing} failed: {said}."
