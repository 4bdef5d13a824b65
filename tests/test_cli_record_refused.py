"""``quantify RUN --record`` records the exports and reports written in the run's audit trail: with
nothing to write it is refused, naming the options, and the run document is left as it was. The
command runs as a subprocess on a copy of the demo run."""

from __future__ import annotations

import shutil
from pathlib import Path

from tests.io.helpers import ROOT
from tests.cli_runs import run_cli


def test_record_without_anything_written_is_refused(tmp_path: Path) -> None:
    run = tmp_path / "nitrate.json"
    shutil.copyfile(ROOT / "sample_runs" / "nitrate_water_linear.json", run)
    before = run.read_bytes()
    done = run_cli("quantify", str(run), "--record")
    assert done.returncode == 2, done.stdout + done.stderr
    assert "--record records the exports and reports written" in done.stderr
    assert "--export PATH" in done.stderr and "--report PATH" in done.stderr
    assert run.read_bytes() == before  # nothing recorded

    book = tmp_path / "nitrate.xlsx"
    recorded = run_cli("quantify", str(run), "--record", "--export", str(book))
    assert recorded.returncode == 0, recorded.stderr
    assert book.exists() and run.read_bytes() != before  # the export is recorded in the trail
