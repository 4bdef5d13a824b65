"""The refit preview of an exclusion shows the calibrated range every other output gives (LLOQ–ULOQ, the
non-zero standards in the fit: README, "a zero standard never stretches the range"), read from the
analysis, not from the fit's span of standards, which takes in a zero standard.

The zinc run is the project's invented demo run (sample_runs/zinc_emission_quadratic.json)."""

from __future__ import annotations

import json
import re
import shutil
from pathlib import Path

from tests.app.conftest import ROOT, settle
from tests.app.test_user_journeys import select_standard
from tests.cli_runs import run_cli


def preview_rows(prompt: str) -> dict[str, tuple[str, str]]:
    """The preview table of the exclusion dialog as the analyst reads it: each row's name, then its
    "now" and "after the change" cells."""
    rows = {}
    for row in re.findall(r"<tr>(.*?)</tr>", prompt):
        cells = [" ".join(re.sub(r"<[^>]+>", " ", c).split()) for c in re.findall(r"<td>(.*?)</td>", row)]
        if len(cells) == 3:
            rows[cells[0]] = (cells[1], cells[2])
    return rows


def cli_range(path: Path) -> str:
    """The calibrated range ``quantify`` prints for the run at ``path``, as the program is run."""
    out = run_cli("quantify", str(path))
    assert out.returncode == 0, out.stderr
    line = next(line for line in out.stdout.splitlines() if line.startswith("  calibrated range "))
    return line[len("  calibrated range "):].split(";")[0]


def cli_json_range(path: Path) -> list[float]:
    out = run_cli("quantify", "--json", str(path))
    assert out.returncode == 0, out.stderr
    return json.loads(out.stdout)["analytes"][0]["calibrated_range"]


def test_the_exclusion_preview_shows_the_range_the_outputs_give(make_window, qtbot, answer_dialogs, tmp_path) -> None:
    path = tmp_path / "zinc.json"
    shutil.copy(ROOT / "sample_runs" / "zinc_emission_quadratic.json", path)
    before = cli_range(path)
    assert before == "1–10 mg/L (LLOQ–ULOQ)"  # the run's standards: a zero standard and 1 to 10 mg/L
    window = make_window(path)
    row = [s.id for s in window.standards_model.standards].index("Zn-3a")
    assert select_standard(window, row) == "Zn-3a"
    answer_dialogs["reason"] = "nebuliser clogged during this reading (bench log p. 12)"
    window.actions_by_name["exclude"].trigger()
    settle(qtbot, window)
    title, prompt = answer_dialogs.seen[-1]
    assert title == "Exclude standard Zn-3a"
    shown_now, shown_after = preview_rows(prompt)["Calibrated range"]
    assert not window.session.run.analytes[0].standard("Zn-3a").included
    window.actions_by_name["save"].trigger()
    settle(qtbot, window)
    after = cli_range(path)
    # the same range the command line prints, before and after the exclusion
    assert (shown_now, shown_after) == (before, after), prompt
    assert cli_json_range(path) == [1.0, 10.0]
