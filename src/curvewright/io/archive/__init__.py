"""The laboratory's run archive: filed runs on SQLite or PostgreSQL, their tracked quantities, and
the history of each quantity with its control limits and rules.

* :mod:`.location` — where an archive lives (a folder, a SQLite file, a PostgreSQL URL);
* :mod:`.schema` — its tables, their version and the migrations;
* :mod:`.store` — filing runs and reading them back;
* :mod:`.history` — a quantity's history and a run's verdict against it;
* :mod:`.trend_tables` — the history as tables for the workbook and the command line.
"""

from __future__ import annotations

from .errors import ArchiveError
from .history import History, Today, TrendVerdict, history, judge_run
from .location import ARCHIVE_FILE, ENVIRONMENT, ArchiveLocation, locate
from .store import Archive, ArchivedRun, FilingReceipt, RecordNotIntact, content_hash, open_archive

__all__ = ["ARCHIVE_FILE", "ENVIRONMENT", "Archive", "ArchiveError", "ArchiveLocation", "ArchivedRun",
           "FilingReceipt", "History", "RecordNotIntact", "Today", "TrendVerdict", "content_hash", "history", "judge_run", "locate",
           "open_archive"]
