"""The archive's tables, their version, and the migrations that bring any archive up to date.

Version 1:

* ``archive_schema`` — one row per migration applied: version, time (UTC), software version;
* ``runs`` — one row per filed run: its content hash (unique), name, date, who filed it and when,
  the file it came from, its verdict, and the run document itself (the JSON as saved);
* ``run_analytes`` — per run and analyte: the method key (profile | model | weighting), a
  ``method`` column holding the validated method the run followed (its id and version; empty for runs
  without one), the verdict, and the tracked
  quantities of :mod:`curvewright.core.tracked` (``rf_rsd_percent`` is filled only for
  calibrations by the average response factor);
* ``recoveries`` — per run and analyte, the mean recovery of each QC level and calibration check.

Version 2 (the current one) adds two columns to ``runs``:

* ``run_identity`` — the hash of the run's first audit entry (its creation), the same in every
  version of one run whatever was edited later; unique, so that a run is filed once (empty for runs
  without an audit trail, and for runs filed under version 1, which are compared by their documents);
* ``record_problems`` — empty for a run whose record was intact when filed; for a run filed on
  request although ``curvewright check`` finds its record not intact, the problems found. Such a run
  is shown marked and never sets control limits.

Filed rows are never changed or removed: triggers refuse UPDATE and DELETE (and TRUNCATE on
PostgreSQL) on the three tables of filed runs.

:data:`MIGRATIONS` lists one step per version. A step is frozen once released: a later change to
the tables is a new step (``ALTER TABLE …``), and :data:`metadata` (what the queries use) follows it.
The migration runs in one transaction that holds the archive's write lock (``BEGIN IMMEDIATE`` on
SQLite, an advisory lock on PostgreSQL), so two programs opening a new archive at once create it once.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime, timezone
from typing import Callable

from sqlalchemy import (Boolean, Column, Connection, Double, ForeignKey, Index, Integer, MetaData, String, Table,
                        Text, UniqueConstraint, func, insert, inspect, select, text)

from ..._version import __version__
from ..audit import utc_now
from .errors import ArchiveError

FILED_TABLES = ("runs", "run_analytes", "recoveries")
ADVISORY_LOCK = 0x43_57_41_52_43_48  # "CWARCH": the key of the migration lock on PostgreSQL


def _define(metadata: MetaData, version: int = 2) -> dict[str, Table]:
    """The tables of schema version ``version``."""
    later = ([Column("run_identity", String(64)), Column("record_problems", Text),
              Index("runs_one_entry_per_run", "run_identity", unique=True)] if version >= 2 else [])
    schema = Table(
        "archive_schema", metadata,
        Column("version", Integer, primary_key=True, autoincrement=False),
        Column("applied_utc", String(32), nullable=False),
        Column("software_version", String(64), nullable=False),
        Column("description", Text, nullable=False),
    )
    runs = Table(
        "runs", metadata,
        Column("id", Integer, primary_key=True),
        Column("content_sha256", String(64), nullable=False, unique=True),
        Column("name", Text, nullable=False),
        Column("run_date_utc", String(32), nullable=False),
        Column("filed_utc", String(32), nullable=False),
        Column("filed_by", Text, nullable=False),
        Column("source", Text),
        Column("software_version", String(64), nullable=False),
        Column("accepted", Boolean, nullable=False),
        Column("document", Text, nullable=False),
        *later,
        Index("runs_by_date", "run_date_utc"),
    )
    analytes = Table(
        "run_analytes", metadata,
        Column("id", Integer, primary_key=True),
        Column("run_id", Integer, ForeignKey("runs.id"), nullable=False),
        Column("analyte", Text, nullable=False),
        Column("method", Text),
        Column("method_key", Text, nullable=False),
        Column("profile_id", Text, nullable=False),
        Column("model", String(32), nullable=False),
        Column("weighting", String(16), nullable=False),
        Column("concentration_unit", Text, nullable=False),
        Column("response_unit", Text, nullable=False),
        Column("accepted", Boolean, nullable=False),
        Column("error", Text),
        Column("slope", Double),
        Column("intercept", Double),
        Column("curvature", Double),
        Column("residual_sd", Double),
        Column("r", Double),
        Column("rf_rsd_percent", Double),
        Column("lloq", Double),
        Column("is_response", Double),
        Column("is_response_count", Integer),
        UniqueConstraint("run_id", "analyte", name="one_row_per_run_and_analyte"),
        Index("analytes_by_method", "analyte", "method_key"),
    )
    recoveries = Table(
        "recoveries", metadata,
        Column("id", Integer, primary_key=True),
        Column("run_analyte_id", Integer, ForeignKey("run_analytes.id"), nullable=False),
        Column("quantity", String(80), nullable=False),
        Column("kind", String(32), nullable=False),
        Column("nominal", Double, nullable=False),
        Column("recovery_percent", Double, nullable=False),
        Column("count", Integer, nullable=False),
        UniqueConstraint("run_analyte_id", "quantity", name="one_row_per_recovery"),
    )
    return {"archive_schema": schema, "runs": runs, "run_analytes": analytes, "recoveries": recoveries}


metadata = MetaData()
"""The current tables, as the queries use them."""
_tables = _define(metadata)
archive_schema = _tables["archive_schema"]
runs = _tables["runs"]
run_analytes = _tables["run_analytes"]
recoveries = _tables["recoveries"]


def _version_1(conn: Connection) -> None:
    frozen = MetaData()
    _define(frozen, 1)
    frozen.create_all(conn)
    if conn.dialect.name == "postgresql":
        conn.exec_driver_sql(
            "CREATE FUNCTION curvewright_filed_is_immutable() RETURNS trigger LANGUAGE plpgsql AS $body$ BEGIN "
            "RAISE EXCEPTION USING MESSAGE = 'a filed run is immutable: ' || TG_OP || ' on ' || TG_TABLE_NAME "
            "|| ' refused'; END $body$")
        for table in FILED_TABLES:
            conn.exec_driver_sql(f"CREATE TRIGGER {table}_are_immutable BEFORE UPDATE OR DELETE ON {table} "
                                 "FOR EACH ROW EXECUTE FUNCTION curvewright_filed_is_immutable()")
            conn.exec_driver_sql(f"CREATE TRIGGER {table}_are_kept BEFORE TRUNCATE ON {table} "
                                 "FOR EACH STATEMENT EXECUTE FUNCTION curvewright_filed_is_immutable()")
    else:
        for table in FILED_TABLES:
            for op in ("UPDATE", "DELETE"):
                conn.exec_driver_sql(f"CREATE TRIGGER {table}_{op.lower()}_refused BEFORE {op} ON {table} BEGIN "
                                     f"SELECT RAISE(ABORT, 'a filed run is immutable: {op} on {table} refused'); END")


def _version_2(conn: Connection) -> None:
    conn.exec_driver_sql("ALTER TABLE runs ADD COLUMN run_identity VARCHAR(64)")
    conn.exec_driver_sql("ALTER TABLE runs ADD COLUMN record_problems TEXT")
    conn.exec_driver_sql("CREATE UNIQUE INDEX runs_one_entry_per_run ON runs (run_identity)")


@dataclass(frozen=True)
class Migration:
    version: int
    description: str
    apply: Callable[[Connection], None]


MIGRATIONS: tuple[Migration, ...] = (
    Migration(1, "runs, their analytes' tracked quantities and recoveries; filed rows immutable", _version_1),
    Migration(2, "runs: the identity of the run (one entry per run) and the record problems of a run filed "
                 "despite them", _version_2),
)
CURRENT_VERSION = MIGRATIONS[-1].version


def stored_version(conn: Connection) -> int:
    """The schema version of the database (0 when it holds no archive yet). A database that holds
    other tables but no archive is refused, so that an archive is never laid over someone's data."""
    inspector = inspect(conn)
    names = set(inspector.get_table_names())
    if "archive_schema" not in names:
        if names:
            shown = ", ".join(sorted(names)[:5]) + (" …" if len(names) > 5 else "")
            raise ArchiveError(f"the database holds tables that are not a Curvewright archive ({shown}); give an "
                               "empty database, or the location of an archive.")
        return 0
    return int(conn.execute(select(func.max(archive_schema.c.version))).scalar() or 0)


def migrate(conn: Connection, migrations: tuple[Migration, ...] | None = None) -> tuple[int, int]:
    """Bring the archive up to the newest version, inside the caller's write transaction; returns
    (version before, version after)."""
    steps = MIGRATIONS if migrations is None else migrations
    newest = steps[-1].version
    if conn.dialect.name == "postgresql":
        conn.execute(text("SELECT pg_advisory_xact_lock(:key)"), {"key": ADVISORY_LOCK})
    before = stored_version(conn)
    if before > newest:
        raise ArchiveError(f"the archive has schema version {before}, newer than this Curvewright ({__version__}) "
                           f"knows (up to {newest}); use a newer Curvewright.")
    for step in steps:
        if step.version <= before:
            continue
        step.apply(conn)
        conn.execute(insert(archive_schema).values(version=step.version, applied_utc=utc_text(),
                                                   software_version=__version__, description=step.description))
    return before, newest


def utc_text(moment: datetime | None = None) -> str:
    """A UTC time as ``YYYY-MM-DDTHH:MM:SSZ`` (sorts as it reads)."""
    return (moment or utc_now()).astimezone(timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ")
